package models

import (
	"testing"

	"riskgrid/spec"
)

// A rank-deficient design with exact zeros and two all-zero columns
// (relu features) must give the pseudoinverse fit at every p, also when the
// QR serving small p spans more than one LAPACK block (32 columns) and
// past the threshold. gonum v0.17.0's blocked Dormqr was not orthogonal on
// such a factor (see applyQ); the reference is gonum's SVD pseudoinverse
// (the Moore–Penrose solution, Matrix Computations, 4th ed., 2013, §5.5).
func TestLeastSquaresZeroColumns(t *testing.T) {
	// The design: 120 relu features of 60 Gaussian points in 3
	// dimensions; columns 22 and 34 vanish on every point, and the
	// features active on every point span only 4 dimensions.
	const n = 60
	x0, y := gaussian(11, n, 3)
	t0 := NewTrain(x0, y)
	t0.SetSeeds("brute", 1, 2)
	x := drawFeatures(t0.Rand("random-features weights"), ActivationReLU, 1.5, 3, 120).apply(x0, 120, 1)
	ps := []float64{20, 33, 40, 60, 61, 120}
	fits := (&LeastSquares{}).Path(NewTrain(x, y), spec.ParamFeatures, ps)
	for i, pv := range ps {
		p := int(pv)
		b, _, cond := pinvFit(t, sub(x, 0, p), y, false)
		f := fits[i]
		if f.Err != nil {
			t.Fatalf("p=%d: %v", p, f.Err)
		}
		// Backward-stable solvers agree to about cond·eps relative; ×100
		// for the sizes.
		if e, tol := relDist(f.Coef, b), 100*cond*eps; e > tol {
			t.Errorf("p=%d (%s): rel. error %.2g against the pseudoinverse, want ≤ %.2g", p, f.Method, e, tol)
		}
	}
}
