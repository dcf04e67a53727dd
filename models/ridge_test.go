package models

import (
	"encoding/json"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"testing"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"

	"riskgrid/spec"
)

// diabetesRef is testdata/diabetes_ridge.json: reference values computed
// with R 4.2.2 and numpy 1.24.2 (two independent implementations agreeing
// to ≥ 12.4 significant digits; see testdata/diabetes.md).
type diabetesRef struct {
	N   int `json:"n"`
	P   int `json:"p"`
	OLS struct {
		Intercept    float64   `json:"intercept"`
		Coefficients []float64 `json:"coefficients"`
		DF           float64   `json:"df"`
		LOOCV        float64   `json:"loocv"`
		Sigma        float64   `json:"sigma"`
	} `json:"ols"`
	Ridge map[string]struct {
		Intercept    float64   `json:"intercept"`
		Coefficients []float64 `json:"coefficients"`
		DF           float64   `json:"df"`
		LOOCV        float64   `json:"loocv"`
	} `json:"ridge"`
}

func loadDiabetes(t testing.TB) (x *mat.Dense, y []float64, ref diabetesRef) {
	t.Helper()
	header, data := loadCSV(t, "diabetes.csv")
	raw, err := os.ReadFile(filepath.Join("..", "testdata", "diabetes_ridge.json"))
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(raw, &ref); err != nil {
		t.Fatalf("diabetes_ridge.json: %v", err)
	}
	n, c := data.Dims()
	if n != ref.N || c != ref.P+1 || header[c-1] != "y" {
		t.Fatalf("diabetes.csv is %d×%d (target %q), reference says n = %d, p = %d", n, c, header[c-1], ref.N, ref.P)
	}
	return sub(data, 0, ref.P), column(data, ref.P), ref
}

// diabetesTol: testdata/diabetes.md, "a relative tolerance of 1e-9 is safe
// for a float64 implementation" (the two references agree to 12.4 digits).
const diabetesTol = 1e-9

func TestRidgeDiabetes(t *testing.T) {
	x, y, ref := loadDiabetes(t)
	var keys []string
	var lambdas []float64
	for _, k := range []string{"0.01", "0.1", "1", "10", "100"} {
		if _, ok := ref.Ridge[k]; !ok {
			t.Fatalf("reference lacks λ = %s", k)
		}
		v, _ := strconv.ParseFloat(k, 64)
		keys = append(keys, k)
		lambdas = append(lambdas, v)
	}
	path := (&Ridge{Intercept: true}).Path(NewTrain(x, y), spec.ParamLambda, lambdas)
	for i, key := range keys {
		want := ref.Ridge[key]
		lambda := lambdas[i]
		r := &Ridge{Lambda: lambda, Intercept: true}
		for _, tc := range []struct {
			name string
			fit  Fit
		}{
			{"lambda path", path[i]},
			{"lambda single", (&Ridge{Intercept: true}).Path(NewTrain(x, y), spec.ParamLambda, []float64{lambda})[0]},
			{"features", r.Path(NewTrain(x, y), spec.ParamFeatures, []float64{3, 10})[1]},
			{"n_train", r.Path(NewTrain(x, y), spec.ParamNTrain, []float64{442})[0]},
		} {
			f := tc.fit
			if f.Err != nil {
				t.Fatalf("λ=%s %s: %v", key, tc.name, f.Err)
			}
			t.Logf("λ=%s %s: method %s, cond %.3g", key, tc.name, f.Method, f.Cond)
			check(t, "λ="+key+" "+tc.name+" intercept", f.Intercept, want.Intercept, diabetesTol)
			for j, w := range want.Coefficients {
				check(t, "λ="+key+" "+tc.name+" coef "+strconv.Itoa(j), f.Coef[j], w, diabetesTol)
			}
			check(t, "λ="+key+" "+tc.name+" df", f.DF, want.DF, diabetesTol)
		}
		loo, err := RidgeLOO(x, y, lambda, true)
		if err != nil {
			t.Fatal(err)
		}
		check(t, "λ="+key+" loocv", loo, want.LOOCV, diabetesTol)
	}
	// OLS: least squares with intercept, ridge at λ = 0 and the LOO PRESS/n.
	ols := ref.OLS
	for _, tc := range []struct {
		name string
		fit  Fit
	}{
		{"least squares", (&LeastSquares{Intercept: true}).Path(NewTrain(x, y), spec.ParamFeatures, []float64{10})[0]},
		{"ridge λ=0 path", (&Ridge{Intercept: true}).Path(NewTrain(x, y), spec.ParamLambda, []float64{0})[0]},
		{"ridge λ=0 features", (&Ridge{Intercept: true}).Path(NewTrain(x, y), spec.ParamFeatures, []float64{10})[0]},
	} {
		f := tc.fit
		if f.Err != nil {
			t.Fatalf("%s: %v", tc.name, f.Err)
		}
		check(t, "OLS "+tc.name+" intercept", f.Intercept, ols.Intercept, diabetesTol)
		for j, w := range ols.Coefficients {
			check(t, "OLS "+tc.name+" coef "+strconv.Itoa(j), f.Coef[j], w, diabetesTol)
		}
		check(t, "OLS "+tc.name+" df", f.DF, ols.DF, 0)
		n := float64(ref.N)
		check(t, "OLS "+tc.name+" sigma", math.Sqrt(n*f.TrainRisk/(n-11)), ols.Sigma, diabetesTol)
	}
	loo, err := RidgeLOO(x, y, 0, true)
	if err != nil {
		t.Fatal(err)
	}
	check(t, "OLS loocv", loo, ols.LOOCV, diabetesTol)
}

