package models

import (
	"fmt"
	"testing"

	"riskgrid/spec"
)

// BenchmarkNetwork times one seed of a width sweep, the workload the issue
// sets for the two-layer network: n = 300 training points in d = 10
// dimensions, 10 log-spaced widths from 10 to 1000, 2000 full-batch steps
// each (one Path call of the width knob, predictions at 1000 test inputs).
// Ten seeds on two workers take 5 × this. The width-1000 case alone and a
// minibatch run show where the time goes. Run with GOMAXPROCS=1 for
// single-worker figures.
func BenchmarkNetwork(b *testing.B) {
	x, y, test := netSample(1, 300, 10, 1000)
	widths := logGrid(10, 1000, 10)
	for _, bc := range []struct {
		name   string
		nt     *TwoLayerNet
		knob   string
		values []float64
	}{
		{fmt.Sprintf("sweep/n=300/d=10/widths=%d/steps=2000", len(widths)),
			&TwoLayerNet{Steps: 2000, StepSize: 0.05, InitScale: 1}, spec.ParamWidth, widths},
		{"width=1000/n=300/d=10/steps=200",
			&TwoLayerNet{Steps: 200, StepSize: 0.05, InitScale: 1}, spec.ParamWidth, []float64{1000}},
		{"width=1000/n=300/d=10/steps=200/batch=32",
			&TwoLayerNet{Steps: 200, StepSize: 0.05, InitScale: 1, Batch: 32}, spec.ParamWidth, []float64{1000}},
	} {
		b.Run(bc.name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				for _, f := range bc.nt.Path(netTrain(x, y, test, 1), bc.knob, bc.values) {
					if f.Err != nil {
						b.Fatal(f.Err)
					}
				}
			}
		})
	}
}
