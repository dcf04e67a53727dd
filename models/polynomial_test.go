package models

import (
	"errors"
	"math"
	"reflect"
	"testing"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"

	"riskgrid/data"
	"riskgrid/spec"
)

// The recurrences against closed forms. Source: "Handbook of Mathematical
// Functions", NBS Applied Mathematics Series 55, 1964, Table 22.9 (explicit
// Legendre polynomials) and 22.3.15 (T_k(cos θ) = cos kθ); textbook
// identities, from memory.
func TestPolynomialRecurrence(t *testing.T) {
	q := make([]float64, 31)
	for _, x := range []float64{-1, -0.73, -0.2, 0, 0.31, 0.5, 0.99, 1} {
		orthonormalRow(BasisLegendre, x, q[:5])
		want := []float64{1, x, (3*x*x - 1) / 2, (5*x*x*x - 3*x) / 2, (35*x*x*x*x - 30*x*x + 3) / 8}
		for k, w := range want {
			if got := q[k] / math.Sqrt(float64(2*k+1)); math.Abs(got-w) > 1e-14 {
				t.Errorf("P_%d(%v) = %v, want %v", k, x, got, w)
			}
		}
		th := math.Acos(x)
		orthonormalRow(BasisChebyshev, x, q)
		for k := range q {
			got := q[k]
			if k > 0 {
				got /= math.Sqrt2
			}
			// cos kθ is computed to about k·eps·|sin| near the ends.
			if w := math.Cos(float64(k) * th); math.Abs(got-w) > 1e-13 {
				t.Errorf("T_%d(cos %v) = %v, want cos(%dθ) = %v", k, th, got, k, w)
			}
		}
	}
}

// Orthonormality: with the n-point Gauss–Legendre rule (exact for degree
// ≤ 2n − 1), (1/2) Σ w_i q_j(x_i) q_k(x_i) = δ_jk for j + k ≤ 2n − 1; at the
// n Chebyshev–Gauss nodes cos((2i − 1)π/(2n)), (1/n) Σ q_j q_k = δ_jk for
// j, k < n (discrete orthogonality). Sources: "Handbook of Mathematical
// Functions", 1964, 25.4.29 and 22.2.10, 22.2.4; "Chebyshev Polynomials",
// Chapman & Hall/CRC, 2003, §4.6 (textbook identities, from memory).
func TestPolynomialOrthonormal(t *testing.T) {
	const n = 20
	x, w := data.GaussLegendre(n)
	check := func(name string, nodes, weights []float64, basis string, deg int) {
		g := make([]float64, (deg+1)*(deg+1))
		q := make([]float64, deg+1)
		for i, xi := range nodes {
			orthonormalRow(basis, xi, q)
			for j := range q {
				for k := range q {
					g[j*(deg+1)+k] += weights[i] * q[j] * q[k]
				}
			}
		}
		for j := range deg + 1 {
			for k := range deg + 1 {
				want := 0.0
				if j == k {
					want = 1
				}
				if e := math.Abs(g[j*(deg+1)+k] - want); e > 1e-12 {
					t.Errorf("%s: <q_%d, q_%d> = %v, want %v", name, j, k, g[j*(deg+1)+k], want)
				}
			}
		}
	}
	half := make([]float64, n)
	floats.ScaleTo(half, 0.5, w)
	check("legendre, Gauss–Legendre", x, half, BasisLegendre, n-1)
	cheb := make([]float64, n)
	eq := make([]float64, n)
	for i := range n {
		cheb[i] = math.Cos(float64(2*i+1) * math.Pi / (2 * n))
		eq[i] = 1.0 / n
	}
	check("chebyshev, Chebyshev–Gauss", cheb, eq, BasisChebyshev, n-1)
}

// cubic is the test truth 1 − 2x + 0.5x³ on [0, 3].
func cubic(x float64) float64 { return 1 - 2*x + 0.5*x*x*x }

