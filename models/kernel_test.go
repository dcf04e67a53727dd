package models

import (
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"testing"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"

	"riskgrid/spec"
)

// centred returns x and y with their column means removed (two passes).
func centred(x *mat.Dense, y []float64) (xc *mat.Dense, yc, xbar []float64, ybar float64) {
	n, p := x.Dims()
	xc = mat.DenseCopyOf(x)
	mean := func(v []float64) float64 {
		m := floats.Sum(v) / float64(len(v))
		var c float64
		for _, e := range v {
			c += e - m
		}
		return m + c/float64(len(v))
	}
	xbar = make([]float64, p)
	for j := range p {
		col := column(x, j)
		xbar[j] = mean(col)
		for i := range n {
			xc.Set(i, j, col[i]-xbar[j])
		}
	}
	ybar = mean(y)
	yc = make([]float64, n)
	for i, v := range y {
		yc[i] = v - ybar
	}
	return xc, yc, xbar, ybar
}

// identity returns the p×p identity: with it as the test inputs, a linear
// kernel fit's predictions are its coefficients, f(e_j) = Σ α_i x_iᵀe_j = b_j.
func identity(p int) *mat.Dense {
	a := mat.NewDense(p, p, nil)
	for j := range p {
		a.Set(j, j, 1)
	}
	return a
}

// TestKernelRidgeLinearDiabetes: with the linear kernel xᵀx', kernel ridge
// on centred data is ridge with an unpenalised intercept (the push-through
// identity (XᵀX + nλI)⁻¹Xᵀ = Xᵀ(XXᵀ + nλI)⁻¹; the dual form of ridge:
// "Ridge regression learning algorithm in dual variables", ICML 1998, from
// memory). Checked against the diabetes reference values of
// testdata/diabetes.md (R 4.2.2 and numpy 1.24.2, ≥ 12.4 digits apart) —
// coefficients, intercept ȳ − x̄ᵀb and df = 1 + tr(K(K + nλI)⁻¹) — and
// against the project's Ridge (norm and training risk).
func TestKernelRidgeLinearDiabetes(t *testing.T) {
	x, y, ref := loadDiabetes(t)
	xc, yc, xbar, ybar := centred(x, y)
	var keys []string
	var lambdas []float64
	for _, k := range []string{"0.01", "0.1", "1", "10", "100"} {
		v, _ := strconv.ParseFloat(k, 64)
		keys = append(keys, k)
		lambdas = append(lambdas, v)
	}
	train := func() *Train {
		tr := NewTrain(xc, yc)
		tr.Test = identity(ref.P)
		return tr
	}
	path := (&KernelRidge{Kernel: kernelLinear}).Path(train(), spec.ParamLambda, lambdas)
	methods := map[string]bool{}
	for i, key := range keys {
		want := ref.Ridge[key]
		primal := (&Ridge{Intercept: true}).Path(NewTrain(x, y), spec.ParamLambda, lambdas[i:i+1])[0]
		for _, tc := range []struct {
			name string
			fit  Fit
		}{
			{"lambda path", path[i]},
			{"n_train", (&KernelRidge{Kernel: kernelLinear, Lambda: lambdas[i]}).Path(train(), spec.ParamNTrain, []float64{float64(ref.N)})[0]},
		} {
			f := tc.fit
			name := "λ=" + key + " " + tc.name
			if f.Err != nil || primal.Err != nil {
				t.Fatalf("%s: %v, %v", name, f.Err, primal.Err)
			}
			methods[f.Method] = true
			t.Logf("%s: method %s, cond %.3g", name, f.Method, f.Cond)
			for j, w := range want.Coefficients {
				check(t, name+" coef "+strconv.Itoa(j), f.Pred[j], w, diabetesTol)
			}
			check(t, name+" intercept", ybar-floats.Dot(xbar, f.Pred), want.Intercept, diabetesTol)
			check(t, name+" df", f.DF+1, want.DF, diabetesTol)
			check(t, name+" norm vs Ridge", f.Norm, primal.Norm, diabetesTol)
			check(t, name+" train risk vs Ridge", f.TrainRisk, primal.TrainRisk, diabetesTol)
		}
	}
	for _, m := range []string{"eigen", "cholesky"} {
		if !methods[m] {
			t.Errorf("method %q never used (used %v)", m, methods)
		}
	}
}

