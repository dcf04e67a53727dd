package models

import "riskgrid/spec"

// Fit is one fitted model at one grid value. A linear fit on the input
// columns (least squares, ridge, gradient descent) sets Coef and Intercept,
// and the runner evaluates it (exactly, when the input distribution is
// known). Any other fit sets Pred, its predictions at the test inputs
// Train.Test, and leaves Coef nil.
type Fit struct {
	// Coef is the coefficient vector over the features used (length p),
	// nil for a fit that is not linear in the input columns.
	Coef []float64
	// Pred holds the fit's predictions at the rows of Train.Test, for a
	// fit that is not linear in the input columns (nil otherwise).
	Pred []float64
	// Intercept is the unpenalised intercept (0 without one).
	Intercept float64
	// TrainRisk is (1/n)‖y − ŷ‖² on the training rows used.
	TrainRisk float64
	// Norm is ‖Coef‖₂ (the intercept excluded), or the family's own norm
	// of the fit (its doc comment says which: a weight norm, an RKHS norm).
	Norm float64
	// DF is the effective degrees of freedom tr(H), intercept included,
	// for a linear smoother; NaN when not defined (a network).
	DF float64
	// Cond is the 2-norm condition number (estimate) of the system solved,
	// NaN when not computed.
	Cond float64
	// Method names the factorization used ("qr", "gram-cholesky", "svd", …).
	Method string
	// Err is a numerical failure of this fit (others in the path may be fine).
	Err error
}

// Fitter fits one model family along a grid of one knob.
type Fitter interface {
	// Path fits the model to (x, y) at each value of knob and returns one
	// Fit per value, in order. knob is one of the family's knobs
	// (spec.Families): spec.ParamFeatures (the first p columns of t.X, or
	// the number of random features), spec.ParamNTrain (the first n rows),
	// spec.ParamLambda (the penalty), or a family's own (degree, bandwidth,
	// neighbours, steps, width). Sharing work across values (nested
	// factorizations, one SVD for a penalty path) is the point of taking
	// the whole path at once.
	//
	// Every model fitted to the same training sample within a seed gets the
	// same *Train, through which they share what does not depend on the
	// model (the sample with the intercept eliminated, Gram matrices).
	Path(t *Train, knob string, values []float64) []Fit
}

// constructors maps a family to the function that makes its Fitter from a
// resolved [[model]] entry; each family registers itself in an init
// function of its own file.
var constructors = map[string]func(spec.Model) (Fitter, error){}

// register adds a family's constructor. It panics on a family registered
// twice or one spec does not know.
func register(family string, f func(spec.Model) (Fitter, error)) {
	if _, dup := constructors[family]; dup {
		panic("models: family " + family + " registered twice")
	}
	if _, known := spec.Families[family]; !known {
		panic("models: family " + family + " is not in spec.Families")
	}
	constructors[family] = f
}