// uniformLine returns n inputs uniform on [lo, hi] and f at them, from a
// seeded stream.
func uniformLine(seed uint64, n int, lo, hi float64, f func(float64) float64, sd float64) (*mat.Dense, []float64) {
	s := data.NewStream("polynomial test line", seed)
	x := mat.NewDense(n, 1, nil)
	y := make([]float64, n)
	for i := range n {
		v := lo + (hi-lo)*s.Float64()
		x.Set(i, 0, v)
		y[i] = f(v) + sd*s.Normal()
	}
	return x, y
}

// With no noise a polynomial truth of degree ≤ D is in the span of the
// basis, so least squares recovers it exactly (to rounding) at every
// degree D ≥ 3 up to the interpolation degree, at training and test
// inputs. Textbook: a consistent system has zero residual, and its
// least-squares solution is unique when Q has full column rank.
func TestPolynomialExactRecovery(t *testing.T) {
	x, y := uniformLine(1, 40, 0, 3, cubic, 0)
	test := mat.NewDense(7, 1, []float64{0, 0.4, 1, 1.7, 2.2, 2.9, 3})
	truth := make([]float64, 7)
	for i := range truth {
		truth[i] = cubic(test.At(i, 0))
	}
	for _, basis := range []string{BasisLegendre, BasisChebyshev} {
		p := &Polynomial{Low: 0, High: 3, Basis: basis}
		tr := NewTrain(x, y)
		tr.Test = test
		degrees := []float64{3, 5, 10, 20}
		for i, f := range p.Path(tr, spec.ParamDegree, degrees) {
			if f.Err != nil {
				t.Fatalf("%s degree %v: %v", basis, degrees[i], f.Err)
			}
			// The solve is backward stable: error ≈ cond·eps relative.
			tol := 100 * f.Cond * eps
			if e := relDist(f.Pred, truth); e > tol {
				t.Errorf("%s degree %v: predictions rel. error %.2g, want ≤ %.2g", basis, degrees[i], e, tol)
			}
			if f.TrainRisk > tol*tol*floats.Dot(y, y)/40 {
				t.Errorf("%s degree %v: TrainRisk = %g, want ~0", basis, degrees[i], f.TrainRisk)
			}
			if f.DF != degrees[i]+1 {
				t.Errorf("%s degree %v: DF = %v, want %v", basis, degrees[i], f.DF, degrees[i]+1)
			}
		}
	}
}

// vandermonde returns the raw-power design x^k, k = 0..deg.
func vandermonde(x *mat.Dense, deg int) *mat.Dense {
	n, _ := x.Dims()
	v := mat.NewDense(n, deg+1, nil)
	for i := range n {
		for k := range deg + 1 {
			v.Set(i, k, math.Pow(x.At(i, 0), float64(k)))
		}
	}
	return v
}

