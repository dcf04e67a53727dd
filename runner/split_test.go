package runner

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// randomDeviations draws S deviation vectors of length m with a common
// offset, so that both bias² and variance are non-trivial.
func randomDeviations(S, m int, seed uint64) ([][]float64, []float64) {
	rng := rand.New(rand.NewPCG(seed, 1))
	w := make([]float64, m)
	off := make([]float64, m)
	for j := range w {
		w[j] = 0.5 + rng.Float64()
		off[j] = rng.NormFloat64()
	}
	es := make([][]float64, S)
	for s := range es {
		es[s] = make([]float64, m)
		for j := range es[s] {
			es[s][j] = off[j] + 0.3*rng.NormFloat64()
		}
	}
	return es, w
}

func runSplit(es [][]float64, w []float64) *split {
	sp := newSplit(w)
	for _, e := range es {
		sp.add(e)
	}
	for _, e := range es {
		sp.revisit(e)
	}
	return sp
}

// direct computes bias² and variance straight from their definitions.
func direct(es [][]float64, w []float64) (bias2, variance, meanSq float64) {
	S := float64(len(es))
	m := len(w)
	mean := make([]float64, m)
	for _, e := range es {
		for j, v := range e {
			mean[j] += v / S
		}
	}
	for j := range w {
		var v float64
		for _, e := range es {
			v += (e[j] - mean[j]) * (e[j] - mean[j])
			meanSq += w[j] * e[j] * e[j] / S
		}
		v /= S - 1
		variance += w[j] * v
		bias2 += w[j] * (mean[j]*mean[j] - v/S)
	}
	return bias2, variance, meanSq
}

// The decomposition identity, an algebraic fact of sample moments:
// mean over seeds of ‖f_s − f*‖² = ‖f̄ − f*‖² + ((S−1)/S) V̂, i.e. the
// unbiased bias² and variance add up to the mean squared deviation.
func TestSplitIdentity(t *testing.T) {
	for _, S := range []int{2, 3, 10, 100} {
		es, w := randomDeviations(S, 50, uint64(S))
		b2, _, v, _ := runSplit(es, w).result()
		wb2, wv, msq := direct(es, w)
		const tol = 1e-12
		if !scalar.EqualWithinAbsOrRel(b2, wb2, tol, tol) || !scalar.EqualWithinAbsOrRel(v, wv, tol, tol) {
			t.Errorf("S=%d: split = (%v, %v), direct = (%v, %v) (tol %g)", S, b2, v, wb2, wv, tol)
		}
		if got := b2 + v; !scalar.EqualWithinAbsOrRel(got, msq, tol, tol) {
			t.Errorf("S=%d: bias²+variance = %v, mean squared deviation = %v (tol %g)", S, got, msq, tol)
		}
	}
}

// The closed-form leave-one-out values must equal a brute-force jackknife
// that recomputes the estimators on S−1 seeds (definition of the
// jackknife: "The Jackknife, the Bootstrap and Other Resampling Plans",
// SIAM 1982, ch. 2).
func TestSplitJackknife(t *testing.T) {
	const S = 12
	es, w := randomDeviations(S, 7, 42)
	_, b2se, _, vse := runSplit(es, w).result()
	looB := make([]float64, S)
	looV := make([]float64, S)
	for s := range es {
		rest := append(append([][]float64(nil), es[:s]...), es[s+1:]...)
		looB[s], looV[s], _ = direct(rest, w)
	}
	wantB, wantV := jackknifeSE(looB), jackknifeSE(looV)
	const tol = 1e-10
	if !scalar.EqualWithinAbsOrRel(b2se, wantB, tol, tol) || !scalar.EqualWithinAbsOrRel(vse, wantV, tol, tol) {
		t.Errorf("jackknife SE = (%v, %v), brute force = (%v, %v) (tol %g)", b2se, vse, wantB, wantV, tol)
	}
	if !(b2se > 0 && vse > 0) {
		t.Errorf("jackknife SEs (%v, %v) should be positive", b2se, vse)
	}
}

func TestSplitTooFewSeeds(t *testing.T) {
	es, w := randomDeviations(1, 3, 1)
	b2, _, v, _ := runSplit(es, w).result()
	if !math.IsNaN(b2) || !math.IsNaN(v) {
		t.Errorf("one seed: split = (%v, %v), want NaN (no variance from one seed)", b2, v)
	}
}
