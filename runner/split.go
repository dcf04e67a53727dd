package runner

import "math"

// split estimates the bias²/variance split of one grid point from the
// deviations e_s = f_s − f* of S seeds, measured in a weighted inner product
// ⟨u, v⟩ = Σ_j w_j u_j v_j: the coefficient space with w = diag Σ (so that
// ⟨e, e⟩ is the exact excess risk of a linear fit), or the fixed test inputs
// with w_j = 1/m. With ē the mean deviation, the unbiased estimators are
//
//	V̂     = (1/(S−1)) Σ_s ⟨e_s − ē, e_s − ē⟩
//	bias² = ⟨ē, ē⟩ − V̂/S
//
// (E⟨ē, ē⟩ = bias² + V/S; the correction can make bias² slightly negative,
// and it is reported as it comes). They satisfy the identity
//
//	(1/S) Σ_s ⟨e_s, e_s⟩ = ⟨ē, ē⟩ + ((S−1)/S) V̂ = bias² + V̂,
//
// so bias² + variance + noise is the mean risk. Standard errors are the
// leave-one-seed-out jackknife, in closed form from the per-seed scalars
// d_s = ⟨u_s, u_s⟩ and c_s = ⟨u_s, ē⟩ with u_s = e_s − ē:
//
//	⟨ē_(−s), ē_(−s)⟩ = ⟨ē, ē⟩ − 2c_s/(S−1) + d_s/(S−1)²
//	V̂_(−s)          = (Σ_t d_t − S d_s/(S−1)) / (S−2)
//
// Use: add every e_s (pass one), then visit every e_s again (pass two), then
// result. Two passes keep the memory to one vector per grid point.
type split struct {
	w    []float64
	sum  []float64
	n    int
	mean []float64 // set after pass one
	d, c []float64 // per seed, pass two
}

func newSplit(w []float64) *split {
	return &split{w: w, sum: make([]float64, len(w))}
}

// add is pass one.
func (sp *split) add(e []float64) {
	for j, v := range e {
		sp.sum[j] += v
	}
	sp.n++
}

// revisit is pass two; seeds must come in the same set as in pass one.
func (sp *split) revisit(e []float64) {
	if sp.mean == nil {
		sp.mean = make([]float64, len(sp.sum))
		for j, v := range sp.sum {
			sp.mean[j] = v / float64(sp.n)
		}
	}
	var d, c float64
	for j, v := range e {
		u := v - sp.mean[j]
		d += sp.w[j] * u * u
		c += sp.w[j] * u * sp.mean[j]
	}
	sp.d = append(sp.d, d)
	sp.c = append(sp.c, c)
}

// result returns the estimates and their jackknife standard errors.
func (sp *split) result() (bias2, bias2SE, variance, varianceSE float64) {
	bias2, variance, looB, looV := sp.loo()
	return bias2, jackknifeSE(looB), variance, jackknifeSE(looV)
}

// loo returns the estimates and their leave-one-seed-out values (nil when
// fewer than three seeds; NaN estimates when fewer than two).
func (sp *split) loo() (bias2, variance float64, looB, looV []float64) {
	nan := math.NaN()
	if sp.n < 2 || len(sp.d) != sp.n {
		return nan, nan, nil, nil
	}
	s := float64(sp.n)
	var b0, dsum float64
	for j, m := range sp.mean {
		b0 += sp.w[j] * m * m
	}
	for _, d := range sp.d {
		dsum += d
	}
	variance = dsum / (s - 1)
	bias2 = b0 - variance/s
	if sp.n < 3 {
		return bias2, variance, nil, nil
	}
	looB = make([]float64, sp.n)
	looV = make([]float64, sp.n)
	for i := range sp.d {
		d, c := sp.d[i], sp.c[i]
		a := b0 - 2*c/(s-1) + d/((s-1)*(s-1))
		v := (dsum - s*d/(s-1)) / (s - 2)
		looV[i] = v
		looB[i] = a - v/(s-1)
	}
	return bias2, variance, looB, looV
}

// nested is the split of one grid point under M model seeds per data seed.
type nested struct {
	bias2, bias2SE, variance, varianceSE float64
	data, dataSE, model, modelSE         float64
}

// nestedSplit splits the variance by the law of total variance,
//
//	Var f = E_data[Var_model f] + Var_data(E_model f) = σ_m² + σ_d²,
//
// from S data seeds × M model seeds (a balanced one-way random-effects
// design, the data seed the group). sp holds the per-seed mean deviations
// ê_s, modelVar the per-seed within-group variances
// w_s = Σ_m ⟨e_sm − ê_s, e_sm − ê_s⟩/(M−1). With V̂_b the variance of the
// ê_s over seeds (sp's variance, E V̂_b = σ_d² + σ_m²/M), the unbiased
// estimators are
//
//	σ̂_m² = mean_s w_s                 (E w_s = σ_m²)
//	σ̂_d² = V̂_b − σ̂_m²/M
//	var   = σ̂_d² + σ̂_m² = V̂_b + σ̂_m²(1 − 1/M)
//	bias² = ⟨ē, ē⟩ − V̂_b/S            (E⟨ē, ē⟩ = bias² + (σ_d² + σ_m²/M)/S)
//
// and bias² + var = mean over all S·M fits of ⟨e_sm, e_sm⟩, so the sum
// with the noise is the mean risk. Reference: the ANOVA estimators of the
// variance components, e.g. Variance Components, Wiley 1992, ch. 3
// (textbook; from memory). Standard errors: the leave-one-data-seed-out
// jackknife. With M = 1 the model part is exactly 0 (SE 0) and the rest
// is the one-level split.
func nestedSplit(sp *split, modelVar []float64, M int) nested {
	var out nested
	b2, vb, looB, looV := sp.loo()
	out.bias2, out.bias2SE = b2, jackknifeSE(looB)
	if M <= 1 || len(modelVar) == 0 {
		out.variance, out.varianceSE = vb, jackknifeSE(looV)
		out.data, out.dataSE = vb, out.varianceSE
		return out
	}
	m := float64(M)
	out.model, out.modelSE = MeanSE(modelVar)
	out.data = vb - out.model/m
	out.variance = vb + out.model*(1-1/m)
	if looV == nil {
		out.dataSE, out.varianceSE = math.NaN(), math.NaN()
		return out
	}
	s := float64(len(modelVar))
	var sum float64
	for _, x := range modelVar {
		sum += x
	}
	looD := make([]float64, len(looV))
	looT := make([]float64, len(looV))
	for i, v := range looV {
		lm := (sum - modelVar[i]) / (s - 1)
		looD[i] = v - lm/m
		looT[i] = v + lm*(1-1/m)
	}
	out.dataSE, out.varianceSE = jackknifeSE(looD), jackknifeSE(looT)
	return out
}
