package runner

import (
	"fmt"
	"math"
	"testing"
)

// TestNeighboursThroughRunner: k-NN with k = n_train predicts the training
// mean ȳ everywhere. On y = sin(2πx) + ε with x uniform on [−1, 1]
// (E f* = 0, E f*² = 1/2) and Var ε = σ², the y_i are iid with mean 0 and
// variance v = 1/2 + σ², so (calculus; no approximation):
//
//	risk  = ȳ² + 1/2 + σ²,   E risk = v/n + v,
//	bias² = (E ȳ)² + E f*² = 1/2,   variance = Var ȳ = v/n,
//
// each checked within 4 standard errors of the runner's estimates over
// seeds, with the risk measured on the curve source's quadrature. With
// k = 1 every fit interpolates (distinct inputs) and df = n. Kernel ridge
// at λ = 0 with the Laplace kernel (K well conditioned) interpolates too,
// with df = n.
func TestNeighboursThroughRunner(t *testing.T) {
	const n, sd, seeds = 20, 0.3, 400
	knn := mustParse(t, fmt.Sprintf(`
name = "knn-mean"
[data]
source = "curve"
n_train = %d
shape = { kind = "sine", frequency = 1 }
noise = { sd = %g }
[[model]]
family = "nearest-neighbours"
[grid]
param = "neighbours"
values = [1, %d]
[seeds]
count = %d
`, n, sd, n, seeds))
	res, _ := mustRun(t, knn, Options{Workers: 2, CacheDir: t.TempDir()})
	pts := res.Models[0].Points
	v := 0.5 + sd*sd
	one, all := pts[0], pts[1]
	for _, c := range []struct {
		name    string
		got, se float64
		want    float64
	}{
		{"risk", float64(all.Risk.Mean), float64(all.Risk.SE), v/n + v},
		{"bias²", float64(all.Bias2.Mean), float64(all.Bias2.SE), 0.5},
		{"variance", float64(all.Variance.Mean), float64(all.Variance.SE), v / n},
	} {
		if !(math.Abs(c.got-c.want) <= 4*c.se) {
			t.Errorf("k = n: %s = %.5g ± %.2g, want %.5g (4 SE)", c.name, c.got, c.se, c.want)
		}
	}
	t.Logf("risk %v ± %v, bias² %v ± %v, variance %v ± %v", all.Risk.Mean, all.Risk.SE, all.Bias2.Mean, all.Bias2.SE, all.Variance.Mean, all.Variance.SE)
	if one.Interpolating != 1 || one.DF.Mean != n || all.DF.Mean != 1 {
		t.Errorf("k = 1: interpolating %v, df %v; k = n: df %v; want 1, %d, 1", one.Interpolating, one.DF.Mean, all.DF.Mean, n)
	}
	kr := mustParse(t, fmt.Sprintf(`
name = "kernel-interpolant"
[data]
source = "curve"
n_train = %d
shape = { kind = "sine", frequency = 1 }
noise = { sd = %g }
[[model]]
family = "kernel-ridge"
kernel = "laplace"
bandwidth = 0.5
[grid]
param = "lambda"
values = [0, 0.01]
[seeds]
count = 5
`, n, sd))
	res, _ = mustRun(t, kr, Options{Workers: 2, CacheDir: t.TempDir()})
	p := res.Models[0].Points[0]
	if p.Interpolating != 1 || p.DF.Mean != n || len(p.Errors) > 0 {
		t.Errorf("kernel ridge λ = 0: interpolating %v, df %v, errors %v; want 1, %d, none", p.Interpolating, p.DF.Mean, p.Errors, n)
	}
}
