package models

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"

	"riskgrid/spec"
)

// A rank-deficient design with exact zeros and two all-zero columns
// (relu features) must give the pseudoinverse fit at every p, also when the
// QR serving small p spans more than one LAPACK block (32 columns) and
// past the threshold. gonum v0.17.0's blocked Dormqr was not orthogonal on
// such a factor (see applyQ); the reference is gonum's SVD pseudoinverse
// (the Moore–Penrose solution, Matrix Computations, 4th ed., 2013, §5.5).
func TestLeastSquaresZeroColumns(t *testing.T) {
	// The design: 120 relu features of 60 Gaussian points in 3
	// dimensions; columns 22 and 34 vanish on every point, and the
	// features active on every point span only 4 dimensions.
	const n = 60
	x0, y := gaussian(11, n, 3)
	t0 := NewTrain(x0, y)
	t0.SetSeeds("brute", 1, 2)
	x := drawFeatures(t0.Rand("random-features weights"), ActivationReLU, 1.5, 3, 120).apply(x0, 120, 1)
	ps := []float64{20, 33, 40, 60, 61, 120}
	fits := (&LeastSquares{}).Path(NewTrain(x, y), spec.ParamFeatures, ps)
	for i, pv := range ps {
		p := int(pv)
		b, _, cond := pinvFit(t, sub(x, 0, p), y, false)
		f := fits[i]
		if f.Err != nil {
			t.Fatalf("p=%d: %v", p, f.Err)
		}
		// Backward-stable solvers agree to about cond·eps relative; ×100
		// for the sizes.
		if e, tol := relDist(f.Coef, b), 100*cond*eps; e > tol {
			t.Errorf("p=%d (%s): rel. error %.2g against the pseudoinverse, want ≤ %.2g", p, f.Method, e, tol)
		}
	}
}

// The QR the least-squares paths factor must be backward stable,
// ‖A − QR‖ ≈ eps·‖A‖ (Householder QR: Matrix Computations, 4th ed., 2013,
// §5.2.2), also on relu feature designs wider than gonum's blocking
// crossover (128 columns), whose Householder vectors have trailing zeros:
// gonum v0.17.0's blocked Dgeqrf reached 7% there (see unblockedQR): of
// these 30 designs, seed 17 (167×140) fails with the blocked route.
// Q is applied one reflector at a time to [R; 0], column by column.
func TestQRBackwardError(t *testing.T) {
	for seed := uint64(1); seed <= 30; seed++ {
		m, k := 150+int(seed), 140
		d0 := 2 + int(seed%5)
		x0, y := gaussian(seed, m, d0)
		t0 := NewTrain(x0, y)
		t0.SetSeeds("g", seed, 0)
		a := drawFeatures(t0.Rand("w"), ActivationReLU, 1, d0, k).apply(x0, k, 1)
		d, err := reduce(a, y, m, k, false)
		if err != nil {
			t.Fatal(err)
		}
		var w solver
		w.factorQR(d, k)
		ag := blas64.General{Rows: m, Cols: k, Stride: k, Data: w.qr}
		var worst, scale float64
		col := make([]float64, m)
		for j := range k {
			clear(col)
			for i := 0; i <= j; i++ {
				col[i] = w.qr[i*k+j]
			}
			applyQ(blas.NoTrans, ag, w.tau, blas64.General{Rows: m, Cols: 1, Stride: 1, Data: col}, make([]float64, 1))
			for i := range m {
				worst = math.Max(worst, math.Abs(col[i]-a.At(i, j)))
				scale = math.Max(scale, math.Abs(a.At(i, j)))
			}
		}
		// Backward error bound: a modest multiple of m·eps (the
		// textbook bound is O(m·k·eps) in norm; measured 7e-15).
		if worst > 1e-12*scale {
			t.Errorf("seed %d (%d×%d): max|A − QR| = %.2g·max|A|, want ≤ 1e-12", seed, m, k, worst/scale)
		}
	}
}
