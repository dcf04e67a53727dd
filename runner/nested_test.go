package runner

import (
	"fmt"
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"riskgrid/data"
	"riskgrid/models"
	"riskgrid/spec"
)

// nestedDraw fills e[s][m] = μ + a_s + b_sm in R^k with a_s ~ N(0, σd²/k I),
// b_sm ~ N(0, σm²/k I), so that with unit weights E‖a‖² = σd², E‖b‖² = σm²
// and ‖μ‖² = bias².
func nestedDraw(st *data.Stream, S, M, k int, mu []float64, sd, sm float64) [][][]float64 {
	e := make([][][]float64, S)
	for s := range e {
		a := make([]float64, k)
		for j := range a {
			a[j] = sd / math.Sqrt(float64(k)) * st.Normal()
		}
		e[s] = make([][]float64, M)
		for m := range e[s] {
			v := make([]float64, k)
			for j := range v {
				v[j] = mu[j] + a[j] + sm/math.Sqrt(float64(k))*st.Normal()
			}
			e[s][m] = v
		}
	}
	return e
}

// splitOf runs the two passes of the reduction on e.
func splitOf(e [][][]float64, w []float64) (nested, float64) {
	sp := newSplit(w)
	k := len(w)
	means := make([][]float64, len(e))
	var modelVar []float64
	var meanSq float64
	for s, group := range e {
		M := float64(len(group))
		means[s] = make([]float64, k)
		for _, v := range group {
			for j, x := range v {
				means[s][j] += x / M
				meanSq += w[j] * x * x / (M * float64(len(e)))
			}
		}
		var within float64
		for _, v := range group {
			for j, x := range v {
				u := x - means[s][j]
				within += w[j] * u * u
			}
		}
		if len(group) > 1 {
			modelVar = append(modelVar, within/(M-1))
		}
		sp.add(means[s])
	}
	for _, m := range means {
		sp.revisit(m)
	}
	return nestedSplit(sp, modelVar, len(e[0])), meanSq
}

// TestNestedSplitUnbiased checks the variance-component estimators on draws
// with known components: averaged over many replicates, σ̂_m², σ̂_d² and
// bias² match their population values within 4 standard errors, and in
// every replicate bias² + var equals the mean of ⟨e_sm, e_sm⟩ (the
// decomposition identity). Reference: the ANOVA (method-of-moments)
// estimators of a balanced one-way random-effects model are unbiased,
// E[MSW] = σ_m², E[MSB] = M σ_d² + σ_m² (Variance Components, Wiley 1992,
// ch. 3; textbook, from memory).
func TestNestedSplitUnbiased(t *testing.T) {
	const S, M, k, reps = 6, 3, 4, 3000
	const sd, sm = 0.7, 1.3
	mu := []float64{0.3, -0.2, 0.1, 0}
	w := []float64{1, 1, 1, 1}
	st := data.NewStream("nested-split-test", 1)
	var b2, vd, vm []float64
	for range reps {
		ns, meanSq := splitOf(nestedDraw(st, S, M, k, mu, sd, sm), w)
		if d := ns.bias2 + ns.variance - meanSq; math.Abs(d) > 1e-12*meanSq {
			t.Fatalf("bias² + var − mean‖e‖² = %g, want 0 (tol 1e-12 relative)", d)
		}
		if d := ns.data + ns.model - ns.variance; math.Abs(d) > 1e-12*math.Abs(ns.variance) {
			t.Fatalf("data + model − var = %g, want 0", d)
		}
		b2 = append(b2, ns.bias2)
		vd = append(vd, ns.data)
		vm = append(vm, ns.model)
	}
	var mu2 float64
	for _, x := range mu {
		mu2 += x * x
	}
	for _, c := range []struct {
		name string
		xs   []float64
		want float64
	}{{"bias²", b2, mu2}, {"σ_d²", vd, sd * sd}, {"σ_m²", vm, sm * sm}} {
		m, se := MeanSE(c.xs)
		if math.Abs(m-c.want) > 4*se {
			t.Errorf("mean %s over %d replicates = %.4f ± %.4f, want %.4f (4 SE)", c.name, reps, m, se, c.want)
		}
	}
}

