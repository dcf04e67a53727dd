package models

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/mat"

	"riskgrid/data"
	"riskgrid/spec"
)

func init() {
	register(spec.FamilyRandomFeatures, func(m spec.Model) (Fitter, error) {
		rf := &RandomFeatures{
			Features:   int(m.Params["features"]),
			Lambda:     m.Lambda,
			Scale:      m.Params["scale"],
			Activation: m.Options["activation"],
		}
		if rf.Scale == 0 {
			rf.Scale = 1
		}
		if rf.Activation == "" {
			rf.Activation = ActivationReLU
		}
		if err := rf.check(); err != nil {
			return nil, fmt.Errorf("%w: %s: %v", ErrParam, m.Family, err)
		}
		return rf, nil
	})
}

// Activations of RandomFeatures.
const (
	ActivationReLU    = "relu"
	ActivationFourier = "fourier"
)

// maxFeatureEntries bounds the entries of one feature matrix (rows × N,
// training or test): 2^27 float64 values, 1 GiB. A larger N is a per-fit
// ErrValue error rather than an out-of-memory crash of the whole run.
const maxFeatureEntries = 1 << 27

var _ Fitter = (*RandomFeatures)(nil)

// RandomFeatures fits a linear model on N random features of the inputs,
// the second layer of a two-layer network whose first layer is drawn at
// random and frozen:
//
//	f(x) = (1/√N) Σ_{k=1..N} a_k φ_k(x),
//	a    = argmin (1/n)‖y − Z a‖² + λ‖a‖²,   Z_ik = φ_k(x_i)/√N,
//
// with the minimum-norm solution a = Z⁺y at λ = 0 (the least-squares fit for
// N < n, the interpolating fit of least ‖a‖₂ for N ≥ n). The features are
//
//	relu:    φ_k(x) = max(0, w_kᵀx + c_k),     (w_k, c_k) ~ N(0, scale²/(d+1) I_{d+1}),
//	fourier: φ_k(x) = √2 cos(w_kᵀx + c_k),     w_k ~ N(0, I_d/scale²), c_k ~ U[0, 2π),
//
// d the input dimension. The relu feature is relu(w̃ᵀ(x, 1)) on the input
// extended by a constant, so that it has an offset (without one every
// feature of a one-dimensional input is a multiple of max(0, x) or
// max(0, −x)). As N → ∞, ZZᵀ → K with the kernel K(x, x') = E φ(x)φ(x'):
// for fourier the Gaussian kernel exp(−‖x − x'‖²/(2 scale²)) (reference:
// "Random features for large-scale kernel machines", NeurIPS 2007), for
// relu the first-order arc-cosine kernel of the extended inputs
// (‖x̃‖‖x̃'‖ scale²/(d+1) · (sin θ + (π − θ) cos θ)/(2π), θ their angle;
// reference: "Kernel methods for deep learning", NeurIPS 2009); the fit
// tends to kernel ridge regression with penalty λ.
//
// The fit is linear in y: ŷ = H y with H = Z(ZᵀZ + nλI)⁻¹Zᵀ (Z Z⁺ at
// λ = 0). Fit.DF = tr(H), Fit.Norm = ‖a‖₂ (the second-layer coefficients in
// the 1/√N scaling above), Fit.Pred the predictions at the rows of
// Train.Test (nil when it is nil), Fit.Coef nil; TrainRisk, Cond and Method
// are those of the least-squares or ridge solve on the feature matrix (see
// LeastSquares and Ridge).
//
// Randomness: the weights come from Train.Rand("random-features weights"),
// drawn feature by feature (w_k, then c_k), so feature k is the same
// whatever N, and every random-features model of a seed (other λ, other
// N) sees the same features: comparisons between them are paired.
//
// Path knobs:
//
//   - spec.ParamFeatures (N): one draw of the N_max features and one feature
//     matrix serve the path, fitted on nested columns by the LeastSquares
//     path (λ = 0: QR below the threshold, Gram/QR of Zᵀ past it) or the
//     Ridge features path (λ > 0; on the unscaled features the penalty is
//     nλN, the same fit).
//   - spec.ParamLambda: N = Features; one SVD of Z serves every λ (Ridge).
//   - spec.ParamNTrain: N = Features; the first n rows (Ridge, LeastSquares).
//
// Bad values are per-fit errors: N not a whole number ≥ 1 or a feature
// matrix above 2^27 entries (ErrValue), λ < 0 (ErrParam, or ErrValue on a
// λ grid), non-finite inputs (ErrNotFinite).
type RandomFeatures struct {
	// Features is N for the lambda and n_train knobs (the features knob
	// overrides it). Zero is an error there.
	Features int
	// Lambda is the penalty λ ≥ 0; 0 (the default) is the minimum-norm fit.
	Lambda float64
	// Scale sets the spread of the random weights (see the formulas); > 0.
	Scale float64
	// Activation is ActivationReLU or ActivationFourier.
	Activation string
}

