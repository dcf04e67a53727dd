package models

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"

	"riskgrid/spec"
)

// netSample returns a small regression sample: x ~ N(0, I_d) (n×d), y a
// fixed nonlinear function of x plus noise, and nTest test inputs.
func netSample(seed uint64, n, d, nTest int) (x *mat.Dense, y []float64, test *mat.Dense) {
	rng := rand.New(rand.NewPCG(seed, 0x7e7))
	x = mat.NewDense(n, d, nil)
	y = make([]float64, n)
	for i := range n {
		s := 0.0
		for j := range d {
			v := rng.NormFloat64()
			x.Set(i, j, v)
			s += v
		}
		y[i] = math.Sin(s) + 0.1*rng.NormFloat64()
	}
	if nTest == 0 {
		return x, y, nil
	}
	test = mat.NewDense(nTest, d, nil)
	for i := range nTest {
		for j := range d {
			test.Set(i, j, rng.NormFloat64())
		}
	}
	return x, y, test
}

// netTrain wraps a sample with the given model seed.
func netTrain(x *mat.Dense, y []float64, test *mat.Dense, modelSeed uint64) *Train {
	t := NewTrain(x, y)
	t.Test = test
	t.SetSeeds("0123456789abcdef", 1, modelSeed)
	return t
}

// netLoops evaluates f(x) = (1/√m) Σ_k a_k relu(w_kᵀx + c_k) with plain
// loops (no BLAS), for checking the Gemm route.
func netLoops(nn *net, x *mat.Dense) []float64 {
	rows, d := x.Dims()
	out := make([]float64, rows)
	for i := range rows {
		for k := range nn.m {
			z := nn.theta[k*(d+1)+d]
			for j := range d {
				z += nn.theta[k*(d+1)+j] * x.At(i, j)
			}
			out[i] += nn.a[k] * math.Max(z, 0)
		}
		out[i] /= math.Sqrt(float64(nn.m))
	}
	return out
}

// TestNetworkGradient checks the analytic gradient of the loss against
// central finite differences, (L(θ + h e_i) − L(θ − h e_i))/(2h), at five
// random parameter points (common practice; Numerical Optimization, 2nd
// ed., Springer, 2006, §8.1, from memory). The loss is piecewise quadratic
// in each single parameter (f is linear in a_k and piecewise linear in
// θ_k), so the central difference has no truncation error unless ±h crosses
// a kink of a ReLU; what remains is rounding, about eps·L/h ≈ 1e-10
// relative for h = 1e-6. Components whose ±h step would cross a kink
// (|z_ik| ≤ h·|x̃_ij|) are skipped, and must be rare.
func TestNetworkGradient(t *testing.T) {
	const n, d, m, h = 9, 3, 7, 1e-6
	x, y, _ := netSample(3, n, d, 0)
	xt := augmentT(x, n)
	rng := rand.New(rand.NewPCG(17, 1))
	skipped := 0
	for point := range 5 {
		nn := &net{m: m, d: d, theta: make([]float64, m*(d+1)), a: make([]float64, m), scale: 1 / math.Sqrt(m)}
		for i := range nn.theta {
			nn.theta[i] = rng.NormFloat64()
		}
		for i := range nn.a {
			nn.a[i] = rng.NormFloat64()
		}
		buf := &netBuf{z: make([]float64, n*m), r: make([]float64, n), ga: make([]float64, m), gtheta: make([]float64, m*(d+1))}
		nn.lossGrad(xt, y, buf)
		analytic := append(append([]float64(nil), buf.gtheta...), buf.ga...)
		// z_ik at the point, to spot kinks
		z := make([]float64, n*m)
		for i := range n {
			for k := range m {
				for j := range d + 1 {
					z[i*m+k] += nn.theta[k*(d+1)+j] * xt.Data[j*n+i]
				}
			}
		}
		scratch := &netBuf{z: make([]float64, n*m), r: make([]float64, n), ga: make([]float64, m), gtheta: make([]float64, m*(d+1))}
		numeric := make([]float64, len(analytic))
		params := append(append([]float64(nil), nn.theta...), nn.a...)
		use := make([]bool, len(params))
		for idx := range params {
			use[idx] = true
			if idx < m*(d+1) {
				k, j := idx/(d+1), idx%(d+1)
				for i := range n {
					if math.Abs(z[i*m+k]) <= 2*h*math.Abs(xt.Data[j*n+i]) {
						use[idx] = false
					}
				}
			}
			set := func(v float64) {
				if idx < m*(d+1) {
					nn.theta[idx] = v
				} else {
					nn.a[idx-m*(d+1)] = v
				}
			}
			set(params[idx] + h)
			lp := nn.lossGrad(xt, y, scratch)
			set(params[idx] - h)
			lm := nn.lossGrad(xt, y, scratch)
			set(params[idx])
			numeric[idx] = (lp - lm) / (2 * h)
		}
		scale := floats.Norm(analytic, math.Inf(1))
		for idx := range analytic {
			if !use[idx] {
				skipped++
				continue
			}
			if diff := math.Abs(numeric[idx] - analytic[idx]); diff > 1e-6*scale {
				t.Errorf("point %d, parameter %d: analytic %.10g, central difference %.10g (tol 1e-6·‖g‖∞ = %.3g)",
					point, idx, analytic[idx], numeric[idx], 1e-6*scale)
			}
		}
	}
	if skipped > 2 {
		t.Errorf("%d components skipped at kinks; the check lost its coverage", skipped)
	}
}

