package data

import (
	"errors"
	"math"
	"sort"
	"testing"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"

	"riskgrid/spec"
)

// curveSpec returns a curve spec literal (spec.Load is not used).
func curveSpec(n int, edit func(*spec.Data)) *spec.Spec {
	s := &spec.Spec{
		Name: "test",
		Data: spec.Data{
			Source: spec.SourceCurve,
			NTrain: n,
			NTest:  2048,
			Dim:    1,
			Inputs: spec.Inputs{Kind: spec.InputsUniform, Low: -1, High: 1},
			Shape:  spec.Shape{Kind: spec.ShapeSine, Amplitude: 1, Frequency: 1},
			Noise:  spec.Noise{Kind: spec.NoiseGaussian, SD: 0.5},
		},
		Seeds: spec.Seeds{Count: 2, Start: 1},
	}
	if edit != nil {
		edit(&s.Data)
	}
	return s
}

// teacherSpec returns a teacher spec literal.
func teacherSpec(d, n int, edit func(*spec.Data)) *spec.Spec {
	s := &spec.Spec{
		Name: "test",
		Data: spec.Data{
			Source:  spec.SourceTeacher,
			NTrain:  n,
			NTest:   200,
			Dim:     d,
			Inputs:  spec.Inputs{Kind: spec.InputsGaussian},
			Teacher: spec.Teacher{Kind: spec.TeacherSingleIndex, Link: spec.LinkReLU},
			Noise:   spec.Noise{Kind: spec.NoiseGaussian, SD: 0.5},
		},
		Seeds: spec.Seeds{Count: 2, Start: 1},
	}
	if edit != nil {
		edit(&s.Data)
	}
	return s
}

// wsum returns Σ_j w_j h(x_j, y_j) over a problem's test set.
func wsum(p *Problem, h func(x, y float64) float64) float64 {
	var s float64
	for j, y := range p.TestY {
		s += p.TestW[j] * h(p.TestX.At(j, 0), y)
	}
	return s
}

// gaussMoments returns E X^k, k = 0..K, for X ~ N(mu, sd²), by the
// recurrence m_k = μ m_{k−1} + (k−1) σ² m_{k−2} (Stein's identity
// E[X g(X)] = μ E g + σ² E g'; textbook).
func gaussMoments(mu, sd float64, K int) []float64 {
	m := make([]float64, K+1)
	m[0] = 1
	if K >= 1 {
		m[1] = mu
	}
	for k := 2; k <= K; k++ {
		m[k] = mu*m[k-1] + float64(k-1)*sd*sd*m[k-2]
	}
	return m
}

// polySquare returns the coefficients of p(x)².
func polySquare(c []float64) []float64 {
	out := make([]float64, 2*len(c)-1)
	for i, a := range c {
		for j, b := range c {
			out[i+j] += a * b
		}
	}
	return out
}