// TestNestedSplitJackknife checks the closed-form leave-one-data-seed-out
// values against recomputing the split without each seed (brute force).
func TestNestedSplitJackknife(t *testing.T) {
	const S, M, k = 7, 4, 3
	w := []float64{0.5, 1, 2}
	e := nestedDraw(data.NewStream("nested-jackknife-test", 2), S, M, k, []float64{1, 0, -1}, 0.5, 0.9)
	got, _ := splitOf(e, w)
	var looD, looT []float64
	for i := range e {
		rest := append(append([][][]float64{}, e[:i]...), e[i+1:]...)
		ns, _ := splitOf(rest, w)
		looD = append(looD, ns.data)
		looT = append(looT, ns.variance)
	}
	for _, c := range []struct {
		name      string
		got, want float64
	}{{"data SE", got.dataSE, jackknifeSE(looD)}, {"variance SE", got.varianceSE, jackknifeSE(looT)}} {
		if math.Abs(c.got-c.want) > 1e-12*c.want {
			t.Errorf("%s = %.15g, brute force %.15g", c.name, c.got, c.want)
		}
	}
}

// noisyRidge is a randomized stand-in: ridge on the raw columns, evaluated
// at the test inputs, plus independent N(0, τ²) noise per test input from
// the model's own stream, so that its model variance (the mean over the
// test inputs) is exactly τ².
type noisyRidge struct {
	ridge models.Fitter
	tau   float64
}

func (f noisyRidge) Path(t *models.Train, knob string, values []float64) []models.Fit {
	fits := f.ridge.Path(t, knob, values)
	st := t.Rand("noisy-ridge")
	for i := range fits {
		b := fits[i].Coef
		m, _ := t.Test.Dims()
		pred := make([]float64, m)
		for j := range pred {
			row := t.Test.RawRowView(j)
			for c, bc := range b {
				pred[j] += row[c] * bc
			}
			pred[j] += f.tau * st.Normal()
		}
		fits[i].Coef, fits[i].Pred = nil, pred
	}
	return fits
}

// TestRunModelSeeds runs a randomized family (a planted stand-in whose own
// randomness adds variance τ² per test input) with model seeds through the
// runner: the model part of the variance recovers τ² within 4 SE, the data
// part agrees with the variance of the same ridge fit without the added
// noise, the linear model in the same spec reports a model part of exactly
// 0, and the risk basis is Monte Carlo with its SE reported.
func TestRunModelSeeds(t *testing.T) {
	const tau = 0.3
	defer func(f func(spec.Model) (models.Fitter, error)) { newFitter = f }(newFitter)
	newFitter = func(m spec.Model) (models.Fitter, error) {
		if m.Family == spec.FamilyRandomFeatures {
			return noisyRidge{&models.Ridge{Lambda: m.Lambda}, tau}, nil
		}
		return models.New(m)
	}
	src := func(models int) string {
		return fmt.Sprintf(`
name = "nested"
[data]
source = "linear-gaussian"
n_test = 400
dim = 10
noise = { sd = 0.5 }
[[model]]
family = "ridge"
lambda = 0.1
[[model]]
family = "random-features"
features = 10
lambda = 0.1
[grid]
param = "n_train"
values = [15, 30]
[seeds]
count = 200
models = %d
`, models)
	}
	res, _ := mustRun(t, mustParse(t, src(3)), Options{Workers: 2})
	if res.RiskBasis != RiskMonteCarlo || res.ModelSeeds != 3 {
		t.Fatalf("risk basis %q, model seeds %d; want %q, 3", res.RiskBasis, res.ModelSeeds, RiskMonteCarlo)
	}
	for vi, p := range res.Models[1].Points {
		vm := p.VarianceModel
		if math.Abs(float64(vm.Mean)-tau*tau) > 4*float64(vm.SE) {
			t.Errorf("n=%g: model variance %v ± %v, want τ² = %v (4 SE)", p.Value, vm.Mean, vm.SE, tau*tau)
		}
		lin := res.Models[0].Points[vi]
		if lin.VarianceModel.Mean != 0 || lin.VarianceModel.SE != 0 {
			t.Errorf("n=%g: ridge model variance %v ± %v, want exactly 0", p.Value, lin.VarianceModel.Mean, lin.VarianceModel.SE)
		}
		// The stand-in's mean over model seeds is the ridge fit, so its
		// data part estimates the ridge variance on the same draws.
		d, se := float64(p.VarianceData.Mean-lin.Variance.Mean), float64(p.VarianceData.SE)
		if math.Abs(d) > 4*se {
			t.Errorf("n=%g: data variance %v, ridge variance %v: differ by %g > 4 SE (%g)", p.Value, p.VarianceData.Mean, lin.Variance.Mean, d, se)
		}
		if sum := p.Bias2.Mean + p.Variance.Mean + p.Noise.Mean; math.Abs(float64(sum-p.Risk.Mean)) > 1e-12*float64(p.Risk.Mean) {
			t.Errorf("n=%g: bias² + var + noise = %v, mean risk %v", p.Value, sum, p.Risk.Mean)
		}
		if p.RiskMCSE.IsNaN() || p.RiskMCSE <= 0 {
			t.Errorf("n=%g: Monte Carlo SE %v, want > 0", p.Value, p.RiskMCSE)
		}
	}
}

