package data

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"riskgrid/spec"
)

// The sources with a non-linear truth f* share their label noise and their
// label corruption:
//
//	y_i = f*(x_i) + ε_i                 with probability 1 − q,
//	y_i = f*(x'_i) + ε_i                with probability q,
//
// ε_i ~ N(0, sd²) or sd·t_ν/sqrt(ν/(ν−2)) (Var ε = sd² either way), and x'_i
// an independent draw of the input law. A corrupted target is thus a
// random label: an exact draw from the marginal law of y (same mean,
// variance and shape), independent of its own input x_i. This is the
// regression counterpart of the random labels of the classification
// studies (common practice, e.g. "Understanding deep learning requires
// rethinking generalization", ICLR 2017, arXiv:1611.03530). It is chosen
// over flipping the sign of y_i, which changes the marginal law whenever f*
// has a non-zero mean and leaves a corrupted target a deterministic
// function of its input. The corruption is for the training sample only:
// the test values are the clean f*, and Problem.NoiseVar is the clean sd².
//
// Row i's corruption decision u_i < q (u_i uniform) and its decoy input
// x'_i come from two streams of their own, (key, tagCorrupt, seed) and
// (key, tagDecoy, seed), with one u_i and one x'_i drawn for every row
// whether or not it is corrupted, so row i's corruption does not depend
// on n_train and samples stay nested; x_i and ε_i are the same draws as
// without corruption.

// labelNoise is the additive noise ε of a non-linear source.
type labelNoise struct {
	sd, df, tScale float64
	student        bool
}

func newLabelNoise(nz spec.Noise, bad func(k, f string, a ...any) error) (labelNoise, error) {
	ln := labelNoise{sd: nz.SD}
	switch nz.Kind {
	case "", spec.NoiseGaussian:
	case spec.NoiseStudentT:
		if !(nz.DF > 2) || math.IsInf(nz.DF, 0) {
			return ln, bad("noise.df", "df = %v, want a finite number > 2 (so Var ε is finite)", nz.DF)
		}
		ln.student, ln.df = true, nz.DF
		ln.tScale = 1 / math.Sqrt(nz.DF/(nz.DF-2))
	default:
		return ln, bad("noise.kind", "unknown noise %q (known: %s, %s)", nz.Kind, spec.NoiseGaussian, spec.NoiseStudentT)
	}
	if !(nz.SD >= 0) || math.IsInf(nz.SD, 0) {
		return ln, bad("noise.sd", "sd = %v, want a finite number ≥ 0", nz.SD)
	}
	return ln, nil
}

// draw returns one ε from st (nothing is drawn when sd = 0).
func (ln labelNoise) draw(st *Stream) float64 {
	switch {
	case ln.sd == 0:
		return 0
	case ln.student:
		return ln.sd * ln.tScale * st.StudentT(ln.df)
	}
	return ln.sd * st.Normal()
}

func checkCorrupt(q float64, bad func(k, f string, a ...any) error) error {
	if !(q >= 0 && q < 1) {
		return bad("corrupt", "corrupt = %v, want a number in [0, 1)", q)
	}
	return nil
}

func checkSizes(dd *spec.Data, bad func(k, f string, a ...any) error) error {
	if dd.NTrain <= 0 {
		return bad("n_train", "n_train = %d, want an integer > 0", dd.NTrain)
	}
	if dd.NTest < 2 {
		return bad("n_test", "n_test = %d, want an integer ≥ 2", dd.NTest)
	}
	return nil
}

