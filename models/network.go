package models

import (
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"

	"riskgrid/data"
	"riskgrid/spec"
)

func init() {
	register(spec.FamilyTwoLayer, func(m spec.Model) (Fitter, error) {
		p := m.Params
		nt := &TwoLayerNet{
			Width:     int(p["width"]),
			Steps:     int(p["steps"]),
			StepSize:  p["step_size"],
			InitScale: p["init_scale"],
			Batch:     int(p["batch"]),
		}
		for _, key := range []string{"width", "steps", "batch"} {
			if v, ok := p[key]; ok && (!(v >= 0) || v != math.Trunc(v) || v > 1<<31) {
				return nil, fmt.Errorf("%w: %s %s = %v (accepted: a whole number ≥ 0)", ErrParam, m.Family, key, v)
			}
		}
		if err := nt.check(); err != nil {
			return nil, fmt.Errorf("%w (%s)", err, m.Family)
		}
		return nt, nil
	})
}

var _ Fitter = (*TwoLayerNet)(nil)

// Tags of the network's random streams (Train.Rand).
const (
	netInitTag  = "two-layer-net init"
	netBatchTag = "two-layer-net batches"
)

// netMaxCells bounds width × rows held in one activation buffer (2²⁶
// float64, 512 MiB); a wider network is a per-fit ErrValue error rather
// than an out-of-memory crash.
const netMaxCells = 1 << 26

// TwoLayerNet fits a two-layer ReLU network of width m to the squared loss
// by gradient descent:
//
//	f(x) = (1/√m) Σ_{k=1..m} a_k relu(w_kᵀx + c_k),
//	loss_B(θ) = (1/(2|B|)) Σ_{i∈B} (f(x_i) − y_i)²,   θ ← θ − η ∇loss_B(θ),
//
// every parameter (a, W, c) trained, for Steps steps of step size η =
// StepSize. B is the whole training sample (Batch = 0, or Batch ≥ n) or,
// at each step, a uniform random subset of Batch rows drawn afresh
// (without replacement within the batch, independently across steps).
// The 1/√m output scaling is the "neural tangent" parametrisation: with
// the default initialisation
//
//	w_k ~ N(0, s²I/d),   c_k ~ N(0, s²),   a_k ~ N(0, s²),   s = InitScale,
//
// f at initialisation has a variance that does not grow with m, and as m
// grows with η fixed, training moves each parameter less (the lazy
// regime; see "Neural tangent kernel: convergence and generalization in
// neural networks", NeurIPS 2018, arXiv:1806.07572). The inputs are used as
// given (no standardisation).
//
// Randomness comes only from Train.Rand: the initial parameters from the
// stream "two-layer-net init", drawn unit by unit (w_k, then c_k, then
// a_k), so the first m units of a wider network are the units of the
// width-m network (initialisation nested across widths); the batches from
// "two-layer-net batches", restarted for every training run, so every
// width sees the same batch sequence (an n_train value draws its batches
// from its own first n rows, so those sequences differ). Given the streams
// the computation is deterministic (blas64 Gemm for the forward and
// backward passes, whose result does not depend on its internal
// goroutines).
//
// Path knobs: spec.ParamWidth (each width trained separately, Steps
// steps), spec.ParamSteps (one run of width Width to the largest step
// count, the fit recorded at every requested count) and spec.ParamNTrain
// (the first n rows, width Width, Steps steps). A Fit holds Pred, the
// predictions at the rows of Train.Test (nil when Test is nil); TrainRisk,
// (1/n)Σ(f(x_i) − y_i)² over all n training rows; Norm, the Euclidean
// norm of every trained parameter √(‖a‖² + ‖W‖_F² + ‖c‖²); DF and Cond
// NaN (a network is not a linear smoother and solves no linear system);
// Coef nil. Method "full-batch" or "minibatch".
//
// Failures are per fit: a step whose loss or parameters are not finite
// (a step size too large) makes that step count and every later one an
// ErrDiverge error naming the step; earlier step counts keep their fits.
// A width whose activations would exceed 2²⁶ values is an ErrValue error;
// a NaN or infinite training or test input, ErrNotFinite.
type TwoLayerNet struct {
	// Width is the number m of hidden units for the steps and n_train
	// knobs (the width knob overrides it).
	Width int
	// Steps is the number of gradient steps for the width and n_train
	// knobs (the steps knob overrides it). 0 reports the initialisation.
	Steps int
	// StepSize is η > 0.
	StepSize float64
	// InitScale is s > 0, multiplying the default initialisation.
	InitScale float64
	// Batch is the minibatch size; 0 (or ≥ n) means full batch.
	Batch int
}