// TestCurveQuadrature checks that the weighted test set of a curve gives
// the mean and the mean square of f* under the input law, E f*(X) and
// E f*(X)², against closed forms (textbook calculus and Gaussian
// identities, named per case). The mean square is what a risk on the test
// set sums: Σ_j w_j (0 − f*(x_j))² is the risk of the zero fit.
func TestCurveQuadrature(t *testing.T) {
	Phi := func(z float64) float64 { return 0.5 * math.Erfc(-z/math.Sqrt2) }
	type tc = struct {
		name      string
		edit      func(*spec.Data)
		mean, msq float64
		tol       float64
		lo, hi    float64 // the nodes' range
		source    string
	}
	var tests []tc
	{
		// ∫ A sin(ωx+φ) dx = −A cos(ωx+φ)/ω; ∫ sin² = x/2 − sin(2(ωx+φ))/(4ω).
		const A, nu, ph, a, b = 1.5, 2.3, 0.4, -0.5, 2
		om := 2 * math.Pi * nu
		prim := func(x float64) float64 { return x/2 - math.Sin(2*(om*x+ph))/(4*om) }
		tests = append(tests, tc{"sine uniform", func(d *spec.Data) {
			d.Shape = spec.Shape{Kind: spec.ShapeSine, Amplitude: A, Frequency: nu, Phase: ph}
			d.Inputs = spec.Inputs{Kind: spec.InputsUniform, Low: a, High: b}
		}, A * (math.Cos(om*a+ph) - math.Cos(om*b+ph)) / om / (b - a), A * A * (prim(b) - prim(a)) / (b - a),
			1e-13, a, b, "calculus"})
	}
	{
		// A step on [0, 3] at 1.2: mean (L·1.2 + R·1.8)/3, exact with the
		// panel edge at the jump.
		const L, R = -1, 2
		tests = append(tests, tc{"step uniform", func(d *spec.Data) {
			d.Shape = spec.Shape{Kind: spec.ShapeStep, At: 1.2, Left: L, Right: R}
			d.Inputs = spec.Inputs{Kind: spec.InputsUniform, Low: 0, High: 3}
			d.NTest = 1000
		}, (L*1.2 + R*1.8) / 3, (L*L*1.2 + R*R*1.8) / 3, 1e-13, 0, 3, "calculus"})
	}
	{
		// A step under N(0.3, 0.8²) at 0.5: P(X < 0.5) = Φ((0.5−0.3)/0.8).
		const L, R = 1, -3
		p := Phi((0.5 - 0.3) / 0.8)
		tests = append(tests, tc{"step gaussian", func(d *spec.Data) {
			d.Shape = spec.Shape{Kind: spec.ShapeStep, At: 0.5, Left: L, Right: R}
			d.Inputs = spec.Inputs{Kind: spec.InputsGaussian, Mean: 0.3, SD: 0.8}
		}, L*p + R*(1-p), L*L*p + R*R*(1-p), 1e-13, 0.3 - 8*0.8, 0.3 + 8*0.8, "normal CDF via math.Erfc"})
	}
	{
		// A cubic under uniform [-1, 1]: ∫ x^k dx / 2 = 1/(k+1) for even k.
		c := []float64{1, 0.5, -3, 2}
		mom := func(k int) float64 {
			if k%2 == 1 {
				return 0
			}
			return 1 / float64(k+1)
		}
		var mean, msq float64
		for k, v := range c {
			mean += v * mom(k)
		}
		for k, v := range polySquare(c) {
			msq += v * mom(k)
		}
		tests = append(tests, tc{"polynomial uniform", func(d *spec.Data) {
			d.Shape = spec.Shape{Kind: spec.ShapePolynomial, Coefficients: c}
		}, mean, msq, 1e-13, -1, 1, "calculus"})
	}
	{
		// A cubic under N(1, 2²): Gaussian raw moments by Stein's identity.
		// f*² has degree 6: the rule's truncation loses about 2φ(8)·8⁵·σ⁶
		// relative to E X⁶ (see gaussianRange), 3e-10 relative.
		c := []float64{1, 0.5, -3, 0.25}
		m := gaussMoments(1, 2, 6)
		var mean, msq float64
		for k, v := range c {
			mean += v * m[k]
		}
		for k, v := range polySquare(c) {
			msq += v * m[k]
		}
		tests = append(tests, tc{"polynomial gaussian", func(d *spec.Data) {
			d.Shape = spec.Shape{Kind: spec.ShapePolynomial, Coefficients: c}
			d.Inputs = spec.Inputs{Kind: spec.InputsGaussian, Mean: 1, SD: 2}
		}, mean, msq, 1e-9 * msq, 1 - 16, 1 + 16, "Gaussian moments (Stein's identity)"})
	}
	{
		// Whole frequencies on [0, 1]: the terms are orthogonal, so
		// E f*² = Σ (a_k² + b_k²)/2 and E f* = 0 (Parseval; textbook).
		a, b := []float64{0.5, 0, -1}, []float64{1, 2, 0.25}
		var msq float64
		for k := range a {
			msq += (a[k]*a[k] + b[k]*b[k]) / 2
		}
		tests = append(tests, tc{"fourier uniform", func(d *spec.Data) {
			d.Shape = spec.Shape{Kind: spec.ShapeFourier, Frequencies: []float64{1, 3, 7}, Cos: a, Sin: b}
			d.Inputs = spec.Inputs{Kind: spec.InputsUniform, Low: 0, High: 1}
		}, 0, msq, 1e-13, 0, 1, "Parseval"})
	}
	{
		// E cos(ωX) = cos(ωμ) e^{−ω²σ²/2}, E sin(ωX) = sin(ωμ) e^{−ω²σ²/2}
		// (the normal characteristic function); for the square,
		// cos² = (1 + cos 2θ)/2.
		const mu, sd, nu, A = 0.2, 0.7, 0.6, 1.3
		om := 2 * math.Pi * nu
		ecos := func(w float64) float64 { return math.Cos(w*mu) * math.Exp(-w*w*sd*sd/2) }
		tests = append(tests, tc{"fourier gaussian", func(d *spec.Data) {
			d.Shape = spec.Shape{Kind: spec.ShapeFourier, Frequencies: []float64{nu}, Cos: []float64{A}, Sin: []float64{0}}
			d.Inputs = spec.Inputs{Kind: spec.InputsGaussian, Mean: mu, SD: sd}
		}, A * ecos(om), A * A * (1 + ecos(2*om)) / 2, 1e-13, mu - 8*sd, mu + 8*sd, "normal characteristic function"})
	}
	for _, c := range tests {
		t.Run(c.name, func(t *testing.T) {
			s := curveSpec(10, c.edit)
			p := mustNew(t, s, "quad").Problem()
			if p.TestBasis != TestQuadrature || p.Sigma != nil || p.Beta != nil || !p.TruthKnown || p.Dim != 1 {
				t.Fatalf("Problem: basis %q, Sigma %v, Beta %v, TruthKnown %v, Dim %d; want quadrature, nil, nil, true, 1",
					p.TestBasis, p.Sigma, p.Beta, p.TruthKnown, p.Dim)
			}
			m, cols := p.TestX.Dims()
			if m != s.Data.NTest || cols != 1 || len(p.TestY) != m || len(p.TestW) != m {
				t.Fatalf("test set %d×%d, %d values, %d weights; want %d×1", m, cols, len(p.TestY), len(p.TestW), s.Data.NTest)
			}
			xs := mat.Col(nil, 0, p.TestX)
			if !sort.Float64sAreSorted(xs) || xs[0] <= c.lo || xs[m-1] >= c.hi {
				t.Errorf("nodes not ascending inside (%g, %g): first %g last %g", c.lo, c.hi, xs[0], xs[m-1])
			}
			if sum := floats.Sum(p.TestW); !scalar.EqualWithinAbs(sum, 1, float64(m)*0x1p-52) {
				t.Errorf("Σw = %.17g, want 1", sum)
			}
			for j, w := range p.TestW {
				if !(w > 0) {
					t.Fatalf("weight %d = %v, want > 0", j, w)
				}
			}
			mean := wsum(p, func(_, y float64) float64 { return y })
			msq := wsum(p, func(_, y float64) float64 { return y * y })
			if !scalar.EqualWithinAbsOrRel(mean, c.mean, c.tol, c.tol) {
				t.Errorf("Σ w f* = %.17g, want E f* = %.17g (%s; tol %g)", mean, c.mean, c.source, c.tol)
			}
			if !scalar.EqualWithinAbsOrRel(msq, c.msq, c.tol, c.tol) {
				t.Errorf("Σ w f*² = %.17g, want E f*² = %.17g (%s; tol %g)", msq, c.msq, c.source, c.tol)
			}
			if p.NoiseVar != s.Data.Noise.SD*s.Data.Noise.SD {
				t.Errorf("NoiseVar = %v, want sd² = %v", p.NoiseVar, s.Data.Noise.SD*s.Data.Noise.SD)
			}
		})
	}
}

