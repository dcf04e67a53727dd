package models_test

import (
	"fmt"

	"gonum.org/v1/gonum/mat"

	"riskgrid/models"
	"riskgrid/spec"
)

// Gradient descent from zero on an orthogonal design, where each
// coordinate moves on its own. (By hand: XᵀX/n = diag(1, 0.25), L = 1, the
// default step η = 1/L = 1, so the first coordinate reaches its least
// squares value 1 in one step, φ_k = 1 − (1 − 1)^k = 1, and the second
// follows φ_k = 1 − 0.75^k of its value 2: 0.5, 0.875, then ≈ 2; df is
// 1 + φ_k, the training risk (2 − b₂)²/4.)
func ExampleGradientDescent_Path() {
	x := mat.NewDense(2, 2, []float64{
		1, 0.5,
		1, -0.5,
	})
	y := []float64{2, 0} // least squares b = (1, 2)
	for _, f := range (&models.GradientDescent{}).Path(models.NewTrain(x, y), spec.ParamSteps, []float64{0, 1, 2, 100}) {
		fmt.Printf("b=%.4f df=%.4f train=%.4f\n", f.Coef, f.DF, f.TrainRisk)
	}
	// Output:
	// b=[0.0000 0.0000] df=0.0000 train=2.0000
	// b=[1.0000 0.5000] df=1.2500 train=0.5625
	// b=[1.0000 0.8750] df=1.4375 train=0.3164
	// b=[1.0000 2.0000] df=2.0000 train=0.0000
}
