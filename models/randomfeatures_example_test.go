package models_test

import (
	"fmt"

	"gonum.org/v1/gonum/mat"

	"riskgrid/models"
	"riskgrid/spec"
)

// Minimum-norm random Fourier features on five points: below N = n = 5 the
// fit is least squares on N features (df = N); from N = 5 on it
// interpolates the points (df = n, training risk 0 to rounding). The norm
// of the second-layer coefficients is largest at N = n, where the square
// feature matrix is nearly singular, and falls as N grows past n: the
// interpolant spreads over more features.
func ExampleRandomFeatures_Path() {
	x := mat.NewDense(5, 1, []float64{-1, -0.5, 0, 0.5, 1})
	y := []float64{0.3, -0.8, 0.1, 0.9, -0.2}
	t := models.NewTrain(x, y)
	t.SetSeeds("example", 1, 0)
	rf := &models.RandomFeatures{Scale: 0.5, Activation: models.ActivationFourier}
	for i, f := range rf.Path(t, spec.ParamFeatures, []float64{2, 5, 50, 500}) {
		fmt.Printf("N=%-3d df=%g interpolates=%v norm=%.2f\n", []int{2, 5, 50, 500}[i], f.DF, f.TrainRisk < 1e-20, f.Norm)
	}
	// Output:
	// N=2   df=2 interpolates=false norm=0.22
	// N=5   df=5 interpolates=true norm=106.50
	// N=50  df=5 interpolates=true norm=2.76
	// N=500 df=5 interpolates=true norm=2.06
}
