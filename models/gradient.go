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

func init() {
	register(spec.FamilyGradient, func(m spec.Model) (Fitter, error) {
		g := &GradientDescent{StepSize: m.Params["step_size"]}
		if !(g.StepSize >= 0) || math.IsInf(g.StepSize, 1) {
			return nil, fmt.Errorf("%w: %s step_size = %v (accepted: a finite number ≥ 0; 0: 1/L)", ErrParam, m.Family, g.StepSize)
		}
		if k, ok := m.Params["steps"]; ok {
			if !(k >= 0) || k != math.Trunc(k) || k > 1<<53 {
				return nil, fmt.Errorf("%w: %s steps = %v (accepted: a whole number ≥ 0)", ErrParam, m.Family, k)
			}
			g.Steps = k
		}
		return g, nil
	})
}

var _ Fitter = (*GradientDescent)(nil)

// GradientDescent fits least squares by gradient descent started at zero,
// without an intercept:
//
//	b_0 = 0,   b_{k+1} = b_k + η Xᵀ(y − X b_k)/n,
//
// the gradient step on (1/(2n))‖y − X b‖², whose Hessian is XᵀX/n. With the
// thin SVD X = U diag(s) Vᵀ and λ_j = s_j²/n the eigenvalues of XᵀX/n, the
// k-th iterate is, by induction on k,
//
//	b_k = V diag(φ_k(λ_j)/s_j) Uᵀy,   φ_k(λ) = 1 − (1 − ηλ)^k,
//
// (a direction with s_j at or below max(n, p)·eps·s_1 is numerically null
// and contributes nothing, as in LeastSquares), so the fitted values are
// ŷ = U diag(φ_k(λ_j)) Uᵀy and the effective degrees of freedom are
//
//	df = tr(H_k) = tr(I − (I − ηXᵀX/n)^k) = Σ_j φ_k(λ_j).
//
// Every iterate lies in the row space of X, and for 0 < η < 2/L (L = λ_1,
// the largest eigenvalue) b_k converges to the minimum-norm least-squares
// fit X⁺y, with ‖b_k − X⁺y‖ ≤ ρ^k‖X⁺y‖, ρ = max(|1 − ηλ_min⁺|, |1 − ηL|)
// and λ_min⁺ the smallest nonzero eigenvalue. Reference: the implicit
// bias of gradient descent on least squares towards the minimum-norm
// solution, "Understanding deep learning requires rethinking
// generalization", ICLR 2017, §5; the spectral filter form is textbook
// (Landweber iteration: Regularization of Inverse Problems, Kluwer, 1996,
// §6.1, from memory).
//
// The fit at each step count k is evaluated from this closed form: one SVD
// serves every k of a steps path, at a cost that does not depend on k, and
// φ_k is computed as −expm1(k·log1p(−ηλ)) for ηλ < 1, so that a slow
// direction (small ηλ) keeps its digits. The tests check the closed form
// against the recursion itself, step by step. Method "svd".
//
// The step size is StepSize, or 1/L of the sample the fit uses when
// StepSize is 0 (with the features knob, L of the first p columns, so a
// step count means the same fraction of the fastest direction's time
// scale at every p). A step size above 2/L makes the iteration diverge
// along the top eigendirection: every fit with k ≥ 1 then carries an
// ErrDiverge error that names η, L and 2/L (k = 0, b = 0, is still
// reported). At ηL = 2 exactly the top component oscillates without
// converging; it is reported as computed.
//
// Path knobs: spec.ParamSteps (the step counts k, every row and column),
// spec.ParamFeatures (the first p columns, Steps steps) and
// spec.ParamNTrain (the first n rows, every column, Steps steps). Norm is
// ‖b_k‖₂; TrainRisk is (1/n)‖y − X b_k‖², computed from the residual;
// Cond is s_1/s_r over the numerical rank r of X (the s_j above
// max(n, p)·eps·s_1), so Cond² = L/λ_min⁺ sets the convergence rate at
// η = 1/L; NaN when X is zero.
type GradientDescent struct {
	// Steps is the number of steps k for the features and n_train knobs
	// (the steps knob overrides it). Default 0: b = 0.
	Steps float64
	// StepSize is η ≥ 0. Default 0: η = 1/L, L the largest eigenvalue of
	// XᵀX/n of the sample fitted.
	StepSize float64
}