// curve is the one-input regression source
//
//	x ~ U[low, high]  or  x ~ N(mean, sd_x²),   y = f*(x) + ε   (corrupted: see above)
//
// with f* one of (spec.Shape)
//
//	sine:        A sin(2πνx + φ)
//	step:        left for x < at, right for x ≥ at
//	polynomial:  Σ_k c_k x^k                       (Horner)
//	fourier:     Σ_k a_k cos(2πν_k x) + b_k sin(2πν_k x)
//
// Its test inputs are the nodes of a quadrature rule of the input law
// (TestBasis TestQuadrature, weights TestW), so that Σ_j w_j (f(x_j) −
// f*(x_j))² is the excess risk E(f(x) − f*(x))² up to the rule's error:
// n_test nodes of a composite Gauss–Legendre rule (compositeLegendre) on
// [low, high] for uniform inputs, and on [mean − 8 sd_x, mean + 8 sd_x]
// with the normal density as weight for Gaussian inputs (normalRule:
// truncation 2Φ(−8) = 1.2e-15 of the mass), with a panel edge at the step
// of a step truth, so f* is smooth on every panel.
type curve struct {
	key   string
	n     int
	in    spec.Inputs
	f     func(float64) float64
	noise labelNoise
	q     float64
	prob  *Problem
}

var _ Source = (*curve)(nil)

func newCurve(s *spec.Spec, key string) (*curve, error) {
	dd := &s.Data
	bad := func(k, format string, args ...any) error {
		return &SpecError{Path: s.Path, Key: k, Msg: fmt.Sprintf(format, args...)}
	}
	if err := checkSizes(dd, bad); err != nil {
		return nil, err
	}
	finite := func(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }
	g := &curve{key: key, n: dd.NTrain, in: dd.Inputs, q: dd.Corrupt}
	switch g.in.Kind {
	case "", spec.InputsUniform:
		g.in.Kind = spec.InputsUniform
		if !finite(g.in.Low) || !finite(g.in.High) || !(g.in.High > g.in.Low) {
			return nil, bad("inputs.high", "[low, high] = [%v, %v], want finite low < high", g.in.Low, g.in.High)
		}
	case spec.InputsGaussian:
		if !finite(g.in.Mean) {
			return nil, bad("inputs.mean", "mean = %v, want a finite number", g.in.Mean)
		}
		if !(g.in.SD > 0) || math.IsInf(g.in.SD, 0) {
			return nil, bad("inputs.sd", "sd = %v, want a finite number > 0", g.in.SD)
		}
	default:
		return nil, bad("inputs.kind", "unknown inputs %q for a curve (known: %s, %s)", g.in.Kind, spec.InputsUniform, spec.InputsGaussian)
	}
	f, cuts, err := shapeFunc(dd.Shape, g.in, bad)
	if err != nil {
		return nil, err
	}
	g.f = f
	if g.noise, err = newLabelNoise(dd.Noise, bad); err != nil {
		return nil, err
	}
	if err := checkCorrupt(dd.Corrupt, bad); err != nil {
		return nil, err
	}

	var x, w []float64
	if g.in.Kind == spec.InputsUniform {
		x, w = uniformRule(dd.NTest, g.in.Low, g.in.High, cuts)
	} else {
		x, w = normalRule(dd.NTest, g.in.Mean, g.in.SD, cuts)
	}
	y := make([]float64, len(x))
	for j, v := range x {
		y[j] = f(v)
	}
	g.prob = &Problem{
		Dim:        1,
		NoiseVar:   dd.Noise.SD * dd.Noise.SD,
		TestX:      mat.NewDense(len(x), 1, x),
		TestY:      y,
		TruthKnown: true,
		TestW:      w,
		TestBasis:  TestQuadrature,
	}
	return g, nil
}

