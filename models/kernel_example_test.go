package models_test

import (
	"fmt"

	"gonum.org/v1/gonum/mat"

	"riskgrid/models"
	"riskgrid/spec"
)

// Kernel ridge on two points at distance 1 with the Gaussian kernel of
// bandwidth 1: K = [[1, c], [c, 1]] with c = exp(−1/2). By hand, with
// y = (1, −1) an eigenvector of K (eigenvalue 1 − c ≈ 0.3935) and nλ = 2λ:
// α = y/(1 − c + 2λ), the fit at x_1 is (1 − c)/(1 − c + 2λ), the norm
// √(αᵀKα) = √(2(1 − c))/(1 − c + 2λ), df = (1 + c)/(1 + c + 2λ) + (1 − c)/(1 − c + 2λ);
// at λ = 0 it interpolates with RKHS norm √(yᵀK⁻¹y) = √(2/(1 − c)) ≈ 2.2545.
func ExampleKernelRidge_Path() {
	x := mat.NewDense(2, 1, []float64{0, 1})
	t := models.NewTrain(x, []float64{1, -1})
	t.Test = x
	for _, f := range (&models.KernelRidge{Kernel: models.KernelGaussian, Bandwidth: 1}).Path(t, spec.ParamLambda, []float64{0, 0.5}) {
		fmt.Printf("f(x)=%.4f norm=%.4f df=%.4f %s\n", f.Pred, f.Norm, f.DF, f.Method)
	}
	// Output:
	// f(x)=[1.0000 -1.0000] norm=2.2545 df=2.0000 eigen
	// f(x)=[0.2824 -0.2824] norm=0.6366 df=0.8987 eigen
}