// check validates the fixed parameters.
func (nt *TwoLayerNet) check() error {
	switch {
	case !(nt.StepSize > 0) || math.IsInf(nt.StepSize, 1):
		return fmt.Errorf("%w: step_size = %v (accepted: a finite number > 0)", ErrParam, nt.StepSize)
	case !(nt.InitScale > 0) || math.IsInf(nt.InitScale, 1):
		return fmt.Errorf("%w: init_scale = %v (accepted: a finite number > 0)", ErrParam, nt.InitScale)
	case nt.Batch < 0:
		return fmt.Errorf("%w: batch = %d (accepted: a whole number ≥ 0; 0: full batch)", ErrParam, nt.Batch)
	case nt.Width < 0:
		return fmt.Errorf("%w: width = %d (accepted: a whole number ≥ 1)", ErrParam, nt.Width)
	case nt.Steps < 0:
		return fmt.Errorf("%w: steps = %d (accepted: a whole number ≥ 0)", ErrParam, nt.Steps)
	}
	return nil
}

// Path fits the path; see the type documentation. It panics if len(y) is
// not the number of rows of x, or if t.Test has a different number of
// columns.
func (nt *TwoLayerNet) Path(t *Train, knob string, values []float64) []Fit {
	rows, cols := checkShape(t.X, t.Y)
	if t.Test != nil {
		if _, c := t.Test.Dims(); c != cols {
			panic(fmt.Sprintf("models: Test has %d columns, X has %d", c, cols))
		}
	}
	fits := make([]Fit, len(values))
	if err := nt.check(); err != nil {
		failAll(fits, err)
		return fits
	}
	whole := func(v float64, lo int) bool { return v >= float64(lo) && v <= 1<<31 && v == math.Trunc(v) }
	fixedWidth := func(f *Fit) bool {
		if nt.Width < 1 {
			f.Err = fmt.Errorf("%w: width = %d (accepted: a whole number ≥ 1)", ErrParam, nt.Width)
			return false
		}
		return true
	}
	switch knob {
	case spec.ParamWidth:
		for i, v := range values {
			if !whole(v, 1) {
				fits[i].Err = fmt.Errorf("%w: %s = %v (accepted: a whole number ≥ 1)", ErrValue, knob, v)
				continue
			}
			nt.train(t, rows, int(v), []int{nt.Steps}, fits[i:i+1])
		}
	case spec.ParamSteps:
		ks := make([]int, len(values))
		var ok []int
		for i, v := range values {
			if !whole(v, 0) {
				fits[i].Err = fmt.Errorf("%w: %s = %v (accepted: a whole number ≥ 0)", ErrValue, knob, v)
				ks[i] = -1
				continue
			}
			ks[i] = int(v)
			ok = append(ok, i)
		}
		if len(ok) == 0 {
			return fits
		}
		if !fixedWidth(&fits[ok[0]]) {
			failAll(fits, fits[ok[0]].Err)
			return fits
		}
		nt.train(t, rows, nt.Width, ks, fits)
	case spec.ParamNTrain:
		for i, v := range values {
			if !whole(v, 1) || v > float64(rows) {
				fits[i].Err = fmt.Errorf("%w: %s = %v (accepted: an integer from 1 to %d, the rows of x)", ErrValue, knob, v, rows)
				continue
			}
			if fixedWidth(&fits[i]) {
				nt.train(t, int(v), nt.Width, []int{nt.Steps}, fits[i:i+1])
			}
		}
	default:
		failAll(fits, fmt.Errorf("%w: %q (accepted: %s, %s, %s)", ErrKnob, knob, spec.ParamWidth, spec.ParamSteps, spec.ParamNTrain))
	}
	return fits
}

// net is one network being trained: Θ = [W c] (m×(d+1), row k = (w_k, c_k))
// acting on inputs augmented with a constant 1, and a (m).
type net struct {
	m, d  int
	theta []float64 // m×(d+1)
	a     []float64 // m
	scale float64   // 1/√m
}

// newNet draws the initialisation of width m for d inputs (see
// TwoLayerNet): unit by unit, so that widths are nested.
func newNet(t *Train, m, d int, s float64) *net {
	st := t.Rand(netInitTag)
	nn := &net{m: m, d: d, theta: make([]float64, m*(d+1)), a: make([]float64, m), scale: 1 / math.Sqrt(float64(m))}
	sw := s / math.Sqrt(float64(d))
	for k := range m {
		row := nn.theta[k*(d+1) : (k+1)*(d+1)]
		for j := range d {
			row[j] = sw * st.Normal()
		}
		row[d] = s * st.Normal()
		nn.a[k] = s * st.Normal()
	}
	return nn
}

// netBuf holds the scratch of one training run.
type netBuf struct {
	z, r, ga, gtheta, xb, yb []float64
}

