package models

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"

	"riskgrid/spec"
)

// bruteKNN predicts at z by k passes of a linear scan, each taking the
// nearest row not yet taken (the lower index on a tie), among the first n
// rows: a different algorithm from the sort of the path.
func bruteKNN(x *mat.Dense, y []float64, n, k int, z []float64) float64 {
	taken := make([]bool, n)
	var s float64
	for range k {
		best, bd := -1, math.Inf(1)
		for i := range n {
			if taken[i] {
				continue
			}
			var d float64
			for j, v := range x.RawRowView(i) {
				d += (v - z[j]) * (v - z[j])
			}
			if d < bd {
				best, bd = i, d
			}
		}
		taken[best] = true
		s += y[best]
	}
	return s / float64(k)
}

// TestNeighboursBruteForce: every k and every n of both paths against the
// brute-force scan, on inputs rounded to a coarse grid so that ties occur
// (the tie rule is part of what is checked), at the training inputs
// (training risk) and at test inputs; and DF = tr(H) against H built by
// brute force.
func TestNeighboursBruteForce(t *testing.T) {
	const n, d = 30, 2
	rng := rand.New(rand.NewPCG(8, 1))
	x := mat.NewDense(n, d, nil)
	y := make([]float64, n)
	for i := range n {
		for j := range d {
			x.Set(i, j, math.Round(3*rng.Float64())) // values 0…3: many ties and duplicates
		}
		y[i] = rng.NormFloat64()
	}
	test := mat.NewDense(12, d, nil)
	for i := range 12 {
		for j := range d {
			test.Set(i, j, math.Round(6*rng.Float64())/2)
		}
	}
	tr := func() *Train {
		t := NewTrain(x, y)
		t.Test = test
		return t
	}
	same := func(name string, f Fit, nn, k int) {
		t.Helper()
		if f.Err != nil {
			t.Fatalf("%s: %v", name, f.Err)
		}
		var rss, df float64
		for i := range nn {
			r := y[i] - bruteKNN(x, y, nn, k, x.RawRowView(i))
			rss += r * r
			// H_ii: 1/k if row i is among its own neighbours. Perturb y_i
			// and see whether the prediction moves.
			yy := append([]float64(nil), y...)
			yy[i] += 1
			df += bruteKNN(x, yy, nn, k, x.RawRowView(i)) - bruteKNN(x, y, nn, k, x.RawRowView(i))
		}
		// Tolerance: sums of ≤ 30 terms of size ≤ 4 in a different order.
		const tol = 1e-13
		if !scalar.EqualWithinAbsOrRel(f.TrainRisk, rss/float64(nn), tol, tol) {
			t.Errorf("%s: train risk %.15g, brute force %.15g", name, f.TrainRisk, rss/float64(nn))
		}
		if !scalar.EqualWithinAbsOrRel(f.DF, df, tol, tol) {
			t.Errorf("%s: df %.15g, brute force %.15g", name, f.DF, df)
		}
		for j := range 12 {
			if want := bruteKNN(x, y, nn, k, test.RawRowView(j)); !scalar.EqualWithinAbsOrRel(f.Pred[j], want, tol, tol) {
				t.Errorf("%s: pred[%d] = %.15g, brute force %.15g", name, j, f.Pred[j], want)
			}
		}
	}
	ks := []float64{1, 2, 3, 5, 8, 13, 30}
	for v, f := range (&Neighbours{}).Path(tr(), spec.ParamNeighbours, ks) {
		same(fmt.Sprintf("k=%v", ks[v]), f, n, int(ks[v]))
	}
	ns := []float64{5, 9, 17, 30}
	for _, k := range []int{1, 4} {
		for v, f := range (&Neighbours{K: k}).Path(tr(), spec.ParamNTrain, ns) {
			same(fmt.Sprintf("k=%d n=%v", k, ns[v]), f, int(ns[v]), k)
		}
	}
}

// TestNeighboursEdges: 1-NN interpolates distinct inputs (training risk 0,
// DF = n), k = n predicts the training mean everywhere (DF = 1); on
// distinct inputs DF = n/k (The Elements of Statistical Learning, 2nd ed.,
// 2009, §7.6, from memory).
func TestNeighboursEdges(t *testing.T) {
	const n = 50
	x, y := uniform(12, n, 3, 1)
	test, _ := uniform(13, 20, 3, 1)
	tr := NewTrain(x, y)
	tr.Test = test
	ks := []float64{1, 2, 5, 10, n}
	fits := (&Neighbours{}).Path(tr, spec.ParamNeighbours, ks)
	for v, f := range fits {
		if f.Err != nil {
			t.Fatal(f.Err)
		}
		if want := n / ks[v]; !scalar.EqualWithinRel(f.DF, want, 1e-15) {
			t.Errorf("k=%v: df = %v, want n/k = %v", ks[v], f.DF, want)
		}
	}
	if f := fits[0]; f.TrainRisk != 0 {
		t.Errorf("1-NN train risk = %v, want 0 on distinct inputs", f.TrainRisk)
	}
	mean := floats.Sum(y) / n
	for j, p := range fits[len(fits)-1].Pred {
		if !scalar.EqualWithinAbsOrRel(p, mean, 1e-15, 1e-14) {
			t.Errorf("k=n: pred[%d] = %.17g, want the training mean %.17g", j, p, mean)
		}
	}
	var ss float64
	for _, v := range y {
		ss += (v - mean) * (v - mean)
	}
	check(t, "k=n train risk", fits[len(fits)-1].TrainRisk, ss/n, 1e-13)
	check(t, "k=n norm", fits[len(fits)-1].Norm, math.Abs(mean), 1e-13)
}

