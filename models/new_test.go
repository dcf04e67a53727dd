package models

import (
	"errors"
	"math"
	"testing"

	"riskgrid/spec"
)

func TestNew(t *testing.T) {
	for _, tc := range []struct {
		name string
		in   spec.Model
		want Fitter
		err  error
	}{
		{"least squares", spec.Model{Family: spec.FamilyLeastSquares, Intercept: true}, &LeastSquares{Intercept: true}, nil},
		{"ridge", spec.Model{Family: spec.FamilyRidge, Lambda: 0.5}, &Ridge{Lambda: 0.5}, nil},
		{"ridge λ=0", spec.Model{Family: spec.FamilyRidge}, &Ridge{}, nil},
		{"negative λ", spec.Model{Family: spec.FamilyRidge, Lambda: -1}, nil, ErrParam},
		{"infinite λ", spec.Model{Family: spec.FamilyRidge, Lambda: math.Inf(1)}, nil, ErrParam},
		{"λ for least squares", spec.Model{Family: spec.FamilyLeastSquares, Lambda: 1}, nil, ErrParam},
		{"unknown", spec.Model{Family: "lasso"}, nil, ErrFamily},
	} {
		t.Run(tc.name, func(t *testing.T) {
			got, err := New(tc.in)
			if !errors.Is(err, tc.err) || (err == nil) != (tc.err == nil) {
				t.Fatalf("New(%+v) error = %v, want %v", tc.in, err, tc.err)
			}
			switch w := tc.want.(type) {
			case *LeastSquares:
				if g, ok := got.(*LeastSquares); !ok || *g != *w {
					t.Errorf("New(%+v) = %#v, want %#v", tc.in, got, w)
				}
			case *Ridge:
				if g, ok := got.(*Ridge); !ok || *g != *w {
					t.Errorf("New(%+v) = %#v, want %#v", tc.in, got, w)
				}
			}
		})
	}
}
