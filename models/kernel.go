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

var _ Fitter = (*KernelRidge)(nil)

// Kernels of KernelRidge.
const (
	KernelGaussian = "gaussian" // exp(−‖x − x'‖²/(2h²))
	KernelLaplace  = "laplace"  // exp(−‖x − x'‖/h), ‖·‖ Euclidean
	// kernelLinear is k(x, x') = xᵀx', under which kernel ridge is the dual
	// form of ridge without intercept. It serves the checks against the
	// primal ridge; the spec does not offer it (it has no bandwidth).
	kernelLinear = "linear"
)

func init() {
	register(spec.FamilyKernelRidge, func(m spec.Model) (Fitter, error) {
		k := &KernelRidge{Kernel: m.Options["kernel"], Bandwidth: m.Params["bandwidth"], Lambda: m.Lambda}
		if _, err := k.kernel(); err != nil {
			return nil, err
		}
		if !kernelPenaltyOK(k.Lambda) {
			return nil, fmt.Errorf("%w: %s lambda = %v (accepted: a finite penalty ≥ 0)", ErrParam, m.Family, m.Lambda)
		}
		if h, ok := m.Params["bandwidth"]; ok && !kernelBandwidthOK(h) {
			return nil, fmt.Errorf("%w: %s bandwidth = %v (accepted: a finite number > 0)", ErrParam, m.Family, h)
		}
		return k, nil
	})
}

// KernelRidge fits kernel ridge regression: over f in the reproducing
// kernel Hilbert space H of the kernel k,
//
//	f̂ = argmin (1/n) Σ_i (y_i − f(x_i))² + λ‖f‖²_H
//	  = Σ_i α_i k(x_i, ·),   α = (K + nλI)⁻¹ y,   K_ij = k(x_i, x_j),
//
// the same scaling as Ridge ((1/n)‖y − ŷ‖² + λ‖b‖², penalty matrix nλI): with
// the linear kernel xᵀx' it is Ridge without intercept, b = Xᵀα. There is no
// intercept (a constant is in the span of the Gaussian and Laplace kernels'
// fits only approximately; centre y if that matters). At λ = 0 the fit is
// the minimum-RKHS-norm interpolant, α = K⁺y, the limit λ → 0.
//
// Kernels (Euclidean distance, bandwidth h > 0): KernelGaussian
// exp(−‖x − x'‖²/(2h²)) and KernelLaplace exp(−‖x − x'‖/h); both are
// strictly positive definite on distinct points, so K is invertible in
// exact arithmetic. Reference: the representer theorem and the dual form,
// "A generalized representer theorem", COLT 2001, and "Ridge regression
// learning algorithm in dual variables", ICML 1998 (from memory).
//
// Each fit reports:
//
//	Pred      = K_test α at the rows of Train.Test (nil without them), formed
//	            one test row at a time: memory O(n²), not O(n·m)
//	TrainRisk = (1/n)‖y − Kα‖² = (1/n)‖nλα‖²
//	Norm      = ‖f̂‖_H = √(αᵀKα)
//	DF        = tr(K(K + nλI)⁻¹) = Σ_j μ_j/(μ_j + nλ), μ_j the eigenvalues of K
//	            (at λ = 0 the numerical rank of K)
//
// Methods:
//
//   - "eigen": one symmetric eigendecomposition K = Q diag(μ) Qᵀ (LAPACK
//     dsyev, as in gonum's mat.EigenSym) serves every λ of a penalty path:
//     α = Q diag(1/(μ_j + nλ)) Qᵀy, the residual Q diag(nλ/(μ_j + nλ)) Qᵀy.
//     Computed eigenvalues below 0 are rounding (K is positive
//     semi-definite) and are set to 0. Cond is the exact 2-norm condition
//     number (μ_max + nλ)/(μ_min + nλ). A penalty with nλ below the
//     rounding of K (Cond ≳ 1/eps) gives the ridge fit of the computed K,
//     which rounding dominates; the λ = 0 fit below is the stable limit.
//     At λ = 0 the eigenvalues μ_j ≤ n·eps·μ_max are dropped: a
//     backward-stable eigensolver returns the exact eigenvalues of K + E
//     with ‖E‖₂ of order n·eps·‖K‖₂, so by Weyl's inequality smaller ones
//     cannot be told from 0 (the tolerance
//     is common practice: numpy.linalg.matrix_rank's default for a
//     symmetric matrix). Cond is then μ_max/μ_min over the kept ones, the
//     training risk is the part of y in the dropped directions (0 when K
//     has full numerical rank: the fit interpolates).
//   - "cholesky": a single λ > 0 (the bandwidth and n_train knobs): K + nλI
//     = UᵀU, α by two triangular solves, DF = n − nλ·tr((K + nλI)⁻¹) with
//     tr(A⁻¹) = ‖U⁻¹‖_F², or, when that is below n/4 and the subtraction
//     would lose digits, the positive sum tr(U⁻ᵀKU⁻¹). Cond is the a-priori bound ‖A‖₁√n/(nλ) ≥ κ₁(A), or
//     LAPACK's 1-norm estimate when the bound exceeds 1e5 (see condMax).
//     Unlike the Gram routes of Ridge, nothing is squared here: Cholesky
//     and the eigendecomposition are backward-stable solves of the same
//     matrix, with forward errors of order κ·eps both, so Cholesky is used
//     whatever κ, and "eigen" only where the factorization fails (nλ below
//     the rounding of K). Measured (n = 200, Gaussian kernel, κ from 1e2 to
//     1e12): predictions agree with the eigen route to about κ·eps relative,
//     DF to about 1e-6 absolute at κ from 1e10 to 1e12 and 3e-8 at κ ≈ 1e8.
//
// Path knobs:
//
//   - spec.ParamLambda: the penalty path at Bandwidth, one eigendecomposition.
//   - spec.ParamBandwidth: the bandwidth path at Lambda. The squared distances
//     are computed once (and shared with the other kernel and k-NN models of
//     the seed through the Train); each h refills K and factors it.
//   - spec.ParamNTrain: the first n rows at Bandwidth and Lambda; K of all
//     rows is computed once and each n factors its leading n×n block.
//
// A bandwidth that is not finite and > 0, or a penalty that is not finite
// and ≥ 0, is a per-fit ErrValue (a grid value) or ErrParam (a field) error;
// another knob is ErrKnob; NaN or infinite data is ErrNotFinite.
type KernelRidge struct {
	// Kernel is KernelGaussian or KernelLaplace. Default "" means
	// KernelGaussian.
	Kernel string
	// Bandwidth is h > 0 for the lambda and n_train knobs (the bandwidth
	// knob overrides it). Zero is invalid for those knobs.
	Bandwidth float64
	// Lambda is the penalty λ ≥ 0 for the bandwidth and n_train knobs (the
	// lambda knob overrides it). Default 0: the minimum-norm interpolant.
	Lambda float64
}

