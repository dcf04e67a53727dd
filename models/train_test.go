package models

import (
	"reflect"
	"testing"

	"riskgrid/spec"
)

// Models sharing one Train must give exactly the fits they give alone: the
// cached Gram matrices are the ones each would have built.
func TestTrainSharingChangesNothing(t *testing.T) {
	x, y := gaussian(3, 40, 120)
	ps := []float64{5, 20, 39, 40, 41, 60, 90, 120}
	for _, intercept := range []bool{false, true} {
		fitters := []Fitter{&LeastSquares{Intercept: intercept}, &Ridge{Lambda: 0.02, Intercept: intercept}}
		shared := NewTrain(x, y)
		for _, f := range fitters {
			got := f.Path(shared, spec.ParamFeatures, ps)
			want := f.Path(NewTrain(x, y), spec.ParamFeatures, ps)
			if !reflect.DeepEqual(got, want) {
				t.Errorf("%T (intercept %v): fits on a shared Train differ from fits alone", f, intercept)
			}
		}
		if len(shared.designs) != 1 {
			t.Errorf("intercept %v: %d designs cached, want 1 shared by both models", intercept, len(shared.designs))
		}
		// p = 41, 60, 90, 120 exceed the m = 40 rows; with an intercept
		// m = 39 and p = 40 does too.
		want := 4
		if intercept {
			want = 5
		}
		for _, d := range shared.designs {
			if len(d.grams) != want {
				t.Errorf("intercept %v: %d Gram matrices cached, want %d", intercept, len(d.grams), want)
			}
		}
	}
}
