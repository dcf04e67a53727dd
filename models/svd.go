package models

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/lapack"
	"gonum.org/v1/gonum/lapack/lapack64"
)

// thinSVD is the thin singular value decomposition A_p = U diag(s) Vᵀ of the
// first p columns of a design, k = min(m, p), with uty = Uᵀy and
// the singular values in decreasing order.
type thinSVD struct {
	k   int
	s   []float64 // k
	u   []float64 // m×k
	vt  []float64 // k×p
	uty []float64 // k
}

// svd factors the first p columns of d (which it leaves intact), reusing
// the solver's buffers.
func (w *solver) svd(d *design, p int) (*thinSVD, error) {
	m := d.m
	k := min(m, p)
	a := grow(&w.svdA, m*p)
	for i := range m {
		copy(a[i*p:(i+1)*p], d.a[i*d.p:i*d.p+p])
	}
	t := &w.sv
	t.k = k
	t.s = grow(&w.svdS, k)
	t.u = grow(&w.svdU, m*k)
	t.vt = grow(&w.svdVt, k*p)
	t.uty = grow(&w.svdUty, k)
	ag := blas64.General{Rows: m, Cols: p, Stride: p, Data: a}
	ug := blas64.General{Rows: m, Cols: k, Stride: k, Data: t.u}
	vg := blas64.General{Rows: k, Cols: p, Stride: p, Data: t.vt}
	query := []float64{0}
	lapack64.Gesvd(lapack.SVDStore, lapack.SVDStore, ag, ug, vg, t.s, query, -1)
	work := grow(&w.work, int(query[0]))
	if !lapack64.Gesvd(lapack.SVDStore, lapack.SVDStore, ag, ug, vg, t.s, work, len(work)) {
		return nil, fmt.Errorf("%w: SVD of the %d×%d design did not converge", ErrNumerical, m, p)
	}
	blas64.Gemv(blas.Trans, 1, ug, blas64.Vector{N: m, Inc: 1, Data: d.y}, 0, blas64.Vector{N: k, Inc: 1, Data: t.uty})
	return t, nil
}

// ridge fills f with the fit on the first p columns for penalty λ from the
// SVD:
//
//	b = V diag(s_j/(s_j² + nλ)) Uᵀy,   df = Σ s_j²/(s_j² + nλ),
//
// and, at λ = 0, the minimum-norm least-squares fit b = V diag(1/s_j) Uᵀy
// over the s_j above rankTol, df = the rank. Cond is the 2-norm condition
// number (s_1² + nλ)/(s_k² + nλ) of the penalised normal matrix (primal
// XᵀX + nλI for p ≤ m, dual XXᵀ + nλI for p > m: the same number); at
// λ = 0 for least squares it is s_1/s_k, the condition number of A_p.
func (w *solver) ridge(d *design, t *thinSVD, p int, lambda float64, leastSquares bool, f *Fit) {
	nl := float64(d.n) * lambda
	k := t.k
	coef := grow(&w.tmp, k)
	df := 0.0
	if nl == 0 {
		tol := rankTol(d.m, p, t.s[0])
		for j := range k {
			coef[j] = 0
			if t.s[j] > tol && t.s[j] > 0 {
				coef[j] = t.uty[j] / t.s[j]
				df++
			}
		}
	} else {
		for j, s := range t.s {
			s2 := s * s
			coef[j] = s / (s2 + nl) * t.uty[j]
			df += s2 / (s2 + nl)
		}
	}
	b := make([]float64, p)
	blas64.Gemv(blas.Trans, 1, blas64.General{Rows: k, Cols: p, Stride: p, Data: t.vt},
		blas64.Vector{N: k, Inc: 1, Data: coef}, 0, blas64.Vector{N: p, Inc: 1, Data: b})
	var cond float64
	switch {
	case leastSquares:
		cond = t.s[0] / t.s[k-1]
	default:
		s1, sk := t.s[0], t.s[k-1]
		cond = (s1*s1 + nl) / (sk*sk + nl)
	}
	if math.IsNaN(cond) { // 0/0: the zero matrix
		cond = math.Inf(1)
	}
	d.finish(f, b, d.rss(b, grow(&w.res, d.m)), df, cond, "svd")
}
