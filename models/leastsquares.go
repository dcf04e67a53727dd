package models

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/lapack"
	"gonum.org/v1/gonum/lapack/lapack64"

	"riskgrid/spec"
)

var _ Fitter = (*LeastSquares)(nil)

// LeastSquares fits ordinary least squares, and its minimum-norm limit
// where the solution is not unique:
//
//	b = argmin { ‖b‖₂ : b minimises ‖y − b0·1 − X b‖² } = X⁺ (y − b0·1),
//
// with b0 = ȳ − x̄ᵀb free (unpenalised, not counted in ‖b‖) when Intercept is
// set, and b0 = 0 otherwise. For p ≤ n with X of full column rank this is
// the OLS estimate; for p > n (or a rank-deficient X) it is the
// interpolating solution of least norm, lying in the row space of X.
// Reference: the Moore–Penrose pseudoinverse solution; Matrix
// Computations, 4th ed., Johns Hopkins University Press, 2013, §5.5
// (textbook).
//
// Path knobs: spec.ParamFeatures (the first p columns; nested
// factorizations are shared across p), spec.ParamNTrain (the first n rows,
// every column) and spec.ParamLambda (rejected per fit with ErrKnob: least
// squares has no penalty). Methods:
//
//   - "qr": p ≤ m (m = n, or n−1 after the intercept is reflected out). One
//     Householder QR of the leading columns serves every p: the leading p×p
//     block of R is the R of the first p columns, b = R_p⁻¹(Qᵀy)_{1:p} and
//     RSS = Σ_{i>p} (Qᵀy)_i². Cond is LAPACK's 1-norm estimate of κ₁(R_p)
//     (Trcon), which estimates κ(X_p) within a factor p.
//   - "gram-cholesky": p > m, b = X_pᵀ(X_p X_pᵀ)⁻¹y with the Gram matrix
//     updated as columns are added and factored by Cholesky, used while its
//     estimated condition number is at most 1e5 (see condMax). Cond is the
//     square root of the 1-norm estimate of κ₁(X_p X_pᵀ) (LAPACK dlacn2).
//   - "qr-transpose": p > m with an ill-conditioned Gram matrix (at and just
//     past p = m): X_pᵀ = QR, b = Q R⁻ᵀ y. Cond is the Trcon estimate of κ₁(R).
//   - "svd": a numerically rank-deficient X_p (reciprocal condition
//     estimate below max(m, p)·eps): b = V diag(1/s_j) Uᵀy over the s_j
//     above max(m, p)·eps·s_1 (common practice, the numpy/MATLAB default).
//     Cond is s_1/s_min, exact in the 2-norm (+Inf when singular).
//
// DF is the rank (+1 with the intercept); TrainRisk is RSS/n.
type LeastSquares struct {
	// Intercept adds an unpenalised intercept b0. Default false (fit
	// through the origin).
	Intercept bool
}

// Path fits the path; see the type documentation. It panics if len(y) is
// not the number of rows of x.
func (ls *LeastSquares) Path(t *Train, knob string, values []float64) []Fit {
	checkShape(t.X, t.Y)
	fits := make([]Fit, len(values))
	var w solver
	switch knob {
	case spec.ParamFeatures:
		nestedColumns(t, fits, values, ls.Intercept, w.leastSquares)
	case spec.ParamNTrain:
		eachRows(t, fits, values, ls.Intercept, w.leastSquares)
	case spec.ParamLambda:
		failAll(fits, fmt.Errorf("%w: %s (least squares has no penalty; accepted: %s, %s)",
			ErrKnob, knob, spec.ParamFeatures, spec.ParamNTrain))
	default:
		failAll(fits, fmt.Errorf("%w: %q (accepted: %s, %s)", ErrKnob, knob, spec.ParamFeatures, spec.ParamNTrain))
	}
	return fits
}

// leastSquares fits the minimum-norm least-squares solution on the first
// ps[i] columns of d into fits[i] for every nonzero ps[i].
func (w *solver) leastSquares(d *design, ps []int, fits []Fit) {
	order := ascending(ps)
	if d.m == 0 {
		for _, i := range order {
			d.empty(&fits[i], ps[i])
		}
		return
	}
	k := 0 // the widest p ≤ m: one QR of its columns serves all p ≤ m
	for _, i := range order {
		if ps[i] <= d.m {
			k = ps[i]
		}
	}
	if k > 0 {
		w.factorQR(d, k)
	}
	var gr *gram
	for _, i := range order {
		p := ps[i]
		if p <= d.m {
			w.qrFit(d, k, p, &fits[i])
			continue
		}
		if gr == nil {
			gr = w.newGram(d)
		}
		gr.extend(p)
		w.gramFit(d, gr, p, &fits[i])
	}
}

// factorQR computes the Householder QR of the first k columns of d into
// w.qr (m×k, LAPACK layout) and z = Qᵀy into w.z.
func (w *solver) factorQR(d *design, k int) {
	m := d.m
	a := grow(&w.qr, m*k)
	for i := range m {
		copy(a[i*k:(i+1)*k], d.a[i*d.p:i*d.p+k])
	}
	tau := grow(&w.tau, k)
	ag := blas64.General{Rows: m, Cols: k, Stride: k, Data: a}
	z := grow(&w.z, m)
	copy(z, d.y)
	zg := blas64.General{Rows: m, Cols: 1, Stride: 1, Data: z}
	work := grow(&w.work, max(k, 1))
	unblockedQR(ag, tau, work)
	applyQ(blas.Trans, ag, tau, zg, work)
}

