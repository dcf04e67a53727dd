package reports

import (
	"bytes"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"riskgrid/runner"
)

// TestThreshold checks the t quantile of the normal-equivalent tail
// against Student t table values: two-sided 5% (k = 1.959964) at ν = 10 is
// 2.228139, two-sided 1% (k = 2.575829) at ν = 5 is 4.032143 (standard t
// tables, e.g. Statistical Tables for Biological, Agricultural and Medical
// Research, 1938 onwards; values from memory), and ν → ∞ gives k.
func TestThreshold(t *testing.T) {
	for _, tc := range []struct {
		k, nu, want, tol float64
	}{
		{1.959964, 10, 2.228139, 1e-5},
		{2.575829, 5, 4.032143, 1e-5},
		{4, math.Inf(1), 4, 0},
		{4, math.NaN(), 4, 0},
		{4, 1e7, 4, 1e-5},
	} {
		if got := Threshold(tc.k, tc.nu); !scalar.EqualWithinAbsOrRel(got, tc.want, tc.tol, tc.tol) {
			t.Errorf("Threshold(%v, %v) = %v, want %v (tol %g)", tc.k, tc.nu, got, tc.want, tc.tol)
		}
	}
	if a, b := Threshold(4, 9), Threshold(4, 49); !(a > b && b > 4) {
		t.Errorf("Threshold(4, 9) = %v, Threshold(4, 49) = %v: want both above 4, decreasing in ν", a, b)
	}
}

// TestWelch checks the Welch–Satterthwaite formula on cases worked by
// hand: equal SEs and degrees of freedom n give 2n; one SE zero gives the
// other's ν; SEs 3 and 4 with ν 10 and 20: (9+16)²/(81/10+256/20) =
// 625/20.9.
func TestWelch(t *testing.T) {
	for _, tc := range []struct {
		a, b, na, nb, want float64
	}{
		{1, 1, 9, 9, 18},
		{0, 2, 9, 19, 19},
		{3, 4, 10, 20, 625 / 20.9},
	} {
		if got := welch(tc.a, tc.b, tc.na, tc.nb); math.Abs(got-tc.want) > 1e-12*tc.want {
			t.Errorf("welch(%v, %v, %v, %v) = %v, want %v", tc.a, tc.b, tc.na, tc.nb, got, tc.want)
		}
	}
	if !math.IsNaN(welch(0, 0, 5, 5)) {
		t.Error("welch of two zero SEs is not NaN")
	}
}

// pairedSums builds per-seed values for every point of r: risk_s =
// mean·(1 + 0.3·u_s) with fixed u_s of mean 0, the other lists constant.
func pairedSums(r *runner.Result, key string) *runner.Sums {
	u := []float64{-1, 0.5, 1.5, -0.5, -1.5, 1, 0, -0.25, 0.25, 0}
	s := &runner.Sums{DataKey: key}
	for _, m := range r.Models {
		ms := runner.ModelSums{Label: m.Label}
		for _, p := range m.Points {
			ps := runner.PointSums{Value: p.Value}
			for i, x := range u {
				ps.Seeds = append(ps.Seeds, uint64(i+1))
				ps.Risk = append(ps.Risk, float64(p.Risk.Mean)*(1+0.3*x))
				ps.TrainRisk = append(ps.TrainRisk, float64(p.TrainRisk.Mean))
				ps.Norm = append(ps.Norm, float64(p.Norm.Mean))
				ps.DF = append(ps.DF, float64(p.DF.Mean))
			}
			ms.Points = append(ms.Points, ps)
		}
		s.Models = append(s.Models, ms)
	}
	return s
}

func rowOf(t *testing.T, d *Difference, model string, v float64, metric string) DiffRow {
	t.Helper()
	for _, r := range d.Rows {
		if r.Model == model && r.Value == v && r.Metric == metric {
			return r
		}
	}
	t.Fatalf("no row %s %v %s", model, v, metric)
	return DiffRow{}
}

// TestDiffPlanted plants a change of the ridge risk at p = 10 of a known
// number of independent SEs (no sums: independent SEs, ν by Welch from 20
// and 20 seeds, 19 + 19 = 38 when the SEs are equal, threshold ≈ 4.5): 5.5
// SEs is flagged, 3 is not; nothing else is flagged.
func TestDiffPlanted(t *testing.T) {
	for _, tc := range []struct {
		z    float64
		flag bool
	}{{3, false}, {5.5, true}} {
		a := synthetic()
		b := clone(t, a)
		p := &b.Models[1].Points[0] // ridge at p = 10: risk 1.7912345 ± 0.0401234
		se := math.Sqrt2 * float64(p.Risk.SE)
		p.Risk.Mean += runner.Num(tc.z * se)
		d, err := Diff(a, b, nil, nil, DiffOptions{})
		if err != nil {
			t.Fatal(err)
		}
		r := rowOf(t, d, "ridge λ=0.1", 10, "risk")
		if r.Basis != BasisIndependent || math.Abs(r.Z-tc.z) > 1e-9 || math.Abs(r.DF-38) > 1e-9 {
			t.Errorf("z = %v: row %+v, want independent, Z %v, 38 degrees of freedom", tc.z, r, tc.z)
		}
		if got := r.Mark == MarkFlagged; got != tc.flag || d.Flagged != map[bool]int{false: 0, true: 1}[tc.flag] {
			t.Errorf("z = %v (threshold %v): mark %q, flagged %d", tc.z, r.Threshold, r.Mark, d.Flagged)
		}
	}
}

