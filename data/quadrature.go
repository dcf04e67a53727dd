package data

import (
	"math"
	"sort"
)

// GaussLegendre returns the nodes (ascending) and weights of the n-point
// Gauss–Legendre rule on [−1, 1]:
//
//	∫_{−1}^{1} h(x) dx ≈ Σ_i w_i h(x_i),
//
// exact when h is a polynomial of degree ≤ 2n−1. The nodes are the zeros of
// the Legendre polynomial P_n, found by Newton's method on the three-term
// recurrence
//
//	P_0 = 1,  P_1 = x,  (k+1) P_{k+1} = (2k+1) x P_k − k P_{k−1},
//	P_n'(x) = n (x P_n(x) − P_{n−1}(x)) / (x² − 1),
//
// started at cos(π(i − 1/4)/(n + 1/2)), and the weights are
//
//	w_i = 2 / ((1 − x_i²) P_n'(x_i)²).
//
// The rule is symmetric: the upper half is computed and mirrored. Nodes and
// weights are accurate to a few units in the last place for n up to a few
// hundred (checked against the Golub–Welsch eigenvalue method in the
// tests). GaussLegendre panics if n < 1.
//
// Reference: "Handbook of Mathematical Functions", NBS Applied Mathematics
// Series 55, 1964, §25.4.29 (the rule and its weights) and §22.7.10 (the
// recurrence); the Newton iteration and its starting values are the
// textbook method of "Numerical Recipes", 3rd ed., Cambridge University
// Press, 2007, §4.6.
func GaussLegendre(n int) (x, w []float64) {
	if n < 1 {
		panic("data: GaussLegendre needs n ≥ 1")
	}
	x = make([]float64, n)
	w = make([]float64, n)
	fn := float64(n)
	for i := 0; i < (n+1)/2; i++ {
		// The i-th largest zero.
		z := math.Cos(math.Pi * (float64(i) + 0.75) / (fn + 0.5))
		var dp float64
		for it := 0; it < 100; it++ {
			p, q := legendre(n, z)
			dp = fn * (z*p - q) / (z*z - 1)
			dz := p / dp
			z -= dz
			if math.Abs(dz) <= 1e-16*math.Max(1, math.Abs(z)) {
				break
			}
		}
		p, q := legendre(n, z)
		dp = fn * (z*p - q) / (z*z - 1)
		wi := 2 / ((1 - z*z) * dp * dp)
		x[n-1-i], w[n-1-i] = z, wi
		x[i], w[i] = -z, wi
	}
	if n%2 == 1 {
		x[n/2] = 0 // exact by symmetry; Newton leaves ~1e-17
	}
	return x, w
}

// legendre returns P_n(z) and P_{n−1}(z) by the three-term recurrence.
func legendre(n int, z float64) (pn, pn1 float64) {
	p0, p1 := 1.0, z
	if n == 0 {
		return 1, 0
	}
	for k := 1; k < n; k++ {
		fk := float64(k)
		p0, p1 = p1, ((2*fk+1)*z*p1-fk*p0)/(fk+1)
	}
	return p1, p0
}

// panelOrder is the number of Gauss–Legendre nodes per panel of the
// composite rules (16 or 17, see compositeLegendre).
const panelOrder = 16