func kernelPenaltyOK(l float64) bool   { return l >= 0 && !math.IsInf(l, 1) }
func kernelBandwidthOK(h float64) bool { return h > 0 && !math.IsInf(h, 1) }

// kernel returns the kernel name, the default filled in.
func (kr *KernelRidge) kernel() (string, error) {
	switch kr.Kernel {
	case "", KernelGaussian:
		return KernelGaussian, nil
	case KernelLaplace, kernelLinear:
		return kr.Kernel, nil
	}
	return "", fmt.Errorf("%w: kernel %q (accepted: %s, %s)", ErrParam, kr.Kernel, KernelGaussian, KernelLaplace)
}

// Path fits the path; see the type documentation. It panics if len(y) is
// not the number of rows of x, or Train.Test has other columns than x.
func (kr *KernelRidge) Path(t *Train, knob string, values []float64) []Fit {
	rows, _ := checkShape(t.X, t.Y)
	fits := make([]Fit, len(values))
	kind, err := kr.kernel()
	if err != nil {
		failAll(fits, err)
		return fits
	}
	if knob != spec.ParamLambda && knob != spec.ParamBandwidth && knob != spec.ParamNTrain {
		failAll(fits, fmt.Errorf("%w: %q (accepted: %s, %s, %s)", ErrKnob, knob,
			spec.ParamBandwidth, spec.ParamLambda, spec.ParamNTrain))
		return fits
	}
	if knob != spec.ParamBandwidth && kind != kernelLinear && !kernelBandwidthOK(kr.Bandwidth) {
		failAll(fits, fmt.Errorf("%w: bandwidth = %v (accepted: a finite number > 0)", ErrParam, kr.Bandwidth))
		return fits
	}
	if knob != spec.ParamLambda && !kernelPenaltyOK(kr.Lambda) {
		failAll(fits, fmt.Errorf("%w: lambda = %v (accepted: a finite penalty ≥ 0)", ErrParam, kr.Lambda))
		return fits
	}
	some := false
	for i, v := range values {
		switch {
		case knob == spec.ParamLambda && !kernelPenaltyOK(v):
			fits[i].Err = fmt.Errorf("%w: %s = %v (accepted: a finite penalty ≥ 0)", ErrValue, knob, v)
		case knob == spec.ParamBandwidth && !kernelBandwidthOK(v):
			fits[i].Err = fmt.Errorf("%w: %s = %v (accepted: a finite number > 0)", ErrValue, knob, v)
		default:
			some = true
		}
	}
	if !some {
		return fits
	}
	ds, err := t.sqDists()
	if err != nil {
		failAll(fits, err)
		return fits
	}
	var w kernelSolver
	w.alphas = make([][]float64, len(values))
	hs := make([]float64, len(values)) // the bandwidth of each fit
	switch knob {
	case spec.ParamLambda:
		km := w.matrices(t, ds, kind, kr.Bandwidth)
		e, err := w.eigen(km, rows)
		if err != nil {
			failAll(fits, err)
			return fits
		}
		for i, v := range values {
			if fits[i].Err == nil {
				w.alphas[i] = w.eigenFit(e, km, rows, v, &fits[i])
				hs[i] = kr.Bandwidth
			}
		}
	case spec.ParamBandwidth:
		for i, h := range values {
			if fits[i].Err == nil {
				km := w.matrices(t, ds, kind, h)
				w.alphas[i] = w.single(km, rows, kr.Lambda, &fits[i])
				hs[i] = h
			}
		}
	case spec.ParamNTrain:
		ns, _ := counts(fits, knob, values, rows, "rows")
		km := w.matrices(t, ds, kind, kr.Bandwidth)
		for i, n := range ns {
			if n > 0 {
				w.alphas[i] = w.single(km, n, kr.Lambda, &fits[i])
				hs[i] = kr.Bandwidth
			}
		}
	}
	if ds.m > 0 {
		w.predict(t, kind, hs, fits)
	}
	return fits
}