// check validates the settings that do not depend on the knob.
func (rf *RandomFeatures) check() error {
	if !(rf.Scale > 0) || math.IsInf(rf.Scale, 1) {
		return fmt.Errorf("scale = %v (accepted: a finite number > 0)", rf.Scale)
	}
	if rf.Activation != ActivationReLU && rf.Activation != ActivationFourier {
		return fmt.Errorf("activation = %q (accepted: %s, %s)", rf.Activation, ActivationReLU, ActivationFourier)
	}
	return nil
}

// featureMap holds N drawn features: row k of w (N × (d+1) for relu, the
// offset last; N × d for fourier) and, for fourier, the phases c.
type featureMap struct {
	act   string
	d, n  int
	w     []float64
	c     []float64
	width int // columns of w
}

// drawFeatures draws the first n features from s, feature by feature, so
// that the first k of any larger draw are the same.
func drawFeatures(s *data.Stream, act string, scale float64, d, n int) *featureMap {
	fm := &featureMap{act: act, d: d, n: n, width: d}
	if act == ActivationReLU {
		fm.width = d + 1
	} else {
		fm.c = make([]float64, n)
	}
	fm.w = make([]float64, n*fm.width)
	sd := scale / math.Sqrt(float64(d+1))
	if act == ActivationFourier {
		sd = 1 / scale
	}
	for k := range n {
		row := fm.w[k*fm.width : (k+1)*fm.width]
		for j := range row {
			row[j] = sd * s.Normal()
		}
		if act == ActivationFourier {
			fm.c[k] = 2 * math.Pi * s.Float64()
		}
	}
	return fm
}

// apply returns the rows × n matrix φ_k(x_i) of the first n features
// (unscaled: without the 1/√N), each entry multiplied by mult.
func (fm *featureMap) apply(x *mat.Dense, n int, mult float64) *mat.Dense {
	rows, d := x.Dims()
	if d != fm.d {
		panic(fmt.Sprintf("models: random features drawn for d = %d applied to %d columns", fm.d, d))
	}
	out := mat.NewDense(rows, n, nil)
	o := out.RawMatrix()
	xr := x.RawMatrix()
	// Pre-activations x W_dᵀ (the first d weights of each feature).
	blas64.Gemm(blas.NoTrans, blas.Trans, 1,
		blas64.General{Rows: rows, Cols: d, Stride: xr.Stride, Data: xr.Data},
		blas64.General{Rows: n, Cols: d, Stride: fm.width, Data: fm.w},
		0, o)
	for i := range rows {
		row := o.Data[i*o.Stride : i*o.Stride+n]
		for k, v := range row {
			if fm.act == ActivationReLU {
				row[k] = mult * max(0, v+fm.w[k*fm.width+d])
			} else {
				row[k] = mult * math.Sqrt2 * math.Cos(v+fm.c[k])
			}
		}
	}
	return out
}

// Path fits the path; see the type documentation. It panics if len(y) is
// not the number of rows of x or Train.Test has other columns than x.
func (rf *RandomFeatures) Path(t *Train, knob string, values []float64) []Fit {
	fits := make([]Fit, len(values))
	rows, d, testRows, ok := startDerived(t, fits, knob,
		[3]string{spec.ParamFeatures, spec.ParamLambda, spec.ParamNTrain}, rf.check(), rf.Lambda)
	if !ok {
		return fits
	}
	tooBig := func(n int) bool { return n > maxFeatureEntries/max(rows, testRows, 1) }
	stream := t.Rand("random-features weights")

	if knob == spec.ParamFeatures {
		ns := make([]int, len(values))
		top := 0
		for i, v := range values {
			if v != math.Trunc(v) || v < 1 || tooBig(int(min(v, 1<<40))) {
				fits[i].Err = fmt.Errorf("%w: %s = %v (accepted: a whole number N ≥ 1 with at most 2^27 entries in the %d-row feature matrix)",
					ErrValue, knob, v, max(rows, testRows))
				continue
			}
			ns[i] = int(v)
			top = max(top, ns[i])
		}
		if top == 0 {
			return fits
		}
		fm := drawFeatures(stream, rf.Activation, rf.Scale, d, top)
		inner := NewTrain(fm.apply(t.X, top, 1), t.Y)
		idx, sub := validValues(ns)
		var w solver
		lambda := rf.Lambda
		got := make([]Fit, len(sub))
		nestedColumns(inner, got, sub, false, func(dd *design, ps []int, ff []Fit) {
			if lambda == 0 {
				w.leastSquares(dd, ps, ff)
				return
			}
			// Unscaled features b = a/√N: (1/n)‖y − Φb‖² + λN‖b‖².
			w.ridgeFeatures(dd, ps, func(p int) float64 { return lambda * float64(p) }, ff)
		})
		for j, i := range idx {
			fits[i] = got[j]
		}
		finishDerived(fits, t.Test, func(x *mat.Dense, cols int) *mat.Dense { return fm.apply(x, cols, 1) },
			func(p int) float64 { return math.Sqrt(float64(p)) })
		return fits
	}

	// lambda and n_train: N fixed, the scaled feature matrix Z = Φ/√N.
	n := rf.Features
	if n < 1 || tooBig(n) {
		failAll(fits, fmt.Errorf("%w: features = %d (accepted: a whole number N ≥ 1 with at most 2^27 entries in the %d-row feature matrix)",
			ErrParam, n, max(rows, testRows)))
		return fits
	}
	fm := drawFeatures(stream, rf.Activation, rf.Scale, d, n)
	mult := 1 / math.Sqrt(float64(n))
	inner := NewTrain(fm.apply(t.X, n, mult), t.Y)
	copy(fits, linearPath(inner, knob, values, rf.Lambda))
	finishDerived(fits, t.Test, func(x *mat.Dense, cols int) *mat.Dense { return fm.apply(x, cols, mult) },
		func(int) float64 { return 1 })
	return fits
}

// startDerived checks what the families fitted by least squares or ridge on
// a derived design (a polynomial basis, random features) check before
// fitting: the shapes (it panics if len(y) is not the number of rows of x
// or Train.Test has other columns than x; testRows is the number of test
// rows whose design is held at once, at most predictBlock), the family's
// parameters (check), the knob (one of knobs), a penalty that is not the
// knob, and a finite sample and test inputs. On a failure it fails every
// fit and returns ok false.
func startDerived(t *Train, fits []Fit, knob string, knobs [3]string, check error, lambda float64) (rows, cols, testRows int, ok bool) {
	rows, cols = checkShape(t.X, t.Y)
	if t.Test != nil {
		var c int
		testRows, c = t.Test.Dims()
		if c != cols {
			panic(fmt.Sprintf("models: Train.Test has %d columns, X has %d", c, cols))
		}
		// The test design is held predictBlock rows at a time (see
		// finishDerived): that is what the size limits count.
		testRows = min(testRows, predictBlock)
	}
	var err error
	switch {
	case check != nil:
		err = fmt.Errorf("%w: %v", ErrParam, check)
	case knob != knobs[0] && knob != knobs[1] && knob != knobs[2]:
		err = fmt.Errorf("%w: %q (accepted: %s, %s, %s)", ErrKnob, knob, knobs[0], knobs[1], knobs[2])
	case knob != spec.ParamLambda && (!(lambda >= 0) || math.IsInf(lambda, 1)):
		err = fmt.Errorf("%w: lambda = %v (accepted: a finite penalty ≥ 0)", ErrParam, lambda)
	default:
		if err = finiteSample(t.X, t.Y); err == nil {
			err = finiteTest(t.Test)
		}
	}
	if err != nil {
		failAll(fits, err)
		return rows, cols, testRows, false
	}
	return rows, cols, testRows, true
}

