package runner

import (
	"encoding/json"
	"fmt"
	"math"
	"strings"
	"testing"
)

// theorySpec is a least-squares run on linear-gaussian data with a fixed
// truth; extra holds the spectrum, grid and model lines.
func theorySpec(n, dim int, sd float64, seeds int, extra string) string {
	return fmt.Sprintf(`
name = "theory"
[data]
source = "linear-gaussian"
n_train = %d
dim = %d
n_test = 1
noise = { kind = "gaussian", sd = %g }
%s
[seeds]
count = %d
`, n, dim, sd, extra, seeds)
}

// checkTheory compares each point's mean risk with its theory value within
// 4 SE, and checks which points have a theory at all.
func checkTheory(t *testing.T, res *Result, model int, want map[float64]bool) {
	t.Helper()
	for _, pt := range res.Models[model].Points {
		has, listed := want[pt.Value]
		if !listed {
			t.Fatalf("grid value %v not in the test's table", pt.Value)
		}
		if pt.Theory.IsNaN() {
			if has {
				t.Errorf("%s = %v: no theory, want one", res.Param, pt.Value)
			}
			continue
		}
		if !has {
			t.Errorf("%s = %v: theory %v, want none (null)", res.Param, pt.Value, pt.Theory)
			continue
		}
		got, se, th := float64(pt.Risk.Mean), float64(pt.Risk.SE), float64(pt.Theory)
		t.Logf("%s = %v: risk %.5g ± %.2g, theory %.5g (%.1f SE)", res.Param, pt.Value, got, se, th, (got-th)/se)
		if math.Abs(got-th) > 4*se {
			t.Errorf("%s = %v: mean risk %v ± %v, theory %v: more than 4 SE apart", res.Param, pt.Value, got, se, th)
		}
	}
}

// Under-parameterised least squares on a non-isotropic diagonal spectrum
// with features left out (power law Σ_jj = 1/j, d = 30, n = 40): the
// runner's mean exact risk against σ_eff²(1 + p/(n − p − 1)), the mean of
// the inverse Wishart ("Aspects of Multivariate Statistical Theory", Wiley
// 1982, Thm 3.2.12; from memory), with σ_eff² = σ² + Σ_{j>p} Σ_jj β_j².
// p = n − 1 and beyond have no finite mean here: no theory.
func TestTheoryUnderparameterised(t *testing.T) {
	seeds := 3000
	if testing.Short() {
		seeds = 800
	}
	s := mustParse(t, theorySpec(40, 60, 0.5, seeds, `
spectrum = { kind = "power-law", exponent = 1.0 }
signal = { kind = "sphere", norm = 1.5 }
[[model]]
family = "least-squares"
[grid]
param = "features"
values = [3, 12, 30, 38, 39, 40, 41]`))
	res, _ := mustRun(t, s, Options{})
	checkTheory(t, res, 0, map[float64]bool{3: true, 12: true, 30: true, 38: true, 39: false, 40: false, 41: false})
}

// With an intercept or a penalty the formulas do not apply: no theory.
func TestTheoryNoneForInterceptOrRidge(t *testing.T) {
	s := mustParse(t, theorySpec(40, 60, 0.5, 4, `
[[model]]
family = "least-squares"
intercept = true
[[model]]
family = "ridge"
lambda = 0.1
[grid]
param = "features"
values = [10, 50]`))
	res, _ := mustRun(t, s, Options{})
	for _, m := range res.Models {
		for _, pt := range m.Points {
			if !pt.Theory.IsNaN() {
				t.Errorf("%s at p = %v: theory %v, want none", m.Label, pt.Value, pt.Theory)
			}
		}
	}
}

// Minimum-norm interpolation past the threshold, n = 20 ("Two models of
// double descent for weak features", SIAM J. Math. Data Sci. 2(4), 2020,
// arXiv:1903.07571; from memory):
//
//	E R = c ‖β_{1:p}‖² (1 − n/p) + σ_eff² (1 + n/(p − n − 1)),  p ≥ n + 2,
//
// when the included features share one variance c. A spiked spectrum (the
// first 50 variances 2, the other 30 variances 0.5) makes c = 2 for p ≤ 50
// and leaves out features of another variance, so both the scale c and
// σ_eff² are exercised; at p = 60 the included block is not isotropic and
// there is no theory, nor at p = n ± 1.
func TestTheoryMinimumNorm(t *testing.T) {
	seeds := 3000
	if testing.Short() {
		seeds = 800
	}
	s := mustParse(t, theorySpec(20, 80, 0.5, seeds, `
spectrum = { kind = "spiked", spikes = 50, high = 2.0, low = 0.5 }
signal = { kind = "sphere", norm = 1.0 }
[[model]]
family = "least-squares"
[grid]
param = "features"
values = [19, 21, 28, 35, 50, 60]`))
	res, _ := mustRun(t, s, Options{})
	checkTheory(t, res, 0, map[float64]bool{19: false, 21: false, 28: true, 35: true, 50: true, 60: false})
}