// kernelMats holds K over all N training rows (N×N, row-major, both
// triangles) for one bandwidth. The fit on the first n rows uses its
// leading n×n block, with stride N.
type kernelMats struct {
	n      int
	k      []float64
	y      []float64
	stride int
}

// kernelSolver holds the scratch buffers of one KernelRidge path, and the
// dual coefficients α of each fit (nil for a failed one) until the
// predictions are made.
type kernelSolver struct {
	solver
	k            []float64
	q, mu, qty   []float64 // eigenvectors (columns), eigenvalues, Qᵀy
	coef, kalpha []float64
	mats         kernelMats
	eig          kernelEigen
	alphas       [][]float64
}

// kernelValues overwrites the squared distances (for the linear kernel,
// the inner products) in v with the kernel's values at bandwidth h.
func kernelValues(kind string, h float64, v []float64) {
	switch kind {
	case KernelGaussian:
		c := -1 / (2 * h * h)
		for i, d := range v {
			v[i] = math.Exp(c * d)
		}
	case KernelLaplace:
		c := -1 / h
		for i, d := range v {
			v[i] = math.Exp(c * math.Sqrt(d))
		}
	}
}

// matrices fills K for bandwidth h from the squared distances (for the
// linear kernel, from the inputs).
func (w *kernelSolver) matrices(t *Train, ds *distances, kind string, h float64) *kernelMats {
	n := ds.n
	km := &w.mats
	*km = kernelMats{n: n, y: t.Y, stride: n, k: grow(&w.k, n*n)}
	if kind == kernelLinear {
		x := t.X.RawMatrix()
		blas64.Gemm(blas.NoTrans, blas.Trans, 1, x, x, 0, blas64.General{Rows: n, Cols: n, Stride: n, Data: km.k})
		return km
	}
	copy(km.k, ds.train)
	kernelValues(kind, h, km.k)
	return km
}

