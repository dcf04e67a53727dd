package models

import "errors"

// Errors returned by the package, alone or wrapped with context (test with
// errors.Is). A Fit carries them in its Err field: a bad grid value or a
// numerical failure spoils that fit only, never the rest of the path.
var (
	// ErrFamily reports a model family New does not know.
	ErrFamily = errors.New("models: unknown model family")
	// ErrParam reports a model parameter out of range (a negative penalty).
	ErrParam = errors.New("models: bad model parameter")
	// ErrKnob reports a grid knob the family cannot vary.
	ErrKnob = errors.New("models: unsupported grid knob")
	// ErrValue reports a grid value out of range for its knob.
	ErrValue = errors.New("models: grid value out of range")
	// ErrNotFinite reports a NaN or infinity in the training data used.
	ErrNotFinite = errors.New("models: non-finite training data")
	// ErrNumerical reports a factorization that failed or a result that is
	// not finite.
	ErrNumerical = errors.New("models: numerical failure")
	// ErrDiverge reports an iteration whose step size makes it diverge
	// (gradient descent with a step above 2/L).
	ErrDiverge = errors.New("models: iteration diverges")
	// ErrInput reports training data of a shape the family cannot take
	// (polynomial regression on more than one input column).
	ErrInput = errors.New("models: input the family cannot take")
	// ErrLeverage reports a training point with leverage h_ii = 1 (to
	// working precision), for which leave-one-out is undefined.
	ErrLeverage = errors.New("models: leave-one-out undefined at leverage 1")
)