func check(t *testing.T, name string, got, want, tol float64) {
	t.Helper()
	if !scalar.EqualWithinAbsOrRel(got, want, 0, tol) {
		t.Errorf("%s = %.15g, want %.15g (tol %g)", name, got, want, tol)
	}
}

// TestRidgeFeaturesMatchesLambdaPath: the Cholesky routes of the features
// path against the SVD of the λ path on the same p columns.
func TestRidgeFeaturesMatchesLambdaPath(t *testing.T) {
	const n, d = 50, 200
	ps := []float64{5, 20, 49, 50, 51, 80, 200}
	methods := map[string]bool{}
	for seed := range uint64(3) {
		x, y := gaussian(100+seed, n, d)
		for _, intercept := range []bool{false, true} {
			// λ = 1e-9 forces the SVD fallback near p = n; λ = 50 makes
			// df ≪ p and exercises the cancellation-free df.
			for _, lambda := range []float64{1e-9, 1e-3, 0.1, 1, 50} {
				fits := (&Ridge{Lambda: lambda, Intercept: intercept}).Path(NewTrain(x, y), spec.ParamFeatures, ps)
				for i, pv := range ps {
					p := int(pv)
					f := fits[i]
					want := (&Ridge{Intercept: intercept}).Path(NewTrain(sub(x, 0, p), y), spec.ParamLambda, []float64{lambda})[0]
					if f.Err != nil || want.Err != nil {
						t.Fatalf("p=%d λ=%g: %v, %v", p, lambda, f.Err, want.Err)
					}
					methods[f.Method] = true
					// Tolerance: the Cholesky route errs by ≲ κ·eps with
					// κ ≤ condMax (Matrix Computations, 4th ed., Johns Hopkins
					// University Press, 2013, §4.2; textbook), the
					// SVD route by ≲ κ(X)·eps with κ(X)² ≈ want.Cond; a
					// factor 10·max(n, p) covers the dimension constants.
					tol := 10 * float64(max(n, p)) * eps * min(want.Cond, condMax)
					if e := relDist(f.Coef, want.Coef); !(e <= tol) {
						t.Errorf("p=%d λ=%g intercept %v: features coef rel. distance %g, want ≤ %g (%s, cond %g)",
							p, lambda, intercept, e, tol, f.Method, want.Cond)
					}
					for _, c := range []struct {
						name      string
						got, want float64
					}{
						{"intercept", f.Intercept, want.Intercept},
						{"df", f.DF, want.DF},
						{"train risk", f.TrainRisk, want.TrainRisk},
						{"norm", f.Norm, want.Norm},
					} {
						if !scalar.EqualWithinAbsOrRel(c.got, c.want, tol, tol) {
							t.Errorf("p=%d λ=%g intercept %v: features %s = %v, want %v (tol %g, %s)",
								p, lambda, intercept, c.name, c.got, c.want, tol, f.Method)
						}
					}
				}
			}
		}
	}
	for _, m := range []string{"cholesky", "gram-cholesky", "svd"} {
		if !methods[m] {
			t.Errorf("method %q never used (used %v)", m, methods)
		}
	}
}

