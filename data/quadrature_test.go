package data

import (
	"fmt"
	"math"
	"sort"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"
)

// TestGaussLegendreFivePoint compares the 5-point rule with its closed
// form (textbook: the zeros of P_5 = (63x⁵ − 70x³ + 15x)/8),
//
//	x = 0, ±(1/3)√(5 − 2√(10/7)), ±(1/3)√(5 + 2√(10/7)),
//	w = 128/225, (322 + 13√70)/900, (322 − 13√70)/900,
//
// and with the decimals of "Handbook of Mathematical Functions", NBS 1964,
// Table 25.4 (n = 5; the decimals are quoted from memory, and agree with
// the closed form to the digits given).
func TestGaussLegendreFivePoint(t *testing.T) {
	x, w := GaussLegendre(5)
	r := math.Sqrt(10.0 / 7)
	s70 := math.Sqrt(70)
	closedX := []float64{-math.Sqrt(5+2*r) / 3, -math.Sqrt(5-2*r) / 3, 0, math.Sqrt(5-2*r) / 3, math.Sqrt(5+2*r) / 3}
	closedW := []float64{(322 - 13*s70) / 900, (322 + 13*s70) / 900, 128.0 / 225, (322 + 13*s70) / 900, (322 - 13*s70) / 900}
	// A&S Table 25.4, n = 5 (from memory).
	tableX := []float64{-0.906179845938664, -0.538469310105683, 0, 0.538469310105683, 0.906179845938664}
	tableW := []float64{0.236926885056189, 0.478628670499366, 0.568888888888889, 0.478628670499366, 0.236926885056189}
	for i := range x {
		// Closed forms: a handful of roundings each.
		if !scalar.EqualWithinAbs(x[i], closedX[i], 4e-16) {
			t.Errorf("GaussLegendre(5) x[%d] = %.17g, want %.17g (tol 4e-16)", i, x[i], closedX[i])
		}
		if !scalar.EqualWithinAbs(w[i], closedW[i], 4e-16) {
			t.Errorf("GaussLegendre(5) w[%d] = %.17g, want %.17g (tol 4e-16)", i, w[i], closedW[i])
		}
		// The table gives 15 decimals: half a unit in the last place.
		if !scalar.EqualWithinAbs(x[i], tableX[i], 5e-16+1e-15/2) || !scalar.EqualWithinAbs(w[i], tableW[i], 5e-16+1e-15/2) {
			t.Errorf("GaussLegendre(5)[%d] = (%.15f, %.15f), want table (%.15f, %.15f)", i, x[i], w[i], tableX[i], tableW[i])
		}
	}
}

// TestGaussLegendreGolubWelsch compares the Newton nodes and weights with
// an independent method: the nodes are the eigenvalues of the symmetric
// tridiagonal Jacobi matrix of the Legendre recurrence, off-diagonal
// β_k = k/√(4k² − 1), and w_i = 2·v_{1i}² with v_i the unit eigenvector
// ("Calculation of Gauss quadrature rules", Mathematics of Computation
// 23(106), 1969), computed with gonum's symmetric eigensolver (a reference
// library). The eigensolver's accuracy is a few ulps of ‖J‖ ≤ 1, hence the
// tolerance.
func TestGaussLegendreGolubWelsch(t *testing.T) {
	for _, n := range []int{1, 2, 5, 16, 17, 40, 100} {
		x, w := GaussLegendre(n)
		J := mat.NewSymDense(n, nil)
		for k := 1; k < n; k++ {
			fk := float64(k)
			J.SetSym(k-1, k, fk/math.Sqrt(4*fk*fk-1))
		}
		var es mat.EigenSym
		if !es.Factorize(J, true) {
			t.Fatalf("n = %d: EigenSym failed", n)
		}
		vals := es.Values(nil)
		var vecs mat.Dense
		es.VectorsTo(&vecs)
		type node struct{ x, w float64 }
		ref := make([]node, n)
		for i := range n {
			v := vecs.At(0, i)
			ref[i] = node{vals[i], 2 * v * v}
		}
		sort.Slice(ref, func(a, b int) bool { return ref[a].x < ref[b].x })
		tol := 1e-14
		for i := range n {
			if !scalar.EqualWithinAbs(x[i], ref[i].x, tol) || !scalar.EqualWithinAbs(w[i], ref[i].w, tol) {
				t.Errorf("n = %d, node %d: Newton (%.17g, %.17g), Golub–Welsch (%.17g, %.17g) (tol %g)", n, i, x[i], w[i], ref[i].x, ref[i].w, tol)
			}
		}
	}
}

