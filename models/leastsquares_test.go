package models

import (
	"errors"
	"math"
	"testing"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"

	"riskgrid/spec"
)

// Certified values, NIST Statistical Reference Datasets, linear least
// squares, "Longley" (certified with multiple-precision arithmetic; see
// testdata/longley.md).
var longleyCertified = struct {
	b     []float64
	resSD float64
}{
	b: []float64{-3482258.63459582, 15.0618722713733, -0.358191792925910e-01,
		-2.02022980381683, -1.03322686717359, -0.511041056535807e-01, 1829.15146461355},
	resSD: 304.854073561965,
}

func TestLongley(t *testing.T) {
	_, data := loadCSV(t, "longley.csv")
	n, _ := data.Dims()
	y := column(data, 0)
	x := sub(data, 1, 7)
	// Tolerances: testdata/longley.md (a float64 QR reaches 13–15 digits;
	// 1e-9 for the coefficients, 1e-10 for the residual SD leave margin
	// for the cond 4.9e9 design; raw normal equations would fail them).
	const tolB, tolSD = 1e-9, 1e-10
	ls := &LeastSquares{Intercept: true}
	for _, tc := range []struct {
		name   string
		knob   string
		values []float64
		at     int
	}{
		{"n_train=16", spec.ParamNTrain, []float64{16}, 0},
		{"features=6", spec.ParamFeatures, []float64{6}, 0},
		{"features path 1..6", spec.ParamFeatures, []float64{1, 2, 3, 4, 5, 6}, 5},
		{"features path 6 first", spec.ParamFeatures, []float64{6, 2, 4}, 0},
	} {
		t.Run(tc.name, func(t *testing.T) {
			fits := ls.Path(NewTrain(x, y), tc.knob, tc.values)
			f := fits[tc.at]
			if f.Err != nil {
				t.Fatal(f.Err)
			}
			got := append([]float64{f.Intercept}, f.Coef...)
			for j, want := range longleyCertified.b {
				if !scalar.EqualWithinRel(got[j], want, tolB) {
					t.Errorf("B%d = %.15g, want %.15g (tol %g)", j, got[j], want, tolB)
				}
			}
			sd := math.Sqrt(float64(n) * f.TrainRisk / float64(n-7))
			if !scalar.EqualWithinRel(sd, longleyCertified.resSD, tolSD) {
				t.Errorf("residual SD = %.15g, want %.15g (tol %g)", sd, longleyCertified.resSD, tolSD)
			}
			if f.DF != 7 || f.Method != "qr" {
				t.Errorf("DF, Method = %v, %q, want 7, \"qr\"", f.DF, f.Method)
			}
			// R's kappa(X, exact = TRUE) of [1 X] is 4.86e9 (longley.md);
			// the reflected design is centred, so its condition is lower but
			// still large: check the estimate is in a sane range.
			if !(f.Cond > 1e3 && f.Cond < 1e11) {
				t.Errorf("Cond = %g, want a value in (1e3, 1e11)", f.Cond)
			}
		})
	}
}