// TestRidgeLambdaZeroIsMinNorm: at λ = 0 the λ path gives the minimum-norm
// least-squares fit (the limit λ → 0 of ridge is X⁺y, a textbook identity).
func TestRidgeLambdaZeroIsMinNorm(t *testing.T) {
	x, y := gaussian(21, 30, 70)
	for _, p := range []int{10, 30, 70} {
		xp := sub(x, 0, p)
		got := (&Ridge{Intercept: true}).Path(NewTrain(xp, y), spec.ParamLambda, []float64{0, 1e-12})
		want, want0, cond := pinvFit(t, xp, y, true)
		tol := 10 * float64(max(30, p)) * eps * (cond + cond*cond) // as in TestFeaturesPathReference
		for i, f := range got {
			// λ = 0: rounding only, tol. λ = 1e-12: the SVD filter
			// factors s²/(s² + nλ) (The Elements of Statistical Learning,
			// 2nd ed., Springer, 2009, §3.4.1) move b from X⁺y by up to
			// nλ/s_r² relative, a truncation the rounding bound does not
			// cover (measured 2.6e-10 at p = 30); the floor 1e-9 does.
			lim := tol
			if i == 1 {
				lim = max(tol, 1e-9)
			}
			if e := relDist(f.Coef, want); e > lim || !scalar.EqualWithinAbsOrRel(f.Intercept, want0, lim, lim) {
				t.Errorf("p=%d λ=%g: ridge rel. distance to X⁺y %g, intercept %v want %v (tol %g)", p, []float64{0, 1e-12}[i], e, f.Intercept, want0, lim)
			}
		}
	}
}

func TestRidgeBadInput(t *testing.T) {
	x, y := gaussian(2, 12, 4)
	for _, tc := range []struct {
		name   string
		r      Ridge
		knob   string
		values []float64
		want   []error
	}{
		{"negative λ value", Ridge{}, spec.ParamLambda, []float64{-1, 0.5, math.NaN(), math.Inf(1)},
			[]error{ErrValue, nil, ErrValue, ErrValue}},
		{"negative Lambda", Ridge{Lambda: -0.1}, spec.ParamFeatures, []float64{2, 3}, []error{ErrParam, ErrParam}},
		{"NaN Lambda", Ridge{Lambda: math.NaN()}, spec.ParamNTrain, []float64{5}, []error{ErrParam}},
		{"unknown knob", Ridge{Lambda: 1}, "width", []float64{2}, []error{ErrKnob}},
		{"features range", Ridge{Lambda: 1}, spec.ParamFeatures, []float64{0, 4, 5}, []error{ErrValue, nil, ErrValue}},
		{"n_train range", Ridge{Lambda: 1}, spec.ParamNTrain, []float64{13, 12, 1}, []error{ErrValue, nil, nil}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			fits := tc.r.Path(NewTrain(x, y), tc.knob, tc.values)
			for i, want := range tc.want {
				if got := fits[i].Err; !errors.Is(got, want) || (want == nil) != (got == nil) {
					t.Errorf("Path(%s=%v).Err = %v, want %v", tc.knob, tc.values[i], got, want)
				}
			}
		})
	}
	if _, err := RidgeLOO(x, y, -1, true); !errors.Is(err, ErrParam) {
		t.Errorf("RidgeLOO(λ=-1) error = %v, want ErrParam", err)
	}
	// p > n at λ = 0 interpolates: every leverage is 1, LOO is undefined.
	xw, yw := gaussian(3, 6, 10)
	if _, err := RidgeLOO(xw, yw, 0, false); !errors.Is(err, ErrLeverage) {
		t.Errorf("RidgeLOO(p > n, λ=0) error = %v, want ErrLeverage", err)
	}
}

// TestRidgeLOOBruteForce checks the closed form against n explicit refits
// on n−1 rows that keep the penalty matrix nλI (the definition in
// testdata/diabetes.md; the identity is exact, so only rounding separates
// the two).
func TestRidgeLOOBruteForce(t *testing.T) {
	const n, p = 25, 8
	x, y := gaussian(9, n, p)
	for _, intercept := range []bool{false, true} {
		for _, lambda := range []float64{0, 0.01, 1} {
			got, err := RidgeLOO(x, y, lambda, intercept)
			if err != nil {
				t.Fatal(err)
			}
			var sum float64
			for i := range n {
				xi := mat.NewDense(n-1, p, nil)
				yi := make([]float64, 0, n-1)
				for k, r := 0, 0; k < n; k++ {
					if k == i {
						continue
					}
					xi.SetRow(r, x.RawRowView(k))
					yi = append(yi, y[k])
					r++
				}
				// Penalty matrix nλI on n−1 rows: λ' = nλ/(n−1).
				f := (&Ridge{Intercept: intercept}).Path(NewTrain(xi, yi), spec.ParamLambda, []float64{lambda * n / (n - 1)})[0]
				if f.Err != nil {
					t.Fatal(f.Err)
				}
				e := y[i] - f.Intercept - floats.Dot(x.RawRowView(i), f.Coef)
				sum += e * e
			}
			want := sum / n
			// Tolerance: both sides are stable solves of κ ≈ 2 problems;
			// 1e-12 relative leaves room for n accumulated roundings.
			if !scalar.EqualWithinRel(got, want, 1e-12) {
				t.Errorf("RidgeLOO(λ=%v, intercept %v) = %.15g, want brute force %.15g (tol 1e-12)", lambda, intercept, got, want)
			}
		}
	}
}
