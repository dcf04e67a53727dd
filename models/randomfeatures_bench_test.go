package models

import (
	"fmt"
	"testing"

	"riskgrid/spec"
)

// BenchmarkRandomFeatures times one seed's features path (one draw of N_max
// features, nested least-squares or ridge fits, predictions at 1000 test
// inputs). Run with GOMAXPROCS=1 for single-worker figures.
func BenchmarkRandomFeatures(b *testing.B) {
	for _, size := range []struct{ n, d, top, points int }{
		{100, 1, 1000, 20},
		{200, 20, 2000, 30},
	} {
		x, y := gaussian(1, size.n, size.d)
		test, _ := gaussian(2, 1000, size.d)
		ns := logGrid(10, float64(size.top), size.points, float64(size.n))
		for _, act := range []string{ActivationReLU, ActivationFourier} {
			for _, lambda := range []float64{0, 1e-3} {
				rf := &RandomFeatures{Scale: 1, Activation: act, Lambda: lambda}
				name := fmt.Sprintf("n=%d/d=%d/N≤%d/points=%d/%s/λ=%g", size.n, size.d, size.top, len(ns), act, lambda)
				b.Run(name, func(b *testing.B) {
					b.ReportAllocs()
					for b.Loop() {
						tr := NewTrain(x, y)
						tr.Test = test
						rf.Path(tr, spec.ParamFeatures, ns)
					}
				})
			}
		}
	}
}