// TestCurveStepNeedsBreak shows the break at the jump matters: the same
// rule without it misses E f* of a step by O(h), far beyond the 1e-13 of
// TestCurveQuadrature. (Guards the test above against passing vacuously.)
func TestCurveStepNeedsBreak(t *testing.T) {
	x, w := uniformRule(1000, 0, 3, nil)
	var got float64
	for j := range x {
		if x[j] >= 1.21 {
			got += w[j]
		}
	}
	if want := 1.79 / 3; math.Abs(got-want) < 1e-6 {
		t.Errorf("a jump inside a panel integrated to %g (error %g): expected an O(h) error", got, got-want)
	}
}

// TestCurveDraws compares one large draw with the population moments of
// its law (textbook): uniform x: mean (a+b)/2, variance (b−a)²/12, Var x²
// finite; Gaussian x: mean μ, E(x−μ)² = σ² (variance of the summand 2σ⁴);
// the residual r = y − f*(x) = ε: mean 0, E r² = sd² (Gaussian noise:
// Var ε² = 2 sd⁴). Tolerances are 5 standard errors.
func TestCurveDraws(t *testing.T) {
	n := 40000
	if testing.Short() {
		n = 8000
	}
	fn := float64(n)
	for _, c := range []struct {
		name string
		in   spec.Inputs
		mean float64
		vr   float64 // Var x
		v4   float64 // Var of (x−mean)²
	}{
		{"uniform", spec.Inputs{Kind: spec.InputsUniform, Low: 1, High: 4}, 2.5, 9.0 / 12, 81.0/80 - 81.0/144},
		{"gaussian", spec.Inputs{Kind: spec.InputsGaussian, Mean: -1, SD: 1.5}, -1, 2.25, 2 * 2.25 * 2.25},
	} {
		t.Run(c.name, func(t *testing.T) {
			s := curveSpec(n, func(d *spec.Data) {
				d.Inputs = c.in
				d.Shape = spec.Shape{Kind: spec.ShapePolynomial, Coefficients: []float64{0.5, -1, 0.25}}
			})
			src := mustNew(t, s, "draws")
			smp := mustDraw(t, src, 3)
			if smp.Beta != nil {
				t.Errorf("Sample.Beta = %v, want nil", smp.Beta)
			}
			x := mat.Col(nil, 0, smp.X)
			var m1, m2, r1, r2 float64
			f := src.(*curve).f
			for i, v := range x {
				m1 += v
				m2 += (v - c.mean) * (v - c.mean)
				r := smp.Y[i] - f(v)
				r1 += r
				r2 += r * r
			}
			m1, m2, r1, r2 = m1/fn, m2/fn, r1/fn, r2/fn
			sd := s.Data.Noise.SD
			for _, k := range []struct {
				what            string
				got, want, sdev float64
			}{
				{"mean x", m1, c.mean, math.Sqrt(c.vr)},
				{"E(x−μ)²", m2, c.vr, math.Sqrt(c.v4)},
				{"mean ε", r1, 0, sd},
				{"E ε²", r2, sd * sd, math.Sqrt2 * sd * sd},
			} {
				if tol := 5 * k.sdev / math.Sqrt(fn); !scalar.EqualWithinAbs(k.got, k.want, tol) {
					t.Errorf("%s = %v, want %v (tol %g)", k.what, k.got, k.want, tol)
				}
			}
			if c.in.Kind == spec.InputsUniform && (floats.Min(x) < 1 || floats.Max(x) >= 4) {
				t.Errorf("uniform inputs outside [1, 4): min %g max %g", floats.Min(x), floats.Max(x))
			}
		})
	}
}

