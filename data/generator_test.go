package data

import (
	"errors"
	"fmt"
	"math"
	"sync"
	"testing"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"

	"riskgrid/spec"
)

// lgSpec returns a linear-gaussian spec literal (spec.Load is not used).
func lgSpec(d, n int, edit func(*spec.Data)) *spec.Spec {
	s := &spec.Spec{
		Name: "test",
		Data: spec.Data{
			Source:   spec.SourceLinearGaussian,
			NTrain:   n,
			NTest:    50,
			Dim:      d,
			Spectrum: spec.Spectrum{Kind: spec.SpectrumIsotropic},
			Signal:   spec.Signal{Kind: spec.SignalSphere, Norm: 1},
			Noise:    spec.Noise{Kind: spec.NoiseGaussian, SD: 0.5},
			Truth:    spec.TruthFixed,
		},
		Seeds: spec.Seeds{Count: 2, Start: 1, Truth: 0},
	}
	if edit != nil {
		edit(&s.Data)
	}
	return s
}

func mustNew(t testing.TB, s *spec.Spec, key string) Source {
	t.Helper()
	src, err := New(s, key)
	if err != nil {
		t.Fatalf("New: %v", err)
	}
	return src
}

func mustDraw(t testing.TB, src Source, seed uint64) *Sample {
	t.Helper()
	smp, err := src.Draw(seed)
	if err != nil {
		t.Fatalf("Draw(%d): %v", seed, err)
	}
	return smp
}

func TestLinearGaussianSpectrum(t *testing.T) {
	tests := []struct {
		name string
		sp   spec.Spectrum
		want []float64 // from the definition of each kind in spec.Spectrum
	}{
		{"isotropic", spec.Spectrum{Kind: spec.SpectrumIsotropic}, []float64{1, 1, 1, 1}},
		{"default", spec.Spectrum{}, []float64{1, 1, 1, 1}},
		{"power-law", spec.Spectrum{Kind: spec.SpectrumPowerLaw, Exponent: 2}, []float64{1, 0.25, 1.0 / 9, 1.0 / 16}},
		{"spiked", spec.Spectrum{Kind: spec.SpectrumSpiked, Spikes: 1, High: 10, Low: 0.1}, []float64{10, 0.1, 0.1, 0.1}},
		{"list", spec.Spectrum{Kind: spec.SpectrumList, Values: []float64{3, 2, 1, 0.5}}, []float64{3, 2, 1, 0.5}},
	}
	for _, tc := range tests {
		src := mustNew(t, lgSpec(4, 10, func(d *spec.Data) { d.Spectrum = tc.sp }), "k")
		got := src.Problem().Sigma
		const tol = 1e-15 // one rounding of math.Pow
		if !floats.EqualApprox(got, tc.want, tol) {
			t.Errorf("%s: Sigma = %v, want %v (tol %g)", tc.name, got, tc.want, tol)
		}
	}
}

