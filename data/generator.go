package data

import (
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"

	"riskgrid/spec"
)

// Stream tags: the first coordinate after the key of every stream a source
// draws from. They are part of the reproducibility contract (changing one
// changes every result), so they are spelled out rather than counted.
const (
	tagTruth     uint64 = 1 // fixed β:                 (key, 1, seeds.truth)
	tagTruthSeed uint64 = 2 // per-seed β:              (key, 2, seed)
	tagTest      uint64 = 3 // generator test inputs:   (key, 3, seeds.truth)
	tagRows      uint64 = 4 // generator train inputs:  (key, 4, seed)
	tagNoise     uint64 = 5 // generator train noise:   (key, 5, seed)
	tagSplit     uint64 = 6 // csv test/pool split:     (key, 6, seeds.truth)
	tagSample    uint64 = 7 // csv training rows:       (key, 7, seed)
	tagCorrupt   uint64 = 8 // curve/teacher: which training targets are corrupted: (key, 8, seed)
	tagDecoy     uint64 = 9 // curve/teacher: the inputs whose clean targets replace them: (key, 9, seed)
)

// New returns the source of the spec's [data] table. key is the spec's data
// key (the caller derives it from the resolved spec); every random stream of
// the source is NewStream(key, tag, seed) for a fixed tag per purpose, so
// two specs with the same key and settings give the same samples.
//
// New accepts a resolved spec (spec.Load fills the defaults); for a Spec
// built in code, an empty kind string means the documented default
// (isotropic, sphere, gaussian, fixed, subsample; uniform inputs for a
// curve, Gaussian for a teacher), while numbers are taken as written. A setting it cannot use is a *SpecError; a faulty data file
// is an *Error.
func New(s *spec.Spec, key string) (Source, error) {
	switch s.Data.Source {
	case spec.SourceLinearGaussian:
		return newLinearGaussian(s, key)
	case spec.SourceCSV:
		return newCSV(s, key)
	case spec.SourceCurve:
		return newCurve(s, key)
	case spec.SourceTeacher:
		return newTeacher(s, key)
	}
	return nil, &SpecError{Path: s.Path, Key: "source",
		Msg: fmt.Sprintf("unknown source %q (known: %s, %s, %s, %s)", s.Data.Source,
			spec.SourceLinearGaussian, spec.SourceCSV, spec.SourceCurve, spec.SourceTeacher)}
}

// linearGaussian is the linear model with Gaussian inputs
//
//	x ~ N(0, Σ),  Σ = diag(σ_1, …, σ_d),  y = xᵀβ + ε,  E ε = 0,  Var ε = sd²,
//
// with ε ~ N(0, sd²) or ε = sd·t_ν/sqrt(ν/(ν−2)). Rows are drawn as
// x = Σ^{1/2} z with z standard normal.
type linearGaussian struct {
	key     string
	n, d    int
	sqrtSig []float64
	beta    []float64 // nil when per seed
	signal  spec.Signal
	noise   labelNoise
	prob    *Problem
}

var _ Source = (*linearGaussian)(nil)

func newLinearGaussian(s *spec.Spec, key string) (*linearGaussian, error) {
	dd := &s.Data
	bad := func(k, format string, args ...any) error {
		return &SpecError{Path: s.Path, Key: k, Msg: fmt.Sprintf(format, args...)}
	}
	if dd.Dim <= 0 {
		return nil, bad("dim", "dim = %d, want an integer > 0", dd.Dim)
	}
	if dd.NTrain <= 0 {
		return nil, bad("n_train", "n_train = %d, want an integer > 0", dd.NTrain)
	}
	if dd.NTest <= 0 {
		return nil, bad("n_test", "n_test = %d, want an integer > 0 (spec.Load fills in 1000)", dd.NTest)
	}
	d := dd.Dim
	sigma, err := spectrum(dd.Spectrum, d, bad)
	if err != nil {
		return nil, err
	}
	if err := checkSignal(dd.Signal, d, bad); err != nil {
		return nil, err
	}
	noise, err := newLabelNoise(dd.Noise, bad)
	if err != nil {
		return nil, err
	}
	g := &linearGaussian{key: key, n: dd.NTrain, d: d, signal: dd.Signal, noise: noise}
	var perSeed bool
	switch dd.Truth {
	case "", spec.TruthFixed:
	case spec.TruthPerSeed:
		perSeed = true
	default:
		return nil, bad("truth", "unknown truth %q (known: %s, %s)", dd.Truth, spec.TruthFixed, spec.TruthPerSeed)
	}
	g.sqrtSig = make([]float64, d)
	for j, v := range sigma {
		g.sqrtSig[j] = math.Sqrt(v)
	}
	if !perSeed {
		g.beta = g.drawBeta(NewStream(key, tagTruth, s.Seeds.Truth))
	}

	m := dd.NTest
	testX := mat.NewDense(m, d, nil)
	g.fillRows(testX.RawMatrix().Data, m, NewStream(key, tagTest, s.Seeds.Truth))
	p := &Problem{
		Dim:        d,
		Sigma:      sigma,
		NoiseVar:   dd.Noise.SD * dd.Noise.SD,
		TestX:      testX,
		TruthKnown: true,
		TestBasis:  TestMonteCarlo,
	}
	if !perSeed {
		p.Beta = append([]float64(nil), g.beta...)
		p.TestY = make([]float64, m)
		mat.NewVecDense(m, p.TestY).MulVec(testX, mat.NewVecDense(d, g.beta))
	}
	g.prob = p
	return g, nil
}

