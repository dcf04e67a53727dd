package models

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// RidgeLOO returns the leave-one-out cross-validation error of the ridge
// fit (see Ridge) on all rows of x, in closed form:
//
//	loo = (1/n) Σ_i ((y_i − ŷ_i)/(1 − h_ii))²,
//	h_ii = 1/n + Σ_j U_ij² s_j²/(s_j² + nλ),
//
// Xc = U diag(s) Vᵀ the thin SVD of the centred design (the 1/n term and
// the centring only with intercept). Each left-out fit keeps the penalty
// matrix nλI of the full sample, which makes the formula exact. At λ = 0
// it is PRESS/n of the minimum-norm least-squares fit, directions with
// s_j ≤ max(n, p)·eps·s_1 dropped (common practice, as in LeastSquares).
// Reference: the leave-one-out identity for linear smoothers, The Elements
// of Statistical Learning, 2nd ed. (2009), eq. (7.52) (textbook); ridge
// form as stated in testdata/diabetes.md.
//
// It returns ErrParam for a negative or non-finite lambda, ErrNotFinite
// for non-finite data, and ErrLeverage when some 1 − h_ii < √eps ≈ 1.5e-8:
// h_ii carries an absolute rounding error of order k·eps, so below that
// the quotient is dominated by rounding (with h_ii = 1 it is undefined).
// It panics if len(y) is not the number of rows of x.
func RidgeLOO(x *mat.Dense, y []float64, lambda float64, intercept bool) (float64, error) {
	rows, cols := checkShape(x, y)
	if !(lambda >= 0) || math.IsInf(lambda, 1) {
		return 0, fmt.Errorf("%w: lambda = %v (accepted: a finite penalty ≥ 0)", ErrParam, lambda)
	}
	// Centre explicitly (not the reflection used by the fits): h_ii is
	// needed in the original row coordinates.
	d, err := reduce(x, y, rows, cols, false)
	if err != nil {
		return 0, err
	}
	n := rows
	if intercept {
		for j, mu := range colMeans(d) {
			for i := range n {
				d.a[i*cols+j] -= mu
			}
		}
		var ybar float64
		for _, v := range d.y {
			ybar += v
		}
		ybar /= float64(n)
		var corr float64
		for _, v := range d.y {
			corr += v - ybar
		}
		ybar += corr / float64(n)
		for i := range d.y {
			d.y[i] -= ybar
		}
	}
	var w solver
	t, err := w.svd(d, cols)
	if err != nil {
		return 0, err
	}
	nl := float64(n) * lambda
	k := t.k
	shrink := make([]float64, k) // s²/(s² + nλ)
	tol := rankTol(n, cols, t.s[0])
	for j, s := range t.s {
		switch {
		case nl > 0:
			shrink[j] = s * s / (s*s + nl)
		case s > tol && s > 0:
			shrink[j] = 1
		}
	}
	levTol := math.Sqrt(eps)
	var sum float64
	for i := range n {
		h, fit := 0.0, 0.0
		if intercept {
			h = 1 / float64(n)
		}
		row := t.u[i*k : (i+1)*k]
		for j, uij := range row {
			h += uij * uij * shrink[j]
			fit += uij * shrink[j] * t.uty[j]
		}
		if 1-h < levTol {
			return 0, fmt.Errorf("%w: row %d has h_ii = %v (λ = %v)", ErrLeverage, i, h, lambda)
		}
		e := (d.y[i] - fit) / (1 - h)
		sum += e * e
	}
	loo := sum / float64(n)
	if math.IsNaN(loo) || math.IsInf(loo, 0) {
		return 0, fmt.Errorf("%w: leave-one-out error %v", ErrNumerical, loo)
	}
	return loo, nil
}

// colMeans returns the column means of d.a by two passes.
func colMeans(d *design) []float64 {
	mean := make([]float64, d.p)
	for i := range d.m {
		for j, v := range d.a[i*d.p : (i+1)*d.p] {
			mean[j] += v
		}
	}
	for j := range mean {
		mean[j] /= float64(d.m)
	}
	corr := make([]float64, d.p)
	for i := range d.m {
		for j, v := range d.a[i*d.p : (i+1)*d.p] {
			corr[j] += v - mean[j]
		}
	}
	for j := range mean {
		mean[j] += corr[j] / float64(d.m)
	}
	return mean
}
