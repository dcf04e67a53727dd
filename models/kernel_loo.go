package models

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// LOO returns the leave-one-out cross-validation error of the kernel ridge
// fit (see KernelRidge) on all rows of x at the model's Bandwidth and
// Lambda, in closed form from one eigendecomposition K = Q diag(μ) Qᵀ:
//
//	loo = (1/n) Σ_i ((y_i − f̂(x_i))/(1 − H_ii))²,   H = K(K + nλI)⁻¹,
//	y_i − f̂(x_i) = Σ_j Q_ij (1 − s_j)(Qᵀy)_j,   1 − H_ii = Σ_j Q_ij² (1 − s_j),
//
// with s_j = μ_j/(μ_j + nλ), so 1 − s_j = nλ/(μ_j + nλ) ≥ 0 and both are
// sums without cancellation (Σ_j Q_ij² = 1). Each left-out fit keeps the
// penalty matrix nλI of the full sample, which makes the formula exact; at
// λ = 0, s_j = 1 on the eigenvalues kept by the ridgeless cutoff. Reference:
// the leave-one-out identity for linear smoothers, The Elements of
// Statistical Learning, 2nd ed. (2009), eq. (7.52) (textbook).
//
// It returns ErrParam for a bad bandwidth, penalty or kernel, ErrNotFinite
// for non-finite data, and ErrLeverage when some 1 − H_ii < √eps (as
// RidgeLOO; the interpolant, λ = 0 with K of full rank, has H = I). It
// panics if len(y) is not the number of rows of x.
func (kr *KernelRidge) LOO(x *mat.Dense, y []float64) (float64, error) {
	n, _ := checkShape(x, y)
	kind, err := kr.kernel()
	if err != nil {
		return 0, err
	}
	if kind != kernelLinear && !kernelBandwidthOK(kr.Bandwidth) {
		return 0, fmt.Errorf("%w: bandwidth = %v (accepted: a finite number > 0)", ErrParam, kr.Bandwidth)
	}
	if !kernelPenaltyOK(kr.Lambda) {
		return 0, fmt.Errorf("%w: lambda = %v (accepted: a finite penalty ≥ 0)", ErrParam, kr.Lambda)
	}
	t := NewTrain(x, y)
	ds, err := t.sqDists()
	if err != nil {
		return 0, err
	}
	var w kernelSolver
	e, err := w.eigen(w.matrices(t, ds, kind, kr.Bandwidth), n)
	if err != nil {
		return 0, err
	}
	nl := float64(n) * kr.Lambda
	rest := make([]float64, n) // 1 − s_j
	tol := eigenTol(n, e.mu[n-1])
	for j, mu := range e.mu {
		switch {
		case nl > 0:
			rest[j] = nl / (mu + nl)
		case !(mu > tol && mu > 0):
			rest[j] = 1
		}
	}
	levTol := math.Sqrt(eps)
	var sum float64
	for i := range n {
		var r, h1 float64
		for j, q := range e.q[i*n : (i+1)*n] {
			r += q * rest[j] * e.c[j]
			h1 += q * q * rest[j]
		}
		if h1 < levTol {
			return 0, fmt.Errorf("%w: row %d has 1 − H_ii = %v (λ = %v)", ErrLeverage, i, h1, kr.Lambda)
		}
		sum += (r / h1) * (r / h1)
	}
	loo := sum / float64(n)
	if !kernelFinite(loo) {
		return 0, fmt.Errorf("%w: leave-one-out error %v", ErrNumerical, loo)
	}
	return loo, nil
}