// shapeFunc returns f* of a curve and the points where it jumps.
func shapeFunc(S spec.Shape, in spec.Inputs, bad func(k, f string, a ...any) error) (func(float64) float64, []float64, error) {
	finite := func(k string, v ...float64) error {
		for _, x := range v {
			if math.IsNaN(x) || math.IsInf(x, 0) {
				return bad(k, "%v is not a finite number", x)
			}
		}
		return nil
	}
	switch S.Kind {
	case spec.ShapeSine:
		if err := finite("shape", S.Amplitude, S.Frequency, S.Phase); err != nil {
			return nil, nil, err
		}
		a, om, ph := S.Amplitude, 2*math.Pi*S.Frequency, S.Phase
		return func(x float64) float64 { return a * math.Sin(om*x+ph) }, nil, nil
	case spec.ShapeStep:
		if err := finite("shape", S.At, S.Left, S.Right); err != nil {
			return nil, nil, err
		}
		if in.Kind == spec.InputsUniform && !(S.At > in.Low && S.At < in.High) {
			return nil, nil, bad("shape.at", "at = %v, want low < at < high = %v, %v", S.At, in.Low, in.High)
		}
		at, l, r := S.At, S.Left, S.Right
		return func(x float64) float64 {
			if x < at {
				return l
			}
			return r
		}, []float64{at}, nil
	case spec.ShapePolynomial:
		if len(S.Coefficients) == 0 {
			return nil, nil, bad("shape.coefficients", "no coefficients, want at least one")
		}
		if err := finite("shape.coefficients", S.Coefficients...); err != nil {
			return nil, nil, err
		}
		c := append([]float64(nil), S.Coefficients...)
		return func(x float64) float64 {
			var s float64
			for k := len(c) - 1; k >= 0; k-- {
				s = s*x + c[k]
			}
			return s
		}, nil, nil
	case spec.ShapeFourier:
		k := len(S.Frequencies)
		if k == 0 || len(S.Cos) != k || len(S.Sin) != k {
			return nil, nil, bad("shape.frequencies", "%d frequencies, %d cos and %d sin amplitudes, want the same number ≥ 1 of each",
				k, len(S.Cos), len(S.Sin))
		}
		if err := finite("shape", append(append(append([]float64(nil), S.Frequencies...), S.Cos...), S.Sin...)...); err != nil {
			return nil, nil, err
		}
		om := make([]float64, k)
		for i, v := range S.Frequencies {
			om[i] = 2 * math.Pi * v
		}
		a, b := append([]float64(nil), S.Cos...), append([]float64(nil), S.Sin...)
		return func(x float64) float64 {
			var s float64
			for i, o := range om {
				sn, cs := math.Sincos(o * x)
				s += a[i]*cs + b[i]*sn
			}
			return s
		}, nil, nil
	}
	return nil, nil, bad("shape.kind", "unknown shape %q (known: %s, %s, %s, %s)", S.Kind,
		spec.ShapeSine, spec.ShapeStep, spec.ShapePolynomial, spec.ShapeFourier)
}

// input draws one input of the curve's law from st.
func (g *curve) input(st *Stream) float64 {
	if g.in.Kind == spec.InputsGaussian {
		return g.in.Mean + g.in.SD*st.Normal()
	}
	return g.in.Low + (g.in.High-g.in.Low)*st.Float64()
}

// Problem returns the fixed part of the source. The caller must not
// modify it.
func (g *curve) Problem() *Problem { return g.prob }

// Draw returns the training sample of seed: x_i from (key, tagRows, seed)
// (uniform: low + (high − low)·U; Gaussian: mean + sd·Z), ε_i from (key,
// tagNoise, seed), row by row, and the corruption of the package comment
// above, so the first k rows of a draw are the draw of size k.
func (g *curve) Draw(seed uint64) (*Sample, error) {
	n := g.n
	x := make([]float64, n)
	y := make([]float64, n)
	xs := NewStream(g.key, tagRows, seed)
	es := NewStream(g.key, tagNoise, seed)
	var cs, ds *Stream
	if g.q > 0 {
		cs, ds = NewStream(g.key, tagCorrupt, seed), NewStream(g.key, tagDecoy, seed)
	}
	for i := range n {
		x[i] = g.input(xs)
		eps := g.noise.draw(es)
		y[i] = g.f(x[i]) + eps
		if cs != nil {
			u, decoy := cs.Float64(), g.input(ds)
			if u < g.q {
				y[i] = g.f(decoy) + eps
			}
		}
	}
	return &Sample{X: mat.NewDense(n, 1, x), Y: y}, nil
}

