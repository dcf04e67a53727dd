package runner

import (
	"math"
)

// MeanSE returns the sample mean of xs and its standard error
//
//	se = sqrt( (1/(S−1)) Σ (x_s − x̄)² / S ),
//
// NaN for the SE when fewer than two values are given (and for the mean
// when none are). Every mean ± SE of a Result is computed by it.
func MeanSE(xs []float64) (mean, se float64) {
	n := float64(len(xs))
	if len(xs) == 0 {
		return math.NaN(), math.NaN()
	}
	for _, x := range xs {
		mean += x
	}
	mean /= n
	if len(xs) < 2 {
		return mean, math.NaN()
	}
	var ss float64
	for _, x := range xs {
		d := x - mean
		ss += d * d
	}
	return mean, math.Sqrt(ss / (n - 1) / n)
}

// quantile returns the q-quantile of the sorted values by linear
// interpolation between order statistics, x[(S−1)q] (the "type 7"
// definition, the default of R's quantile and of numpy; common practice).
func quantile(sorted []float64, q float64) float64 {
	if len(sorted) == 0 {
		return math.NaN()
	}
	h := q * float64(len(sorted)-1)
	lo := int(math.Floor(h))
	if lo >= len(sorted)-1 {
		return sorted[len(sorted)-1]
	}
	return sorted[lo] + (h-float64(lo))*(sorted[lo+1]-sorted[lo])
}

// heavyTail reports whether the largest ⌈S/20⌉ values (at least one) of
// the sorted non-negative values carry at least half of their total: the
// mean is then an average of a few seeds, and the median is the honest
// summary. The rule is ours; it is meant to catch the interpolation
// threshold, where the risk has no finite mean.
func heavyTail(sorted []float64) bool {
	if len(sorted) < 4 {
		return false
	}
	k := (len(sorted) + 19) / 20
	var total, top float64
	for i, x := range sorted {
		total += x
		if i >= len(sorted)-k {
			top += x
		}
	}
	return total > 0 && top >= 0.5*total
}

// jackknifeSE returns the leave-one-out jackknife standard error
//
//	se = sqrt( (S−1)/S Σ_s (θ_(−s) − θ_(·))² ),  θ_(·) = mean of θ_(−s),
//
// from the S leave-one-out values θ_(−s).
//
// Reference: "The Jackknife, the Bootstrap and Other Resampling Plans",
// SIAM CBMS-NSF monograph 38, 1982, ch. 2.
func jackknifeSE(loo []float64) float64 {
	s := float64(len(loo))
	if len(loo) < 3 {
		return math.NaN()
	}
	var m float64
	for _, v := range loo {
		m += v
	}
	m /= s
	var ss float64
	for _, v := range loo {
		ss += (v - m) * (v - m)
	}
	return math.Sqrt((s - 1) / s * ss)
}
