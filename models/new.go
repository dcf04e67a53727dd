package models

import (
	"fmt"
	"math"

	"riskgrid/spec"
)

// New returns the Fitter for one [[model]] entry of a spec: a *LeastSquares
// for spec.FamilyLeastSquares, a *Ridge for spec.FamilyRidge. It returns an
// ErrFamily error for any other family and an ErrParam error for a penalty
// that is negative or not finite, or given to least squares.
func New(m spec.Model) (Fitter, error) {
	switch m.Family {
	case spec.FamilyLeastSquares:
		if m.Lambda != 0 {
			return nil, fmt.Errorf("%w: %s takes no lambda (got %v)", ErrParam, m.Family, m.Lambda)
		}
		return &LeastSquares{Intercept: m.Intercept}, nil
	case spec.FamilyRidge:
		if !(m.Lambda >= 0) || math.IsInf(m.Lambda, 1) {
			return nil, fmt.Errorf("%w: %s lambda = %v (accepted: a finite penalty ≥ 0)", ErrParam, m.Family, m.Lambda)
		}
		return &Ridge{Lambda: m.Lambda, Intercept: m.Intercept}, nil
	}
	return nil, fmt.Errorf("%w: %q (known: %s, %s)", ErrFamily, m.Family, spec.FamilyLeastSquares, spec.FamilyRidge)
}