// predict sets Pred of every fit with dual coefficients: f(z_j) =
// Σ_i k(z_j, x_i) α_i over the fit's training rows, one test row at a time
// (its distances once, its kernel values once per bandwidth), so that no
// M×N test kernel matrix is held. A non-finite prediction turns the fit
// into an ErrNumerical error.
func (w *kernelSolver) predict(t *Train, kind string, hs []float64, fits []Fit) {
	m, _ := t.Test.Dims()
	n := len(t.Y)
	for v, a := range w.alphas {
		if a != nil {
			fits[v].Pred = make([]float64, m)
		}
	}
	dist := make([]float64, n)
	kv := make([]float64, n)
	x := t.X.RawMatrix()
	z := t.Test.RawMatrix()
	for j := range m {
		if kind == kernelLinear {
			blas64.Gemv(blas.NoTrans, 1, x, blas64.Vector{N: x.Cols, Inc: 1, Data: z.Data[j*z.Stride : j*z.Stride+z.Cols]},
				0, blas64.Vector{N: n, Inc: 1, Data: dist})
		} else {
			t.testDists(j, dist)
		}
		last := math.NaN()
		for v, a := range w.alphas {
			if a == nil {
				continue
			}
			if h := hs[v]; h != last || kind == kernelLinear {
				copy(kv, dist)
				kernelValues(kind, h, kv)
				last = h
			}
			fits[v].Pred[j] = blas64.Dot(blas64.Vector{N: len(a), Inc: 1, Data: kv}, blas64.Vector{N: len(a), Inc: 1, Data: a})
		}
	}
	for v, a := range w.alphas {
		if a == nil {
			continue
		}
		for _, p := range fits[v].Pred {
			if !kernelFinite(p) {
				f := &fits[v]
				*f = Fit{Method: f.Method, Cond: f.Cond, Err: fmt.Errorf("%w: %s gave a non-finite prediction (condition %g)", ErrNumerical, f.Method, f.Cond)}
				break
			}
		}
	}
}

// kernelEigen is K_n = Q diag(μ) Qᵀ (μ ascending) with c = Qᵀy.
type kernelEigen struct {
	n     int
	q     []float64 // n×n, column j the eigenvector of μ_j
	mu, c []float64
}

// eigen factors the leading n×n block of K.
func (w *kernelSolver) eigen(km *kernelMats, n int) (*kernelEigen, error) {
	q := grow(&w.q, n*n)
	for i := range n {
		copy(q[i*n+i:(i+1)*n], km.k[i*km.stride+i:i*km.stride+n])
	}
	a := blas64.Symmetric{Uplo: blas.Upper, N: n, Stride: n, Data: q}
	mu := grow(&w.mu, n)
	query := []float64{0}
	lapack64.Syev(lapack.EVCompute, a, mu, query, -1)
	work := grow(&w.work, int(query[0]))
	if !lapack64.Syev(lapack.EVCompute, a, mu, work, len(work)) {
		return nil, fmt.Errorf("%w: eigendecomposition of the %d×%d kernel matrix did not converge", ErrNumerical, n, n)
	}
	e := &w.eig
	*e = kernelEigen{n: n, q: q, mu: mu, c: grow(&w.qty, n)}
	for j := range mu {
		if mu[j] < 0 {
			mu[j] = 0
		}
	}
	blas64.Gemv(blas.Trans, 1, blas64.General{Rows: n, Cols: n, Stride: n, Data: q},
		blas64.Vector{N: n, Inc: 1, Data: km.y[:n]}, 0, blas64.Vector{N: n, Inc: 1, Data: e.c})
	return e, nil
}

// eigenTol is the cutoff below which an eigenvalue of the n×n kernel matrix
// counts as zero in the ridgeless fit (see the KernelRidge documentation).
func eigenTol(n int, muMax float64) float64 { return float64(n) * eps * muMax }

// eigenFit fills f with the fit at penalty λ from the eigendecomposition.
func (w *kernelSolver) eigenFit(e *kernelEigen, km *kernelMats, n int, lambda float64, f *Fit) []float64 {
	nl := float64(n) * lambda
	muMax := e.mu[n-1]
	coef := grow(&w.coef, n)
	var rss, norm2, df, cond float64
	if nl == 0 {
		tol := eigenTol(n, muMax)
		muMin := math.Inf(1)
		for j, mu := range e.mu {
			c := e.c[j]
			if mu > tol && mu > 0 {
				coef[j] = c / mu
				norm2 += c * coef[j]
				df++
				muMin = min(muMin, mu)
			} else {
				coef[j] = 0
				rss += c * c
			}
		}
		cond = muMax / muMin // +Inf/… when nothing is kept: K = 0
		if df == 0 {
			cond = math.Inf(1)
		}
	} else {
		for j, mu := range e.mu {
			den := mu + nl
			coef[j] = e.c[j] / den
			r := nl * coef[j]
			rss += r * r
			norm2 += mu * coef[j] * coef[j]
			df += mu / den
		}
		cond = (muMax + nl) / (e.mu[0] + nl)
	}
	alpha := grow(&w.alpha, n)
	blas64.Gemv(blas.NoTrans, 1, blas64.General{Rows: n, Cols: n, Stride: n, Data: e.q},
		blas64.Vector{N: n, Inc: 1, Data: coef}, 0, blas64.Vector{N: n, Inc: 1, Data: alpha})
	return w.finish(n, alpha, rss, norm2, df, cond, "eigen", f)
}