// TestKernelRidgeLinearMatchesRidge: the same identity on random data on
// both sides of p = n, and at λ = 0, where the ridgeless kernel fit
// XᵀK⁺y is the minimum-norm least-squares fit X⁺y (textbook: the
// pseudoinverse identity X⁺ = Xᵀ(XXᵀ)⁺; Matrix Computations, 4th ed., Johns
// Hopkins University Press, 2013, §5.5). For p < n, K = XXᵀ has rank p and
// n − p eigenvalues that are rounding: the cutoff must drop them.
func TestKernelRidgeLinearMatchesRidge(t *testing.T) {
	lambdas := []float64{0, 1e-3, 0.1, 10}
	for _, sz := range []struct{ n, p int }{{40, 10}, {30, 80}} {
		x, y := gaussian(uint64(7+sz.p), sz.n, sz.p)
		test, _ := gaussian(99, 15, sz.p)
		tr := NewTrain(x, y)
		tr.Test = test
		fits := (&KernelRidge{Kernel: kernelLinear}).Path(tr, spec.ParamLambda, lambdas)
		ridge := (&Ridge{}).Path(NewTrain(x, y), spec.ParamLambda, lambdas)
		for i, l := range lambdas {
			f, r := fits[i], ridge[i]
			if f.Err != nil || r.Err != nil {
				t.Fatalf("n=%d p=%d λ=%g: %v, %v", sz.n, sz.p, l, f.Err, r.Err)
			}
			want := make([]float64, 15)
			for j := range want {
				want[j] = floats.Dot(test.RawRowView(j), r.Coef)
			}
			// Tolerance: both are backward-stable solves, forward error
			// ≲ κ·eps with κ the condition of the system (the Gram or
			// kernel matrix, ≈ κ(X)²); 100·max(n, p) covers the constants.
			tol := 100 * float64(max(sz.n, sz.p)) * eps * r.Cond
			if l == 0 {
				_, _, c := pinvFit(t, x, y, false)
				tol = 100 * float64(max(sz.n, sz.p)) * eps * c * c
			}
			if e := relDist(f.Pred, want); !(e <= tol) {
				t.Errorf("n=%d p=%d λ=%g: kernel predictions rel. distance %g from ridge, want ≤ %g", sz.n, sz.p, l, e, tol)
			}
			for _, c := range []struct {
				name      string
				got, want float64
			}{{"norm", f.Norm, r.Norm}, {"train risk", f.TrainRisk, r.TrainRisk}, {"df", f.DF, r.DF}} {
				if !scalar.EqualWithinAbsOrRel(c.got, c.want, tol, tol) {
					t.Errorf("n=%d p=%d λ=%g: %s = %.15g, ridge %.15g (tol %g)", sz.n, sz.p, l, c.name, c.got, c.want, tol)
				}
			}
		}
	}
}

// kernelMatrix builds K_ij = k(x_i, z_j) by the defining formulas, for the
// reference computations of the tests.
func kernelMatrix(kind string, h float64, x, z *mat.Dense) *mat.Dense {
	n, _ := x.Dims()
	m, _ := z.Dims()
	k := mat.NewDense(n, m, nil)
	for i := range n {
		for j := range m {
			var d2 float64
			for c, v := range x.RawRowView(i) {
				e := v - z.At(j, c)
				d2 += e * e
			}
			switch kind {
			case KernelGaussian:
				k.Set(i, j, math.Exp(-d2/(2*h*h)))
			case KernelLaplace:
				k.Set(i, j, math.Exp(-math.Sqrt(d2)/h))
			}
		}
	}
	return k
}