// TestLinearGaussianMoments compares sample moments of one large draw with
// the population values of the model x ~ N(0, Σ), y = xᵀβ + ε:
//
//	E x_j² = Σ_jj,  E x_j x_k = 0 (j ≠ k),  E x_j y = Σ_jj β_j,
//	Var y = βᵀΣβ + sd²                       (textbook identities)
//
// Tolerances are 5 standard errors from the CLT, with variances of the
// summands from Isserlis' theorem for Gaussian a, b (textbook):
// Var(ab) = E a² E b² + (E ab)², so Var(x_j²) = 2Σ_jj², Var(x_j x_k) =
// Σ_jj Σ_kk, Var(x_j y) = Σ_jj Var y + (Σ_jj β_j)², Var(y²) = 2 (Var y)².
func TestLinearGaussianMoments(t *testing.T) {
	n := 40000
	if testing.Short() {
		n = 8000
	}
	tests := []struct {
		name string
		edit func(*spec.Data)
	}{
		{"isotropic/sphere", func(d *spec.Data) { d.Signal.Norm = 2 }},
		{"power-law/top", func(d *spec.Data) {
			d.Spectrum = spec.Spectrum{Kind: spec.SpectrumPowerLaw, Exponent: 1}
			d.Signal = spec.Signal{Kind: spec.SignalTop, Norm: 1.5, Top: 2}
		}},
		{"spiked/list", func(d *spec.Data) {
			d.Spectrum = spec.Spectrum{Kind: spec.SpectrumSpiked, Spikes: 2, High: 4, Low: 0.5}
			d.Signal = spec.Signal{Kind: spec.SignalList, Values: []float64{1, -1, 0.5, 0, 2}}
			d.Noise.SD = 1
		}},
	}
	const d = 5
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			s := lgSpec(d, n, tc.edit)
			src := mustNew(t, s, "moments")
			p := src.Problem()
			smp := mustDraw(t, src, 1)
			sig, beta, sd := p.Sigma, smp.Beta, s.Data.Noise.SD
			var vy float64
			for j := range d {
				vy += beta[j] * beta[j] * sig[j]
			}
			vy += sd * sd
			fn := float64(n)
			check := func(what string, got, want, sdv float64) {
				t.Helper()
				tol := 5 * sdv / math.Sqrt(fn)
				if !scalar.EqualWithinAbs(got, want, tol) {
					t.Errorf("%s = %v, want %v (tol %g)", what, got, want, tol)
				}
			}
			mean := func(f func(i int) float64) float64 {
				var s float64
				for i := range n {
					s += f(i)
				}
				return s / fn
			}
			X, y := smp.X, smp.Y
			for j := range d {
				check(fmt.Sprintf("mean x_%d", j+1), mean(func(i int) float64 { return X.At(i, j) }), 0, math.Sqrt(sig[j]))
				check(fmt.Sprintf("E x_%d²", j+1), mean(func(i int) float64 { return X.At(i, j) * X.At(i, j) }), sig[j], math.Sqrt(2)*sig[j])
				for k := j + 1; k < d; k++ {
					check(fmt.Sprintf("E x_%d x_%d", j+1, k+1), mean(func(i int) float64 { return X.At(i, j) * X.At(i, k) }), 0, math.Sqrt(sig[j]*sig[k]))
				}
				c := sig[j] * beta[j]
				check(fmt.Sprintf("E x_%d y", j+1), mean(func(i int) float64 { return X.At(i, j) * y[i] }), c, math.Sqrt(sig[j]*vy+c*c))
			}
			check("mean y", mean(func(i int) float64 { return y[i] }), 0, math.Sqrt(vy))
			check("E y²", mean(func(i int) float64 { return y[i] * y[i] }), vy, math.Sqrt(2)*vy)

			// The fixed parts, exactly as defined.
			if p.NoiseVar != sd*sd {
				t.Errorf("NoiseVar = %v, want %v (tol 0)", p.NoiseVar, sd*sd)
			}
			switch s.Data.Signal.Kind {
			case spec.SignalList:
				if !floats.Equal(beta, s.Data.Signal.Values) {
					t.Errorf("Beta = %v, want %v", beta, s.Data.Signal.Values)
				}
			default:
				// One scaling by norm/‖g‖: a few roundings.
				if nrm := floats.Norm(beta, 2); !scalar.EqualWithinAbsOrRel(nrm, s.Data.Signal.Norm, 1e-14, 1e-14) {
					t.Errorf("‖β‖ = %v, want %v (tol 1e-14)", nrm, s.Data.Signal.Norm)
				}
			}
			if top := s.Data.Signal.Top; s.Data.Signal.Kind == spec.SignalTop {
				for j := top; j < d; j++ {
					if beta[j] != 0 {
						t.Errorf("top signal: β_%d = %v, want 0", j+1, beta[j])
					}
				}
			}
			if !floats.Equal(p.Beta, beta) {
				t.Errorf("fixed truth: sample Beta %v differs from Problem Beta %v", beta, p.Beta)
			}
			// TestY = TestX β, checked by a plain loop; the two sums differ
			// only in rounding order: tol 1e-13 relative to Σ|x_j β_j|.
			m, _ := p.TestX.Dims()
			for i := range m {
				var dot, abs float64
				for j := range d {
					dot += p.TestX.At(i, j) * beta[j]
					abs += math.Abs(p.TestX.At(i, j) * beta[j])
				}
				if !scalar.EqualWithinAbs(p.TestY[i], dot, 1e-13*(abs+1)) {
					t.Errorf("TestY[%d] = %v, want TestX·β = %v (tol %g)", i, p.TestY[i], dot, 1e-13*(abs+1))
				}
			}
		})
	}
}