// TestFeaturesPathReference checks the nested-factorization path against
// an independent solve (gonum mat.SVD pseudoinverse of the explicitly
// centred design) on Gaussian designs around the threshold p = n.
func TestFeaturesPathReference(t *testing.T) {
	methods := map[string]bool{}
	worst := map[string]float64{}
	for _, size := range []struct {
		n, d  int
		seeds uint64
		ps    []float64
	}{
		{50, 200, 6, []float64{5, 10, 25, 40, 48, 49, 50, 51, 52, 55, 60, 75, 100, 150, 200}},
		// At n = 200 the Gram matrix just past p = n is too ill-conditioned
		// (κ(X)² ≈ 6e5 at p = 201), so the QR-of-transpose route is used.
		{200, 240, 2, []float64{150, 199, 200, 201, 202, 205, 240}},
	} {
		if testing.Short() && size.n > 50 {
			continue
		}
		n, ps := size.n, size.ps
		for seed := range size.seeds {
			x, y := gaussian(seed, n, size.d)
			for _, intercept := range []bool{false, true} {
				ls := &LeastSquares{Intercept: intercept}
				fits := ls.Path(NewTrain(x, y), spec.ParamFeatures, ps)
				for i, pv := range ps {
					p := int(pv)
					f := fits[i]
					if f.Err != nil {
						t.Fatalf("seed %d intercept %v p %d: %v", seed, intercept, p, f.Err)
					}
					methods[f.Method] = true
					xp := sub(x, 0, p)
					want, want0, cond := pinvFit(t, xp, y, intercept)
					// Tolerance: a backward-stable least-squares solver has
					// relative forward error ≲ c·eps·(κ + κ²·tanθ) (Matrix
					// Computations, 4th ed., Johns Hopkins University Press,
					// 2013, §5.3.8, textbook bound; tanθ = ‖r‖/‖ŷ‖ ≤ ~1 here). The Gram route adds
					// condMax·eps ≈ 2e-11 at most. Both computations err, so
					// c = 10·max(n, p) covers the dimension factors of the bound.
					tol := 10*float64(max(n, p))*eps*(cond+cond*cond) + 10*condMax*eps
					e := relDist(f.Coef, want)
					worst[f.Method] = max(worst[f.Method], e)
					if !(e <= tol) {
						t.Errorf("seed %d intercept %v: Path(p=%d) coef rel. error %g, want ≤ %g (cond %g, %s)",
							seed, intercept, p, e, tol, cond, f.Method)
					}
					if intercept && !scalar.EqualWithinAbsOrRel(f.Intercept, want0, tol, tol) {
						t.Errorf("seed %d: Path(p=%d) intercept = %v, want %v (tol %g)", seed, p, f.Intercept, want0, tol)
					}
					rank := float64(min(p, n-btoi(intercept)))
					if f.DF != rank+float64(btoi(intercept)) {
						t.Errorf("seed %d intercept %v: Path(p=%d) DF = %v, want %v", seed, intercept, p, f.DF, rank+float64(btoi(intercept)))
					}
					// Training risk from the definition (1/n)‖y − b0 − Xb‖².
					r := make([]float64, n)
					for k := range n {
						r[k] = y[k] - f.Intercept - floats.Dot(xp.RawRowView(k), f.Coef)
					}
					risk := floats.Dot(r, r) / float64(n)
					// Tolerance: both sides evaluate the same residual sum in
					// a different order, so they differ by ~ n·eps·κ relative
					// (κ ≲ 1e3 on these grids); 1e-10 leaves margin over the
					// measured 3.2e-15. Past p = n the risk is a rounding
					// residue (measured ≤ 8.5e-29), hence the absolute
					// 1e-20·mean(y²) as in TestMinNormRowSpace.
					riskTol := 1e-20 * floats.Dot(y, y) / float64(n)
					if !scalar.EqualWithinAbsOrRel(f.TrainRisk, risk, riskTol, 1e-10) {
						t.Errorf("seed %d: Path(p=%d) TrainRisk = %v, want %v (tol 1e-10)", seed, p, f.TrainRisk, risk)
					}
					// Norm is defined as ‖Coef‖₂: equal up to summation order, p·eps.
					if !scalar.EqualWithinRel(f.Norm, floats.Norm(f.Coef, 2), 1e-14) {
						t.Errorf("Norm = %v, want ‖Coef‖ = %v", f.Norm, floats.Norm(f.Coef, 2))
					}
				}
			}
		}
	}
	t.Logf("largest relative distance to the reference, by method: %v", worst)
	for _, m := range []string{"qr", "gram-cholesky", "qr-transpose"} {
		if !methods[m] && !(testing.Short() && m == "qr-transpose") { // qr-transpose needs the n = 200 case
			t.Errorf("method %q never used on the grid (used: %v)", m, methods)
		}
	}
}

func btoi(b bool) int {
	if b {
		return 1
	}
	return 0
}