// linearPath fits the derived design inner along a lambda or n_train knob:
// ridge on a penalty grid, else least squares (minimum norm) at lambda 0
// and ridge at lambda > 0.
func linearPath(inner *Train, knob string, values []float64, lambda float64) []Fit {
	switch {
	case knob == spec.ParamLambda:
		return (&Ridge{}).Path(inner, knob, values)
	case lambda == 0:
		return (&LeastSquares{}).Path(inner, knob, values)
	}
	return (&Ridge{Lambda: lambda}).Path(inner, knob, values)
}

// predictBlock is the number of test rows whose derived design (random
// features, a polynomial basis) is held at once: the predictions are
// computed block by block, so a path never holds the m × N_max test design
// (2048 × 2000 would be 31 MiB per worker), only predictBlock × N_max.
const predictBlock = 256

// finishDerived turns fits on a derived design B (coefficients b on its
// columns; the family's coefficients are mult(len(b))·b) into the
// family's fits: Pred = B(test)[:, :len(b)]·b (nil when test is nil),
// Norm scaled by mult, Coef nil. design(x, cols) returns the first cols
// columns of B at the rows of x. A non-finite prediction is an
// ErrNumerical error of that fit.
func finishDerived(fits []Fit, test *mat.Dense, design func(x *mat.Dense, cols int) *mat.Dense, mult func(p int) float64) {
	top := 0
	for i := range fits {
		if f := &fits[i]; f.Err == nil {
			top = max(top, len(f.Coef))
			f.Norm *= mult(len(f.Coef))
			if test != nil {
				f.Pred = make([]float64, test.RawMatrix().Rows)
			}
		}
	}
	if test != nil && top > 0 {
		rows, cols := test.Dims()
		for i0 := 0; i0 < rows; i0 += predictBlock {
			i1 := min(i0+predictBlock, rows)
			b := design(test.Slice(i0, i1, 0, cols).(*mat.Dense), top).RawMatrix()
			for i := range fits {
				f := &fits[i]
				if f.Err != nil {
					continue
				}
				blas64.Gemv(blas.NoTrans, 1, blas64.General{Rows: b.Rows, Cols: len(f.Coef), Stride: b.Stride, Data: b.Data},
					blas64.Vector{N: len(f.Coef), Inc: 1, Data: f.Coef}, 0, blas64.Vector{N: b.Rows, Inc: 1, Data: f.Pred[i0:i1]})
			}
		}
	}
	for i := range fits {
		f := &fits[i]
		if f.Err != nil {
			continue
		}
		f.Coef = nil
		if !allFinite(f.Pred) {
			*f = Fit{Method: f.Method, Cond: f.Cond, Err: fmt.Errorf("%w: non-finite prediction at a test input (condition %g)", ErrNumerical, f.Cond)}
		}
	}
}

// allFinite reports whether no entry of v is NaN or infinite.
func allFinite(v []float64) bool {
	for _, x := range v {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return false
		}
	}
	return true
}

// validValues returns the indices of the nonzero entries of ns and those
// entries as float64 grid values.
func validValues(ns []int) (idx []int, vals []float64) {
	for i, n := range ns {
		if n > 0 {
			idx = append(idx, i)
			vals = append(vals, float64(n))
		}
	}
	return idx, vals
}

// finiteTest returns an ErrNotFinite error naming the first NaN or
// infinity in the test inputs z (nil: none).
func finiteTest(z *mat.Dense) error {
	if z == nil {
		return nil
	}
	r := z.RawMatrix()
	for i := range r.Rows {
		for j, v := range r.Data[i*r.Stride : i*r.Stride+r.Cols] {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return fmt.Errorf("%w: test input [%d][%d] = %v", ErrNotFinite, i, j, v)
			}
		}
	}
	return nil
}

// finiteSample returns an ErrNotFinite error naming the first NaN or
// infinity in x or y.
func finiteSample(x *mat.Dense, y []float64) error {
	r := x.RawMatrix()
	for i := range r.Rows {
		for j, v := range r.Data[i*r.Stride : i*r.Stride+r.Cols] {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return fmt.Errorf("%w: x[%d][%d] = %v", ErrNotFinite, i, j, v)
			}
		}
		if v := y[i]; math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("%w: y[%d] = %v", ErrNotFinite, i, v)
		}
	}
	return nil
}