// TestStudentTNoise checks the scaling ε = sd·t_ν/sqrt(ν/(ν−2)) with β = 0,
// so y = ε. ν = 5: Var ε = sd²; t5 has excess kurtosis 6/(ν−4) = 6, so
// Var(ε²) = 8 sd⁴ and the sample second moment has sd sd²·√(8/n) (textbook
// moments of the t distribution); tol = 5 sd. ν = 3: ε/(sd/√3) is t3, so
// P(ε ≤ sd·q/√3) = 0.975 with q = qt(0.975, 3) = 3.18244630528371 (R 4.2.2;
// closed form CDF for ν=3); binomial tol 5·√(p(1−p)/n).
func TestStudentTNoise(t *testing.T) {
	n := 200000
	if testing.Short() {
		n = 40000
	}
	fn := float64(n)
	const sd = 2
	zero := []float64{0, 0, 0}
	s5 := lgSpec(3, n, func(d *spec.Data) {
		d.Signal = spec.Signal{Kind: spec.SignalList, Values: zero}
		d.Noise = spec.Noise{Kind: spec.NoiseStudentT, SD: sd, DF: 5}
	})
	y := mustDraw(t, mustNew(t, s5, "t5"), 1).Y
	var m2 float64
	for _, v := range y {
		m2 += v * v
	}
	m2 /= fn
	if tol := 5 * sd * sd * math.Sqrt(8/fn); !scalar.EqualWithinAbs(m2, sd*sd, tol) {
		t.Errorf("t5 noise: E ε² = %v, want %v (tol %g)", m2, sd*sd, tol)
	}

	s3 := lgSpec(3, n, func(d *spec.Data) {
		d.Signal = spec.Signal{Kind: spec.SignalList, Values: zero}
		d.Noise = spec.Noise{Kind: spec.NoiseStudentT, SD: sd, DF: 3}
	})
	y = mustDraw(t, mustNew(t, s3, "t3"), 1).Y
	const q975 = 3.18244630528371 // qt(0.975, 3), R 4.2.2; closed form CDF for ν=3
	cut := sd * q975 / math.Sqrt(3)
	var below int
	for _, v := range y {
		if v <= cut {
			below++
		}
	}
	frac := float64(below) / fn
	if tol := 5 * math.Sqrt(0.975*0.025/fn); !scalar.EqualWithinAbs(frac, 0.975, tol) {
		t.Errorf("t3 noise: P(ε ≤ %v) = %v, want 0.975 (tol %g)", cut, frac, tol)
	}
}

func rowsEqual(a, b *mat.Dense, k int) bool {
	_, c := a.Dims()
	for i := range k {
		for j := range c {
			if a.At(i, j) != b.At(i, j) {
				return false
			}
		}
	}
	return true
}

func TestLinearGaussianNested(t *testing.T) {
	for _, tc := range []struct {
		name string
		edit func(*spec.Data)
	}{
		{"gaussian/fixed", nil},
		{"student-t/per-seed", func(d *spec.Data) {
			d.Noise = spec.Noise{Kind: spec.NoiseStudentT, SD: 1, DF: 3}
			d.Truth = spec.TruthPerSeed
		}},
	} {
		small := mustDraw(t, mustNew(t, lgSpec(7, 30, tc.edit), "nest"), 4)
		big := mustDraw(t, mustNew(t, lgSpec(7, 100, tc.edit), "nest"), 4)
		if !rowsEqual(small.X, big.X, 30) || !floats.Equal(small.Y, big.Y[:30]) {
			t.Errorf("%s: the first 30 rows of a draw of 100 are not the draw of 30", tc.name)
		}
		if !floats.Equal(small.Beta, big.Beta) {
			t.Errorf("%s: Beta depends on n_train", tc.name)
		}
	}
}

func TestLinearGaussianDeterminism(t *testing.T) {
	s := lgSpec(6, 40, nil)
	a := mustDraw(t, mustNew(t, s, "det"), 2)
	b := mustDraw(t, mustNew(t, s, "det"), 2)
	if !mat.Equal(a.X, b.X) || !floats.Equal(a.Y, b.Y) || !floats.Equal(a.Beta, b.Beta) {
		t.Errorf("two sources of the same spec and key drew different samples for seed 2")
	}
	c := mustDraw(t, mustNew(t, s, "det"), 3)
	if mat.Equal(a.X, c.X) || floats.Equal(a.Y, c.Y) {
		t.Errorf("seeds 2 and 3 drew the same sample")
	}
	e := mustDraw(t, mustNew(t, s, "other-key"), 2)
	if mat.Equal(a.X, e.X) {
		t.Errorf("keys det and other-key drew the same sample")
	}
	// seeds.truth moves the truth and test inputs but not the training
	// inputs of a seed; seeds.start and count move nothing.
	s2 := lgSpec(6, 40, nil)
	s2.Seeds = spec.Seeds{Count: 50, Start: 9, Truth: 1}
	src2 := mustNew(t, s2, "det")
	f := mustDraw(t, src2, 2)
	if !mat.Equal(a.X, f.X) {
		t.Errorf("seeds.truth changed the training inputs of seed 2")
	}
	if floats.Equal(a.Beta, f.Beta) || mat.Equal(mustNew(t, s, "det").Problem().TestX, src2.Problem().TestX) {
		t.Errorf("seeds.truth did not change β and the test inputs")
	}
}

func TestLinearGaussianTruth(t *testing.T) {
	const d, norm = 8, 3
	fixed := mustNew(t, lgSpec(d, 20, func(dd *spec.Data) { dd.Signal.Norm = norm }), "truth")
	per := mustNew(t, lgSpec(d, 20, func(dd *spec.Data) { dd.Signal.Norm = norm; dd.Truth = spec.TruthPerSeed }), "truth")
	pf, pp := fixed.Problem(), per.Problem()
	if pf.Beta == nil || pf.TestY == nil || !pf.TruthKnown {
		t.Errorf("fixed truth: Problem Beta/TestY missing or TruthKnown false")
	}
	if pp.Beta != nil || pp.TestY != nil {
		t.Errorf("per-seed truth: Problem Beta = %v, TestY = %v, want nil", pp.Beta, pp.TestY)
	}
	if !mat.Equal(pf.TestX, pp.TestX) {
		t.Errorf("the test inputs depend on the truth mode")
	}
	var prev []float64
	for seed := uint64(1); seed <= 5; seed++ {
		sf, sp := mustDraw(t, fixed, seed), mustDraw(t, per, seed)
		if !floats.Equal(sf.Beta, pf.Beta) {
			t.Errorf("fixed truth: seed %d Beta differs from Problem Beta", seed)
		}
		if nrm := floats.Norm(sp.Beta, 2); !scalar.EqualWithinAbsOrRel(nrm, norm, 1e-14, 1e-14) {
			t.Errorf("per-seed truth: seed %d ‖β‖ = %v, want %v (tol 1e-14)", seed, nrm, norm)
		}
		if prev != nil && floats.Equal(prev, sp.Beta) {
			t.Errorf("per-seed truth: seeds %d and %d share β", seed-1, seed)
		}
		prev = sp.Beta
		// The inputs do not depend on the truth mode either.
		if !mat.Equal(sf.X, sp.X) {
			t.Errorf("seed %d: training inputs depend on the truth mode", seed)
		}
	}
	// Changing a sample's Beta must not change the source.
	smp := mustDraw(t, fixed, 1)
	smp.Beta[0] = 1e9
	if pf.Beta[0] == 1e9 || mustDraw(t, fixed, 1).Beta[0] == 1e9 {
		t.Errorf("Sample.Beta aliases the source's β")
	}
}

func TestLinearGaussianConcurrent(t *testing.T) {
	src := mustNew(t, lgSpec(20, 50, func(d *spec.Data) { d.Truth = spec.TruthPerSeed }), "conc")
	const seeds = 16
	want := make([]*Sample, seeds)
	for i := range want {
		want[i] = mustDraw(t, src, uint64(i))
	}
	got := make([]*Sample, seeds)
	var wg sync.WaitGroup
	for i := range got {
		wg.Go(func() { got[i], _ = src.Draw(uint64(i)) })
	}
	wg.Wait()
	for i := range got {
		if got[i] == nil || !mat.Equal(got[i].X, want[i].X) || !floats.Equal(got[i].Y, want[i].Y) {
			t.Errorf("concurrent Draw(%d) differs from the sequential one", i)
		}
	}
}