// TestNetworkForward: the Gemm forward pass and the recorded fit agree with
// the formula evaluated by plain loops at the initialisation (steps = 0),
// and the initialisation is nested across widths.
func TestNetworkForward(t *testing.T) {
	x, y, test := netSample(5, 12, 4, 30)
	tr := netTrain(x, y, test, 2)
	nt := &TwoLayerNet{Width: 9, StepSize: 0.1, InitScale: 1.3}
	fits := nt.Path(tr, spec.ParamWidth, []float64{5, 9})
	for i, m := range []int{5, 9} {
		nn := newNet(tr, m, 4, 1.3)
		want := netLoops(nn, test)
		if fits[i].Err != nil || relDist(fits[i].Pred, want) > 1e-13 {
			t.Errorf("width %d: predictions differ from the loop formula by %.3g (err %v)", m, relDist(fits[i].Pred, want), fits[i].Err)
		}
		fitted := netLoops(nn, x)
		risk := 0.0
		for j := range fitted {
			risk += (fitted[j] - y[j]) * (fitted[j] - y[j]) / 12
		}
		if math.Abs(fits[i].TrainRisk-risk) > 1e-13*risk {
			t.Errorf("width %d: TrainRisk %v, want %v", m, fits[i].TrainRisk, risk)
		}
		wantNorm := math.Sqrt(floats.Dot(nn.theta, nn.theta) + floats.Dot(nn.a, nn.a))
		if math.Abs(fits[i].Norm-wantNorm) > 1e-13*wantNorm || !math.IsNaN(fits[i].DF) || !math.IsNaN(fits[i].Cond) || fits[i].Coef != nil {
			t.Errorf("width %d: Norm %v (want %v), DF %v, Cond %v, Coef %v; want DF, Cond NaN and no Coef", m, fits[i].Norm, wantNorm, fits[i].DF, fits[i].Cond, fits[i].Coef)
		}
	}
	small, large := newNet(tr, 5, 4, 1.3), newNet(tr, 9, 4, 1.3)
	if !floats.Equal(small.theta, large.theta[:len(small.theta)]) || !floats.Equal(small.a, large.a[:5]) {
		t.Error("the first 5 units of the width-9 initialisation differ from the width-5 one")
	}
	// Without test inputs, no predictions.
	if f := nt.Path(netTrain(x, y, nil, 2), spec.ParamSteps, []float64{3})[0]; f.Err != nil || f.Pred != nil {
		t.Errorf("Test nil: Pred = %v, err %v; want nil", f.Pred, f.Err)
	}
}

// TestNetworkMonotone: full-batch gradient descent with a step well inside
// the stable range decreases the training loss at every step (the descent
// lemma, θ − η∇L lowers L when η < 2/L_smooth; Numerical Optimization, 2nd
// ed., Springer, 2006, §3.1, from memory; the ReLU loss is smooth between
// kinks). A step far too large must break it, so the check can fail.
func TestNetworkMonotone(t *testing.T) {
	x, y, _ := netSample(7, 20, 3, 0)
	steps := make([]float64, 301)
	for i := range steps {
		steps[i] = float64(i)
	}
	tr := netTrain(x, y, nil, 1)
	fits := (&TwoLayerNet{Width: 16, StepSize: 0.02, InitScale: 1}).Path(tr, spec.ParamSteps, steps)
	for k := 1; k < len(fits); k++ {
		if fits[k].Err != nil || fits[k].TrainRisk > fits[k-1].TrainRisk {
			t.Fatalf("step %d: training risk %v after %v (err %v); want a decrease", k, fits[k].TrainRisk, fits[k-1].TrainRisk, fits[k].Err)
		}
	}
	if !(fits[300].TrainRisk < 0.8*fits[0].TrainRisk) {
		t.Errorf("300 steps lowered the training risk only from %v to %v", fits[0].TrainRisk, fits[300].TrainRisk)
	}
	bad := (&TwoLayerNet{Width: 16, StepSize: 20, InitScale: 1}).Path(tr, spec.ParamSteps, steps)
	rises := false
	for k := 1; k < len(bad); k++ {
		if bad[k].Err != nil || bad[k].TrainRisk > bad[k-1].TrainRisk {
			rises = true
			break
		}
	}
	if !rises {
		t.Error("step size 20: the training risk never rose; the monotonicity check cannot fail")
	}
}

// TestNetworkPathAndSeeds: the steps path equals separate runs to each step
// count (full batch and minibatch), a model seed determines the fit bit for
// bit, and another seed gives another fit.
func TestNetworkPathAndSeeds(t *testing.T) {
	x, y, test := netSample(9, 25, 3, 10)
	for _, batch := range []int{0, 7} {
		nt := &TwoLayerNet{Width: 12, StepSize: 0.05, InitScale: 1, Batch: batch}
		path := nt.Path(netTrain(x, y, test, 4), spec.ParamSteps, []float64{40, 0, 13, 40})
		for i, k := range []int{40, 0, 13, 40} {
			one := (&TwoLayerNet{Width: 12, Steps: k, StepSize: 0.05, InitScale: 1, Batch: batch}).Path(netTrain(x, y, test, 4), spec.ParamWidth, []float64{12})[0]
			if path[i].Err != nil || one.Err != nil || !floats.Equal(path[i].Pred, one.Pred) || path[i].TrainRisk != one.TrainRisk || path[i].Norm != one.Norm {
				t.Errorf("batch %d, k=%d: the steps path differs from a run of %d steps", batch, k, k)
			}
		}
		again := nt.Path(netTrain(x, y, test, 4), spec.ParamSteps, []float64{40})[0]
		other := nt.Path(netTrain(x, y, test, 5), spec.ParamSteps, []float64{40})[0]
		if !floats.Equal(again.Pred, path[0].Pred) {
			t.Errorf("batch %d: the same seeds gave different fits", batch)
		}
		if floats.Equal(other.Pred, path[0].Pred) {
			t.Errorf("batch %d: another model seed gave the same fit", batch)
		}
		wantMethod := map[int]string{0: "full-batch", 7: "minibatch"}[batch]
		if path[0].Method != wantMethod {
			t.Errorf("batch %d: method %q, want %q", batch, path[0].Method, wantMethod)
		}
	}
	// A batch of at least n rows is the full batch, bit for bit.
	full := (&TwoLayerNet{Width: 12, Steps: 20, StepSize: 0.05, InitScale: 1}).Path(netTrain(x, y, test, 4), spec.ParamNTrain, []float64{25})[0]
	big := (&TwoLayerNet{Width: 12, Steps: 20, StepSize: 0.05, InitScale: 1, Batch: 40}).Path(netTrain(x, y, test, 4), spec.ParamNTrain, []float64{25})[0]
	if !floats.Equal(full.Pred, big.Pred) {
		t.Error("batch 40 ≥ n = 25 differs from the full batch")
	}
}

func TestNetworkDiverges(t *testing.T) {
	x, y, test := netSample(2, 15, 3, 5)
	fits := (&TwoLayerNet{Width: 10, StepSize: 1e6, InitScale: 1}).Path(netTrain(x, y, test, 1), spec.ParamSteps, []float64{0, 2000})
	if fits[0].Err != nil || len(fits[0].Pred) != 5 {
		t.Errorf("k=0: err %v; want the initialisation reported", fits[0].Err)
	}
	if !errors.Is(fits[1].Err, ErrDiverge) || fits[1].Pred != nil {
		t.Errorf("step size 1e6: err = %v; want ErrDiverge and no predictions", fits[1].Err)
	}
}

