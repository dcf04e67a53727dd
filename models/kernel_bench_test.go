package models

import (
	"fmt"
	"math"
	"testing"

	"riskgrid/spec"
)

// BenchmarkKernelRidge times one seed's kernel ridge paths on n training
// points in d = 5 with 200 test inputs: a penalty path of 20 values (one
// eigendecomposition), a bandwidth path of 10 values at λ > 0 (one Cholesky
// each, distances shared) and an n_train path of 5 values. The squared
// distances are recomputed in each iteration (a fresh Train), as in a run.
// Run with GOMAXPROCS=1 for single-worker figures.
func BenchmarkKernelRidge(b *testing.B) {
	for _, n := range []int{200, 1000} {
		x, y := uniform(1, n, 5, 1)
		test, _ := uniform(2, 200, 5, 1)
		train := func() *Train {
			t := NewTrain(x, y)
			t.Test = test
			return t
		}
		lambdas := make([]float64, 20)
		for i := range lambdas {
			lambdas[i] = math.Pow(10, -6+5*float64(i)/19)
		}
		bandwidths := make([]float64, 10)
		for i := range bandwidths {
			bandwidths[i] = 0.1 * math.Pow(20, float64(i)/9)
		}
		ns := []float64{float64(n / 5), float64(2 * n / 5), float64(3 * n / 5), float64(4 * n / 5), float64(n)}
		run := func(kr *KernelRidge, knob string, values []float64) func(b *testing.B) {
			return func(b *testing.B) {
				b.ReportAllocs()
				for b.Loop() {
					for _, f := range kr.Path(train(), knob, values) {
						if f.Err != nil {
							b.Fatal(f.Err)
						}
					}
				}
			}
		}
		name := fmt.Sprintf("n=%d", n)
		b.Run(name+"/lambda-path", run(&KernelRidge{Bandwidth: 0.5}, spec.ParamLambda, lambdas))
		b.Run(name+"/bandwidth-path", run(&KernelRidge{Lambda: 1e-3}, spec.ParamBandwidth, bandwidths))
		b.Run(name+"/n_train-path", run(&KernelRidge{Bandwidth: 0.5, Lambda: 1e-3}, spec.ParamNTrain, ns))
	}
}

// BenchmarkNeighbours times one seed's k-NN paths (20 values of k; 5 values
// of n_train at k = 5) on n training points in d = 5 with 200 test inputs,
// distances included.
func BenchmarkNeighbours(b *testing.B) {
	for _, n := range []int{200, 1000} {
		x, y := uniform(1, n, 5, 1)
		test, _ := uniform(2, 200, 5, 1)
		train := func() *Train {
			t := NewTrain(x, y)
			t.Test = test
			return t
		}
		ks := logGrid(1, float64(n), 20)
		ns := []float64{float64(n / 5), float64(2 * n / 5), float64(3 * n / 5), float64(4 * n / 5), float64(n)}
		b.Run(fmt.Sprintf("n=%d/neighbours-path", n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				(&Neighbours{}).Path(train(), spec.ParamNeighbours, ks)
			}
		})
		b.Run(fmt.Sprintf("n=%d/n_train-path", n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				(&Neighbours{K: 5}).Path(train(), spec.ParamNTrain, ns)
			}
		})
	}
}