// TestGaussLegendreDegree checks the defining property: the n-point rule
// integrates x^j exactly for j ≤ 2n−1 (∫_{−1}^{1} x^j dx = 2/(j+1) for even
// j, 0 for odd j), and misses x^{2n} by exactly
//
//	2^{2n+1} (n!)⁴ / ((2n+1) ((2n)!)²)
//
// (the error term of "Handbook of Mathematical Functions", NBS 1964,
// 25.4.30, with h^{(2n)} = (2n)!). Both are textbook identities.
func TestGaussLegendreDegree(t *testing.T) {
	for n := 1; n <= 12; n++ {
		x, w := GaussLegendre(n)
		moment := func(j int) float64 {
			var s float64
			for i := range x {
				s += w[i] * math.Pow(x[i], float64(j))
			}
			return s
		}
		for j := 0; j <= 2*n-1; j++ {
			want := 0.0
			if j%2 == 0 {
				want = 2 / float64(j+1)
			}
			if got := moment(j); !scalar.EqualWithinAbs(got, want, 1e-14) {
				t.Errorf("n = %d: rule(x^%d) = %.17g, want %.17g (tol 1e-14)", n, j, got, want)
			}
		}
		nf := fact(n)
		miss := math.Pow(2, float64(2*n+1)) * math.Pow(nf, 4) / (float64(2*n+1) * math.Pow(fact(2*n), 2))
		got := 2/float64(2*n+1) - moment(2*n)
		if !scalar.EqualWithinAbsOrRel(got, miss, 1e-14, 1e-9) {
			t.Errorf("n = %d: ∫x^%d − rule = %.17g, want %.17g", n, 2*n, got, miss)
		}
	}
}

func fact(n int) float64 {
	f := 1.0
	for k := 2; k <= n; k++ {
		f *= float64(k)
	}
	return f
}

// TestCompositeLegendre checks the composite rules on closed forms
// (textbook calculus): ∫_a^b sin x dx = cos a − cos b; a step with its
// jump at a break is integrated exactly; the uniform rule's weights sum
// to 1; and nodes are ascending, inside the interval, one panel cut at
// the break.
func TestCompositeLegendre(t *testing.T) {
	tests := []struct {
		m      int
		breaks []float64
	}{
		{2048, []float64{-1, 1}},
		{1000, []float64{0, 10}},
		{33, []float64{-3, 0.3, 5}},
		{2, []float64{0, 0.5, 1}},
		{16, []float64{0, 1}},
	}
	for _, tc := range tests {
		name := fmt.Sprintf("m=%d breaks=%v", tc.m, tc.breaks)
		x, w := compositeLegendre(tc.m, tc.breaks)
		if len(x) != tc.m || len(w) != tc.m {
			t.Errorf("%s: %d nodes, %d weights, want %d", name, len(x), len(w), tc.m)
			continue
		}
		a, b := tc.breaks[0], tc.breaks[len(tc.breaks)-1]
		if !sort.Float64sAreSorted(x) || x[0] <= a || x[len(x)-1] >= b {
			t.Errorf("%s: nodes not ascending inside (%g, %g)", name, a, b)
		}
		var sum, sin float64
		for j := range x {
			sum += w[j]
			sin += w[j] * math.Sin(x[j])
		}
		// Naive summation of m terms: relative error up to m·ε.
		if tol := float64(tc.m) * 0x1p-52; !scalar.EqualWithinRel(sum, b-a, tol) {
			t.Errorf("%s: Σw = %.17g, want %g (rel tol %g)", name, sum, b-a, tol)
		}
		want := math.Cos(a) - math.Cos(b)
		// The coarsest case has 1 node per panel (midpoint rule, panel
		// width 0.5: error ≤ (b−a)h²/24 max|sin| ≈ 0.01); otherwise ≥ 8
		// nodes per panel and the error is rounding.
		tol := 1e-13
		if tc.m == 2 {
			tol = 0.011
		}
		if !scalar.EqualWithinAbs(sin, want, tol) {
			t.Errorf("%s: rule(sin) = %.17g, want cos a − cos b = %.17g (tol %g)", name, sin, want, tol)
		}
		// A step at each interior break: exact.
		if len(tc.breaks) == 3 {
			c := tc.breaks[1]
			var step float64
			for j := range x {
				if x[j] >= c {
					step += w[j]
				}
			}
			if !scalar.EqualWithinAbs(step, b-c, 1e-14) {
				t.Errorf("%s: rule(1{x ≥ %g}) = %.17g, want %g", name, c, step, b-c)
			}
		}
	}
}