// meanSE returns the sample mean of v and its standard error sd/√n.
func meanSE(v []float64) (mean, se float64) {
	n := float64(len(v))
	mean = floats.Sum(v) / n
	var ss float64
	for _, x := range v {
		ss += (x - mean) * (x - mean)
	}
	return mean, math.Sqrt(ss / (n - 1) / n)
}

// TestTeacherMonteCarlo checks the Monte Carlo test set of a teacher, and
// so the teachers themselves, against closed-form Gaussian expectations,
// each within 5 of the test set's own standard errors:
//
//   - relu: E relu(Z) = 1/√(2π), E relu(Z)² = 1/2 (half-normal moments,
//     textbook); on the sphere wᵀx is symmetric with E (wᵀx)² = 1, so
//     E relu(wᵀx)² = 1/2 exactly there too;
//   - he2, he3: E He_k(Z) = 0, E He_k(Z)² = k! (orthogonality of the
//     probabilists' Hermite polynomials, textbook);
//   - two-layer: E f*² = Σ_kl a_k a_l κ(w_k, w_l) with the degree-1
//     arc-cosine kernel E relu(uᵀx) relu(vᵀx) = ‖u‖‖v‖(sin θ + (π − θ) cos θ)/(2π),
//     θ the angle between u and v ("Kernel methods for deep learning",
//     NeurIPS 2009), and E f* = Σ_k a_k ‖w_k‖/√(2π).
func TestTeacherMonteCarlo(t *testing.T) {
	m := 40000
	if testing.Short() {
		m = 10000
	}
	const d = 20
	type check struct {
		what string
		h    func(y float64) float64
		want float64
	}
	mean := func(y float64) float64 { return y }
	square := func(y float64) float64 { return y * y }
	tests := []struct {
		name   string
		edit   func(*spec.Data)
		checks func(g *teacher) []check
	}{
		{"relu gaussian", nil, func(*teacher) []check {
			return []check{{"E relu", mean, 1 / math.Sqrt(2*math.Pi)}, {"E relu²", square, 0.5}}
		}},
		{"relu sphere", func(dd *spec.Data) { dd.Inputs.Kind = spec.InputsSphere }, func(*teacher) []check {
			return []check{{"E relu²", square, 0.5}}
		}},
		{"he2", func(dd *spec.Data) { dd.Teacher.Link = spec.LinkHe2 }, func(*teacher) []check {
			return []check{{"E He2", mean, 0}, {"E He2²", square, 2}}
		}},
		{"he3", func(dd *spec.Data) { dd.Teacher.Link = spec.LinkHe3 }, func(*teacher) []check {
			return []check{{"E He3", mean, 0}, {"E He3²", square, 6}}
		}},
		{"two-layer", func(dd *spec.Data) { dd.Teacher = spec.Teacher{Kind: spec.TeacherTwoLayer, Width: 7} }, func(g *teacher) []check {
			K := len(g.a)
			row := func(k int) []float64 { return g.W[k*d : (k+1)*d] }
			var m1, m2 float64
			for k := range K {
				nk := floats.Norm(row(k), 2)
				m1 += g.a[k] * nk / math.Sqrt(2*math.Pi)
				for l := range K {
					nl := floats.Norm(row(l), 2)
					cos := math.Max(-1, math.Min(1, dot(row(k), row(l))/(nk*nl)))
					th := math.Acos(cos)
					m2 += g.a[k] * g.a[l] * nk * nl * (math.Sin(th) + (math.Pi-th)*cos) / (2 * math.Pi)
				}
			}
			return []check{{"E f*", mean, m1}, {"E f*²", square, m2}}
		}},
	}
	for _, c := range tests {
		t.Run(c.name, func(t *testing.T) {
			s := teacherSpec(d, 5, func(dd *spec.Data) {
				dd.NTest = m
				if c.edit != nil {
					c.edit(dd)
				}
			})
			src := mustNew(t, s, "mc")
			g := src.(*teacher)
			p := src.Problem()
			if p.TestBasis != TestMonteCarlo || p.TestW != nil || p.Sigma != nil || p.Beta != nil || !p.TruthKnown {
				t.Fatalf("Problem: basis %q, TestW %v, Sigma %v, Beta %v, TruthKnown %v; want monte-carlo, nil, nil, nil, true",
					p.TestBasis, p.TestW != nil, p.Sigma, p.Beta, p.TruthKnown)
			}
			if g.dir != nil {
				if nrm := floats.Norm(g.dir, 2); !scalar.EqualWithinAbs(nrm, 1, 1e-15) {
					t.Errorf("‖w‖ = %.17g, want 1", nrm)
				}
			}
			for _, k := range c.checks(g) {
				v := make([]float64, len(p.TestY))
				for i, y := range p.TestY {
					v[i] = k.h(y)
				}
				got, se := meanSE(v)
				if tol := 5 * se; !scalar.EqualWithinAbs(got, k.want, tol) {
					t.Errorf("%s over the test set = %v, want %v (tol 5 SE = %g)", k.what, got, k.want, tol)
				}
			}
			// TestY is f* at TestX.
			for i := range 5 {
				if y := g.f(p.TestX.RawRowView(i)); y != p.TestY[i] {
					t.Errorf("TestY[%d] = %v, want f*(TestX[%d]) = %v", i, p.TestY[i], i, y)
				}
			}
			if s.Data.Inputs.Kind == spec.InputsSphere {
				for i := range m {
					r := p.TestX.RawRowView(i)
					if n2 := dot(r, r); !scalar.EqualWithinRel(n2, d, 1e-13) {
						t.Fatalf("test input %d: ‖x‖² = %v, want d = %d", i, n2, d)
					}
				}
			}
		})
	}
}

