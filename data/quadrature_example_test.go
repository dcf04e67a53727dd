package data_test

import (
	"fmt"

	"riskgrid/data"
	"riskgrid/spec"
)

// The 3-point Gauss–Legendre rule: nodes 0, ±√(3/5), weights 8/9 and 5/9
// (textbook); it integrates x⁴ over [−1, 1] exactly (2/5).
func ExampleGaussLegendre() {
	x, w := data.GaussLegendre(3)
	var x4 float64
	for i := range x {
		fmt.Printf("x = %+.6f  w = %.6f\n", x[i], w[i])
		x4 += w[i] * x[i] * x[i] * x[i] * x[i]
	}
	fmt.Printf("rule(x⁴) = %.15f\n", x4)
	// Output:
	// x = -0.774597  w = 0.555556
	// x = +0.000000  w = 0.888889
	// x = +0.774597  w = 0.555556
	// rule(x⁴) = 0.400000000000000
}

// A curve source: y = sin(πx) + ε on uniform x in [−1, 1]. Its test set
// is a quadrature rule, so the weighted mean square of f* at the nodes is
// E sin²(πx) = 1/2.
func ExampleNew_curve() {
	s := &spec.Spec{
		Name: "example",
		Data: spec.Data{
			Source: spec.SourceCurve,
			NTrain: 4,
			NTest:  64,
			Inputs: spec.Inputs{Kind: spec.InputsUniform, Low: -1, High: 1},
			Shape:  spec.Shape{Kind: spec.ShapeSine, Amplitude: 1, Frequency: 0.5},
			Noise:  spec.Noise{Kind: spec.NoiseGaussian, SD: 0.1},
		},
	}
	src, err := data.New(s, "example-key")
	if err != nil {
		fmt.Println(err)
		return
	}
	p := src.Problem()
	var msq float64
	for j, y := range p.TestY {
		msq += p.TestW[j] * y * y
	}
	fmt.Printf("%s, %d nodes, E f*² = %.12f, Var ε = %.4g\n", p.TestBasis, len(p.TestY), msq, p.NoiseVar)
	// Output:
	// quadrature, 64 nodes, E f*² = 0.500000000000, Var ε = 0.01
}