// single fits one λ on the first n rows: Cholesky for λ > 0 when K + nλI is
// numerically positive definite, the eigendecomposition otherwise.
func (w *kernelSolver) single(km *kernelMats, n int, lambda float64, f *Fit) []float64 {
	nl := float64(n) * lambda
	if nl > 0 {
		u, cond, ok := w.cholesky(km.k, n, km.stride, nl)
		if ok {
			alpha := grow(&w.alpha, n)
			copy(alpha, km.y[:n])
			cholSolve(u, alpha)
			rss := nl * nl * blas64.Dot(blas64.Vector{N: n, Inc: 1, Data: alpha}, blas64.Vector{N: n, Inc: 1, Data: alpha})
			// ‖f‖²_H = αᵀKα, with Kα formed (not as y − nλα, which
			// cancels when the fit is small beside y).
			ka := grow(&w.kalpha, n)
			blas64.Symv(1, blas64.Symmetric{Uplo: blas.Upper, N: n, Stride: km.stride, Data: km.k},
				blas64.Vector{N: n, Inc: 1, Data: alpha}, 0, blas64.Vector{N: n, Inc: 1, Data: ka})
			norm2 := blas64.Dot(blas64.Vector{N: n, Inc: 1, Data: alpha}, blas64.Vector{N: n, Inc: 1, Data: ka})
			if tr, ok := traceInv(u); ok {
				df := float64(n) - nl*tr
				if df < float64(n)/4 {
					df = w.kernelDF(km, n, u)
				}
				return w.finish(n, alpha, rss, norm2, df, cond, "cholesky", f)
			}
		}
	}
	e, err := w.eigen(km, n)
	if err != nil {
		f.Err = err
		return nil
	}
	return w.eigenFit(e, km, n, lambda, f)
}

// kernelDF returns df = tr(K(K + nλI)⁻¹) = tr(VᵀKV) = Σ_j v_jᵀKv_j for
// A = K + nλI = UᵀU and v the columns of V = U⁻¹ (v holds U⁻¹, as
// traceInv leaves it): a sum of quadratic forms in the positive
// semi-definite K, without the cancellation of n − nλ·tr(A⁻¹) when df is
// small beside n (as finishRidge does for Ridge).
func (w *kernelSolver) kernelDF(km *kernelMats, n int, v blas64.Triangular) float64 {
	kv := grow(&w.svdA, n*n)
	for i := range n {
		copy(kv[i*n:(i+1)*n], km.k[i*km.stride:i*km.stride+n])
	}
	b := blas64.General{Rows: n, Cols: n, Stride: n, Data: kv}
	blas64.Trmm(blas.Right, blas.NoTrans, 1, v, b) // K V
	var df float64
	for i := range n {
		// Row i of V is zero left of the diagonal.
		df += blas64.Dot(blas64.Vector{N: n - i, Inc: 1, Data: v.Data[i*v.Stride+i : i*v.Stride+n]},
			blas64.Vector{N: n - i, Inc: 1, Data: kv[i*n+i : i*n+n]})
	}
	return df
}

// finish fills f from the dual coefficients α of the fit on the first n
// rows: the training risk rss/n, the norm √(αᵀKα), df and cond. It returns
// a copy of α for the predictions, or nil (and an ErrNumerical error in f)
// when a result is not finite.
func (w *kernelSolver) finish(n int, alpha []float64, rss, norm2, df, cond float64, method string, f *Fit) []float64 {
	*f = Fit{TrainRisk: rss / float64(n), Norm: math.Sqrt(max(norm2, 0)), DF: df, Cond: cond, Method: method}
	bad := !kernelFinite(f.TrainRisk) || !kernelFinite(f.Norm) || !kernelFinite(f.DF)
	for _, a := range alpha[:n] {
		bad = bad || !kernelFinite(a)
	}
	if bad {
		*f = Fit{Method: method, Cond: cond, Err: fmt.Errorf("%w: %s gave a non-finite fit (condition %g)", ErrNumerical, method, cond)}
		return nil
	}
	return append([]float64(nil), alpha[:n]...)
}

func kernelFinite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }
