package models

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"

	"riskgrid/spec"
)

var _ Fitter = (*Ridge)(nil)

// Ridge fits the penalised least-squares estimate
//
//	(b0, b) = argmin (1/n)‖y − b0·1 − X b‖² + λ‖b‖²
//	b = (XcᵀXc + nλI)⁻¹ Xcᵀyc = Xcᵀ(XcXcᵀ + nλI)⁻¹ yc,   b0 = ȳ − x̄ᵀb,
//
// with Xc, yc centred when Intercept is set (b0 unpenalised) and b0 = 0,
// Xc = X otherwise; n is the number of training rows used, so the penalty
// matrix is nλI. The effective degrees of freedom are
//
//	df = tr(H) = Σ_j s_j²/(s_j² + nλ)  (+1 with the intercept),
//
// s_j the singular values of Xc. At λ = 0 the fit is the minimum-norm
// least-squares fit (see LeastSquares). Reference: the ridge estimator of
// "Ridge regression: biased estimation for nonorthogonal problems",
// Technometrics 12(1), 1970; df as tr(H): The Elements of Statistical
// Learning, 2nd ed., Springer, 2009, §3.4.1 (textbook formulas).
//
// Path knobs:
//
//   - spec.ParamLambda: one thin SVD Xc = U diag(s) Vᵀ serves every λ,
//     b = V diag(s_j/(s_j² + nλ)) Uᵀyc. Method "svd"; Cond is the exact
//     2-norm condition number (s_1² + nλ)/(s_k² + nλ), k = min(m, p), of the
//     penalised normal matrix (primal and dual have the same).
//   - spec.ParamFeatures (the first p columns, the penalty Lambda): for
//     p ≤ m the leading p×p block of XᵀX over the leading columns gives
//     XpᵀXp + nλI ("cholesky"); for p > m the dual Gram matrix XpXpᵀ + nλI,
//     updated as columns are added ("gram-cholesky"). Cond is the a-priori
//     bound ‖A‖₁·√k/(nλ) ≥ κ₁(A) of the factored matrix A of order k (p
//     primal, m dual; ‖A⁻¹‖₁ ≤ √k‖A⁻¹‖₂ ≤ √k/(nλ)) when that is at
//     most 1e5 (see condMax), otherwise LAPACK's 1-norm estimate (dlacn2,
//     as in dpocon). If the estimate exceeds 1e5 or the factorization
//     fails, that p is solved by the SVD instead ("svd"). Lambda = 0 runs the LeastSquares path.
//   - spec.ParamNTrain (the first n rows, every column): one fit per value
//     as for features at p = all columns.
//
// A negative or non-finite Lambda (or λ grid value) is a per-fit ErrParam
// (ErrValue) error.
type Ridge struct {
	// Lambda is the penalty λ ≥ 0 for the features and n_train knobs
	// (the lambda knob overrides it). Default 0: minimum-norm least squares.
	Lambda float64
	// Intercept adds an unpenalised intercept b0. Default false.
	Intercept bool
}

// Path fits the path; see the type documentation. It panics if len(y) is
// not the number of rows of x.
func (r *Ridge) Path(t *Train, knob string, values []float64) []Fit {
	rows, cols := checkShape(t.X, t.Y)
	fits := make([]Fit, len(values))
	var w solver
	if knob == spec.ParamLambda {
		ok := false
		for i, v := range values {
			if !(v >= 0) || math.IsInf(v, 1) {
				fits[i].Err = fmt.Errorf("%w: %s = %v (accepted: a finite penalty ≥ 0)", ErrValue, knob, v)
				continue
			}
			ok = true
		}
		if !ok {
			return fits
		}
		d, err := t.design(rows, cols, r.Intercept, false)
		if err != nil {
			failAll(fits, err)
			return fits
		}
		if d.m == 0 {
			for i := range fits {
				if fits[i].Err == nil {
					d.empty(&fits[i], cols)
				}
			}
			return fits
		}
		sv, err := w.svd(d, cols)
		if err != nil {
			failAll(fits, err)
			return fits
		}
		for i, v := range values {
			if fits[i].Err == nil {
				w.ridge(d, sv, cols, v, false, &fits[i])
			}
		}
		return fits
	}
	if knob != spec.ParamFeatures && knob != spec.ParamNTrain {
		failAll(fits, fmt.Errorf("%w: %q (accepted: %s, %s, %s)", ErrKnob, knob,
			spec.ParamLambda, spec.ParamFeatures, spec.ParamNTrain))
		return fits
	}
	if !(r.Lambda >= 0) || math.IsInf(r.Lambda, 1) {
		failAll(fits, fmt.Errorf("%w: lambda = %v (accepted: a finite penalty ≥ 0)", ErrParam, r.Lambda))
		return fits
	}
	fit := func(d *design, ps []int, fits []Fit) {
		if r.Lambda == 0 {
			w.leastSquares(d, ps, fits)
		} else {
			w.ridgeFeatures(d, ps, func(int) float64 { return r.Lambda }, fits)
		}
	}
	if knob == spec.ParamFeatures {
		nestedColumns(t, fits, values, r.Intercept, fit)
		return fits
	}
	eachRows(t, fits, values, r.Intercept, fit)
	return fits
}