// TestTeacherDraws checks the training draws: E x_j² = 1, E x_j x_k = 0
// for both input laws (E xxᵀ = I on the sphere of radius √d by symmetry),
// and the residual y − f*(x) = ε with mean 0 and E ε² = sd², 5 SE.
func TestTeacherDraws(t *testing.T) {
	n := 20000
	if testing.Short() {
		n = 5000
	}
	const d = 6
	fn := float64(n)
	for _, kind := range []string{spec.InputsGaussian, spec.InputsSphere} {
		s := teacherSpec(d, n, func(dd *spec.Data) {
			dd.Inputs.Kind = kind
			dd.Teacher = spec.Teacher{Kind: spec.TeacherTwoLayer, Width: 5}
		})
		src := mustNew(t, s, "tdraw")
		g := src.(*teacher)
		smp := mustDraw(t, src, 2)
		if smp.Beta != nil {
			t.Errorf("%s: Sample.Beta = %v, want nil", kind, smp.Beta)
		}
		var xx [d][d]float64
		var r1, r2 float64
		for i := range n {
			row := smp.X.RawRowView(i)
			for j := range d {
				for k := range d {
					xx[j][k] += row[j] * row[k] / fn
				}
			}
			r := smp.Y[i] - g.f(row)
			r1 += r / fn
			r2 += r * r / fn
		}
		// Var x_j² ≤ 2 (Gaussian: 2; sphere: smaller), Var x_j x_k ≤ 1.
		for j := range d {
			for k := range d {
				want, sdev := 0.0, 1.0
				if j == k {
					want, sdev = 1, math.Sqrt2
				}
				if tol := 5 * sdev / math.Sqrt(fn); !scalar.EqualWithinAbs(xx[j][k], want, tol) {
					t.Errorf("%s: E x_%d x_%d = %v, want %v (tol %g)", kind, j+1, k+1, xx[j][k], want, tol)
				}
			}
		}
		sd := s.Data.Noise.SD
		if tol := 5 * sd / math.Sqrt(fn); !scalar.EqualWithinAbs(r1, 0, tol) {
			t.Errorf("%s: mean ε = %v, want 0 (tol %g)", kind, r1, tol)
		}
		if tol := 5 * math.Sqrt2 * sd * sd / math.Sqrt(fn); !scalar.EqualWithinAbs(r2, sd*sd, tol) {
			t.Errorf("%s: E ε² = %v, want %v (tol %g)", kind, r2, sd*sd, tol)
		}
	}
}