// uniform returns an n×d matrix of uniforms on [0, scale) and a target
// y = sin(3 x_1) + 0.3·noise, from a seeded stream.
func uniform(seed uint64, n, d int, scale float64) (*mat.Dense, []float64) {
	rng := rand.New(rand.NewPCG(seed, 0xbead))
	x := mat.NewDense(n, d, nil)
	y := make([]float64, n)
	for i := range n {
		for j := range d {
			x.Set(i, j, scale*rng.Float64())
		}
		y[i] = math.Sin(3*x.At(i, 0)) + 0.3*rng.NormFloat64()
	}
	return x, y
}

// TestKernelRidgeInterpolant: at λ = 0 the Gaussian and Laplace fits
// interpolate the training targets, and the RKHS norm of the
// minimum-norm interpolant is √(yᵀK⁻¹y) (textbook: the representer theorem
// gives f = Σα_i k(x_i,·) with Kα = y and ‖f‖²_H = αᵀKα; "Gaussian
// Processes for Machine Learning", MIT Press, 2006, §6.2, from memory).
// The reference norm is a separate computation: gonum's mat.Cholesky on a
// kernel matrix built by the defining formula.
func TestKernelRidgeInterpolant(t *testing.T) {
	for _, tc := range []struct {
		kind string
		h    float64
		d    int
	}{
		{KernelGaussian, 0.05, 1},
		{KernelGaussian, 0.5, 2},
		{KernelLaplace, 0.2, 1},
		{KernelLaplace, 1, 3},
	} {
		const n = 40
		x, y := uniform(uint64(10*tc.d), n, tc.d, 4)
		if tc.d == 1 {
			// A jittered grid on [0, 4): no two inputs closer than 0.05.
			for i := range n {
				x.Set(i, 0, (float64(i)+0.5*x.At(i, 0)/4)*0.1)
			}
		}
		k := kernelMatrix(tc.kind, tc.h, x, x)
		var ch mat.Cholesky
		if !ch.Factorize(mat.NewSymDense(n, k.RawMatrix().Data)) {
			t.Fatalf("%s h=%g: reference Cholesky failed", tc.kind, tc.h)
		}
		var a mat.VecDense
		if err := ch.SolveVecTo(&a, mat.NewVecDense(n, y)); err != nil {
			t.Fatal(err)
		}
		wantNorm := math.Sqrt(floats.Dot(y, a.RawVector().Data))
		cond := ch.Cond()
		kr := &KernelRidge{Kernel: tc.kind, Bandwidth: tc.h}
		tr := func() *Train {
			t := NewTrain(x, y)
			t.Test = x
			return t
		}
		for _, c := range []struct {
			name string
			fit  Fit
		}{
			{"lambda path", kr.Path(tr(), spec.ParamLambda, []float64{0, 1})[0]},
			{"bandwidth path", kr.Path(tr(), spec.ParamBandwidth, []float64{tc.h / 2, tc.h})[1]},
			{"n_train path", kr.Path(tr(), spec.ParamNTrain, []float64{n})[0]},
		} {
			f := c.fit
			name := fmt.Sprintf("%s h=%g d=%d %s", tc.kind, tc.h, tc.d, c.name)
			if f.Err != nil {
				t.Fatalf("%s: %v", name, f.Err)
			}
			// Tolerance: forward error of a backward-stable solve, κ·eps,
			// times a dimension constant.
			tol := 10 * n * eps * cond
			t.Logf("%s: cond %.3g (reference %.3g), train risk %.3g", name, f.Cond, cond, f.TrainRisk)
			if e := relDist(f.Pred, y); !(e <= tol) {
				t.Errorf("%s: f(x_i) rel. distance %g from y, want ≤ %g", name, e, tol)
			}
			if !(f.TrainRisk <= tol*tol*floats.Dot(y, y)/n) {
				t.Errorf("%s: train risk %g, want ≤ %g", name, f.TrainRisk, tol*tol*floats.Dot(y, y)/n)
			}
			check(t, name+" norm", f.Norm, wantNorm, tol)
			check(t, name+" df", f.DF, n, 0)
			if f.Method != "eigen" {
				t.Errorf("%s: method %s, want eigen", name, f.Method)
			}
		}
	}
}