// TestMinNormRowSpace checks the defining property of the minimum-norm
// solution (textbook: X⁺y lies in the row space of X; Matrix Computations,
// 4th ed., Johns Hopkins University Press, 2013, §5.5.4): b = Xᵀw for some w, so the
// component of b orthogonal to the row space vanishes.
func TestMinNormRowSpace(t *testing.T) {
	const n, d = 40, 160
	x, y := gaussian(7, n, d)
	ps := []float64{41, 45, 60, 100, 160}
	fits := (&LeastSquares{}).Path(NewTrain(x, y), spec.ParamFeatures, ps)
	for i, pv := range ps {
		p := int(pv)
		f := fits[i]
		if f.Err != nil {
			t.Fatal(f.Err)
		}
		// Project b onto the column space of X_pᵀ (p×n, tall) by QR.
		var qr mat.QR
		qr.Factorize(sub(x, 0, p).T())
		var q mat.Dense
		qr.QTo(&q)
		qn := q.Slice(0, p, 0, n)
		b := mat.NewVecDense(p, f.Coef)
		var c, proj mat.VecDense
		c.MulVec(qn.T(), b)
		proj.MulVec(qn, &c)
		perp := relDist(proj.RawVector().Data, f.Coef)
		// Tolerance: rounding in b and in the projection, ~ p·eps·κ(X_p)
		// with κ ≤ ~1e2 for these aspect ratios (κ is (√p+√n)/(√p−√n)
		// for Gaussian designs, the Marchenko–Pastur edges; "Distribution
		// of eigenvalues for some sets of random matrices", Mathematics of
		// the USSR-Sbornik 1(4), 1967, title from memory), so 1e-10 is
		// generous.
		if perp > 1e-10 {
			t.Errorf("p=%d: ‖b − P_row b‖/‖b‖ = %g, want ≤ 1e-10 (%s)", p, perp, f.Method)
		}
		// Interpolation: X_p b = y (p > n, full row rank). The residual is
		// rounding, ‖r‖ ≲ c·κ·eps·‖y‖, so TrainRisk = ‖r‖²/n is of order
		// (1e2·2.2e-16)²·‖y‖² ≈ 5e-28·‖y‖² (measured ≤ 1.9e-29·‖y‖²);
		// 1e-20 leaves margin while a non-interpolating fit fails it.
		if f.TrainRisk > 1e-20*floats.Dot(y, y) {
			t.Errorf("p=%d: TrainRisk = %g, want ≈ 0 (interpolation)", p, f.TrainRisk)
		}
	}
}

// TestRankDeficient uses a textbook identity: if column 2 duplicates
// column 1 the minimum-norm solution splits the single-column OLS slope β
// evenly, (β/2, β/2), since that is the least-norm point of b1 + b2 = β.
func TestRankDeficient(t *testing.T) {
	const n = 30
	x0, y := gaussian(3, n, 3)
	x := mat.NewDense(n, 4, nil)
	for i := range n {
		x.Set(i, 0, x0.At(i, 0))
		x.Set(i, 1, x0.At(i, 0))
		x.Set(i, 2, x0.At(i, 1))
		x.Set(i, 3, x0.At(i, 2))
	}
	for _, intercept := range []bool{false, true} {
		ls := &LeastSquares{Intercept: intercept}
		fits := ls.Path(NewTrain(x, y), spec.ParamFeatures, []float64{1, 2, 4})
		one, two, four := fits[0], fits[1], fits[2]
		for _, f := range fits {
			if f.Err != nil {
				t.Fatal(f.Err)
			}
		}
		// Reference for the full fit: the same identity applied to the
		// full-rank 3-column problem on x0.
		ref := ls.Path(NewTrain(x0, y), spec.ParamFeatures, []float64{3})[0]
		const tol = 1e-12 // well-conditioned 30×3 problems: κ ≈ 1.5
		for _, c := range []struct {
			name      string
			got, want float64
		}{
			{"p=2 b1", two.Coef[0], one.Coef[0] / 2},
			{"p=2 b2", two.Coef[1], one.Coef[0] / 2},
			{"p=2 b0", two.Intercept, one.Intercept},
			{"p=2 risk", two.TrainRisk, one.TrainRisk},
			{"p=4 b1", four.Coef[0], ref.Coef[0] / 2},
			{"p=4 b2", four.Coef[1], ref.Coef[0] / 2},
			{"p=4 b3", four.Coef[2], ref.Coef[1]},
			{"p=4 b4", four.Coef[3], ref.Coef[2]},
			{"p=4 b0", four.Intercept, ref.Intercept},
		} {
			if !scalar.EqualWithinAbsOrRel(c.got, c.want, tol, tol) {
				t.Errorf("intercept %v: %s = %v, want %v (tol %g)", intercept, c.name, c.got, c.want, tol)
			}
		}
		if two.Method != "svd" || two.DF != 1+float64(btoi(intercept)) || !math.IsInf(two.Cond, 1) && two.Cond < 1e14 {
			t.Errorf("intercept %v: p=2 Method, DF, Cond = %q, %v, %v, want svd, rank 1, huge", intercept, two.Method, two.DF, two.Cond)
		}
	}
}