// compositeLegendre returns a composite Gauss–Legendre rule of exactly m
// nodes on [breaks[0], breaks[len−1]]:
//
//	∫_a^b h(x) dx ≈ Σ_j w_j h(x_j).
//
// The interval is cut at every break (a discontinuity of the truth), each
// segment into panels of equal width, and each panel carries a
// Gauss–Legendre rule of k or k+1 nodes, k = ⌊m/P⌋ (k = panelOrder when m
// is a multiple of it), where P = max(⌈m/panelOrder⌉, segments) panels are
// shared out among the segments in proportion to their lengths (at least
// one each). On a panel of width h where h is smooth the error is
//
//	h^(2k+1) (k!)⁴ / ((2k+1) ((2k)!)³) · h^(2k)(ξ)     (A&S 25.4.30),
//
// i.e. exact for polynomials of degree ≤ 2k−1 per panel. A jump of size J
// inside a panel is integrated to within J times the largest weight (the
// Chebyshev–Markov–Stieltjes separation theorem; 0.0947·h for 16 nodes),
// a kink to O(h²). Nodes are returned in ascending
// order. breaks must be strictly increasing, with at least two entries,
// and m ≥ len(breaks)−1.
//
// Reference: "Handbook of Mathematical Functions", NBS 1964, §25.4.29–30.
func compositeLegendre(m int, breaks []float64) (x, w []float64) {
	segs := len(breaks) - 1
	if segs < 1 || m < segs {
		panic("data: compositeLegendre needs breaks a < … < b and m ≥ segments")
	}
	P := max((m+panelOrder-1)/panelOrder, segs)
	// Largest-remainder share of the panels, at least one per segment.
	total := breaks[segs] - breaks[0]
	per := make([]int, segs)
	type rem struct {
		i int
		r float64
	}
	rems := make([]rem, segs)
	used := 0
	for i := range segs {
		share := float64(P-segs) * (breaks[i+1] - breaks[i]) / total
		per[i] = 1 + int(share)
		used += per[i]
		rems[i] = rem{i, share - math.Floor(share)}
	}
	sort.SliceStable(rems, func(a, b int) bool { return rems[a].r > rems[b].r })
	for j := 0; used < P; j++ {
		per[rems[j%segs].i]++
		used++
	}
	base, extra := m/P, m%P
	rules := map[int][2][]float64{}
	rule := func(k int) ([]float64, []float64) {
		r, ok := rules[k]
		if !ok {
			gx, gw := GaussLegendre(k)
			r = [2][]float64{gx, gw}
			rules[k] = r
		}
		return r[0], r[1]
	}
	x = make([]float64, 0, m)
	w = make([]float64, 0, m)
	panel := 0
	for i := range segs {
		a, b := breaks[i], breaks[i+1]
		for j := range per[i] {
			lo := a + (b-a)*float64(j)/float64(per[i])
			hi := a + (b-a)*float64(j+1)/float64(per[i])
			if j == per[i]-1 {
				hi = b
			}
			k := base
			if panel < extra {
				k++
			}
			panel++
			gx, gw := rule(k)
			half, mid := (hi-lo)/2, (hi+lo)/2
			for l := range gx {
				x = append(x, mid+half*gx[l])
				w = append(w, half*gw[l])
			}
		}
	}
	return x, w
}

// gaussianRange is the half-width L, in standard deviations, of the range
// [μ − Lσ, μ + Lσ] on which the rule for Gaussian inputs integrates. The
// mass left out is 2Φ(−8) = 1.2e-15 (textbook normal tail, from memory;
// checked in the tests against math.Erfc), so for an integrand bounded by
// B the truncation error is at most 2.5e-15·B once the weights are
// normalised. An unbounded integrand loses its tail mass
// ∫_{|z|>8} h φ: for h = z⁴ that is 5e-12 relative (see the tests), for
// a polynomial of degree k about 2φ(8)·8^(k−1).
const gaussianRange = 8

// normalRule returns a rule for E h(X), X ~ N(mu, sd²), with m nodes:
// the composite Gauss–Legendre rule on [μ − 8σ, μ + 8σ] (cut at breaks
// inside it) with the density as weight,
//
//	E h(X) ≈ Σ_j w_j h(x_j),  w_j ∝ g_j φ((x_j − μ)/σ)/σ,  Σ_j w_j = 1,
//
// g_j the Legendre weights. The error is that of compositeLegendre applied
// to h·φ plus the truncation error (gaussianRange).
func normalRule(m int, mu, sd float64, cuts []float64) (x, w []float64) {
	lo, hi := mu-gaussianRange*sd, mu+gaussianRange*sd
	x, w = compositeLegendre(m, breaksIn(lo, hi, cuts))
	for j := range x {
		z := (x[j] - mu) / sd
		w[j] *= math.Exp(-z*z/2) / (sd * math.Sqrt(2*math.Pi))
	}
	normalize(w)
	return x, w
}

// breaksIn returns lo, the cuts strictly inside (lo, hi), and hi: the panel
// boundaries of a composite rule. cuts must be sorted.
func breaksIn(lo, hi float64, cuts []float64) []float64 {
	breaks := []float64{lo}
	for _, c := range cuts {
		if c > lo && c < hi {
			breaks = append(breaks, c)
		}
	}
	return append(breaks, hi)
}

// uniformRule returns a rule for E h(X), X uniform on [lo, hi], with m
// nodes: the composite Gauss–Legendre rule (cut at breaks inside the
// interval), weights divided by hi − lo and normalised to sum to 1.
func uniformRule(m int, lo, hi float64, cuts []float64) (x, w []float64) {
	x, w = compositeLegendre(m, breaksIn(lo, hi, cuts))
	normalize(w)
	return x, w
}

// normalize scales w to sum to 1 (to rounding).
func normalize(w []float64) {
	var s float64
	for _, v := range w {
		s += v
	}
	for j := range w {
		w[j] /= s
	}
}
