package runner

import (
	"math"

	"riskgrid/spec"
)

// theory returns the exact expected true risk E R(b̂) over training samples
// of model m at grid value v, where a published formula gives it, and NaN
// elsewhere. It applies to least squares without an intercept (ordinary
// least squares for p < n, the minimum-norm solution for p > n) on the
// linear-gaussian source with a fixed truth β, on a features grid (p = v,
// n = n_train) or an n_train grid (n = v, p = dim), with noise of known
// variance σ² (Gaussian or scaled Student-t: only the variance enters).
//
// The features left out, j > p, act on the fit as extra noise independent
// of the included ones (Σ is diagonal and x Gaussian), so with
//
//	σ_eff² = σ² + Σ_{j>p} Σ_jj β_j²
//
// the risk of the fit on the first p features is, for any diagonal Σ,
//
//	E R = σ_eff² (1 + p/(n − p − 1))                         p ≤ n − 2,
//
// the mean of the inverse Wishart, E (X_pᵀX_p)⁻¹ = Σ_p⁻¹/(n − p − 1)
// ("Aspects of Multivariate Statistical Theory", Wiley 1982, Thm 3.2.12;
// from memory); and, when the included block is isotropic, Σ_jj = c for
// every j ≤ p,
//
//	E R = c ‖β_{1:p}‖² (1 − n/p) + σ_eff² (1 + n/(p − n − 1))  p ≥ n + 2,
//
// the minimum-norm interpolant's risk ("Two models of double descent for
// weak features", SIAM J. Math. Data Sci. 2(4), 2020, arXiv:1903.07571;
// from memory): the fit projects β_{1:p} onto the row space of X_p, a
// uniformly random n-dimensional subspace (E ‖(I − P)β‖² = ‖β‖²(1 − n/p)),
// and adds X_p⁺ε_eff, whose weighted square has mean σ_eff² tr E (X_pX_pᵀ)⁻¹
// = σ_eff² n/(c (p − n − 1)) times c. Both are checked through the whole
// runner by Monte Carlo in theory_test.go.
//
// NaN (no theory): p ∈ {n − 1, n, n + 1}, where the mean is infinite or
// has no closed form here; p ≥ n + 2 with unequal Σ_jj among the included
// features; an intercept; a truth redrawn per seed; any other source,
// family or grid.
func (r *run) theory(m spec.Model, v float64) Num {
	d := r.s.Data
	if d.Source != spec.SourceLinearGaussian || d.Truth == spec.TruthPerSeed || d.Corrupt != 0 ||
		m.Family != spec.FamilyLeastSquares || m.Intercept ||
		r.prob.Beta == nil || r.prob.Sigma == nil || math.IsNaN(r.prob.NoiseVar) {
		return NaN
	}
	var n, p int
	switch r.s.Grid.Param {
	case spec.ParamFeatures:
		n, p = d.NTrain, int(v)
	case spec.ParamNTrain:
		n, p = int(v), len(r.prob.Beta)
	default:
		return NaN
	}
	return Num(olsRisk(n, p, r.prob.Sigma, r.prob.Beta, r.prob.NoiseVar))
}

// olsRisk is E R of least squares on the first p of the features with
// variances sigma and true coefficients beta, from n samples (see theory);
// NaN where no formula applies.
func olsRisk(n, p int, sigma, beta []float64, noiseVar float64) float64 {
	if p < 1 || p > len(beta) || len(sigma) != len(beta) || n < 1 {
		return math.NaN()
	}
	eff := noiseVar
	for j := p; j < len(beta); j++ {
		eff += sigma[j] * beta[j] * beta[j]
	}
	fn, fp := float64(n), float64(p)
	switch {
	case p <= n-2:
		return eff * (1 + fp/(fn-fp-1))
	case p >= n+2:
		c := sigma[0]
		var b2 float64
		for j := range p {
			if sigma[j] != c {
				return math.NaN()
			}
			b2 += beta[j] * beta[j]
		}
		return c*b2*(1-fn/fp) + eff*(1+fn/(fp-fn-1))
	}
	return math.NaN()
}