func TestNetworkBadInput(t *testing.T) {
	x, y, test := netSample(2, 10, 3, 4)
	good := &TwoLayerNet{Width: 4, Steps: 3, StepSize: 0.1, InitScale: 1}
	for _, tc := range []struct {
		name   string
		nt     *TwoLayerNet
		knob   string
		values []float64
		want   []error
	}{
		{"penalty knob", good, spec.ParamLambda, []float64{1}, []error{ErrKnob}},
		{"bad widths", good, spec.ParamWidth, []float64{0, 2.5, -3, 3}, []error{ErrValue, ErrValue, ErrValue, nil}},
		{"huge width", good, spec.ParamWidth, []float64{1 << 30}, []error{ErrValue}},
		{"bad steps", good, spec.ParamSteps, []float64{-1, 0.5, 2}, []error{ErrValue, ErrValue, nil}},
		{"bad rows", good, spec.ParamNTrain, []float64{11, 0, 5}, []error{ErrValue, ErrValue, nil}},
		{"zero step size", &TwoLayerNet{Width: 4, InitScale: 1}, spec.ParamSteps, []float64{1}, []error{ErrParam}},
		{"zero init scale", &TwoLayerNet{Width: 4, StepSize: 0.1}, spec.ParamSteps, []float64{1}, []error{ErrParam}},
		{"negative batch", &TwoLayerNet{Width: 4, StepSize: 0.1, InitScale: 1, Batch: -1}, spec.ParamWidth, []float64{2}, []error{ErrParam}},
		{"no width for steps", &TwoLayerNet{StepSize: 0.1, InitScale: 1}, spec.ParamSteps, []float64{1, 2}, []error{ErrParam, ErrParam}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			fits := tc.nt.Path(netTrain(x, y, test, 1), tc.knob, tc.values)
			for i, f := range fits {
				if !errors.Is(f.Err, tc.want[i]) || (f.Err == nil) != (tc.want[i] == nil) {
					t.Errorf("value %v: err = %v, want %v", tc.values[i], f.Err, tc.want[i])
				}
			}
		})
	}
	bad := mat.DenseCopyOf(x)
	bad.Set(2, 1, math.Inf(1))
	if f := good.Path(netTrain(bad, y, test, 1), spec.ParamSteps, []float64{1})[0]; !errors.Is(f.Err, ErrNotFinite) {
		t.Errorf("Inf in x: err = %v, want ErrNotFinite", f.Err)
	}
}

func TestNetworkNew(t *testing.T) {
	for _, tc := range []struct {
		name   string
		params map[string]float64
		want   *TwoLayerNet
		err    error
	}{
		{"width knob", map[string]float64{"steps": 100, "step_size": 0.05, "init_scale": 1, "batch": 0},
			&TwoLayerNet{Steps: 100, StepSize: 0.05, InitScale: 1}, nil},
		{"steps knob", map[string]float64{"width": 64, "step_size": 0.1, "init_scale": 0.5, "batch": 32},
			&TwoLayerNet{Width: 64, StepSize: 0.1, InitScale: 0.5, Batch: 32}, nil},
		{"zero step", map[string]float64{"width": 4, "step_size": 0, "init_scale": 1}, nil, ErrParam},
		{"fractional width", map[string]float64{"width": 2.5, "step_size": 0.1, "init_scale": 1}, nil, ErrParam},
		{"negative batch", map[string]float64{"width": 4, "step_size": 0.1, "init_scale": 1, "batch": -2}, nil, ErrParam},
	} {
		t.Run(tc.name, func(t *testing.T) {
			got, err := New(spec.Model{Family: spec.FamilyTwoLayer, Params: tc.params})
			if !errors.Is(err, tc.err) || (err == nil) != (tc.err == nil) {
				t.Fatalf("New(%v) error = %v, want %v", tc.params, err, tc.err)
			}
			if tc.want != nil {
				if g, ok := got.(*TwoLayerNet); !ok || *g != *tc.want {
					t.Errorf("New(%v) = %#v, want %#v", tc.params, got, tc.want)
				}
			}
		})
	}
}

// TestNetworkInit: the initial parameters have the documented laws, w_kj ~
// N(0, s²/d), c_k ~ N(0, s²), a_k ~ N(0, s²): sample means and variances of
// a wide draw within 5 standard errors (for a normal sample of size N the
// mean has SE σ/√N and the variance SE σ²√(2/(N−1)); textbook).
func TestNetworkInit(t *testing.T) {
	const m, d, s = 20000, 4, 1.7
	x, y, _ := netSample(1, 3, d, 0)
	nn := newNet(netTrain(x, y, nil, 3), m, d, s)
	var w, c []float64
	for k := range m {
		w = append(w, nn.theta[k*(d+1):k*(d+1)+d]...)
		c = append(c, nn.theta[k*(d+1)+d])
	}
	for _, tc := range []struct {
		name string
		v    []float64
		sd   float64
	}{{"w", w, s / math.Sqrt(d)}, {"c", c, s}, {"a", nn.a, s}} {
		nv := float64(len(tc.v))
		mean := floats.Sum(tc.v) / nv
		ss := 0.0
		for _, v := range tc.v {
			ss += (v - mean) * (v - mean)
		}
		vr := ss / (nv - 1)
		if math.Abs(mean) > 5*tc.sd/math.Sqrt(nv) {
			t.Errorf("%s: mean %.4g, want 0 ± %.3g", tc.name, mean, 5*tc.sd/math.Sqrt(nv))
		}
		if se := tc.sd * tc.sd * math.Sqrt(2/(nv-1)); math.Abs(vr-tc.sd*tc.sd) > 5*se {
			t.Errorf("%s: variance %.5g, want %.5g ± %.3g", tc.name, vr, tc.sd*tc.sd, 5*se)
		}
	}
}

