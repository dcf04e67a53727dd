package models

import (
	"fmt"
	"math"
	"strings"

	"riskgrid/spec"
)

func init() {
	register(spec.FamilyLeastSquares, func(m spec.Model) (Fitter, error) {
		if m.Lambda != 0 {
			return nil, fmt.Errorf("%w: %s takes no lambda (got %v)", ErrParam, m.Family, m.Lambda)
		}
		return &LeastSquares{Intercept: m.Intercept}, nil
	})
	register(spec.FamilyRidge, func(m spec.Model) (Fitter, error) {
		if !(m.Lambda >= 0) || math.IsInf(m.Lambda, 1) {
			return nil, fmt.Errorf("%w: %s lambda = %v (accepted: a finite penalty ≥ 0)", ErrParam, m.Family, m.Lambda)
		}
		return &Ridge{Lambda: m.Lambda, Intercept: m.Intercept}, nil
	})
}

// New returns the Fitter for one [[model]] entry of a spec: a *LeastSquares
// for spec.FamilyLeastSquares, a *Ridge for spec.FamilyRidge, and so on for
// every family registered in this package. It returns an ErrFamily error
// for a family not built here and an ErrParam error for a parameter out of
// range (a negative penalty; a lambda given to least squares).
func New(m spec.Model) (Fitter, error) {
	if f, ok := constructors[m.Family]; ok {
		return f(m)
	}
	known := make([]string, 0, len(constructors))
	for _, name := range spec.FamilyNames {
		if constructors[name] != nil {
			known = append(known, name)
		}
	}
	return nil, fmt.Errorf("%w: %q (known: %s)", ErrFamily, m.Family, strings.Join(known, ", "))
}