// forward writes f(x_i) for the columns of xt (augmented inputs stored by
// column, (d+1)×rows) into out, and leaves relu(Z) in z, Z = Θ X̃ᵀ (m×rows,
// row k the pre-activations of unit k). The layout keeps the long
// dimension (rows) innermost in both products of a training step.
func (nn *net) forward(xt blas64.General, z, out []float64) {
	rows, m := xt.Cols, nn.m
	zg := blas64.General{Rows: m, Cols: rows, Stride: rows, Data: z[:m*rows]}
	tg := blas64.General{Rows: m, Cols: nn.d + 1, Stride: nn.d + 1, Data: nn.theta}
	blas64.Gemm(blas.NoTrans, blas.NoTrans, 1, tg, xt, 0, zg)
	out = out[:rows]
	clear(out)
	for k := range m {
		ak := nn.a[k] * nn.scale
		row := zg.Data[k*rows : (k+1)*rows]
		for i, v := range row {
			if v > 0 {
				out[i] += ak * v
			} else {
				row[i] = 0
			}
		}
	}
}

// lossGrad returns the loss (1/(2B))Σ(f(x_i) − y_i)² over the B columns of
// xt and writes its gradient into b.ga (m) and b.gtheta (m×(d+1)):
//
//	∂/∂a_k = (1/(B√m)) Σ_i r_i relu(z_ki),
//	∂/∂θ_k = (1/(B√m)) Σ_i r_i a_k 1[z_ki > 0] x̃_i,   x̃_i = (x_i, 1),
//
// with r_i = f(x_i) − y_i and z_ki = θ_kᵀx̃_i.
func (nn *net) lossGrad(xt blas64.General, y []float64, b *netBuf) float64 {
	rows, m := xt.Cols, nn.m
	z := b.z[:m*rows]
	r := b.r[:rows]
	nn.forward(xt, z, r)
	loss := 0.0
	for i := range r {
		r[i] -= y[i]
		loss += r[i] * r[i]
	}
	inv := 1 / float64(rows)
	// ga_k from relu(z_k·), then δ_ki = r_i a_k/√m where z_ki > 0, else 0.
	for k := range m {
		row := z[k*rows : (k+1)*rows]
		ak := nn.a[k] * nn.scale
		g := 0.0
		for i, v := range row {
			if v > 0 {
				g += r[i] * v
				row[i] = r[i] * ak
			}
		}
		b.ga[k] = g * nn.scale * inv
	}
	blas64.Gemm(blas.NoTrans, blas.Trans, inv, blas64.General{Rows: m, Cols: rows, Stride: rows, Data: z}, xt, 0,
		blas64.General{Rows: m, Cols: nn.d + 1, Stride: nn.d + 1, Data: b.gtheta})
	return loss * inv / 2
}

// norm returns √(‖a‖² + ‖W‖_F² + ‖c‖²).
func (nn *net) norm() float64 {
	return math.Hypot(floats.Norm(nn.theta, 2), floats.Norm(nn.a, 2))
}

// augmentT returns the first n rows of x with a constant 1 appended, stored
// by column: (d+1)×n, column i the augmented input x̃_i = (x_i, 1).
func augmentT(x *mat.Dense, n int) blas64.General {
	_, d := x.Dims()
	raw := x.RawMatrix()
	out := blas64.General{Rows: d + 1, Cols: n, Stride: n, Data: make([]float64, (d+1)*n)}
	for i := range n {
		for j, v := range raw.Data[i*raw.Stride : i*raw.Stride+d] {
			out.Data[j*n+i] = v
		}
		out.Data[d*n+i] = 1
	}
	return out
}

