package models_test

import (
	"fmt"

	"gonum.org/v1/gonum/mat"

	"riskgrid/models"
	"riskgrid/spec"
)

// k-NN on four points of a line. At the test input 1.4 the neighbours in
// order are x = 1, 2, 0, 3 (targets 2, 0, 1, 4): the k-NN means are 2, 1,
// 1 and 7/4. 1-NN interpolates (training risk 0, df = n/k = 4). At the
// training input 1 with k = 3, the inputs 0 and 2 tie at distance 1 and
// both are taken; with k = 2 the lower row (x = 0) wins the tie. By hand,
// the residuals are (−½, ½, −1, 2) for k = 2 and (0, 1, −2, 2) for k = 3.
func ExampleNeighbours_Path() {
	x := mat.NewDense(4, 1, []float64{0, 1, 2, 3})
	t := models.NewTrain(x, []float64{1, 2, 0, 4})
	t.Test = mat.NewDense(1, 1, []float64{1.4})
	for _, f := range (&models.Neighbours{}).Path(t, spec.ParamNeighbours, []float64{1, 2, 3, 4}) {
		fmt.Printf("f(1.4)=%.4f train=%.4f df=%g\n", f.Pred[0], f.TrainRisk, f.DF)
	}
	// Output:
	// f(1.4)=2.0000 train=0.0000 df=4
	// f(1.4)=1.0000 train=1.3750 df=2
	// f(1.4)=1.0000 train=2.2500 df=1.3333333333333333
	// f(1.4)=1.7500 train=2.1875 df=1
}