// teacher is the d-input source with a non-linear teacher
//
//	x ~ N(0, I_d)  or  x uniform on the sphere of radius √d,   y = f*(x) + ε
//
// (corrupted: see above), with f* one of (spec.Teacher)
//
//	single-index:  g(wᵀx),  w = z/‖z‖, z ~ N(0, I_d)        (a uniform unit vector)
//	two-layer:     Σ_{k=1}^{K} a_k relu(w_kᵀx),  a_k ~ N(0, 1/K),  w_k ~ N(0, I_d/d)
//
// and g one of relu(z) = max(0, z), tanh z, He2(z) = z² − 1, He3(z) = z³ − 3z
// (probabilists' Hermite polynomials: E He_k(Z)² = k! for Z ~ N(0, 1)).
// The scalings keep wᵀx and w_kᵀx of variance about 1 for either input
// law (E xxᵀ = I for both), so E f*² is of order 1 whatever d and K. The
// weights are drawn once from (key, tagTruth, seeds.truth): z, or the rows
// w_1, …, w_K and then a_1, …, a_K.
//
// Its test inputs are n_test independent draws of the input law from
// (key, tagTest, seeds.truth) with TestY = f*(x) (TestBasis
// TestMonteCarlo: a risk measured on them carries a Monte Carlo error).
type teacher struct {
	key    string
	n, d   int
	sphere bool
	dir    []float64             // single-index w
	link   func(float64) float64 // single-index g
	a, W   []float64             // two-layer: a (K), W (K×d, row-major)
	noise  labelNoise
	q      float64
	prob   *Problem
}

var _ Source = (*teacher)(nil)

// links are the single-index link functions.
var links = map[string]func(float64) float64{
	spec.LinkReLU: func(z float64) float64 { return max(z, 0) },
	spec.LinkTanh: math.Tanh,
	spec.LinkHe2:  func(z float64) float64 { return z*z - 1 },
	spec.LinkHe3:  func(z float64) float64 { return z * (z*z - 3) },
}

func newTeacher(s *spec.Spec, key string) (*teacher, error) {
	dd := &s.Data
	bad := func(k, format string, args ...any) error {
		return &SpecError{Path: s.Path, Key: k, Msg: fmt.Sprintf(format, args...)}
	}
	if dd.Dim <= 0 {
		return nil, bad("dim", "dim = %d, want an integer > 0", dd.Dim)
	}
	if err := checkSizes(dd, bad); err != nil {
		return nil, err
	}
	g := &teacher{key: key, n: dd.NTrain, d: dd.Dim, q: dd.Corrupt}
	switch dd.Inputs.Kind {
	case "", spec.InputsGaussian:
	case spec.InputsSphere:
		g.sphere = true
	default:
		return nil, bad("inputs.kind", "unknown inputs %q for a teacher (known: %s, %s)", dd.Inputs.Kind, spec.InputsGaussian, spec.InputsSphere)
	}
	var err error
	if g.noise, err = newLabelNoise(dd.Noise, bad); err != nil {
		return nil, err
	}
	if err := checkCorrupt(dd.Corrupt, bad); err != nil {
		return nil, err
	}
	d := g.d
	ts := NewStream(key, tagTruth, s.Seeds.Truth)
	switch T := dd.Teacher; T.Kind {
	case spec.TeacherSingleIndex:
		link, ok := links[T.Link]
		if !ok {
			return nil, bad("teacher.link", "unknown link %q (known: %s, %s, %s, %s)", T.Link, spec.LinkReLU, spec.LinkTanh, spec.LinkHe2, spec.LinkHe3)
		}
		g.link = link
		g.dir = make([]float64, d)
		for {
			ts.fillNormal(g.dir)
			if nrm := math.Sqrt(dot(g.dir, g.dir)); nrm > 0 {
				for j := range g.dir {
					g.dir[j] /= nrm
				}
				break
			}
		}
	case spec.TeacherTwoLayer:
		K := T.Width
		if K < 1 {
			return nil, bad("teacher.width", "width = %d, want an integer ≥ 1", K)
		}
		g.W = make([]float64, K*d)
		ts.fillNormal(g.W)
		sw := 1 / math.Sqrt(float64(d))
		for j := range g.W {
			g.W[j] *= sw
		}
		g.a = make([]float64, K)
		ts.fillNormal(g.a)
		sa := 1 / math.Sqrt(float64(K))
		for k := range g.a {
			g.a[k] *= sa
		}
	default:
		return nil, bad("teacher.kind", "unknown teacher %q (known: %s, %s)", T.Kind, spec.TeacherSingleIndex, spec.TeacherTwoLayer)
	}

	m := dd.NTest
	testX := mat.NewDense(m, d, nil)
	raw := testX.RawMatrix().Data
	ys := make([]float64, m)
	st := NewStream(key, tagTest, s.Seeds.Truth)
	for i := range m {
		row := raw[i*d : (i+1)*d : (i+1)*d]
		g.input(row, st)
		ys[i] = g.f(row)
	}
	g.prob = &Problem{
		Dim:        d,
		NoiseVar:   dd.Noise.SD * dd.Noise.SD,
		TestX:      testX,
		TestY:      ys,
		TruthKnown: true,
		TestBasis:  TestMonteCarlo,
	}
	return g, nil
}