// TestKernelRidgeRoutes: the Cholesky route of a single λ against the
// eigendecomposition route of the λ path, on the same kernel matrix, and
// the n_train path against fits on the first n rows by themselves (nested
// samples). Independent of both, a reference solve by gonum's mat.Cholesky
// on a kernel matrix built by the defining formula.
func TestKernelRidgeRoutes(t *testing.T) {
	const n = 60
	x, y := uniform(3, n, 2, 3)
	test, _ := uniform(4, 25, 2, 3)
	methods := map[string]bool{}
	for _, kind := range []string{KernelGaussian, KernelLaplace} {
		for _, h := range []float64{0.2, 1} {
			kt := kernelMatrix(kind, h, test, x)
			kn := kernelMatrix(kind, h, x, x)
			for _, l := range []float64{1e-8, 1e-4, 0.01, 1} {
				name := fmt.Sprintf("%s h=%g λ=%g", kind, h, l)
				tr := func(x *mat.Dense, y []float64) *Train {
					t := NewTrain(x, y)
					t.Test = test
					return t
				}
				eig := (&KernelRidge{Kernel: kind, Bandwidth: h}).Path(tr(x, y), spec.ParamLambda, []float64{l})[0]
				kr := &KernelRidge{Kernel: kind, Bandwidth: h, Lambda: l}
				chol := kr.Path(tr(x, y), spec.ParamBandwidth, []float64{h})[0]
				if eig.Err != nil || chol.Err != nil {
					t.Fatalf("%s: %v, %v", name, eig.Err, chol.Err)
				}
				methods[chol.Method] = true
				// Reference: α = (K + nλI)⁻¹y by mat.Cholesky.
				a := mat.NewSymDense(n, nil)
				for i := range n {
					for j := i; j < n; j++ {
						v := kn.At(i, j)
						if i == j {
							v += n * l
						}
						a.SetSym(i, j, v)
					}
				}
				var ch mat.Cholesky
				if !ch.Factorize(a) {
					t.Fatalf("%s: reference Cholesky failed", name)
				}
				var alpha, pred mat.VecDense
				if err := ch.SolveVecTo(&alpha, mat.NewVecDense(n, y)); err != nil {
					t.Fatal(err)
				}
				pred.MulVec(kt, &alpha)
				// DF from the reference inverse: tr(K A⁻¹).
				var ainv, ka mat.Dense
				var inv mat.SymDense
				if err := ch.InverseTo(&inv); err != nil {
					t.Fatal(err)
				}
				ainv.CloneFrom(&inv)
				ka.Mul(kn, &ainv)
				wantDF := mat.Trace(&ka)
				tol := 100 * n * eps * ch.Cond()
				for _, f := range []Fit{eig, chol} {
					if e := relDist(f.Pred, pred.RawVector().Data); !(e <= tol) {
						t.Errorf("%s %s: predictions rel. distance %g from the reference, want ≤ %g", name, f.Method, e, tol)
					}
					if !scalar.EqualWithinAbsOrRel(f.DF, wantDF, tol, tol) {
						t.Errorf("%s %s: df = %.15g, reference %.15g (tol %g)", name, f.Method, f.DF, wantDF, tol)
					}
					// TrainRisk = (1/n)‖nλα‖², Norm = √(αᵀKα).
					ar := alpha.RawVector().Data
					wantRisk := n * l * l * floats.Dot(ar, ar)
					var kav mat.VecDense
					kav.MulVec(kn, &alpha)
					wantNorm := math.Sqrt(floats.Dot(ar, kav.RawVector().Data))
					check(t, name+" "+f.Method+" train risk", f.TrainRisk, wantRisk, tol)
					check(t, name+" "+f.Method+" norm", f.Norm, wantNorm, tol)
					// The eigen route reports the exact 2-norm condition
					// number, the Cholesky route an upper bound on κ₁ or
					// LAPACK's estimate; mat.Cholesky's Cond is a 1-norm
					// estimate. Norms of an n×n matrix agree within a
					// factor n (textbook norm equivalence).
					if r := f.Cond / ch.Cond(); !(r >= 1/float64(n)) || (f.Method == "eigen" && r > float64(n)) {
						t.Errorf("%s %s: cond %g, reference estimate %g", name, f.Method, f.Cond, ch.Cond())
					}
				}
				// Nested samples: the fit on the first 30 rows.
				sub := kr.Path(tr(x, y), spec.ParamNTrain, []float64{30, n})
				own := kr.Path(tr(mat.DenseCopyOf(x.Slice(0, 30, 0, 2)), y[:30]), spec.ParamBandwidth, []float64{h})[0]
				if sub[0].Err != nil || own.Err != nil {
					t.Fatalf("%s: %v, %v", name, sub[0].Err, own.Err)
				}
				// The same arithmetic on the same numbers, up to the order
				// of summation inside the BLAS: 1e-12 relative.
				if e := relDist(sub[0].Pred, own.Pred); e > 1e-12 || !scalar.EqualWithinRel(sub[0].DF, own.DF, 1e-12) ||
					!scalar.EqualWithinRel(sub[0].TrainRisk, own.TrainRisk, 1e-12) {
					t.Errorf("%s: n_train 30 differs from a fit on 30 rows (pred rel. %g, df %v vs %v)", name, e, sub[0].DF, own.DF)
				}
				if e := relDist(sub[1].Pred, chol.Pred); e > 1e-12 {
					t.Errorf("%s: n_train %d differs from the bandwidth path (rel. %g)", name, n, e)
				}
			}
		}
	}
	if !methods["cholesky"] {
		t.Errorf("single-λ route cholesky never used (used %v)", methods)
	}
}