// ridgeFeatures fits ridge at penalty lambda(p) > 0 on the first ps[i]
// columns (a constant for Ridge; random features scale it with p).
func (w *solver) ridgeFeatures(d *design, ps []int, lambda func(p int) float64, fits []Fit) {
	order := ascending(ps)
	if d.m == 0 {
		for _, i := range order {
			d.empty(&fits[i], ps[i])
		}
		return
	}
	m := d.m
	k := 0
	for _, i := range order {
		if ps[i] <= m {
			k = ps[i]
		}
	}
	if k > 0 {
		// C = A_kᵀA_k (upper) and Aᵀy over the k leading columns.
		c := grow(&w.c, k*k)
		blas64.Syrk(blas.Trans, 1, d.cols(k), 0, blas64.Symmetric{Uplo: blas.Upper, N: k, Stride: k, Data: c})
		blas64.Gemv(blas.Trans, 1, d.cols(k), blas64.Vector{N: m, Inc: 1, Data: d.y}, 0,
			blas64.Vector{N: k, Inc: 1, Data: grow(&w.xty, k)})
	}
	var gr *gram
	for _, i := range order {
		p, f := ps[i], &fits[i]
		lambda := lambda(p)
		nl := float64(d.n) * lambda
		if p <= m {
			w.primalRidge(d, k, p, lambda, nl, f)
			continue
		}
		if gr == nil {
			gr = w.newGram(d)
		}
		gr.extend(p)
		w.dualRidge(d, gr, p, lambda, nl, f)
	}
}

// primalRidge solves (C_p + nλI) b = (Aᵀy)_{1:p} with C_p the leading block.
//
// df = p − nλ·tr((C_p + nλI)⁻¹), tr A⁻¹ = ‖U⁻¹‖_F² for A = UᵀU. The
// subtraction loses log₂(p/df) bits, so when df < p/4 the positive sum
// df = ‖A_p U⁻¹‖_F² (= tr(A_p(C_p+nλI)⁻¹A_pᵀ)) is used instead.
func (w *solver) primalRidge(d *design, k, p int, lambda, nl float64, f *Fit) {
	u, cond, ok := w.cholesky(w.c, p, k, nl)
	if !ok || cond > condMax {
		w.svdRidge(d, p, lambda, f)
		return
	}
	b := make([]float64, p)
	copy(b, w.xty[:p])
	cholSolve(u, b)
	w.finishRidge(d, u, p, b, lambda, nl, cond, p, blas.Right, blas.NoTrans, "cholesky", f)
}

// dualRidge solves b = A_pᵀ(G_p + nλI)⁻¹y, df = m − nλ·tr((G_p + nλI)⁻¹),
// or ‖U⁻ᵀA_p‖_F² when df < m/4 (see primalRidge).
func (w *solver) dualRidge(d *design, gr *gram, p int, lambda, nl float64, f *Fit) {
	m := d.m
	u, cond, ok := w.cholesky(gr.g.Data, m, m, nl)
	if !ok || cond > condMax {
		w.svdRidge(d, p, lambda, f)
		return
	}
	b := w.dualSolve(d, u, p)
	w.finishRidge(d, u, p, b, lambda, nl, cond, m, blas.Left, blas.Trans, "gram-cholesky", f)
}

// finishRidge sets the training risk and df of the ridge fit b on the first
// p columns from the Cholesky factor u of the k×k system matrix A (k = p,
// primal; k = m, dual): df = k − nλ·tr(A⁻¹), or, when that is below k/4 and
// the subtraction would lose bits, the positive sum ‖A_p U⁻¹‖_F² (primal:
// multiply by U⁻¹ from the right) or ‖U⁻ᵀA_p‖_F² (dual: U⁻ᵀ from the left).
// u is overwritten by its inverse.
func (w *solver) finishRidge(d *design, u blas64.Triangular, p int, b []float64, lambda, nl, cond float64,
	k int, side blas.Side, trans blas.Transpose, method string, f *Fit) {
	rss := d.rss(b, grow(&w.res, d.m))
	tr, ok := traceInv(u)
	if !ok {
		w.svdRidge(d, p, lambda, f)
		return
	}
	df := float64(k) - nl*tr
	if df < float64(k)/4 {
		bm := w.copyCols(d, p)
		blas64.Trmm(side, trans, 1, u, bm)
		df = frob2(bm)
	}
	d.finish(f, b, rss, df, cond, method)
}

// svdRidge is the stable fallback for one p.
func (w *solver) svdRidge(d *design, p int, lambda float64, f *Fit) {
	t, err := w.svd(d, p)
	if err != nil {
		f.Err = err
		return
	}
	w.ridge(d, t, p, lambda, false, f)
}

// copyCols copies the first p columns of d into a scratch m×p matrix.
func (w *solver) copyCols(d *design, p int) blas64.General {
	a := grow(&w.svdA, d.m*p)
	for i := range d.m {
		copy(a[i*p:(i+1)*p], d.a[i*d.p:i*d.p+p])
	}
	return blas64.General{Rows: d.m, Cols: p, Stride: p, Data: a}
}

// frob2 returns the squared Frobenius norm of a.
func frob2(a blas64.General) float64 {
	var s float64
	for i := range a.Rows {
		row := a.Data[i*a.Stride : i*a.Stride+a.Cols]
		nrm := blas64.Nrm2(blas64.Vector{N: a.Cols, Inc: 1, Data: row})
		s += nrm * nrm
	}
	return s
}
