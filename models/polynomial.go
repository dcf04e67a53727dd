package models

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"riskgrid/spec"
)

func init() {
	register(spec.FamilyPolynomial, func(m spec.Model) (Fitter, error) {
		p := &Polynomial{
			Degree: int(m.Params["degree"]),
			Lambda: m.Lambda,
			Low:    m.Params["low"],
			High:   m.Params["high"],
			Basis:  m.Options["basis"],
		}
		if err := p.check(); err != nil {
			return nil, fmt.Errorf("%w: %s: %v", ErrParam, m.Family, err)
		}
		return p, nil
	})
}

// Polynomial bases.
const (
	BasisLegendre  = "legendre"
	BasisChebyshev = "chebyshev"
)

var _ Fitter = (*Polynomial)(nil)

// Polynomial fits a polynomial of degree D in one input x (column 0 of X;
// data with more than one column are an ErrInput error for every fit)
// in an orthonormal basis of the interval [Low, High]:
//
//	t      = (2x − Low − High)/(High − Low)          (maps [Low, High] to [−1, 1])
//	f(x)   = Σ_{k=0..D} c_k q_k(t)
//	c      = argmin (1/n)‖y − Q c‖² + λ‖c‖²,         Q_ik = q_k(t_i),
//
// the minimum-norm solution c = Q⁺y at λ = 0 (least squares up to the
// interpolation degree n − 1, the interpolant of least ‖c‖₂ beyond it).
// The basis, from the three-term recurrences (never raw powers):
//
//	legendre:  P_0 = 1, P_1 = t, (k+1)P_{k+1} = (2k+1) t P_k − k P_{k−1},   q_k = √(2k+1) P_k,
//	chebyshev: T_0 = 1, T_1 = t, T_{k+1} = 2t T_k − T_{k−1},                q_0 = 1, q_k = √2 T_k,
//
// orthonormal for the uniform law on [Low, High] (legendre) or the
// arcsine law (chebyshev, density 1/(π√(1−t²)) in t). So ‖c‖₂ = ‖f‖ in
// L²(that law): Fit.Norm is that norm, and the ridge penalty λ‖c‖² is λ
// times the squared L² norm of f (the constant term is penalised too).
// Inputs outside [Low, High] are fitted, but there the basis grows like
// (|t| + √(t² − 1))^k and conditioning is lost. Reference: the recurrences
// and orthogonality relations of "Handbook of Mathematical Functions", NBS
// Applied Mathematics Series 55, 1964, §22 (textbook).
//
// The fit is linear in y: ŷ = H y, Fit.DF = tr(H) (D + 1 for least
// squares of full rank, n past the interpolation degree). Fit.Pred holds the
// predictions at the rows of Train.Test (nil when it is nil), Fit.Coef is
// nil; TrainRisk, Cond and Method are those of the least-squares or ridge
// solve on Q (see LeastSquares and Ridge).
//
// Path knobs: spec.ParamDegree (one basis matrix of the largest degree;
// degree D uses its first D + 1 columns, nested, through the LeastSquares
// or Ridge features path), spec.ParamLambda (degree Degree; one SVD serves
// every λ) and spec.ParamNTrain (degree Degree; the first n rows). A degree
// that is not a whole number ≥ 0, or whose basis matrix would exceed 2^27
// entries, is an ErrValue error; λ < 0 an ErrParam error (ErrValue on a λ
// grid).
type Polynomial struct {
	// Degree is D for the lambda and n_train knobs (the degree knob
	// overrides it).
	Degree int
	// Lambda is the penalty λ ≥ 0; 0 (the default) is the minimum-norm fit.
	Lambda float64
	// Low and High bound the input interval mapped to [−1, 1]; Low < High.
	Low, High float64
	// Basis is BasisLegendre or BasisChebyshev.
	Basis string
}

// check validates the settings that do not depend on the knob.
func (p *Polynomial) check() error {
	if !(p.Low < p.High) || math.IsInf(p.Low, 0) || math.IsInf(p.High, 0) {
		return fmt.Errorf("interval [%v, %v] (accepted: finite low < high)", p.Low, p.High)
	}
	if p.Basis != BasisLegendre && p.Basis != BasisChebyshev {
		return fmt.Errorf("basis = %q (accepted: %s, %s)", p.Basis, BasisLegendre, BasisChebyshev)
	}
	return nil
}