// TestKernelRidgeLOO checks the closed form against n explicit refits on
// n−1 rows that keep the penalty matrix nλI (the identity is exact, so only
// rounding separates the two), and, for the linear kernel, against the
// project's RidgeLOO (itself checked against the diabetes reference).
func TestKernelRidgeLOO(t *testing.T) {
	const n = 25
	x, y := uniform(5, n, 2, 2)
	for _, kr := range []KernelRidge{
		{Kernel: KernelGaussian, Bandwidth: 0.5, Lambda: 0.01},
		{Kernel: KernelGaussian, Bandwidth: 0.2, Lambda: 1e-5},
		{Kernel: KernelLaplace, Bandwidth: 1, Lambda: 0.1},
		{Kernel: kernelLinear, Lambda: 0.3},
	} {
		got, err := kr.LOO(x, y)
		if err != nil {
			t.Fatalf("%+v: %v", kr, err)
		}
		var sum float64
		for i := range n {
			xi := mat.NewDense(n-1, 2, nil)
			yi := make([]float64, 0, n-1)
			for k, r := 0, 0; k < n; k++ {
				if k != i {
					xi.SetRow(r, x.RawRowView(k))
					yi = append(yi, y[k])
					r++
				}
			}
			tr := NewTrain(xi, yi)
			tr.Test = mat.NewDense(1, 2, x.RawRowView(i))
			// Penalty matrix nλI on n−1 rows: λ' = nλ/(n−1).
			f := (&KernelRidge{Kernel: kr.Kernel, Bandwidth: kr.Bandwidth}).Path(tr, spec.ParamLambda, []float64{kr.Lambda * n / (n - 1)})[0]
			if f.Err != nil {
				t.Fatal(f.Err)
			}
			e := y[i] - f.Pred[0]
			sum += e * e
		}
		want := sum / n
		// Tolerance: both sides are stable solves with condition f.Cond;
		// the smallest penalty here gives κ ≈ 1e5, so 1e-9 relative.
		if !scalar.EqualWithinRel(got, want, 1e-9) {
			t.Errorf("LOO(%+v) = %.15g, want brute force %.15g (tol 1e-9)", kr, got, want)
		}
		if kr.Kernel == kernelLinear {
			r, err := RidgeLOO(x, y, kr.Lambda, false)
			if err != nil || !scalar.EqualWithinRel(got, r, 1e-12) {
				t.Errorf("linear kernel LOO = %.15g, RidgeLOO = %.15g (%v)", got, r, err)
			}
		}
	}
	// The interpolant has H = I: leave-one-out is undefined.
	if _, err := (&KernelRidge{Bandwidth: 0.1}).LOO(x, y); !errors.Is(err, ErrLeverage) {
		t.Errorf("LOO at λ = 0 error = %v, want ErrLeverage", err)
	}
	if _, err := (&KernelRidge{Bandwidth: 0, Lambda: 1}).LOO(x, y); !errors.Is(err, ErrParam) {
		t.Errorf("LOO at h = 0 error = %v, want ErrParam", err)
	}
}