func dot(a, b []float64) float64 {
	var s float64
	for j, v := range a {
		s += v * b[j]
	}
	return s
}

// input fills x with one draw of the input law from st: z ~ N(0, I_d),
// and on the sphere x = √d·z/‖z‖ (the direction of a standard normal
// vector is uniform on the sphere: rotation invariance, textbook).
func (g *teacher) input(x []float64, st *Stream) {
	for {
		st.fillNormal(x)
		if !g.sphere {
			return
		}
		if nrm := math.Sqrt(dot(x, x)); nrm > 0 {
			s := math.Sqrt(float64(g.d)) / nrm
			for j := range x {
				x[j] *= s
			}
			return
		}
	}
}

// f evaluates the teacher at x (a plain loop, so the value of a row never
// depends on the other rows).
func (g *teacher) f(x []float64) float64 {
	if g.link != nil {
		return g.link(dot(g.dir, x))
	}
	d := g.d
	var s float64
	for k, a := range g.a {
		if h := dot(g.W[k*d:(k+1)*d:(k+1)*d], x); h > 0 {
			s += a * h
		}
	}
	return s
}

// Problem returns the fixed part of the source. The caller must not
// modify it.
func (g *teacher) Problem() *Problem { return g.prob }

// Draw returns the training sample of seed: rows x_i from (key, tagRows,
// seed), ε_i from (key, tagNoise, seed), row by row, and the corruption of
// the package comment above, so the first k rows of a draw are the draw of
// size k.
func (g *teacher) Draw(seed uint64) (*Sample, error) {
	n, d := g.n, g.d
	X := mat.NewDense(n, d, nil)
	raw := X.RawMatrix().Data
	y := make([]float64, n)
	xs := NewStream(g.key, tagRows, seed)
	es := NewStream(g.key, tagNoise, seed)
	var cs, ds *Stream
	var decoy []float64
	if g.q > 0 {
		cs, ds = NewStream(g.key, tagCorrupt, seed), NewStream(g.key, tagDecoy, seed)
		decoy = make([]float64, d)
	}
	for i := range n {
		row := raw[i*d : (i+1)*d : (i+1)*d]
		g.input(row, xs)
		eps := g.noise.draw(es)
		y[i] = g.f(row) + eps
		if cs != nil {
			u := cs.Float64()
			g.input(decoy, ds)
			if u < g.q {
				y[i] = g.f(decoy) + eps
			}
		}
	}
	return &Sample{X: X, Y: y}, nil
}