// spectrum returns the diagonal of Σ.
func spectrum(sp spec.Spectrum, d int, bad func(k, f string, a ...any) error) ([]float64, error) {
	sigma := make([]float64, d)
	positive := func(v float64) bool { return v > 0 && !math.IsInf(v, 1) }
	switch sp.Kind {
	case "", spec.SpectrumIsotropic:
		for j := range sigma {
			sigma[j] = 1
		}
	case spec.SpectrumPowerLaw:
		if !positive(sp.Exponent) {
			return nil, bad("spectrum.exponent", "exponent = %v, want a finite number > 0", sp.Exponent)
		}
		for j := range sigma {
			sigma[j] = math.Pow(float64(j+1), -sp.Exponent)
		}
	case spec.SpectrumSpiked:
		if sp.Spikes < 1 || sp.Spikes >= d {
			return nil, bad("spectrum.spikes", "spikes = %d, want 1 ≤ spikes < dim = %d", sp.Spikes, d)
		}
		if !positive(sp.High) {
			return nil, bad("spectrum.high", "high = %v, want a finite number > 0", sp.High)
		}
		if !positive(sp.Low) {
			return nil, bad("spectrum.low", "low = %v, want a finite number > 0", sp.Low)
		}
		for j := range sigma {
			if j < sp.Spikes {
				sigma[j] = sp.High
			} else {
				sigma[j] = sp.Low
			}
		}
	case spec.SpectrumList:
		if len(sp.Values) != d {
			return nil, bad("spectrum.values", "%d values, want dim = %d", len(sp.Values), d)
		}
		for j, v := range sp.Values {
			if !positive(v) {
				return nil, bad("spectrum.values", "value %d = %v, want a finite number > 0", j+1, v)
			}
			sigma[j] = v
		}
	default:
		return nil, bad("spectrum.kind", "unknown spectrum %q (known: %s)", sp.Kind,
			strings.Join([]string{spec.SpectrumIsotropic, spec.SpectrumPowerLaw, spec.SpectrumSpiked, spec.SpectrumList}, ", "))
	}
	return sigma, nil
}

func checkSignal(sg spec.Signal, d int, bad func(k, f string, a ...any) error) error {
	switch sg.Kind {
	case "", spec.SignalSphere, spec.SignalTop:
		if !(sg.Norm >= 0) || math.IsInf(sg.Norm, 0) {
			return bad("signal.norm", "norm = %v, want a finite number ≥ 0", sg.Norm)
		}
		if sg.Kind == spec.SignalTop && (sg.Top < 1 || sg.Top > d) {
			return bad("signal.top", "top = %d, want 1 ≤ top ≤ dim = %d", sg.Top, d)
		}
	case spec.SignalList:
		if len(sg.Values) != d {
			return bad("signal.values", "%d values, want dim = %d", len(sg.Values), d)
		}
		for j, v := range sg.Values {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return bad("signal.values", "value %d = %v, want a finite number", j+1, v)
			}
		}
	default:
		return bad("signal.kind", "unknown signal %q (known: %s, %s, %s)", sg.Kind,
			spec.SignalSphere, spec.SignalTop, spec.SignalList)
	}
	return nil
}

// drawBeta returns β for the signal:
//
//	sphere: β = norm · g/‖g‖,  g ~ N(0, I_d)       (uniform on the sphere)
//	top:    the same in the first top coordinates, 0 after
//	list:   β = values
//
// Reference: the direction of a standard normal vector is uniform on the
// sphere (rotation invariance of N(0, I); textbook).
func (g *linearGaussian) drawBeta(st *Stream) []float64 {
	beta := make([]float64, g.d)
	switch g.signal.Kind {
	case spec.SignalList:
		copy(beta, g.signal.Values)
		return beta
	case spec.SignalTop:
		for j := range g.signal.Top {
			beta[j] = st.Normal()
		}
	default: // sphere
		for j := range beta {
			beta[j] = st.Normal()
		}
	}
	if nrm := floats.Norm(beta, 2); nrm > 0 {
		floats.Scale(g.signal.Norm/nrm, beta)
	}
	return beta
}

// fillRows writes rows × d inputs x = Σ^{1/2} z into dst, row by row.
func (g *linearGaussian) fillRows(dst []float64, rows int, st *Stream) {
	dst = dst[:rows*g.d]
	st.fillNormal(dst)
	for i := range dst {
		dst[i] *= g.sqrtSig[i%g.d]
	}
}

// Problem returns the fixed part of the generator. The caller must not
// modify it.
func (g *linearGaussian) Problem() *Problem { return g.prob }

// Draw returns the training sample of seed: rows x_i = Σ^{1/2} z_i from
// the stream (key, tagRows, seed), filled row by row, and
// y_i = x_iᵀβ + ε_i with ε_i from the separate stream (key, tagNoise, seed),
// so the first k rows of a draw are the draw of size k. Under a per-seed
// truth β comes from (key, tagTruthSeed, seed).
func (g *linearGaussian) Draw(seed uint64) (*Sample, error) {
	beta := g.beta
	if beta == nil {
		beta = g.drawBeta(NewStream(g.key, tagTruthSeed, seed))
	} else {
		beta = append([]float64(nil), beta...)
	}
	n, d := g.n, g.d
	X := mat.NewDense(n, d, nil)
	raw := X.RawMatrix().Data
	y := make([]float64, n)
	xs := NewStream(g.key, tagRows, seed)
	es := NewStream(g.key, tagNoise, seed)
	sq := g.sqrtSig[:d]
	beta = beta[:d]
	for i := range n {
		row := raw[i*d : (i+1)*d : (i+1)*d]
		xs.fillNormal(row)
		var dot float64
		for j, z := range row {
			x := sq[j] * z
			row[j] = x
			dot += x * beta[j]
		}
		y[i] = dot + g.noise.draw(es)
	}
	return &Sample{X: X, Y: y, Beta: beta}, nil
}