func TestKernelRidgeBadInput(t *testing.T) {
	x, y := uniform(2, 12, 2, 1)
	nan := mat.DenseCopyOf(x)
	nan.Set(3, 1, math.NaN())
	for _, tc := range []struct {
		name   string
		kr     KernelRidge
		x      *mat.Dense
		knob   string
		values []float64
		want   []error
	}{
		{"bandwidth values", KernelRidge{Lambda: 0.1}, x, spec.ParamBandwidth, []float64{0, -1, 0.5, math.NaN(), math.Inf(1)},
			[]error{ErrValue, ErrValue, nil, ErrValue, ErrValue}},
		{"lambda values", KernelRidge{Bandwidth: 1}, x, spec.ParamLambda, []float64{-1, 0, math.Inf(1), 1},
			[]error{ErrValue, nil, ErrValue, nil}},
		{"zero Bandwidth", KernelRidge{Lambda: 1}, x, spec.ParamLambda, []float64{1, 2}, []error{ErrParam, ErrParam}},
		{"negative Lambda", KernelRidge{Bandwidth: 1, Lambda: -1}, x, spec.ParamNTrain, []float64{5}, []error{ErrParam}},
		{"unknown kernel", KernelRidge{Kernel: "cauchy", Bandwidth: 1}, x, spec.ParamLambda, []float64{1}, []error{ErrParam}},
		{"unknown knob", KernelRidge{Bandwidth: 1}, x, spec.ParamFeatures, []float64{1}, []error{ErrKnob}},
		{"n_train range", KernelRidge{Bandwidth: 1, Lambda: 0.1}, x, spec.ParamNTrain, []float64{0, 1, 12, 13, 2.5},
			[]error{ErrValue, nil, nil, ErrValue, ErrValue}},
		{"NaN input", KernelRidge{Bandwidth: 1}, nan, spec.ParamLambda, []float64{1}, []error{ErrNotFinite}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			fits := tc.kr.Path(NewTrain(tc.x, y), tc.knob, tc.values)
			for i, want := range tc.want {
				if got := fits[i].Err; !errors.Is(got, want) || (want == nil) != (got == nil) {
					t.Errorf("Path(%s=%v).Err = %v, want %v", tc.knob, tc.values[i], got, want)
				}
			}
		})
	}
	for _, tc := range []struct {
		m   spec.Model
		err error
	}{
		{spec.Model{Family: spec.FamilyKernelRidge, Params: map[string]float64{"bandwidth": 0.5}, Options: map[string]string{"kernel": "laplace"}}, nil},
		{spec.Model{Family: spec.FamilyKernelRidge, Options: map[string]string{"kernel": "gaussian"}}, nil}, // bandwidth grid
		{spec.Model{Family: spec.FamilyKernelRidge, Params: map[string]float64{"bandwidth": 0}}, ErrParam},
		{spec.Model{Family: spec.FamilyKernelRidge, Lambda: -2, Params: map[string]float64{"bandwidth": 1}}, ErrParam},
		{spec.Model{Family: spec.FamilyKernelRidge, Options: map[string]string{"kernel": "linear2"}}, ErrParam},
	} {
		f, err := New(tc.m)
		if !errors.Is(err, tc.err) || (err == nil) != (tc.err == nil) {
			t.Errorf("New(%+v) error = %v, want %v", tc.m, err, tc.err)
			continue
		}
		if err == nil {
			k := f.(*KernelRidge)
			if k.Kernel != tc.m.Options["kernel"] || k.Bandwidth != tc.m.Params["bandwidth"] || k.Lambda != tc.m.Lambda {
				t.Errorf("New(%+v) = %+v", tc.m, k)
			}
		}
	}
}