// TestRunTestInputsMatchExact checks the test-input basis against the exact
// one: least squares on the same draws, measured exactly (alone in its spec)
// and on 4000 Monte Carlo test inputs (beside a non-linear family), agree
// within 4 Monte Carlo SEs at every grid point, under a fixed truth and
// under a per-seed truth (each seed's f* evaluated at the test inputs).
func TestRunTestInputsMatchExact(t *testing.T) {
	for _, truth := range []string{spec.TruthFixed, spec.TruthPerSeed} {
		t.Run(truth, func(t *testing.T) { testInputsMatchExact(t, truth) })
	}
}

func testInputsMatchExact(t *testing.T, truth string) {
	defer func(f func(spec.Model) (models.Fitter, error)) { newFitter = f }(newFitter)
	newFitter = func(m spec.Model) (models.Fitter, error) {
		if m.Family == spec.FamilyRandomFeatures {
			return noisyRidge{&models.Ridge{Lambda: m.Lambda}, 0.1}, nil
		}
		return models.New(m)
	}
	base := `
name = "basis"
[data]
source = "linear-gaussian"
n_train = 20
n_test = 4000
dim = 8
noise = { sd = 0.5 }
truth = "%s"
[[model]]
family = "least-squares"
%s
[grid]
param = "features"
values = [2, 5, 8]
[seeds]
count = 20
`
	exact, _ := mustRun(t, mustParse(t, fmt.Sprintf(base, truth, "")), Options{Workers: 2})
	mc, _ := mustRun(t, mustParse(t, fmt.Sprintf(base, truth, "[[model]]\nfamily = \"random-features\"\n")), Options{Workers: 2})
	if exact.RiskBasis != RiskExact || mc.RiskBasis != RiskMonteCarlo {
		t.Fatalf("bases %q and %q, want exact and monte-carlo", exact.RiskBasis, mc.RiskBasis)
	}
	for i, p := range exact.Models[0].Points {
		q := mc.Models[0].Points[i]
		if d := float64(q.Risk.Mean - p.Risk.Mean); math.Abs(d) > 4*float64(q.RiskMCSE) {
			t.Errorf("p=%g: Monte Carlo risk %v, exact %v: differ by %g > 4 MC SE (%v)", p.Value, q.Risk.Mean, p.Risk.Mean, d, q.RiskMCSE)
		}
	}
}

// TestSumsMergeNested checks the one-pass split of merged sums against the
// full run under model seeds: two shards over disjoint data seeds give the
// full run's bias² and total variance.
func TestSumsMergeNested(t *testing.T) {
	defer func(f func(spec.Model) (models.Fitter, error)) { newFitter = f }(newFitter)
	newFitter = func(m spec.Model) (models.Fitter, error) {
		if m.Family == spec.FamilyRandomFeatures {
			return noisyRidge{&models.Ridge{Lambda: m.Lambda}, 0.4}, nil
		}
		return models.New(m)
	}
	src := func(count, start int) string {
		return fmt.Sprintf(`
name = "merge"
[data]
source = "linear-gaussian"
n_train = 12
n_test = 50
dim = 6
noise = { sd = 0.5 }
[[model]]
family = "random-features"
features = 6
[grid]
param = "lambda"
values = [0.01, 1]
[seeds]
count = %d
start = %d
models = 3
`, count, start)
	}
	full := runSums(t, src(12, 1))
	a, b := runSums(t, src(5, 1)), runSums(t, src(7, 6))
	if err := a.Sums.Merge(b.Sums); err != nil {
		t.Fatal(err)
	}
	for pi, ps := range a.Sums.Models[0].Points {
		want := full.Result.Models[0].Points[pi]
		b2, v := ps.Split(a.Sums.Weights, a.Sums.ModelSeeds)
		const tol = 1e-9 // one-pass cancellation, as in TestSumsMergeShards
		if !scalar.EqualWithinAbsOrRel(b2, float64(want.Bias2.Mean), tol, tol) ||
			!scalar.EqualWithinAbsOrRel(v, float64(want.Variance.Mean), tol, tol) {
			t.Errorf("λ=%v: merged bias² %v, variance %v; full run %v, %v", ps.Value, b2, v, want.Bias2.Mean, want.Variance.Mean)
		}
	}
}