// TestNTrainPath: the n_train knob fits the first n rows; compare with the
// independent pseudoinverse route on those rows.
func TestNTrainPath(t *testing.T) {
	x, y := gaussian(11, 80, 30)
	ns := []float64{10, 29, 30, 31, 50, 80}
	for _, intercept := range []bool{false, true} {
		fits := (&LeastSquares{Intercept: intercept}).Path(NewTrain(x, y), spec.ParamNTrain, ns)
		for i, nv := range ns {
			n := int(nv)
			f := fits[i]
			if f.Err != nil {
				t.Fatal(f.Err)
			}
			xn := mat.DenseCopyOf(x.Slice(0, n, 0, 30))
			want, want0, cond := pinvFit(t, xn, y[:n], intercept)
			tol := 10*float64(max(n, 30))*eps*(cond+cond*cond) + 10*condMax*eps // as in TestFeaturesPathReference
			if e := relDist(f.Coef, want); !(e <= tol) || !scalar.EqualWithinAbsOrRel(f.Intercept, want0, tol, tol) {
				t.Errorf("intercept %v: Path(n=%d) rel. error %g, intercept %v want %v (tol %g)", intercept, n, e, f.Intercept, want0, tol)
			}
		}
	}
}

func TestLeastSquaresBadInput(t *testing.T) {
	x, y := gaussian(1, 10, 5)
	ls := &LeastSquares{Intercept: true}
	for _, tc := range []struct {
		name   string
		knob   string
		values []float64
		want   []error // per value, nil = success
	}{
		{"unknown knob", "depth", []float64{1, 2}, []error{ErrKnob, ErrKnob}},
		{"lambda knob", spec.ParamLambda, []float64{0.1}, []error{ErrKnob}},
		{"features out of range", spec.ParamFeatures, []float64{0, 2, 6, 2.5, math.NaN(), -1, math.Inf(1)},
			[]error{ErrValue, nil, ErrValue, ErrValue, ErrValue, ErrValue, ErrValue}},
		{"n_train out of range", spec.ParamNTrain, []float64{1, 11, 10, 0.5}, []error{nil, ErrValue, nil, ErrValue}},
		{"empty grid", spec.ParamFeatures, nil, nil},
	} {
		t.Run(tc.name, func(t *testing.T) {
			fits := ls.Path(NewTrain(x, y), tc.knob, tc.values)
			if len(fits) != len(tc.values) {
				t.Fatalf("len(Path) = %d, want %d", len(fits), len(tc.values))
			}
			for i, want := range tc.want {
				if got := fits[i].Err; !errors.Is(got, want) || (want == nil) != (got == nil) {
					t.Errorf("Path(%s=%v).Err = %v, want %v", tc.knob, tc.values[i], got, want)
				}
				if want != nil && fits[i].Err.Error() == "" {
					t.Errorf("empty error message")
				}
			}
		})
	}
	// One training row with an intercept: the intercept interpolates it.
	f := ls.Path(NewTrain(x, y), spec.ParamNTrain, []float64{1})[0]
	if f.Intercept != y[0] || f.TrainRisk != 0 || f.Norm != 0 || f.DF != 1 {
		t.Errorf("Path(n=1) = %+v, want intercept %v, zero slopes", f, y[0])
	}
	// Non-finite data spoils every fit, with an error.
	xb := mat.DenseCopyOf(x)
	xb.Set(3, 1, math.NaN())
	for _, f := range ls.Path(NewTrain(xb, y), spec.ParamFeatures, []float64{1, 2, 5}) {
		if !errors.Is(f.Err, ErrNotFinite) {
			t.Errorf("NaN in x: Err = %v, want ErrNotFinite", f.Err)
		}
	}
}

// FuzzPathValues asserts that no grid value makes Path panic and that each
// fit either carries an error or finite numbers.
func FuzzPathValues(f *testing.F) {
	f.Add(3.0, 12.0, 0.5, false)
	f.Add(-1.0, 1e300, 0.0, true)
	x, y := gaussian(5, 8, 12)
	f.Fuzz(func(t *testing.T, a, b, lambda float64, intercept bool) {
		vals := []float64{a, b}
		var fits []Fit
		for _, knob := range []string{spec.ParamFeatures, spec.ParamNTrain, spec.ParamLambda, "x"} {
			fits = append(fits, (&LeastSquares{Intercept: intercept}).Path(NewTrain(x, y), knob, vals)...)
			fits = append(fits, (&Ridge{Lambda: lambda, Intercept: intercept}).Path(NewTrain(x, y), knob, vals)...)
		}
		for _, f := range fits {
			if f.Err != nil {
				_ = f.Err.Error()
				continue
			}
			if math.IsNaN(f.TrainRisk) || math.IsNaN(f.Norm) || math.IsNaN(f.DF) || math.IsNaN(f.Intercept) {
				t.Errorf("fit without error has NaN: %+v", f)
			}
		}
	})
}