// sklearnRef is testdata/kernel_sklearn.json: kernel ridge and k-NN values
// computed with scikit-learn 1.2.1 (a reference library; see
// testdata/kernel_sklearn.md).
type sklearnRef struct {
	X           [][]float64 `json:"x"`
	Y           []float64   `json:"y"`
	Test        [][]float64 `json:"test"`
	KernelRidge []struct {
		Kernel    string    `json:"kernel"`
		Bandwidth float64   `json:"bandwidth"`
		Lambda    float64   `json:"lambda"`
		Pred      []float64 `json:"pred"`
		TrainRisk float64   `json:"train_risk"`
		RKHSNorm  float64   `json:"rkhs_norm"`
	} `json:"kernel_ridge"`
	Neighbours []struct {
		K         int       `json:"k"`
		Pred      []float64 `json:"pred"`
		TrainRisk float64   `json:"train_risk"`
	} `json:"neighbours"`
}

func loadSklearn(t *testing.T) (ref sklearnRef, tr func() *Train) {
	t.Helper()
	raw, err := os.ReadFile(filepath.Join("..", "testdata", "kernel_sklearn.json"))
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(raw, &ref); err != nil {
		t.Fatalf("kernel_sklearn.json: %v", err)
	}
	rows := func(a [][]float64) *mat.Dense {
		m := mat.NewDense(len(a), len(a[0]), nil)
		for i, r := range a {
			m.SetRow(i, r)
		}
		return m
	}
	x, test := rows(ref.X), rows(ref.Test)
	return ref, func() *Train {
		t := NewTrain(x, ref.Y)
		t.Test = test
		return t
	}
}

// TestKernelRidgeSklearn: predictions, training risk and RKHS norm against
// scikit-learn's KernelRidge (α = nλ), by every route.
func TestKernelRidgeSklearn(t *testing.T) {
	ref, tr := loadSklearn(t)
	n := float64(len(ref.Y))
	if len(ref.KernelRidge) == 0 {
		t.Fatal("no kernel ridge cases")
	}
	for _, c := range ref.KernelRidge {
		kr := &KernelRidge{Kernel: c.Kernel, Bandwidth: c.Bandwidth, Lambda: c.Lambda}
		for _, f := range []Fit{
			(&KernelRidge{Kernel: c.Kernel, Bandwidth: c.Bandwidth}).Path(tr(), spec.ParamLambda, []float64{c.Lambda})[0],
			kr.Path(tr(), spec.ParamBandwidth, []float64{c.Bandwidth})[0],
			kr.Path(tr(), spec.ParamNTrain, []float64{n})[0],
		} {
			name := fmt.Sprintf("%s h=%g λ=%g %s", c.Kernel, c.Bandwidth, c.Lambda, f.Method)
			if f.Err != nil {
				t.Fatalf("%s: %v", name, f.Err)
			}
			// Tolerance: testdata/kernel_sklearn.md, 100·n·eps·κ.
			tol := 100 * n * eps * f.Cond
			t.Logf("%s: cond %.3g, tol %.2g", name, f.Cond, tol)
			if e := relDist(f.Pred, c.Pred); !(e <= tol) {
				t.Errorf("%s: predictions rel. distance %g from scikit-learn, want ≤ %g", name, e, tol)
			}
			check(t, name+" train risk", f.TrainRisk, c.TrainRisk, tol)
			check(t, name+" RKHS norm", f.Norm, c.RKHSNorm, tol)
		}
	}
}

