package models

import (
	"fmt"
	"math"
	"sort"
	"testing"

	"riskgrid/spec"
)

// logGrid returns k log-spaced integers from lo to hi, rounded and
// de-duplicated, plus the extra values, sorted.
func logGrid(lo, hi float64, k int, extra ...float64) []float64 {
	seen := map[float64]bool{}
	var out []float64
	add := func(v float64) {
		if !seen[v] {
			seen[v] = true
			out = append(out, v)
		}
	}
	for i := range k {
		add(math.Round(lo * math.Pow(hi/lo, float64(i)/float64(k-1))))
	}
	for _, v := range extra {
		add(v)
	}
	sort.Float64s(out)
	return out
}

// BenchmarkPath times one seed's features path: the project's reference
// sweep is n = 200, d = 1000, 40 log-spaced p from 10 to 1000 with p = n
// included (NUMERICS.md). Run with GOMAXPROCS=1 for single-worker figures.
func BenchmarkPath(b *testing.B) {
	for _, size := range []struct{ n, d, points int }{
		{50, 250, 20},
		{200, 1000, 40},
	} {
		x, y := gaussian(1, size.n, size.d)
		ps := logGrid(10, float64(size.d), size.points, float64(size.n))
		ls := &LeastSquares{}
		rg := &Ridge{Lambda: 0.01}
		run := func(f func()) func(b *testing.B) {
			return func(b *testing.B) {
				b.ReportAllocs()
				for b.Loop() {
					f()
				}
			}
		}
		name := fmt.Sprintf("n=%d/d=%d/points=%d", size.n, size.d, len(ps))
		b.Run(name+"/least-squares", run(func() { ls.Path(NewTrain(x, y), spec.ParamFeatures, ps) }))
		b.Run(name+"/ridge", run(func() { rg.Path(NewTrain(x, y), spec.ParamFeatures, ps) }))
		// Both models on one Train, as the runner does: they share the
		// reduced sample and the Gram matrices.
		b.Run(name+"/both", run(func() {
			t := NewTrain(x, y)
			ls.Path(t, spec.ParamFeatures, ps)
			rg.Path(t, spec.ParamFeatures, ps)
		}))
		lambdas := make([]float64, 40)
		for i := range lambdas {
			lambdas[i] = math.Pow(10, -4+6*float64(i)/39)
		}
		b.Run(name+"/ridge-lambda-path", run(func() { (&Ridge{}).Path(NewTrain(x, y), spec.ParamLambda, lambdas) }))
	}
}
