package models

import (
	"fmt"
	"math"
	"testing"

	"riskgrid/spec"
)

// BenchmarkPolynomial times one seed's degree path (41 degrees from 0 to
// 2n, the interpolation degree n − 1 included, predictions at 1000 test
// inputs). Run with GOMAXPROCS=1 for single-worker figures. At λ = 0 the
// high degrees are numerically rank-deficient on random inputs (the
// polynomials are nearly dependent there), and each such degree takes the
// SVD route of LeastSquares: one SVD per degree.
func BenchmarkPolynomial(b *testing.B) {
	for _, n := range []int{30, 100} {
		x, y := uniformLine(1, n, -1, 1, math.Sin, 0.3)
		test, _ := uniformLine(2, 1000, -1, 1, math.Sin, 0)
		degrees := []float64{float64(n - 1)}
		for i := range 40 {
			degrees = append(degrees, math.Round(float64(i*2*n)/39))
		}
		for _, lambda := range []float64{0, 1e-3} {
			p := &Polynomial{Low: -1, High: 1, Basis: BasisLegendre, Lambda: lambda}
			b.Run(fmt.Sprintf("n=%d/degrees=0..%d/points=%d/λ=%g", n, 2*n, len(degrees), lambda), func(b *testing.B) {
				b.ReportAllocs()
				for b.Loop() {
					tr := NewTrain(x, y)
					tr.Test = test
					p.Path(tr, spec.ParamDegree, degrees)
				}
			})
		}
	}
}