// Why the orthogonal basis: on n uniform inputs, (1/n)QᵀQ → I (the q_k are
// orthonormal for the input law; the law of large numbers), so cond(Q) → 1,
// while the raw powers 1, x, …, x^D form a Vandermonde matrix whose
// condition number grows exponentially with D (monomials are nearly
// dependent on an interval: "Approximation Theory and Approximation
// Practice", SIAM, 2013, on the monomial basis; from memory). Measured at
// D = 15 on 200 inputs from [0, 3]: Legendre about 4, raw powers about
// 1e13. At the Chebyshev–Gauss nodes the Chebyshev design is exactly
// orthogonal: cond 1.
func TestPolynomialConditioning(t *testing.T) {
	const n, deg = 200, 15
	x, y := uniformLine(2, n, 0, 3, math.Sin, 0.1)
	leg := (&Polynomial{Low: 0, High: 3, Basis: BasisLegendre}).Path(NewTrain(x, y), spec.ParamDegree, []float64{deg})[0]
	raw := (&LeastSquares{}).Path(NewTrain(vandermonde(x, deg), y), spec.ParamFeatures, []float64{deg + 1})[0]
	t.Logf("degree %d on %d uniform inputs: cond %.3g (legendre), %.3g (raw powers)", deg, n, leg.Cond, raw.Cond)
	if leg.Err != nil || raw.Err != nil {
		t.Fatal(leg.Err, raw.Err)
	}
	if leg.Cond > 20 || raw.Cond < 1e8 {
		t.Errorf("cond = %.3g (legendre), %.3g (raw powers); want ≤ 20 and ≥ 1e8", leg.Cond, raw.Cond)
	}
	// Same fit, within the raw route's error cond·eps.
	if math.Abs(leg.TrainRisk-raw.TrainRisk) > 100*raw.Cond*eps*leg.TrainRisk {
		t.Errorf("TrainRisk %v (legendre) vs %v (raw powers)", leg.TrainRisk, raw.TrainRisk)
	}
	nodes := mat.NewDense(n, 1, nil)
	for i := range n {
		nodes.Set(i, 0, math.Cos(float64(2*i+1)*math.Pi/(2*n)))
	}
	q := (&Polynomial{Low: -1, High: 1, Basis: BasisChebyshev}).basis(nodes, deg)
	var svd mat.SVD
	svd.Factorize(q, mat.SVDNone)
	if c := svd.Cond(); math.Abs(c-1) > 1e-12 {
		t.Errorf("Chebyshev design at the Chebyshev–Gauss nodes: cond %v, want 1", c)
	}
}

// At the interpolation degree n − 1 the fit interpolates; beyond it the
// fit is the minimum-norm interpolant, checked against the pseudoinverse
// of the basis matrix (gonum's SVD; Matrix Computations, 4th ed., 2013,
// §5.5), and ridge against the normal equations.
func TestPolynomialInterpolation(t *testing.T) {
	const n = 30
	x, y := uniformLine(3, n, -2, 2, math.Sin, 0.3)
	test := mat.NewDense(5, 1, []float64{-1.9, -0.5, 0.1, 1.2, 1.95})
	for _, basis := range []string{BasisLegendre, BasisChebyshev} {
		for _, lambda := range []float64{0, 1e-4} {
			p := &Polynomial{Low: -2, High: 2, Basis: basis, Lambda: lambda}
			tr := NewTrain(x, y)
			tr.Test = test
			degrees := []float64{n - 1, 2 * n, 10}
			fits := p.Path(tr, spec.ParamDegree, degrees)
			for i, f := range fits {
				if f.Err != nil {
					t.Fatalf("%s λ=%v degree %v: %v", basis, lambda, degrees[i], f.Err)
				}
				deg := int(degrees[i])
				q := p.basis(x, deg)
				c, df, cond := bruteRidge(t, q, y, lambda)
				var pred mat.VecDense
				pred.MulVec(p.basis(test, deg), mat.NewVecDense(deg+1, c))
				tol := 100 * cond * eps
				if e := relDist(f.Pred, pred.RawVector().Data); e > tol {
					t.Errorf("%s λ=%v degree %d: predictions rel. error %.2g, want ≤ %.2g", basis, lambda, deg, e, tol)
				}
				if e := math.Abs(f.Norm-floats.Norm(c, 2)) / floats.Norm(c, 2); e > tol {
					t.Errorf("%s λ=%v degree %d: Norm %v, want %v", basis, lambda, deg, f.Norm, floats.Norm(c, 2))
				}
				if math.Abs(f.DF-df) > 1e-8*df {
					t.Errorf("%s λ=%v degree %d: DF %v, want %v", basis, lambda, deg, f.DF, df)
				}
				if lambda == 0 && deg >= n-1 {
					if f.TrainRisk > 1e-20*floats.Dot(y, y)/n || f.DF != n {
						t.Errorf("%s degree %d: TrainRisk %g, DF %v; want an interpolant (~0, %d)", basis, deg, f.TrainRisk, f.DF, n)
					}
				}
			}
		}
	}
}