// TestCorruption checks the corruption rule against the clean draw of the
// same key: inputs and uncorrupted targets are the same numbers, the
// corrupted share is q within 5 binomial SE, and the corrupted targets are
// random labels: their law is the marginal of y (E y² = E f*² + sd²,
// with E f*² = A²/2 for a sine of whole frequency on [0, 1], Parseval) but
// they are uncorrelated with their own f*(x_i) (E y f*(x) = (E f*)² = 0,
// against A²/2 for a clean row). 5 SE each (Var of y², y f* bounded by
// E y⁴ ≤ 3(A² + sd²)² for a sine plus Gaussian noise).
func TestCorruption(t *testing.T) {
	n := 40000
	if testing.Short() {
		n = 10000
	}
	const q, A, sd = 0.3, 2.0, 0.5
	edit := func(c float64) func(*spec.Data) {
		return func(d *spec.Data) {
			d.Inputs = spec.Inputs{Kind: spec.InputsUniform, Low: 0, High: 1}
			d.Shape = spec.Shape{Kind: spec.ShapeSine, Amplitude: A, Frequency: 2}
			d.Noise.SD = sd
			d.Corrupt = c
		}
	}
	clean := mustDraw(t, mustNew(t, curveSpec(n, edit(0)), "corrupt"), 5)
	src := mustNew(t, curveSpec(n, edit(q)), "corrupt")
	dirty := mustDraw(t, src, 5)
	if !mat.Equal(clean.X, dirty.X) {
		t.Fatalf("corruption changed the inputs")
	}
	f := src.(*curve).f
	var nc int
	var y2, yf []float64
	for i, y := range dirty.Y {
		if y == clean.Y[i] {
			continue
		}
		nc++
		y2 = append(y2, y*y)
		yf = append(yf, y*f(dirty.X.At(i, 0)))
	}
	fn := float64(n)
	if got, tol := float64(nc)/fn, 5*math.Sqrt(q*(1-q)/fn); !scalar.EqualWithinAbs(got, q, tol) {
		t.Errorf("corrupted share = %v, want %v (tol %g)", got, q, tol)
	}
	bound := math.Sqrt(3) * (A*A + sd*sd) / math.Sqrt(float64(nc))
	if got, want := floats.Sum(y2)/float64(nc), A*A/2+sd*sd; !scalar.EqualWithinAbs(got, want, 5*bound) {
		t.Errorf("corrupted rows: E y² = %v, want the marginal %v (tol %g)", got, want, 5*bound)
	}
	if got := floats.Sum(yf) / float64(nc); !scalar.EqualWithinAbs(got, 0, 5*bound) {
		t.Errorf("corrupted rows: E y f*(x) = %v, want 0 (tol %g); a clean row gives %v", got, 5*bound, A*A/2)
	}
	if p := src.Problem(); p.NoiseVar != sd*sd {
		t.Errorf("NoiseVar = %v, want the clean sd² = %v", p.NoiseVar, sd*sd)
	}

	// The teacher: same rule. (He3, not relu: two relu targets are both 0
	// a quarter of the time, which would hide a corruption.)
	he3 := func(d *spec.Data) { d.Teacher.Link = spec.LinkHe3 }
	tc := mustDraw(t, mustNew(t, teacherSpec(4, 2000, he3), "tcorrupt"), 1)
	tsrc := mustNew(t, teacherSpec(4, 2000, func(d *spec.Data) { he3(d); d.Corrupt = q }), "tcorrupt")
	td := mustDraw(t, tsrc, 1)
	if !mat.Equal(tc.X, td.X) {
		t.Fatalf("teacher: corruption changed the inputs")
	}
	nc = 0
	for i := range td.Y {
		if td.Y[i] != tc.Y[i] {
			nc++
		}
	}
	if got, tol := float64(nc)/2000, 5*math.Sqrt(q*(1-q)/2000); !scalar.EqualWithinAbs(got, q, tol) {
		t.Errorf("teacher: corrupted share = %v, want %v (tol %g)", got, q, tol)
	}
}

