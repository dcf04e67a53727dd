package models

import (
	"fmt"
	"testing"

	"riskgrid/spec"
)

// BenchmarkGradient times one seed's paths of the gradient-descent family
// on the reference sweep's sizes: a steps path (40 log-spaced step counts
// from 1 to 10⁶, one SVD) and a features path (40 log-spaced p, one SVD
// each, 100 steps). Run with GOMAXPROCS=1 for single-worker figures.
func BenchmarkGradient(b *testing.B) {
	for _, size := range []struct{ n, d int }{{50, 250}, {200, 1000}} {
		x, y := gaussian(1, size.n, size.d)
		steps := logGrid(1, 1e6, 40)
		ps := logGrid(10, float64(size.d), 40, float64(size.n))
		name := fmt.Sprintf("n=%d/d=%d", size.n, size.d)
		b.Run(name+"/steps-path", func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				(&GradientDescent{}).Path(NewTrain(x, y), spec.ParamSteps, steps)
			}
		})
		b.Run(name+"/features-path", func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				(&GradientDescent{Steps: 100}).Path(NewTrain(x, y), spec.ParamFeatures, ps)
			}
		})
	}
}
