package models

import (
	"math"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/lapack"
	"gonum.org/v1/gonum/lapack/gonum"
	"gonum.org/v1/gonum/lapack/lapack64"
)

// solver holds the scratch buffers of one Path call, reused across its
// grid values so that the hot loop does not allocate (the coefficient
// vectors handed out in the Fits excepted).
type solver struct {
	work, tmp, res          []float64
	iwork                   []int
	svdA, svdS, svdU, svdVt []float64
	svdUty                  []float64
	sv                      thinSVD

	qr, tau, z []float64 // Householder QR of the leading columns, z = Qᵀy
	g, f       []float64 // Gram matrix X_p X_pᵀ (upper) and its factored copy
	tq, ttau   []float64 // QR of X_pᵀ
	c, xty     []float64 // XᵀX over the leading columns (upper), Xᵀy
	alpha      []float64 // dual coefficients
}

// gram keeps G = A_p A_pᵀ (upper triangle, m×m) for growing p.
type gram struct {
	d   *design
	g   blas64.Symmetric
	cur int // columns accumulated so far
}

func (w *solver) newGram(d *design) *gram {
	g := grow(&w.g, d.m*d.m)
	clear(g)
	return &gram{d: d, g: blas64.Symmetric{Uplo: blas.Upper, N: d.m, Stride: d.m, Data: g}}
}

// extend adds the columns cur..p−1: G += A[:, cur:p] A[:, cur:p]ᵀ, or
// copies G_p from the design's cache when another model made it already.
// p must not decrease.
func (gr *gram) extend(p int) {
	if p <= gr.cur {
		return
	}
	d := gr.d
	if g, ok := d.grams[p]; ok {
		copy(gr.g.Data, g)
		gr.cur = p
		return
	}
	blk := blas64.General{Rows: d.m, Cols: p - gr.cur, Stride: d.p, Data: d.a[gr.cur:]}
	blas64.Syrk(blas.NoTrans, 1, blk, 1, gr.g)
	gr.cur = p
	if d.grams != nil {
		d.grams[p] = append([]float64(nil), gr.g.Data...)
	}
}

// cholesky copies the upper triangle of the n×n symmetric s (stride st)
// plus shift·I into the solver's factor buffer and factors it, A = UᵀU. It
// returns the factor and a 1-norm estimate of κ₁(A) = ‖A‖₁‖A⁻¹‖₁ (see normInv), and
// ok = false when A is not numerically positive definite.
//
// With shift > 0 (ridge: s is a Gram matrix, positive semi-definite, so
// λ_min(A) ≥ shift) there is an a-priori bound
//
//	κ₁(A) = ‖A‖₁‖A⁻¹‖₁ ≤ ‖A‖₁·√n·‖A⁻¹‖₂ ≤ ‖A‖₁·√n/shift
//
// (‖B‖₁ ≤ √n‖B‖₂, a textbook norm inequality: Matrix Computations, 4th ed.,
// Johns Hopkins University Press, 2013, §2.3.2). When the bound is already
// at most condMax the estimate is skipped and the bound is returned as cond.
func (w *solver) cholesky(s []float64, n, st int, shift float64) (u blas64.Triangular, cond float64, ok bool) {
	f := grow(&w.f, n*n)
	for i := range n {
		copy(f[i*n+i:(i+1)*n], s[i*st+i:i*st+n])
		f[i*n+i] += shift
	}
	a := blas64.Symmetric{Uplo: blas.Upper, N: n, Stride: n, Data: f}
	work := grow(&w.work, max(3*n, 1))
	iwork := growInt(&w.iwork, n)
	anorm := lapack64.Lansy(lapack.MaxColumnSum, a, work)
	u, ok = lapack64.Potrf(a)
	if !ok {
		return u, 0, false
	}
	if shift > 0 {
		if bound := anorm * math.Sqrt(float64(n)) / shift; bound <= condMax {
			return u, bound, true
		}
	}
	inv := w.normInv(u, work[:n], work[n:2*n], iwork)
	cond = anorm * inv
	if math.IsNaN(cond) || math.IsInf(cond, 0) {
		return u, 0, false
	}
	return u, cond, true
}

// normInv estimates ‖A⁻¹‖₁ for A = UᵀU by Hager's estimator with the
// refinements of LAPACK dlacn2 (the estimator inside dpocon), applying A⁻¹ by two
// plain triangular solves. dpocon solves with dlatrs, which guards against
// overflow at twice the cost; here the factor has just passed Cholesky with
// finite entries and the estimate is only compared with condMax, so plain
// solves suffice (overflow would need κ near 1e308, and would show as an
// infinite estimate, treated as failure). Reference: "FORTRAN codes for
// estimating the one-norm of a real or complex matrix, with applications to
// condition estimation", ACM Transactions on Mathematical Software 14(4),
// 1988; Hager's estimator: "Condition estimates", SIAM Journal on
// Scientific and Statistical Computing 5(2), 1984 (from memory).
func (w *solver) normInv(u blas64.Triangular, v, x []float64, isgn []int) float64 {
	var (
		est   float64
		kase  int
		isave [3]int
	)
	for {
		est, kase = lapackImpl.Dlacn2(u.N, v, x, isgn, est, kase, &isave)
		if kase == 0 {
			return est
		}
		cholSolve(u, x) // A⁻¹ is symmetric: the same for kase 1 and 2
	}
}

var lapackImpl gonum.Implementation

// dualSolve returns b = A_pᵀ α with α = A⁻¹y, A = UᵀU the factored m×m
// dual matrix (A_pA_pᵀ, plus nλI for ridge): the fit of the dual form.
func (w *solver) dualSolve(d *design, u blas64.Triangular, p int) []float64 {
	m := d.m
	alpha := grow(&w.alpha, m)
	copy(alpha, d.y)
	cholSolve(u, alpha)
	b := make([]float64, p)
	blas64.Gemv(blas.Trans, 1, d.cols(p), blas64.Vector{N: m, Inc: 1, Data: alpha}, 0, blas64.Vector{N: p, Inc: 1, Data: b})
	return b
}

// cholSolve overwrites x with A⁻¹x for A = UᵀU.
func cholSolve(u blas64.Triangular, x []float64) {
	v := blas64.Vector{N: u.N, Inc: 1, Data: x}
	blas64.Trsv(blas.Trans, u, v)
	blas64.Trsv(blas.NoTrans, u, v)
}

// traceInv returns tr(A⁻¹) = ‖U⁻¹‖_F² for A = UᵀU, overwriting U by U⁻¹.
func traceInv(u blas64.Triangular) (float64, bool) {
	if !lapack64.Trtri(u) {
		return 0, false
	}
	var t float64
	for i := range u.N {
		row := u.Data[i*u.Stride+i : i*u.Stride+u.N]
		nrm := blas64.Nrm2(blas64.Vector{N: len(row), Inc: 1, Data: row})
		t += nrm * nrm
	}
	return t, true
}