// Path fits the path; see the type documentation. It panics if len(y) is
// not the number of rows of x.
func (g *GradientDescent) Path(t *Train, knob string, values []float64) []Fit {
	rows, cols := checkShape(t.X, t.Y)
	fits := make([]Fit, len(values))
	if !(g.StepSize >= 0) || math.IsInf(g.StepSize, 1) {
		failAll(fits, fmt.Errorf("%w: step_size = %v (accepted: a finite number ≥ 0; 0: 1/L)", ErrParam, g.StepSize))
		return fits
	}
	var w gdWork
	fixed := func(f *Fit) []float64 {
		if !(g.Steps >= 0) || g.Steps != math.Trunc(g.Steps) || g.Steps > 1<<53 {
			f.Err = fmt.Errorf("%w: steps = %v (accepted: a whole number ≥ 0)", ErrParam, g.Steps)
			return nil
		}
		return []float64{g.Steps}
	}
	switch knob {
	case spec.ParamSteps:
		ks := make([]float64, len(values))
		ok := false
		for i, v := range values {
			if !(v >= 0) || v != math.Trunc(v) || v > 1<<53 {
				fits[i].Err = fmt.Errorf("%w: %s = %v (accepted: a whole number ≥ 0)", ErrValue, knob, v)
				ks[i] = math.NaN()
				continue
			}
			ks[i] = v
			ok = true
		}
		if !ok {
			return fits
		}
		d, err := t.design(rows, cols, false, true)
		if err != nil {
			failAll(fits, err)
			return fits
		}
		w.gradient(d, cols, g.StepSize, ks, fits)
	case spec.ParamFeatures:
		nestedColumns(t, fits, values, false, func(d *design, ps []int, fits []Fit) {
			for i, p := range ps {
				if p == 0 {
					continue
				}
				if ks := fixed(&fits[i]); ks != nil {
					w.gradient(d, p, g.StepSize, ks, fits[i:i+1])
				}
			}
		})
	case spec.ParamNTrain:
		eachRows(t, fits, values, false, func(d *design, ps []int, fits []Fit) {
			if ks := fixed(&fits[0]); ks != nil {
				w.gradient(d, ps[0], g.StepSize, ks, fits)
			}
		})
	default:
		failAll(fits, fmt.Errorf("%w: %q (accepted: %s, %s, %s)", ErrKnob, knob, spec.ParamSteps, spec.ParamFeatures, spec.ParamNTrain))
	}
	return fits
}

// gdWork holds the scratch buffers of one gradient-descent Path call.
type gdWork struct {
	a, s, vecs, proj, coef, tmp, res, work []float64
}