// TestNonlinearNested: the first k rows of a draw of n are the draw of k,
// corruption and Student-t noise included.
func TestNonlinearNested(t *testing.T) {
	noise := spec.Noise{Kind: spec.NoiseStudentT, SD: 1, DF: 3}
	for _, c := range []struct {
		name        string
		small, full *spec.Spec
	}{
		{"curve", curveSpec(30, func(d *spec.Data) { d.Corrupt = 0.4; d.Noise = noise }),
			curveSpec(100, func(d *spec.Data) { d.Corrupt = 0.4; d.Noise = noise })},
		{"curve gaussian step", curveSpec(30, func(d *spec.Data) {
			d.Inputs = spec.Inputs{Kind: spec.InputsGaussian, SD: 1}
			d.Shape = spec.Shape{Kind: spec.ShapeStep, Left: -1, Right: 1}
		}), curveSpec(100, func(d *spec.Data) {
			d.Inputs = spec.Inputs{Kind: spec.InputsGaussian, SD: 1}
			d.Shape = spec.Shape{Kind: spec.ShapeStep, Left: -1, Right: 1}
		})},
		{"teacher sphere two-layer", teacherSpec(9, 30, func(d *spec.Data) {
			d.Inputs.Kind = spec.InputsSphere
			d.Teacher = spec.Teacher{Kind: spec.TeacherTwoLayer, Width: 4}
			d.Corrupt = 0.25
			d.Noise = noise
		}), teacherSpec(9, 100, func(d *spec.Data) {
			d.Inputs.Kind = spec.InputsSphere
			d.Teacher = spec.Teacher{Kind: spec.TeacherTwoLayer, Width: 4}
			d.Corrupt = 0.25
			d.Noise = noise
		})},
	} {
		small := mustDraw(t, mustNew(t, c.small, "nest"), 4)
		big := mustDraw(t, mustNew(t, c.full, "nest"), 4)
		if !rowsEqual(small.X, big.X, 30) || !floats.Equal(small.Y, big.Y[:30]) {
			t.Errorf("%s: the first 30 rows of a draw of 100 are not the draw of 30", c.name)
		}
	}
}

// TestNonlinearSeeds: seeds.truth moves the teacher and its test inputs
// but not the training inputs; the seed moves the sample; a curve's test
// set has no randomness.
func TestNonlinearSeeds(t *testing.T) {
	s := teacherSpec(5, 20, nil)
	a := mustNew(t, s, "seeds")
	s2 := teacherSpec(5, 20, nil)
	s2.Seeds.Truth = 7
	b := mustNew(t, s2, "seeds")
	if floats.Equal(a.(*teacher).dir, b.(*teacher).dir) || mat.Equal(a.Problem().TestX, b.Problem().TestX) {
		t.Errorf("seeds.truth did not change the teacher and its test inputs")
	}
	if !mat.Equal(mustDraw(t, a, 1).X, mustDraw(t, b, 1).X) {
		t.Errorf("seeds.truth changed the training inputs of seed 1")
	}
	if mat.Equal(mustDraw(t, a, 1).X, mustDraw(t, a, 2).X) {
		t.Errorf("seeds 1 and 2 drew the same sample")
	}
	c1 := curveSpec(10, nil)
	c2 := curveSpec(10, nil)
	c2.Seeds.Truth = 3
	if !mat.Equal(mustNew(t, c1, "k1").Problem().TestX, mustNew(t, c2, "k2").Problem().TestX) {
		t.Errorf("a curve's quadrature nodes depend on the key or seeds.truth")
	}
}