// TestNormalRule checks the rule for Gaussian inputs against the
// characteristic function E cos(ωX) = cos(ωμ) e^{−ω²σ²/2}, the moments
// E(X−μ)² = σ², E(X−μ)⁴ = 3σ⁴ and P(X < c) = Φ((c−μ)/σ) with a cut at c
// (textbook normal identities; Φ from math.Erfc), and the truncation
// mass 2Φ(−8) ≈ 1.2e-15 that the doc comment of gaussianRange states.
// The fourth moment is the one whose truncation shows: the rule computes
// E[Z⁴ | |Z| ≤ L] = (3 − 2(φ(L)(L³ + 3L) + 3Q(L)))/(1 − 2Q(L)), Q = 1 − Φ
// (integration by parts, textbook), 5e-12 below 3 at L = 8.
func TestNormalRule(t *testing.T) {
	const mu, sd, c = 0.7, 1.3, 1.1
	x, w := normalRule(2048, mu, sd, []float64{c})
	var s, m2, m4, cos3, below float64
	for j := range x {
		s += w[j]
		d := x[j] - mu
		m2 += w[j] * d * d
		m4 += w[j] * d * d * d * d
		cos3 += w[j] * math.Cos(3*x[j])
		if x[j] < c {
			below += w[j]
		}
	}
	phi := 0.5 * math.Erfc(-(c-mu)/sd/math.Sqrt2)
	const L = gaussianRange
	q := 0.5 * math.Erfc(L/math.Sqrt2)
	z4 := (3 - 2*(math.Exp(-L*L/2)/math.Sqrt(2*math.Pi)*(L*L*L+3*L)+3*q)) / (1 - 2*q)
	for _, tc := range []struct {
		what      string
		got, want float64
	}{
		{"Σw", s, 1},
		{"E(X−μ)²", m2, sd * sd},
		{"E(X−μ)⁴", m4, sd * sd * sd * sd * z4},
		{"E cos 3X", cos3, math.Cos(3*mu) * math.Exp(-9*sd*sd/2)},
		{"P(X < c)", below, phi},
	} {
		if !scalar.EqualWithinAbsOrRel(tc.got, tc.want, 1e-13, 1e-13) {
			t.Errorf("normal rule: %s = %.17g, want %.17g (tol 1e-13)", tc.what, tc.got, tc.want)
		}
	}
	if tail := math.Erfc(gaussianRange / math.Sqrt2); tail > 1.3e-15 || tail < 1.2e-15 {
		t.Errorf("2Φ(−%d) = %g, the doc comment says 1.2e-15", gaussianRange, tail)
	}
}

// TestJumpBound checks the bound the README states for a fit that jumps
// inside a panel: the cumulative Gauss weights separate the distribution
// function, Σ_{x_j < c} w_j ≤ F(c) ≤ Σ_{x_j ≤ c} w_j (the Chebyshev–Markov–
// Stieltjes separation theorem, "Orthogonal Polynomials", AMS Colloquium
// Publications 23, 1939, §3.41; from memory), so a unit jump anywhere is
// integrated to within the largest weight — 0.0947 of a panel for 16 nodes
// (half the largest 16-point weight 0.18945, A&S Table 25.4, from memory).
func TestJumpBound(t *testing.T) {
	_, g := GaussLegendre(panelOrder)
	if got := floatsMax(g) / 2; !scalar.EqualWithinAbs(got, 0.0947, 5e-5) {
		t.Errorf("largest 16-point weight / 2 = %v, want 0.0947", got)
	}
	x, w := uniformRule(160, 0, 1, nil) // 10 panels of 16 nodes
	wmax := floatsMax(w)
	var worst float64
	for k := range 10000 {
		c := (float64(k) + 0.5) / 10000
		var above float64
		for j := range x {
			if x[j] >= c {
				above += w[j]
			}
		}
		worst = math.Max(worst, math.Abs(above-(1-c)))
	}
	if worst > wmax*(1+1e-12) {
		t.Errorf("largest step error %v exceeds the largest weight %v", worst, wmax)
	}
	if worst < wmax/4 {
		t.Errorf("largest step error %v is far below the bound %v: the test does not probe it", worst, wmax)
	}
}

func floatsMax(v []float64) float64 {
	m := math.Inf(-1)
	for _, x := range v {
		m = math.Max(m, x)
	}
	return m
}
