package models_test

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"riskgrid/models"
	"riskgrid/spec"
)

// A width-50 network fitted to twelve points of a sine on [−1, 1]; one run
// of full-batch gradient descent records the fit at every requested step
// count. The training risk falls from its value at the random
// initialisation, the prediction at 0.5 approaches sin(1.5) ≈ 0.997, and
// the parameter norm grows as the weights move.
func ExampleTwoLayerNet_Path() {
	x := mat.NewDense(12, 1, nil)
	y := make([]float64, 12)
	for i := range 12 {
		v := -1 + 2*float64(i)/11
		x.Set(i, 0, v)
		y[i] = math.Sin(3 * v)
	}
	t := models.NewTrain(x, y)
	t.Test = mat.NewDense(1, 1, []float64{0.5})
	t.SetSeeds("example", 1, 1) // the runner derives these from the spec
	net := &models.TwoLayerNet{Width: 50, StepSize: 0.2, InitScale: 1}
	for _, f := range net.Path(t, spec.ParamSteps, []float64{0, 100, 2000}) {
		fmt.Printf("train=%.3f  f(0.5)=%.2f  norm=%.2f  %s\n", f.TrainRisk, f.Pred[0], f.Norm, f.Method)
	}
	// Output:
	// train=1.648  f(0.5)=-0.86  norm=12.89  full-batch
	// train=0.085  f(0.5)=0.65  norm=12.97  full-batch
	// train=0.008  f(0.5)=1.00  norm=14.87  full-batch
}