// The knobs reach the same fit by different routes.
func TestPolynomialKnobsAgree(t *testing.T) {
	const n = 50
	x, y := uniformLine(4, n, -1, 1, math.Exp, 0.2)
	test := mat.NewDense(3, 1, []float64{-0.9, 0, 0.7})
	for _, lambda := range []float64{0, 0.01} {
		p := &Polynomial{Degree: 8, Lambda: lambda, Low: -1, High: 1, Basis: BasisChebyshev}
		tr := NewTrain(x, y)
		tr.Test = test
		byDeg := p.Path(tr, spec.ParamDegree, []float64{8})[0]
		for _, knob := range []string{spec.ParamLambda, spec.ParamNTrain} {
			v := lambda
			if knob == spec.ParamNTrain {
				v = n
			}
			f := p.Path(tr, knob, []float64{v})[0]
			if f.Err != nil || byDeg.Err != nil {
				t.Fatal(f.Err, byDeg.Err)
			}
			if e := relDist(f.Pred, byDeg.Pred); e > 1e-12 {
				t.Errorf("λ=%v: %s route differs from the degree route by %.2g", lambda, knob, e)
			}
		}
	}
}

func TestPolynomialBadInput(t *testing.T) {
	x, y := uniformLine(5, 20, -1, 1, math.Sin, 0.1)
	p := &Polynomial{Low: -1, High: 1, Basis: BasisLegendre, Degree: 3}
	check := func(name string, fits []Fit, want ...error) {
		t.Helper()
		for i, f := range fits {
			if (want[i] == nil) != (f.Err == nil) || (want[i] != nil && !errors.Is(f.Err, want[i])) {
				t.Errorf("%s: fit %d error = %v, want %v", name, i, f.Err, want[i])
			}
		}
	}
	check("degrees", p.Path(NewTrain(x, y), spec.ParamDegree, []float64{-1, 2.5, math.NaN(), math.Inf(1), 0, 4}),
		ErrValue, ErrValue, ErrValue, ErrValue, nil, nil)
	neg := *p
	neg.Lambda = -0.1
	check("λ < 0", neg.Path(NewTrain(x, y), spec.ParamDegree, []float64{2}), ErrParam)
	check("λ grid < 0", p.Path(NewTrain(x, y), spec.ParamLambda, []float64{-1, 1}), ErrValue, nil)
	negDeg := *p
	negDeg.Degree = -2
	check("degree −2 at fixed degree", negDeg.Path(NewTrain(x, y), spec.ParamNTrain, []float64{10}), ErrParam)
	check("features knob", p.Path(NewTrain(x, y), spec.ParamFeatures, []float64{2}), ErrKnob)
	x2 := mat.NewDense(20, 2, nil)
	check("two inputs", p.Path(NewTrain(x2, y), spec.ParamDegree, []float64{2}), ErrInput)
	bad := *p
	bad.High = -1
	check("high ≤ low", bad.Path(NewTrain(x, y), spec.ParamDegree, []float64{2}), ErrParam)
	xn := mat.DenseCopyOf(x)
	xn.Set(3, 0, math.Inf(-1))
	check("infinite x", p.Path(NewTrain(xn, y), spec.ParamDegree, []float64{2}), ErrNotFinite)
	got, err := New(spec.Model{Family: spec.FamilyPolynomial, Lambda: 0.5,
		Params: map[string]float64{"degree": 4, "low": 0, "high": 2}, Options: map[string]string{"basis": "chebyshev"}})
	want := &Polynomial{Degree: 4, Lambda: 0.5, Low: 0, High: 2, Basis: BasisChebyshev}
	if err != nil || !reflect.DeepEqual(got, want) {
		t.Errorf("New = %#v, %v; want %#v", got, err, want)
	}
	if _, err := New(spec.Model{Family: spec.FamilyPolynomial, Params: map[string]float64{"low": 1, "high": 1},
		Options: map[string]string{"basis": "legendre"}}); !errors.Is(err, ErrParam) {
		t.Errorf("New with low = high: error %v, want ErrParam", err)
	}
}