// unblockedQR computes the Householder QR of a (len(work) ≥ a.Cols) by
// Geqrf with a work length of a.Cols, which LAPACK defines to take the
// unblocked route (dgeqr2). gonum v0.17.0's blocked route (a triangular
// factor from Dlarft applied by Dlarfb, used above 128 columns) is not
// backward stable when the Householder vectors have trailing zeros, as the
// columns of relu features do: ‖A − QR‖ reached 7% of ‖A‖ on 170×140 relu
// designs, against 7e-15 unblocked (TestQRBackwardError). The unblocked
// route costs the same flops at BLAS-2 speed; on the reference features
// path (n = 200, d = 1000, 41 grid values) the time per seed did not
// change measurably (23 ms either way).
func unblockedQR(a blas64.General, tau, work []float64) {
	lapack64.Geqrf(a, tau, work[:a.Cols], a.Cols)
}

// applyQ overwrites the single column c by Qᵀc (trans) or Qc, Q the
// product of the Householder reflectors of a Geqrf factor, one reflector
// at a time: Ormqr with a work length of 1, which LAPACK defines to take
// the unblocked route (dorm2r). The blocked route of gonum v0.17.0's
// Dormqr (a triangular factor from Dlarft, applied by Dlarfb) is not
// orthogonal when the reflectors have trailing zeros (relu features: the
// triangular factor comes out wrong; see unblockedQR): it changed ‖Qᵀy‖ in
// the third digit (TestLeastSquaresZeroColumns). For one column the blocked route saves
// nothing: both cost 4·m·k flops.
func applyQ(trans blas.Transpose, a blas64.General, tau []float64, c blas64.General, work []float64) {
	lapack64.Ormqr(blas.Left, trans, a, tau, c, work[:1], 1)
}

// qrFit solves for the first p columns from the QR of the first k ≥ p.
func (w *solver) qrFit(d *design, k, p int, f *Fit) {
	r := blas64.Triangular{Uplo: blas.Upper, Diag: blas.NonUnit, N: p, Stride: k, Data: w.qr}
	rcond := lapack64.Trcon(lapack.MaxColumnSum, r, grow(&w.work, max(3*p, 1)), growInt(&w.iwork, p))
	if !(rcond >= rankTol(d.m, p, 1)) {
		w.svdLeastSquares(d, p, f)
		return
	}
	b := make([]float64, p)
	copy(b, w.z[:p])
	blas64.Trsv(blas.NoTrans, r, blas64.Vector{N: p, Inc: 1, Data: b})
	tail := w.z[p:d.m]
	nrm := blas64.Nrm2(blas64.Vector{N: len(tail), Inc: 1, Data: tail})
	d.finish(f, b, nrm*nrm, float64(p), 1/rcond, "qr")
}

// gramFit solves the p > m case by the Gram matrix, or by QR of X_pᵀ when
// the Gram matrix is too ill-conditioned (see condMax).
func (w *solver) gramFit(d *design, gr *gram, p int, f *Fit) {
	m := d.m
	u, cond, ok := w.cholesky(gr.g.Data, m, m, 0)
	if !ok || cond > condMax {
		w.qrTranspose(d, p, f)
		return
	}
	b := w.dualSolve(d, u, p)
	d.finish(f, b, d.rss(b, grow(&w.res, m)), float64(m), math.Sqrt(cond), "gram-cholesky")
}

// qrTranspose solves the wide system through X_pᵀ = QR (p×m): the minimum
// norm solution of X_p b = y is b = Q R⁻ᵀ y.
func (w *solver) qrTranspose(d *design, p int, f *Fit) {
	m := d.m
	t := grow(&w.tq, p*m)
	for i := range m {
		row := d.a[i*d.p : i*d.p+p]
		for j, v := range row {
			t[j*m+i] = v
		}
	}
	tau := grow(&w.ttau, m)
	tg := blas64.General{Rows: p, Cols: m, Stride: m, Data: t}
	b := make([]float64, p)
	bg := blas64.General{Rows: p, Cols: 1, Stride: 1, Data: b}
	work := grow(&w.work, max(3*m, 1))
	unblockedQR(tg, tau, work)
	r := blas64.Triangular{Uplo: blas.Upper, Diag: blas.NonUnit, N: m, Stride: m, Data: t}
	rcond := lapack64.Trcon(lapack.MaxColumnSum, r, work[:3*m], growInt(&w.iwork, m))
	if !(rcond >= rankTol(m, p, 1)) {
		w.svdLeastSquares(d, p, f)
		return
	}
	copy(b, d.y)
	blas64.Trsv(blas.Trans, r, blas64.Vector{N: m, Inc: 1, Data: b[:m]})
	applyQ(blas.NoTrans, tg, tau, bg, work)
	d.finish(f, b, d.rss(b, grow(&w.res, m)), float64(m), 1/rcond, "qr-transpose")
}

// svdLeastSquares is the rank-revealing fallback.
func (w *solver) svdLeastSquares(d *design, p int, f *Fit) {
	t, err := w.svd(d, p)
	if err != nil {
		f.Err = err
		return
	}
	w.ridge(d, t, p, 0, true, f)
}
