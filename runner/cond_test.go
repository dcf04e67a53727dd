package runner

import (
	"context"
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"

	"riskgrid/data"
)

// TestConditioning checks the largest condition number over seeds that
// Conditioning reads from the cache against a reference computed here with
// gonum's SVD, κ₂(X_p) = s_max/s_min of each seed's leading p columns. The
// fits report LAPACK-style 1-norm estimates (κ₁ of R_p for QR, the square
// root of κ₁ of X_pX_pᵀ past the threshold), and κ₁ lies within a factor
// max(n, p) of κ₂ in either direction (‖A‖₂/√k ≤ ‖A‖₁ ≤ √k‖A‖₂ for k
// columns; Matrix Computations, 4th ed., 2013, §2.3.2, textbook); the
// estimators can underestimate by a small factor, taken as 3 here. The
// check separates κ ≈ 2 (p = 5 of n = 30) from the threshold p = n.
func TestConditioning(t *testing.T) {
	s := mustParse(t, smallSpec(6, "5, 30, 60"))
	dir := t.TempDir()
	if _, err := Run(context.Background(), s, Options{Workers: 2, CacheDir: dir}); err != nil {
		t.Fatal(err)
	}
	got, err := Conditioning(s, dir)
	if err != nil {
		t.Fatal(err)
	}
	src, err := data.New(s, s.DataKey())
	if err != nil {
		t.Fatal(err)
	}
	n := s.Data.NTrain
	for vi, v := range s.Grid.Values {
		p := int(v)
		ref := 0.0
		for i := 0; i < s.Seeds.Count; i++ {
			smp, err := src.Draw(s.Seeds.Start + uint64(i))
			if err != nil {
				t.Fatal(err)
			}
			var svd mat.SVD
			if !svd.Factorize(smp.X.Slice(0, n, 0, p), mat.SVDNone) {
				t.Fatal("SVD failed")
			}
			sv := svd.Values(nil)
			ref = math.Max(ref, sv[0]/sv[len(sv)-1])
		}
		k := float64(max(n, p))
		// least squares (model 0) solves in X_p; compare it with κ₂(X_p).
		if c := got[0][vi]; !(c >= ref/(3*k) && c <= ref*k) {
			t.Errorf("least squares, p = %d: largest κ %g, SVD reference %g (accepted within ×%g)", p, c, ref, k)
		}
		// ridge (model 1) solves a penalised system: finite, ≥ 1.
		if c := got[1][vi]; !(c >= 1 && !math.IsInf(c, 0)) {
			t.Errorf("ridge, p = %d: largest κ %g, want a finite number ≥ 1", p, c)
		}
	}
	if !(got[0][1] > 100*got[0][0]) {
		t.Errorf("κ at p = n (%g) not far above κ at p = n/6 (%g)", got[0][1], got[0][0])
	}
	if _, err := Conditioning(s, t.TempDir()); err == nil {
		t.Error("Conditioning of an empty cache folder: no error")
	}
}