func TestLinearGaussianErrors(t *testing.T) {
	tests := []struct {
		name string
		edit func(*spec.Data)
		key  string // the SpecError key it must name
	}{
		{"dim", func(d *spec.Data) { d.Dim = 0 }, "dim"},
		{"n_train", func(d *spec.Data) { d.NTrain = 0 }, "n_train"},
		{"n_test", func(d *spec.Data) { d.NTest = 0 }, "n_test"},
		{"spectrum kind", func(d *spec.Data) { d.Spectrum.Kind = "flat" }, "spectrum.kind"},
		{"exponent", func(d *spec.Data) { d.Spectrum = spec.Spectrum{Kind: spec.SpectrumPowerLaw} }, "spectrum.exponent"},
		{"spikes", func(d *spec.Data) { d.Spectrum = spec.Spectrum{Kind: spec.SpectrumSpiked, Spikes: 4, High: 1, Low: 1} }, "spectrum.spikes"},
		{"low", func(d *spec.Data) { d.Spectrum = spec.Spectrum{Kind: spec.SpectrumSpiked, Spikes: 1, High: 1} }, "spectrum.low"},
		{"spectrum values len", func(d *spec.Data) { d.Spectrum = spec.Spectrum{Kind: spec.SpectrumList, Values: []float64{1}} }, "spectrum.values"},
		{"spectrum values NaN", func(d *spec.Data) {
			d.Spectrum = spec.Spectrum{Kind: spec.SpectrumList, Values: []float64{1, math.NaN(), 1, 1}}
		}, "spectrum.values"},
		{"signal kind", func(d *spec.Data) { d.Signal.Kind = "ball" }, "signal.kind"},
		{"norm", func(d *spec.Data) { d.Signal.Norm = -1 }, "signal.norm"},
		{"top", func(d *spec.Data) { d.Signal = spec.Signal{Kind: spec.SignalTop, Norm: 1, Top: 5} }, "signal.top"},
		{"signal values", func(d *spec.Data) {
			d.Signal = spec.Signal{Kind: spec.SignalList, Values: []float64{1, 2, 3, math.Inf(1)}}
		}, "signal.values"},
		{"noise kind", func(d *spec.Data) { d.Noise.Kind = "laplace" }, "noise.kind"},
		{"df", func(d *spec.Data) { d.Noise = spec.Noise{Kind: spec.NoiseStudentT, SD: 1, DF: 2} }, "noise.df"},
		{"sd", func(d *spec.Data) { d.Noise.SD = math.NaN() }, "noise.sd"},
		{"truth", func(d *spec.Data) { d.Truth = "random" }, "truth"},
		{"source", func(d *spec.Data) { d.Source = "parquet" }, "source"},
	}
	for _, tc := range tests {
		s := lgSpec(4, 10, tc.edit)
		s.Path = "specs/x.toml"
		_, err := New(s, "k")
		var se *SpecError
		if !errors.As(err, &se) {
			t.Errorf("%s: New error = %v, want a *SpecError", tc.name, err)
			continue
		}
		if se.Key != tc.key || se.Path != "specs/x.toml" {
			t.Errorf("%s: error names key %q in %q, want %q in specs/x.toml (%v)", tc.name, se.Key, se.Path, tc.key, err)
		}
	}
}

// BenchmarkDraw measures one seed's training sample. The reference sweep
// draws n = 200, d = 1000 for 100 seeds: at ~10–15 ns per normal that is
// about 2–3 ms per draw, well under the fits it feeds.
func BenchmarkDraw(b *testing.B) {
	for _, sz := range []struct{ n, d int }{{200, 100}, {200, 1000}} {
		for _, noise := range []spec.Noise{{Kind: spec.NoiseGaussian, SD: 1}, {Kind: spec.NoiseStudentT, SD: 1, DF: 3}} {
			b.Run(fmt.Sprintf("n=%d/d=%d/%s", sz.n, sz.d, noise.Kind), func(b *testing.B) {
				src := mustNew(b, lgSpec(sz.d, sz.n, func(d *spec.Data) { d.Noise = noise }), "bench")
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
}
