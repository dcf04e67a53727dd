package models

// Fit is one fitted model at one grid value.
type Fit struct {
	// Coef is the coefficient vector over the features used (length p).
	Coef []float64
	// Intercept is the unpenalised intercept (0 without one).
	Intercept float64
	// TrainRisk is (1/n)‖y − ŷ‖² on the training rows used.
	TrainRisk float64
	// Norm is ‖Coef‖₂ (the intercept excluded).
	Norm float64
	// DF is the effective degrees of freedom tr(H), intercept included.
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
	// Fit per value, in order. knob is spec.ParamFeatures (use the first p
	// columns of t.X), spec.ParamNTrain (use the first n rows) or
	// spec.ParamLambda (the penalty). Sharing work across values (nested
	// factorizations, one SVD for a penalty path) is the point of taking
	// the whole path at once.
	//
	// Every model fitted to the same training sample within a seed gets the
	// same *Train, through which they share what does not depend on the
	// model (the sample with the intercept eliminated, Gram matrices).
	Path(t *Train, knob string, values []float64) []Fit
}