// train runs one training of width m on the first n rows to the largest
// of ks and records the fit after ks[i] steps in fits[i] (ks[i] < 0 marks
// an entry already failed).
func (nt *TwoLayerNet) train(t *Train, n, m int, ks []int, fits []Fit) {
	_, d := t.X.Dims()
	set := func(err error) {
		for i, k := range ks {
			if k >= 0 {
				fits[i].Err = err
			}
		}
	}
	for i := range n {
		for j := range d {
			if v := t.X.At(i, j); math.IsNaN(v) || math.IsInf(v, 0) {
				set(fmt.Errorf("%w: x[%d][%d] = %v", ErrNotFinite, i, j, v))
				return
			}
		}
		if v := t.Y[i]; math.IsNaN(v) || math.IsInf(v, 0) {
			set(fmt.Errorf("%w: y[%d] = %v", ErrNotFinite, i, v))
			return
		}
	}
	// A NaN input would pass the relu as inactive (NaN > 0 is false) and
	// predict a finite value: refuse it.
	if err := finiteTest(t.Test); err != nil {
		set(err)
		return
	}
	batch := nt.Batch
	method := "minibatch"
	if batch == 0 || batch >= n {
		batch, method = n, "full-batch"
	}
	var nTest int
	if t.Test != nil {
		nTest, _ = t.Test.Dims()
	}
	const chunk = 256 // rows per forward pass for the records
	if m > netMaxCells/max(batch, chunk, d+1) {
		set(fmt.Errorf("%w: width = %d (accepted: at most %d for batches of %d rows and %d inputs, to bound memory)",
			ErrValue, m, netMaxCells/max(batch, chunk, d+1), batch, d))
		return
	}
	order := make([]int, 0, len(ks))
	for i, k := range ks {
		if k >= 0 {
			order = append(order, i)
		}
	}
	slices.SortStableFunc(order, func(i, j int) int { return ks[i] - ks[j] })
	if len(order) == 0 {
		return
	}
	last := ks[order[len(order)-1]]

	xt := augmentT(t.X, n)
	y := t.Y[:n]
	var tt blas64.General
	if nTest > 0 {
		tt = augmentT(t.Test, nTest)
	}
	nn := newNet(t, m, d, nt.InitScale)
	b := &netBuf{
		z:      make([]float64, max(batch, chunk)*m),
		r:      make([]float64, max(batch, chunk)),
		ga:     make([]float64, m),
		gtheta: make([]float64, m*(d+1)),
	}
	var st *data.Stream
	var idx []int
	if batch < n {
		st = t.Rand(netBatchTag)
		idx = make([]int, n)
		for i := range idx {
			idx[i] = i
		}
		b.xb = make([]float64, batch*(d+1))
		b.yb = make([]float64, batch)
	}
	// predict writes f at the columns of x (augmented, by column) into
	// out, chunk by chunk.
	predict := func(x blas64.General, out []float64) {
		for i0 := 0; i0 < x.Cols; i0 += chunk {
			cols := min(chunk, x.Cols-i0)
			sub := blas64.General{Rows: x.Rows, Cols: cols, Stride: x.Stride, Data: x.Data[i0:]}
			nn.forward(sub, b.z, out[i0:i0+cols])
		}
	}
	fitted := make([]float64, n)
	record := func(f *Fit, step int) {
		predict(xt, fitted)
		ss := 0.0
		for i, v := range fitted {
			ss += (v - y[i]) * (v - y[i])
		}
		f.TrainRisk = ss / float64(n)
		f.Norm = nn.norm()
		f.DF, f.Cond, f.Method = math.NaN(), math.NaN(), method
		if nTest > 0 {
			f.Pred = make([]float64, nTest)
			predict(tt, f.Pred)
		}
		finite := !math.IsNaN(f.TrainRisk) && !math.IsInf(f.TrainRisk, 0) && !math.IsInf(f.Norm, 0) && !math.IsNaN(f.Norm)
		for _, v := range f.Pred {
			finite = finite && !math.IsNaN(v) && !math.IsInf(v, 0)
		}
		if !finite {
			*f = Fit{Method: method, DF: math.NaN(), Cond: math.NaN(), Err: fmt.Errorf(
				"%w: the network of width %d is not finite after %d steps of step_size %g; take a smaller step_size", ErrDiverge, m, step, nt.StepSize)}
		}
	}
	next := 0
	for step := 0; ; step++ {
		for next < len(order) && ks[order[next]] == step {
			record(&fits[order[next]], step)
			next++
		}
		if step == last {
			return
		}
		xs, ys := xt, y
		if batch < n {
			st.PartialShuffle(idx, batch)
			for i, r := range idx[:batch] {
				for j := range d + 1 {
					b.xb[j*batch+i] = xt.Data[j*n+r]
				}
				b.yb[i] = y[r]
			}
			xs = blas64.General{Rows: d + 1, Cols: batch, Stride: batch, Data: b.xb}
			ys = b.yb
		}
		loss := nn.lossGrad(xs, ys, b)
		if math.IsNaN(loss) || math.IsInf(loss, 0) {
			err := fmt.Errorf("%w: the training loss of the network of width %d is not finite at step %d (step_size %g); take a smaller step_size",
				ErrDiverge, m, step, nt.StepSize)
			for _, i := range order[next:] {
				fits[i] = Fit{Method: method, DF: math.NaN(), Cond: math.NaN(), Err: err}
			}
			return
		}
		blas64.Axpy(-nt.StepSize, blas64.Vector{N: len(b.gtheta), Inc: 1, Data: b.gtheta}, blas64.Vector{N: len(nn.theta), Inc: 1, Data: nn.theta})
		blas64.Axpy(-nt.StepSize, blas64.Vector{N: m, Inc: 1, Data: b.ga}, blas64.Vector{N: m, Inc: 1, Data: nn.a})
	}
}
