package models_test

import (
	"errors"
	"fmt"

	"gonum.org/v1/gonum/mat"

	"riskgrid/models"
	"riskgrid/spec"
)

// A line through three points, then a second feature that makes the
// system square: least squares interpolates. (Values by hand: the OLS line
// through (0,1), (1,3), (2,4) is y = 7/6 + 1.5x; with x2 the 3×3 system
// gives b0 = 1.5, b = (1.5, −0.5).)
func ExampleLeastSquares_Path() {
	x := mat.NewDense(3, 2, []float64{
		0, 1,
		1, 0,
		2, 1,
	})
	y := []float64{1, 3, 4}
	fits := (&models.LeastSquares{Intercept: true}).Path(models.NewTrain(x, y), spec.ParamFeatures, []float64{1, 2})
	for _, f := range fits {
		fmt.Printf("p=%d b0=%.4f b=%.4f risk=%.4f df=%g %s\n", len(f.Coef), f.Intercept, f.Coef, f.TrainRisk, f.DF, f.Method)
	}
	// Output:
	// p=1 b0=1.1667 b=[1.5000] risk=0.0556 df=2 qr
	// p=2 b0=1.5000 b=[1.5000 -0.5000] risk=0.0000 df=3 qr
}

// The ridge penalty path on an orthogonal design: b_j = s_j²/(s_j²+nλ)·b_ols.
// (By hand: XᵀX = 2I, n = 2, so b = 2/(2+2λ)·(1, 2).)
func ExampleRidge_Path() {
	x := mat.NewDense(2, 2, []float64{
		1, 1,
		1, -1,
	})
	y := []float64{3, -1} // b_ols = (1, 2)
	for _, f := range (&models.Ridge{}).Path(models.NewTrain(x, y), spec.ParamLambda, []float64{0, 1, 3}) {
		fmt.Printf("b=%.4f df=%.4f\n", f.Coef, f.DF)
	}
	// Output:
	// b=[1.0000 2.0000] df=2.0000
	// b=[0.5000 1.0000] df=1.0000
	// b=[0.2500 0.5000] df=0.5000
}

// New turns a spec's model entry into a Fitter.
func ExampleNew() {
	f, err := models.New(spec.Model{Family: spec.FamilyRidge, Lambda: 0.1, Intercept: true})
	fmt.Printf("%T %+v %v\n", f, f, err)
	// The error lists the registered families; it wraps ErrFamily.
	_, err = models.New(spec.Model{Family: "lasso"})
	fmt.Println(errors.Is(err, models.ErrFamily))
	// Output:
	// *models.Ridge &{Lambda:0.1 Intercept:true} <nil>
	// true
}

// Leave-one-out error of the mean (intercept only in effect: λ huge) on
// y = 1, 2, 3 is, by hand, mean of ((y_i − ȳ_{−i}))² = (1.5² + 0 + 1.5²)/3.
func ExampleRidgeLOO() {
	x := mat.NewDense(3, 1, []float64{1, -2, 1})
	y := []float64{1, 2, 3}
	loo, err := models.RidgeLOO(x, y, 1e12, true)
	fmt.Printf("%.4f %v\n", loo, err)
	// Output:
	// 1.5000 <nil>
}

// x² on [−1, 1] in the orthonormal Legendre basis is (1/3)q_0 + (2/(3√5))q_2
// (x² = P_0/3 + 2P_2/3, q_2 = √5 P_2), so the coefficient norm, the L² norm
// of x² for the uniform law, is √(1/9 + 4/45) = √(1/5) = 0.4472 (by hand).
// Degree 1 fits the mean 2.5/5 = 0.5 (the data are even); degree 2 and 3
// recover x² exactly.
func ExamplePolynomial_Path() {
	x := mat.NewDense(5, 1, []float64{-1, -0.5, 0, 0.5, 1})
	y := []float64{1, 0.25, 0, 0.25, 1}
	t := models.NewTrain(x, y)
	t.Test = mat.NewDense(2, 1, []float64{0.3, 0.9})
	p := &models.Polynomial{Low: -1, High: 1, Basis: models.BasisLegendre}
	for _, f := range p.Path(t, spec.ParamDegree, []float64{1, 2, 3}) {
		fmt.Printf("df=%g norm=%.4f pred=%.4f\n", f.DF, f.Norm, f.Pred)
	}
	// Output:
	// df=2 norm=0.5000 pred=[0.5000 0.5000]
	// df=3 norm=0.4472 pred=[0.0900 0.8100]
	// df=4 norm=0.4472 pred=[0.0900 0.8100]
}