// basis returns the rows × (deg+1) matrix q_k(t_i) of column 0 of x.
func (p *Polynomial) basis(x *mat.Dense, deg int) *mat.Dense {
	rows, _ := x.Dims()
	mid, half := (p.Low+p.High)/2, (p.High-p.Low)/2
	out := mat.NewDense(rows, deg+1, nil)
	o := out.RawMatrix()
	for i := range rows {
		orthonormalRow(p.Basis, (x.At(i, 0)-mid)/half, o.Data[i*o.Stride:i*o.Stride+deg+1])
	}
	return out
}

// orthonormalRow fills q with q_0(t), …, q_{len(q)−1}(t) of the basis.
func orthonormalRow(basis string, t float64, q []float64) {
	prev, cur := 0.0, 1.0 // P_{k−1}, P_k (or T)
	for k := range q {
		if k > 0 {
			var next float64
			switch {
			case k == 1:
				next = t
			case basis == BasisLegendre:
				next = (float64(2*k-1)*t*cur - float64(k-1)*prev) / float64(k)
			default:
				next = 2*t*cur - prev
			}
			prev, cur = cur, next
		}
		switch {
		case basis == BasisLegendre:
			q[k] = math.Sqrt(float64(2*k+1)) * cur
		case k == 0:
			q[k] = cur
		default:
			q[k] = math.Sqrt2 * cur
		}
	}
}

// Path fits the path; see the type documentation. It panics if len(y) is
// not the number of rows of x or Train.Test has other columns than x.
func (p *Polynomial) Path(t *Train, knob string, values []float64) []Fit {
	fits := make([]Fit, len(values))
	rows, d, testRows, ok := startDerived(t, fits, knob,
		[3]string{spec.ParamDegree, spec.ParamLambda, spec.ParamNTrain}, p.check(), p.Lambda)
	if !ok {
		return fits
	}
	if d != 1 {
		failAll(fits, fmt.Errorf("%w: polynomial regression takes one input column, x has %d (accepted: data with dim = 1)", ErrInput, d))
		return fits
	}
	tooBig := func(deg float64) bool { return deg+1 > float64(maxFeatureEntries/max(rows, testRows, 1)) }
	if knob == spec.ParamDegree {
		cols := make([]int, len(values))
		top := 0
		for i, v := range values {
			if v != math.Trunc(v) || v < 0 || tooBig(v) {
				fits[i].Err = fmt.Errorf("%w: %s = %v (accepted: a whole number ≥ 0 with at most 2^27 entries in the %d-row basis matrix)",
					ErrValue, knob, v, max(rows, testRows))
				continue
			}
			cols[i] = int(v) + 1
			top = max(top, cols[i])
		}
		if top == 0 {
			return fits
		}
		idx, sub := validValues(cols)
		inner := NewTrain(p.basis(t.X, top-1), t.Y)
		got := linearPath(inner, spec.ParamFeatures, sub, p.Lambda)
		for j, i := range idx {
			fits[i] = got[j]
		}
		finishDerived(fits, t.Test, p.design, one)
		return fits
	}
	if p.Degree < 0 || tooBig(float64(p.Degree)) {
		failAll(fits, fmt.Errorf("%w: degree = %d (accepted: a whole number ≥ 0 with at most 2^27 entries in the %d-row basis matrix)",
			ErrParam, p.Degree, max(rows, testRows)))
		return fits
	}
	inner := NewTrain(p.basis(t.X, p.Degree), t.Y)
	copy(fits, linearPath(inner, knob, values, p.Lambda))
	finishDerived(fits, t.Test, p.design, one)
	return fits
}

// design returns the first cols basis columns (degree cols − 1) at x.
func (p *Polynomial) design(x *mat.Dense, cols int) *mat.Dense { return p.basis(x, cols-1) }

func one(int) float64 { return 1 }