// TestNeighboursVariance: for a fixed design and a fixed test input, the
// k-NN prediction averages k independent noises, so its variance over the
// noise is σ²/k (textbook: The Elements of Statistical Learning, 2nd ed.,
// 2009, eq. (7.10), the k-NN error decomposition, from memory). Monte
// Carlo over R noise draws, within 4 standard errors of the sample
// variance (SE = σ²/k·√(2/(R−1)) for Gaussian noise, a textbook formula).
func TestNeighboursVariance(t *testing.T) {
	const n, reps, sigma = 40, 4000, 0.7
	x, f := uniform(21, n, 2, 1)
	test, _ := uniform(22, 3, 2, 1)
	ks := []float64{1, 3, 10}
	rng := rand.New(rand.NewPCG(23, 0))
	sum := make([][]float64, len(ks))
	sum2 := make([][]float64, len(ks))
	for v := range ks {
		sum[v], sum2[v] = make([]float64, 3), make([]float64, 3)
	}
	y := make([]float64, n)
	for range reps {
		for i := range y {
			y[i] = f[i] + sigma*rng.NormFloat64()
		}
		tr := NewTrain(x, y)
		tr.Test = test
		for v, fit := range (&Neighbours{}).Path(tr, spec.ParamNeighbours, ks) {
			for j, p := range fit.Pred {
				sum[v][j] += p
				sum2[v][j] += p * p
			}
		}
	}
	for v, k := range ks {
		want := sigma * sigma / k
		se := want * math.Sqrt(2/float64(reps-1))
		for j := range 3 {
			m := sum[v][j] / reps
			got := (sum2[v][j] - reps*m*m) / (reps - 1)
			if math.Abs(got-want) > 4*se {
				t.Errorf("k=%v test %d: Var = %.4g, want σ²/k = %.4g ± %.2g (4 SE)", k, j, got, want, 4*se)
			}
		}
	}
}

func TestNeighboursBadInput(t *testing.T) {
	x, y := uniform(2, 6, 2, 1)
	nan := mat.DenseCopyOf(x)
	nan.Set(2, 0, math.Inf(-1))
	for _, tc := range []struct {
		name   string
		nb     Neighbours
		x      *mat.Dense
		knob   string
		values []float64
		want   []error
	}{
		{"k values", Neighbours{}, x, spec.ParamNeighbours, []float64{0, 1, 2.5, 6, 7, -1},
			[]error{ErrValue, nil, ErrValue, nil, ErrValue, ErrValue}},
		{"k > n_train", Neighbours{K: 4}, x, spec.ParamNTrain, []float64{3, 4, 6, 7},
			[]error{ErrValue, nil, nil, ErrValue}},
		{"zero K", Neighbours{}, x, spec.ParamNTrain, []float64{5}, []error{ErrValue}},
		{"unknown knob", Neighbours{K: 1}, x, spec.ParamLambda, []float64{1}, []error{ErrKnob}},
		{"infinite input", Neighbours{}, nan, spec.ParamNeighbours, []float64{1}, []error{ErrNotFinite}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			fits := tc.nb.Path(NewTrain(tc.x, y), tc.knob, tc.values)
			for i, want := range tc.want {
				if got := fits[i].Err; !errors.Is(got, want) || (want == nil) != (got == nil) {
					t.Errorf("Path(%s=%v).Err = %v, want %v", tc.knob, tc.values[i], got, want)
				}
			}
		})
	}
	// The message names k and n.
	f := (&Neighbours{}).Path(NewTrain(x, y), spec.ParamNeighbours, []float64{7})[0]
	if want := "k = 7 with n_train = 6"; f.Err == nil || !strings.Contains(f.Err.Error(), want) {
		t.Errorf("error %q does not say %q", f.Err, want)
	}
	for _, tc := range []struct {
		m   spec.Model
		k   int
		err error
	}{
		{spec.Model{Family: spec.FamilyNeighbours, Params: map[string]float64{"neighbours": 5}}, 5, nil},
		{spec.Model{Family: spec.FamilyNeighbours}, 0, nil}, // the neighbours grid
		{spec.Model{Family: spec.FamilyNeighbours, Params: map[string]float64{"neighbours": 0}}, 0, ErrParam},
		{spec.Model{Family: spec.FamilyNeighbours, Params: map[string]float64{"neighbours": 1.5}}, 0, ErrParam},
	} {
		f, err := New(tc.m)
		if !errors.Is(err, tc.err) || (err == nil) != (tc.err == nil) {
			t.Errorf("New(%+v) error = %v, want %v", tc.m, err, tc.err)
		} else if err == nil && f.(*Neighbours).K != tc.k {
			t.Errorf("New(%+v) = %+v, want K = %d", tc.m, f, tc.k)
		}
	}
}

// TestNeighboursSklearn: predictions and training risk against
// scikit-learn's KNeighborsRegressor (testdata/kernel_sklearn.md; no ties).
func TestNeighboursSklearn(t *testing.T) {
	ref, tr := loadSklearn(t)
	var ks []float64
	for _, c := range ref.Neighbours {
		ks = append(ks, float64(c.K))
	}
	if len(ks) == 0 {
		t.Fatal("no k-NN cases")
	}
	fits := (&Neighbours{}).Path(tr(), spec.ParamNeighbours, ks)
	for v, c := range ref.Neighbours {
		f := fits[v]
		if f.Err != nil {
			t.Fatal(f.Err)
		}
		if e := relDist(f.Pred, c.Pred); !(e <= 1e-14) {
			t.Errorf("k=%d: predictions rel. distance %g from scikit-learn, want ≤ 1e-14", c.K, e)
		}
		check(t, fmt.Sprintf("k=%d train risk", c.K), f.TrainRisk, c.TrainRisk, 1e-14)
	}
}