// TestNetworkLazy: under the 1/√m output scaling, training moves each
// weight by O(1/√m) while ‖θ₀‖ grows like √m, so the relative change of
// the parameters after a fixed number of steps falls like 1/√m, while the
// training loss still drops — the lazy regime ("Neural tangent kernel:
// convergence and generalization in neural networks", NeurIPS 2018,
// arXiv:1806.07572; "On lazy training in differentiable programming",
// NeurIPS 2019, arXiv:1812.07956; the rate from memory). Widths 64 and
// 4096 differ by √64 = 8 in that ratio; the check accepts 4 to 16, and the
// loss must fall by a similar factor at both widths.
func TestNetworkLazy(t *testing.T) {
	const n, d, steps, eta = 10, 2, 100, 0.5
	x, y, _ := netSample(4, n, d, 0)
	xt := augmentT(x, n)
	rel := map[int]float64{}
	drop := map[int]float64{}
	for _, m := range []int{64, 4096} {
		nn := newNet(netTrain(x, y, nil, 1), m, d, 1)
		start := append(append([]float64(nil), nn.theta...), nn.a...)
		b := &netBuf{z: make([]float64, n*m), r: make([]float64, n), ga: make([]float64, m), gtheta: make([]float64, m*(d+1))}
		first := nn.lossGrad(xt, y, b)
		for range steps {
			floats.AddScaled(nn.theta, -eta, b.gtheta)
			floats.AddScaled(nn.a, -eta, b.ga)
			nn.lossGrad(xt, y, b)
		}
		last := nn.lossGrad(xt, y, b)
		end := append(append([]float64(nil), nn.theta...), nn.a...)
		rel[m] = floats.Distance(end, start, 2) / floats.Norm(start, 2)
		drop[m] = last / first
	}
	if r := rel[64] / rel[4096]; r < 4 || r > 16 {
		t.Errorf("relative parameter change: width 64 %.4g, width 4096 %.4g, ratio %.3g; want about √64 = 8 (4 to 16)", rel[64], rel[4096], r)
	}
	for m, f := range drop {
		if !(f < 0.5) {
			t.Errorf("width %d: the loss only fell to %.3g of its start in %d steps", m, f, steps)
		}
	}
	t.Logf("relative change %.4g (m=64), %.4g (m=4096); loss ratio %.3g, %.3g", rel[64], rel[4096], drop[64], drop[4096])
}

// A non-finite test input is bad input, ErrNotFinite, as for kernel ridge
// and k-NN; not a divergence with the advice to take a smaller step size
// (which the network reported), nor a numerical failure (random features,
// polynomials).
func TestNonFiniteTestInput(t *testing.T) {
	x, y, test := netSample(3, 12, 1, 4)
	test.Set(2, 0, math.NaN())
	for _, tc := range []struct {
		name string
		f    Fitter
		knob string
		v    float64
	}{
		{"two-layer-net", &TwoLayerNet{Width: 4, Steps: 3, StepSize: 0.1, InitScale: 1}, spec.ParamWidth, 4},
		{"random-features", &RandomFeatures{Scale: 1, Activation: ActivationReLU}, spec.ParamFeatures, 5},
		{"polynomial", &Polynomial{Low: -1, High: 1, Basis: BasisLegendre}, spec.ParamDegree, 3},
		{"kernel-ridge", &KernelRidge{Lambda: 0.1}, spec.ParamBandwidth, 1},
		{"nearest-neighbours", &Neighbours{}, spec.ParamNeighbours, 2},
	} {
		f := tc.f.Path(netTrain(x, y, test, 1), tc.knob, []float64{tc.v})[0]
		if !errors.Is(f.Err, ErrNotFinite) {
			t.Errorf("%s: NaN test input: err = %v, want ErrNotFinite", tc.name, f.Err)
		}
	}
}