func TestNonlinearErrors(t *testing.T) {
	tests := []struct {
		name string
		s    *spec.Spec
		key  string
	}{
		{"curve n_train", curveSpec(0, nil), "n_train"},
		{"curve n_test", curveSpec(5, func(d *spec.Data) { d.NTest = 1 }), "n_test"},
		{"low ≥ high", curveSpec(5, func(d *spec.Data) { d.Inputs.Low = 1 }), "inputs.high"},
		{"inputs sd", curveSpec(5, func(d *spec.Data) { d.Inputs = spec.Inputs{Kind: spec.InputsGaussian, SD: -1} }), "inputs.sd"},
		{"inputs kind", curveSpec(5, func(d *spec.Data) { d.Inputs.Kind = spec.InputsSphere }), "inputs.kind"},
		{"shape kind", curveSpec(5, func(d *spec.Data) { d.Shape.Kind = "square" }), "shape.kind"},
		{"step outside", curveSpec(5, func(d *spec.Data) { d.Shape = spec.Shape{Kind: spec.ShapeStep, At: 1} }), "shape.at"},
		{"no coefficients", curveSpec(5, func(d *spec.Data) { d.Shape = spec.Shape{Kind: spec.ShapePolynomial} }), "shape.coefficients"},
		{"fourier lengths", curveSpec(5, func(d *spec.Data) {
			d.Shape = spec.Shape{Kind: spec.ShapeFourier, Frequencies: []float64{1}, Cos: []float64{1}}
		}), "shape.frequencies"},
		{"sine NaN", curveSpec(5, func(d *spec.Data) { d.Shape.Frequency = math.NaN() }), "shape"},
		{"noise sd", curveSpec(5, func(d *spec.Data) { d.Noise.SD = -0.1 }), "noise.sd"},
		{"noise df", curveSpec(5, func(d *spec.Data) { d.Noise = spec.Noise{Kind: spec.NoiseStudentT, SD: 1, DF: 1.5} }), "noise.df"},
		{"noise kind", teacherSpec(3, 5, func(d *spec.Data) { d.Noise.Kind = "laplace" }), "noise.kind"},
		{"corrupt 1", curveSpec(5, func(d *spec.Data) { d.Corrupt = 1 }), "corrupt"},
		{"corrupt negative", teacherSpec(3, 5, func(d *spec.Data) { d.Corrupt = -0.5 }), "corrupt"},
		{"teacher dim", teacherSpec(0, 5, nil), "dim"},
		{"teacher n_test", teacherSpec(3, 5, func(d *spec.Data) { d.NTest = 0 }), "n_test"},
		{"teacher width", teacherSpec(3, 5, func(d *spec.Data) { d.Teacher = spec.Teacher{Kind: spec.TeacherTwoLayer} }), "teacher.width"},
		{"teacher link", teacherSpec(3, 5, func(d *spec.Data) { d.Teacher.Link = "sigmoid" }), "teacher.link"},
		{"teacher kind", teacherSpec(3, 5, func(d *spec.Data) { d.Teacher.Kind = "deep" }), "teacher.kind"},
		{"teacher inputs", teacherSpec(3, 5, func(d *spec.Data) { d.Inputs.Kind = spec.InputsUniform }), "inputs.kind"},
	}
	for _, c := range tests {
		c.s.Path = "specs/x.toml"
		_, err := New(c.s, "k")
		var se *SpecError
		if !errors.As(err, &se) {
			t.Errorf("%s: New error = %v, want a *SpecError", c.name, err)
			continue
		}
		if se.Key != c.key || se.Path != "specs/x.toml" {
			t.Errorf("%s: error names key %q in %q, want %q in specs/x.toml (%v)", c.name, se.Key, se.Path, c.key, err)
		}
	}
}

// BenchmarkNonlinear measures a source's construction (the test set) and
// one seed's draw.
func BenchmarkNonlinear(b *testing.B) {
	for _, c := range []struct {
		name string
		s    *spec.Spec
	}{
		{"curve/n=200", curveSpec(200, func(d *spec.Data) { d.Corrupt = 0.1 })},
		{"teacher-relu/d=100/n=200", teacherSpec(100, 200, nil)},
		{"teacher-two-layer/d=100/K=100/n=200", teacherSpec(100, 200, func(d *spec.Data) {
			d.Teacher = spec.Teacher{Kind: spec.TeacherTwoLayer, Width: 100}
		})},
	} {
		b.Run("new/"+c.name, func(b *testing.B) {
			for b.Loop() {
				mustNew(b, c.s, "bench")
			}
		})
		b.Run("draw/"+c.name, func(b *testing.B) {
			src := mustNew(b, c.s, "bench")
			seed := uint64(0)
			for b.Loop() {
				seed++
				if _, err := src.Draw(seed); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