// The sample-wise curve on isotropic features, p = d = 20: the same two
// formulas with n the grid value (n = 8, 12: minimum norm; n = 30, 60:
// ordinary least squares; n = 19, 20, 21: none).
func TestTheoryNTrainGrid(t *testing.T) {
	seeds := 3000
	if testing.Short() {
		seeds = 800
	}
	s := mustParse(t, fmt.Sprintf(`
name = "theory-n"
[data]
source = "linear-gaussian"
dim = 20
n_test = 1
noise = { kind = "student-t", df = 5, sd = 0.5 }
signal = { kind = "sphere", norm = 1.0 }
[[model]]
family = "least-squares"
[grid]
param = "n_train"
values = [8, 12, 19, 20, 21, 30, 60]
[seeds]
count = %d
`, seeds))
	res, _ := mustRun(t, s, Options{})
	checkTheory(t, res, 0, map[float64]bool{8: true, 12: true, 19: false, 20: false, 21: false, 30: true, 60: true})
}

// A truth redrawn per seed has no theory here (the formulas hold for one
// fixed β); nor does a file source.
func TestTheoryNoneForPerSeedTruth(t *testing.T) {
	s := mustParse(t, theorySpec(30, 10, 0.5, 4, `
truth = "per-seed"
[[model]]
family = "least-squares"
[grid]
param = "features"
values = [5, 10]`))
	res, _ := mustRun(t, s, Options{})
	for _, pt := range res.Models[0].Points {
		if !pt.Theory.IsNaN() {
			t.Errorf("per-seed truth, p = %v: theory %v, want none", pt.Value, pt.Theory)
		}
	}
}

// olsRisk by hand at small sizes, against values worked on paper from the
// two formulas.
func TestOLSRiskFormula(t *testing.T) {
	sigma := []float64{1, 1, 1, 4}
	beta := []float64{1, 0, 2, 0.5}
	// p = 2, n = 10: σ_eff² = 0.25 + 1·4 + 4·0.25 = 5.25; × (1 + 2/7) = 6.75.
	if got := olsRisk(10, 2, sigma, beta, 0.25); math.Abs(got-6.75) > 1e-12 {
		t.Errorf("olsRisk(10, 2) = %v, want 6.75", got)
	}
	// p = 3, n = 1 (p ≥ n + 2): c = 1, ‖β_{1:3}‖² = 5, σ_eff² = 0.25 + 1 =
	// 1.25; 5·(1 − 1/3) + 1.25·(1 + 1/1) = 10/3 + 2.5.
	if got, want := olsRisk(1, 3, sigma, beta, 0.25), 10.0/3+2.5; math.Abs(got-want) > 1e-12 {
		t.Errorf("olsRisk(1, 3) = %v, want %v", got, want)
	}
	// p = 4 ≥ n + 2 with unequal variances: none. p = n ± 1, n: none.
	for _, c := range [][2]int{{2, 4}, {3, 4}, {4, 3}, {5, 4}, {3, 3}} {
		if got := olsRisk(c[0], c[1], sigma, beta, 0.25); !math.IsNaN(got) {
			t.Errorf("olsRisk(n=%d, p=%d) = %v, want NaN", c[0], c[1], got)
		}
	}
}

// A result.json point without the theory key (written before it existed)
// reads as having no theory, not a theory of 0; null round-trips.
func TestPointTheoryJSON(t *testing.T) {
	var p Point
	if err := json.Unmarshal([]byte(`{"value": 10, "risk": {"mean": 1.5, "se": 0.1}}`), &p); err != nil {
		t.Fatal(err)
	}
	if !p.Theory.IsNaN() || p.Value != 10 || p.Risk.Mean != 1.5 {
		t.Errorf("decoded %+v, want theory NaN, value 10, risk 1.5", p)
	}
	if !p.RiskMCSE.IsNaN() || !p.CondMedian.IsNaN() || !p.VarianceData.Mean.IsNaN() || !p.VarianceModel.SE.IsNaN() {
		t.Errorf("decoded %+v, want the other fields added this cycle undefined too", p)
	}
	b, err := json.Marshal(p)
	if err != nil || !strings.Contains(string(b), `"theory":null`) {
		t.Errorf("encoded %s (%v), want theory null", b, err)
	}
	if err := json.Unmarshal([]byte(`{"value": 10, "theory": 2.25}`), &p); err != nil || p.Theory != 2.25 {
		t.Errorf("theory 2.25 decoded as %v (%v)", p.Theory, err)
	}
}