// gradient fills fits[i] with the iterate after ks[i] steps on the first p
// columns of d, skipping the entries whose ks[i] is NaN (already failed).
//
// One one-sided SVD of A = A_p (m×p) gives every iterate, with
// b_k = V diag(φ_k/s_j) Uᵀy written through the side that is stored:
//
//	m < p:  b_k = Aᵀ U diag(φ_k/s_j²) Uᵀy        (U m×m)
//	m ≥ p:  b_k = V diag(φ_k/s_j²) Vᵀ Aᵀy         (V p×p)
//
// Both lose only a factor κ(A) to rounding (Aᵀu_j = s_j v_j is formed with
// absolute error ~eps·s_1, then scaled by φ/s_j² ≤ 1/s_j²), like the
// two-sided form, at a fraction of the cost of computing both sides.
func (w *gdWork) gradient(d *design, p int, eta float64, ks []float64, fits []Fit) {
	m := d.m
	k := min(m, p)
	wide := m < p
	a := grow(&w.a, m*p)
	for i := range m {
		copy(a[i*p:(i+1)*p], d.a[i*d.p:i*d.p+p])
	}
	ag := blas64.General{Rows: m, Cols: p, Stride: p, Data: a}
	s := grow(&w.s, k)
	none := blas64.General{Rows: 1, Cols: 1, Stride: 1, Data: []float64{0}}
	jobU, jobVT := lapack.SVDNone, lapack.SVDStore
	ug, vg := none, blas64.General{Rows: p, Cols: p, Stride: p, Data: grow(&w.vecs, p*p)}
	if wide {
		jobU, jobVT = lapack.SVDStore, lapack.SVDNone
		ug, vg = blas64.General{Rows: m, Cols: m, Stride: m, Data: grow(&w.vecs, m*m)}, none
	}
	query := []float64{0}
	lapack64.Gesvd(jobU, jobVT, ag, ug, vg, s, query, -1)
	work := grow(&w.work, int(query[0]))
	if !lapack64.Gesvd(jobU, jobVT, ag, ug, vg, s, work, len(work)) {
		for i, kk := range ks {
			if !math.IsNaN(kk) {
				fits[i].Err = fmt.Errorf("%w: SVD of the %d×%d design did not converge", ErrNumerical, m, p)
			}
		}
		return
	}
	// proj = Uᵀy (wide) or Vᵀ(Aᵀy) (tall); the first k entries are used.
	proj := grow(&w.proj, k)
	orig := blas64.General{Rows: m, Cols: p, Stride: d.p, Data: d.a}
	ym := blas64.Vector{N: m, Inc: 1, Data: d.y}
	if wide {
		blas64.Gemv(blas.Trans, 1, ug, ym, 0, blas64.Vector{N: k, Inc: 1, Data: proj})
	} else {
		aty := grow(&w.tmp, p)
		blas64.Gemv(blas.Trans, 1, orig, ym, 0, blas64.Vector{N: p, Inc: 1, Data: aty})
		blas64.Gemv(blas.NoTrans, 1, vg, blas64.Vector{N: p, Inc: 1, Data: aty}, 0, blas64.Vector{N: k, Inc: 1, Data: proj})
	}
	n := float64(d.n)
	lmax := s[0] * s[0] / n
	if eta == 0 && lmax > 0 {
		eta = 1 / lmax
	}
	r := 0 // numerical rank: the s_j above max(m, p)·eps·s_1 (see rankTol)
	cond := math.NaN()
	if s[0] > 0 {
		tol := rankTol(m, p, s[0])
		for r < k && s[r] > tol {
			r++
		}
		cond = s[0] / s[r-1]
	}
	diverges := eta*lmax > 2
	coef := grow(&w.coef, k)
	for i, kk := range ks {
		if math.IsNaN(kk) {
			continue
		}
		f := &fits[i]
		if diverges && kk >= 1 {
			*f = Fit{Method: "svd", Cond: cond, Err: fmt.Errorf(
				"%w: gradient descent with step_size %.6g > 2/L = %.6g (L = %.6g, the largest eigenvalue of XᵀX/n on %d rows and %d columns) diverges; take step_size < 2/L, or 0 for 1/L",
				ErrDiverge, eta, 2/lmax, lmax, d.n, p)}
			continue
		}
		df := 0.0
		for j := range k {
			coef[j] = 0
			if j < r {
				phi := filterGD(eta*s[j]*s[j]/n, kk)
				coef[j] = phi / (s[j] * s[j]) * proj[j]
				df += phi
			}
		}
		b := make([]float64, p)
		if wide {
			u := grow(&w.tmp, m)
			blas64.Gemv(blas.NoTrans, 1, ug, blas64.Vector{N: m, Inc: 1, Data: coef}, 0, blas64.Vector{N: m, Inc: 1, Data: u})
			blas64.Gemv(blas.Trans, 1, orig, blas64.Vector{N: m, Inc: 1, Data: u}, 0, blas64.Vector{N: p, Inc: 1, Data: b})
		} else {
			blas64.Gemv(blas.Trans, 1, vg, blas64.Vector{N: k, Inc: 1, Data: coef}, 0, blas64.Vector{N: p, Inc: 1, Data: b})
		}
		d.finish(f, b, d.rss(b, grow(&w.res, m)), df, cond, "svd")
	}
}

// filterGD returns φ_k = 1 − (1 − x)^k for x = ηλ ∈ [0, 2], k a whole
// number ≥ 0: by −expm1(k·log1p(−x)) for x < 1 (no cancellation when x or
// k·x is small), exactly for x = 1, and with the sign of (1 − x)^k for
// 1 < x ≤ 2.
func filterGD(x, k float64) float64 {
	switch {
	case k == 0 || x == 0:
		return 0
	case x < 1:
		return -math.Expm1(k * math.Log1p(-x))
	case x == 1:
		return 1
	}
	pw := math.Pow(x-1, k)
	if math.Mod(k, 2) == 1 {
		return 1 + pw
	}
	return 1 - pw
}