// TestKernelRidgeCholeskyFallback: with a bandwidth far above the spread of
// the inputs, K is 11ᵀ up to terms below rounding and K + nλI with a tiny
// λ is not numerically positive definite: the single-λ fit falls back to
// the eigendecomposition and equals the λ path's fit.
func TestKernelRidgeCholeskyFallback(t *testing.T) {
	x, y := uniform(31, 30, 2, 1)
	const h, l = 1e4, 1e-20
	tr := NewTrain(x, y)
	tr.Test = x
	single := (&KernelRidge{Bandwidth: h, Lambda: l}).Path(tr, spec.ParamBandwidth, []float64{h})[0]
	path := (&KernelRidge{Bandwidth: h}).Path(tr, spec.ParamLambda, []float64{l})[0]
	if single.Err != nil || path.Err != nil {
		t.Fatal(single.Err, path.Err)
	}
	if single.Method != "eigen" {
		t.Fatalf("method %s (cond %g), want the eigen fallback", single.Method, single.Cond)
	}
	// The same computation on the same matrix.
	if relDist(single.Pred, path.Pred) != 0 || single.DF != path.DF || single.Norm != path.Norm {
		t.Errorf("fallback fit differs from the λ path: df %v vs %v, norm %v vs %v", single.DF, path.DF, single.Norm, path.Norm)
	}
	// A penalty below the rounding of K: the condition number says so.
	if !(single.Cond > 1/eps) {
		t.Errorf("cond = %g, want > 1/eps for nλ below the rounding of K", single.Cond)
	}
}

// TestKernelRidgeCholeskyDFSmall: with a large penalty the fit has few
// degrees of freedom, and the Cholesky route must not lose them to the
// subtraction df = n − nλ·tr((K + nλI)⁻¹), which cancels to about n·eps
// absolute (measured before the fix: 1e-7 relative at λ = 1e6, 7e-5 at
// λ = 1e9, n = 100). Reference: df = Σ_j μ_j/(μ_j + nλ) over the
// eigenvalues of K, a sum of positive terms (The Elements of Statistical
// Learning, 2nd ed., 2009, eq. (3.50), textbook), with μ_j from gonum's
// mat.EigenSym on K built by the defining formula. Tolerance: relative
// 1e-10, n·eps·(a few hundred) for sums of n positive terms.
func TestKernelRidgeCholeskyDFSmall(t *testing.T) {
	const n, h = 100, 0.5
	x, y := uniform(5, n, 2, 1)
	k := kernelMatrix(KernelGaussian, h, x, x)
	sym := mat.NewSymDense(n, nil)
	for i := range n {
		for j := i; j < n; j++ {
			sym.SetSym(i, j, k.At(i, j))
		}
	}
	var eig mat.EigenSym
	if !eig.Factorize(sym, false) {
		t.Fatal("reference eigendecomposition failed")
	}
	mu := eig.Values(nil)
	for _, l := range []float64{1e3, 1e6, 1e9} {
		var want float64
		for _, m := range mu {
			want += max(m, 0) / (max(m, 0) + n*l)
		}
		f := (&KernelRidge{Bandwidth: h, Lambda: l}).Path(NewTrain(x, y), spec.ParamBandwidth, []float64{h})[0]
		if f.Err != nil {
			t.Fatal(f.Err)
		}
		if f.Method != "cholesky" {
			t.Fatalf("λ=%g: method %s, want cholesky", l, f.Method)
		}
		if e := math.Abs(f.DF-want) / want; !(e <= 1e-10) {
			t.Errorf("λ=%g: df = %.17g, reference Σμ/(μ+nλ) = %.17g (rel. error %.2g, want ≤ 1e-10)", l, f.DF, want, e)
		}
	}
}