// TestDiffPaired: with per-seed values on one data key the SE is the
// paired one. B's per-seed risks are A's plus a shift of 0.01 plus a small
// seed-dependent part, so the paired SE is far below the independent one,
// and a 0.01 shift is many paired SEs.
func TestDiffPaired(t *testing.T) {
	a := synthetic()
	b := clone(t, a)
	sa, sb := pairedSums(a, "k"), pairedSums(b, "k")
	ps := &sb.Models[1].Points[0]
	for i := range ps.Risk {
		ps.Risk[i] += 0.01 + 1e-4*float64(i%3)
	}
	b.Models[1].Points[0].Risk.Mean += 0.01 + 1e-4*0.9 // the mean of the shifts
	d, err := Diff(a, b, sa, sb, DiffOptions{})
	if err != nil {
		t.Fatal(err)
	}
	r := rowOf(t, d, "ridge λ=0.1", 10, "risk")
	// The paired SE of the shifts 0.01 + 1e-4·(0,1,2,0,1,2,0,1,2,0), worked
	// by hand: mean 0.9, Σ(x − x̄)² = 4·0.81 + 3·0.01 + 3·1.21 = 6.9, so
	// SE = 1e-4·√(6.9/9/10).
	want := 1e-4 * math.Sqrt(6.9/9/10)
	if r.Basis != BasisPaired || r.Seeds != 10 || math.Abs(r.SE-want) > 1e-9*want {
		t.Fatalf("row %+v: want paired over 10 seeds, SE %v", r, want)
	}
	if !(r.SE < r.SEIndependent/100) {
		t.Errorf("paired SE %v not far below the independent %v", r.SE, r.SEIndependent)
	}
	if r.Mark != MarkFlagged || d.Flagged != 1 {
		t.Errorf("a shift of 0.01 at paired SE %v: mark %q, %d flagged", r.SE, r.Mark, d.Flagged)
	}
	// bias² has no per-seed values: independent.
	if r := rowOf(t, d, "ridge λ=0.1", 10, "bias2"); r.Basis != BasisIndependent {
		t.Errorf("bias2 basis %q, want independent", r.Basis)
	}
	// Another data key: no pairing.
	d, _ = Diff(a, b, sa, pairedSums(b, "other"), DiffOptions{})
	if r := rowOf(t, d, "ridge λ=0.1", 10, "risk"); r.Basis != BasisIndependent {
		t.Errorf("different data keys: basis %q, want independent", r.Basis)
	}
}

// TestDiffNull: identical results flag nothing; the exact noise row is
// judged by the tolerance; a heavy-tailed point is not counted.
func TestDiffNull(t *testing.T) {
	a := synthetic()
	d, err := Diff(a, clone(t, a), pairedSums(a, "k"), pairedSums(a, "k"), DiffOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if d.Flagged != 0 {
		t.Errorf("identical results: %d flagged", d.Flagged)
	}
	b := clone(t, a)
	b.Models[0].Points[0].Noise.Mean *= 1 + 1e-12 // last bits of σ²: equal
	b.Models[0].Points[1].Noise.Mean *= 1.01      // another σ²: flagged, SE 0
	b.Models[0].Points[2].Risk.Mean *= 10         // the heavy-tailed point
	d, _ = Diff(a, b, nil, nil, DiffOptions{})
	if r := rowOf(t, d, "min-norm", 10, "noise"); r.Basis != BasisExact || r.Mark != "" {
		t.Errorf("σ² × (1+1e-12): %+v, want exact and unmarked", r)
	}
	if r := rowOf(t, d, "min-norm", 40, "noise"); r.Mark != MarkFlagged || !math.IsInf(r.Z, 1) {
		t.Errorf("σ² × 1.01: %+v, want flagged at infinite Z", r)
	}
	if r := rowOf(t, d, "min-norm", 50, "risk"); r.Mark != MarkTail {
		t.Errorf("risk × 10 at the heavy-tailed point: mark %q, want %q", r.Mark, MarkTail)
	}
	if d.Flagged != 1 || len(d.Medians) != 1 {
		t.Errorf("flagged %d, medians %v: want 1 and the heavy-tailed point's", d.Flagged, d.Medians)
	}
	var buf bytes.Buffer
	if err := WriteDiff(&buf, d, true); err != nil {
		t.Fatal(err)
	}
	out := buf.String()
	for _, want := range []string{"FLAGGED: 1 difference", "| exact ", "heavy-tailed; median risk 212.345 in A"} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
}

func TestDiffAlign(t *testing.T) {
	a := synthetic()
	b := clone(t, a)
	b.Models[1].Label = "ridge λ=0.2"
	b.Models[0].Points = b.Models[0].Points[1:]
	d, err := Diff(a, b, nil, nil, DiffOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if len(d.OnlyA) != 1 || d.OnlyA[0] != "min-norm, p = 10" || len(d.OnlyB) != 0 {
		t.Errorf("only in A %v, only in B %v", d.OnlyA, d.OnlyB)
	}
	rowOf(t, d, "ridge λ=0.1 ⇄ ridge λ=0.2", 10, "risk") // the unmatched pair, same family
	b.Models[1].Family = "other"
	d, _ = Diff(a, b, nil, nil, DiffOptions{})
	if len(d.OnlyA) != 2 || len(d.OnlyB) != 1 {
		t.Errorf("different families: only in A %v, only in B %v", d.OnlyA, d.OnlyB)
	}
	b.Param = "lambda"
	if _, err := Diff(a, b, nil, nil, DiffOptions{}); err == nil {
		t.Error("different knobs: no error")
	}
}
