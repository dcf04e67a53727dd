package runner

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	"riskgrid/models"
	"riskgrid/spec"
)

func mustParse(t testing.TB, src string) *spec.Spec {
	t.Helper()
	s, err := spec.Parse("test.toml", []byte(src))
	if err != nil {
		t.Fatalf("spec.Parse: %v", err)
	}
	return s
}

func mustRun(t testing.TB, s *spec.Spec, opt Options) (*Result, *Timing) {
	t.Helper()
	out, err := Run(context.Background(), s, opt)
	if err != nil {
		t.Fatalf("Run: %v", err)
	}
	return out.Result, out.Timing
}

func smallSpec(seeds int, values string) string {
	return fmt.Sprintf(`
name = "small"
[data]
source = "linear-gaussian"
n_train = 30
n_test = 50
dim = 60
noise = { kind = "gaussian", sd = 0.5 }
[[model]]
family = "least-squares"
[[model]]
family = "ridge"
lambda = 0.05
[grid]
param = "features"
values = [%s]
[seeds]
count = %d
`, values, seeds)
}

// Exact finite-sample excess risk of OLS under Gaussian design, n > p+1:
//
//	E[(b̂−β)ᵀΣ(b̂−β)] = σ² p / (n − p − 1),
//
// from the mean of the inverse Wishart distribution ("Aspects of
// Multivariate Statistical Theory", Wiley 1982, Thm 3.2.12; from memory).
// With Σ = I the excess risk is independent of β.
func TestOLSInverseWishart(t *testing.T) {
	const n, p, sd = 20, 8, 0.5
	seeds := 4000
	if testing.Short() {
		seeds = 1000
	}
	s := mustParse(t, fmt.Sprintf(`
name = "ols-wishart"
[data]
source = "linear-gaussian"
n_train = %d
dim = %d
n_test = 1
noise = { kind = "gaussian", sd = %g }
[[model]]
family = "least-squares"
[grid]
param = "features"
values = [%d]
[seeds]
count = %d
`, n, p, sd, p, seeds))
	res, _ := mustRun(t, s, Options{})
	pt := res.Models[0].Points[0]
	excess := float64(pt.Risk.Mean) - sd*sd
	want := sd * sd * p / (n - p - 1)
	if se := float64(pt.Risk.SE); math.Abs(excess-want) > 4*se {
		t.Errorf("OLS excess risk n=%d p=%d = %v ± %v, want %v (4 SE)", n, p, excess, se, want)
	}
	// Nothing is left out (p = d), so the bias is zero and the whole excess
	// risk is variance; the estimator may stray below zero by its error.
	if b2, se := float64(pt.Bias2.Mean), float64(pt.Bias2.SE); math.Abs(b2) > 4*se+1e-12 {
		t.Errorf("bias² = %v ± %v, want 0 within 4 SE", b2, se)
	}
}

// Ridgeless least squares on isotropic features ("Surprises in
// high-dimensional ridgeless least squares interpolation", Ann. Statist.
// 50(2), 2022, arXiv:1903.08560, Thm 1/2): with γ = p/n, signal ‖β‖ = r,
// noise σ², the excess risk tends to
//
//	σ² γ/(1−γ)              for γ < 1,
//	r²(1 − 1/γ) + σ²/(γ−1)  for γ > 1.
//
// At finite n the exact means differ from these limits by O(1/n): for
// γ < 1 the mean is σ² p/(n−p−1) (inverse Wishart, above); for γ > 1 the
// variance term is σ² n/(p−n−1) (the same fact for XXᵀ) while the bias
// term r²(1 − n/p) is exact (the projection onto a uniformly random
// n-dimensional subspace). The allowance is that difference, plus 4 SE.
//
// The theorem fits all the features the truth uses. Here β lies in the
// first 100 of 800 coordinates and every grid value is p ≥ 100, so no
// signal is left out; for a fixed β the limits still hold, as the row
// space of an isotropic Gaussian design is uniformly distributed.
func TestRidgelessAsymptotics(t *testing.T) {
	if testing.Short() {
		t.Skip("sweep at n = 400")
	}
	const n, sd, r = 400, 0.5, 1.0
	s := mustParse(t, fmt.Sprintf(`
name = "ridgeless"
[data]
source = "linear-gaussian"
n_train = %d
dim = 800
n_test = 1
noise = { kind = "gaussian", sd = %g }
signal = { kind = "top", top = 100, norm = %g }
[[model]]
family = "least-squares"
[grid]
param = "features"
values = [100, 200, 300, 520, 600, 800]
[seeds]
count = 40
`, n, sd, r))
	res, _ := mustRun(t, s, Options{})
	for _, pt := range res.Models[0].Points {
		p := pt.Value
		g := p / n
		var limit, finite float64
		if g < 1 {
			limit = sd * sd * g / (1 - g)
			finite = sd * sd * p / (n - p - 1)
		} else {
			limit = r*r*(1-1/g) + sd*sd/(g-1)
			finite = r*r*(1-n/p) + sd*sd*n/(p-n-1)
		}
		excess := float64(pt.Risk.Mean) - sd*sd
		allow := math.Abs(finite-limit) + 4*float64(pt.Risk.SE)
		if math.Abs(excess-limit) > allow {
			t.Errorf("γ=%.2f: excess risk %v ± %v, limit %v (allowance %v)", g, excess, pt.Risk.SE, limit, allow)
		}
	}
}

// bias² + variance + noise must equal the mean risk (the decomposition
// identity) at every point of a run, to rounding.
func TestRunSumIsRisk(t *testing.T) {
	res, _ := mustRun(t, mustParse(t, smallSpec(20, "5, 10, 29, 30, 31, 45, 60")), Options{})
	for _, m := range res.Models {
		for _, pt := range m.Points {
			if d := math.Abs(float64(pt.Sum - pt.Risk.Mean)); d > 1e-12*float64(pt.Risk.Mean) {
				t.Errorf("%s p=%v: sum %v ≠ risk %v", m.Label, pt.Value, pt.Sum, pt.Risk.Mean)
			}
		}
	}
}

func resultJSON(t *testing.T, res *Result) []byte {
	t.Helper()
	b, err := json.MarshalIndent(res, "", " ")
	if err != nil {
		t.Fatal(err)
	}
	return b
}

func TestRunDeterministicAcrossWorkers(t *testing.T) {
	s := mustParse(t, smallSpec(16, "5, 20, 30, 40, 60"))
	r1, _ := mustRun(t, s, Options{Workers: 1})
	r2, _ := mustRun(t, s, Options{Workers: 2})
	r8, _ := mustRun(t, s, Options{Workers: 8})
	b1, b2, b8 := resultJSON(t, r1), resultJSON(t, r2), resultJSON(t, r8)
	if !bytes.Equal(b1, b2) || !bytes.Equal(b1, b8) {
		t.Errorf("result.json differs between -j 1, -j 2 and -j 8")
	}
}

// TestRunCreated checks that the Result carries the run's start time for
// the tables, equal to Timing.Created, and keeps it out of result.json.
func TestRunCreated(t *testing.T) {
	res, tm := mustRun(t, mustParse(t, smallSpec(2, "5")), Options{})
	if res.Created == "" || res.Created != tm.Created {
		t.Fatalf("Result.Created = %q, want Timing.Created %q", res.Created, tm.Created)
	}
	if _, err := time.Parse(time.RFC3339, res.Created); err != nil {
		t.Errorf("Created %q is not RFC 3339: %v", res.Created, err)
	}
	if b := resultJSON(t, res); bytes.Contains(b, []byte(res.Created)) {
		t.Errorf("result.json holds the run's date %s", res.Created)
	}
}

func TestRunCache(t *testing.T) {
	dir := t.TempDir()
	opt := Options{Workers: 2, CacheDir: dir}
	s := mustParse(t, smallSpec(6, "5, 20, 40"))
	first, tm := mustRun(t, s, opt)
	if tm.Computed != 2*3*6 || tm.Cached != 0 {
		t.Fatalf("first run: computed %d, cached %d; want 36, 0", tm.Computed, tm.Cached)
	}
	again, tm := mustRun(t, s, opt)
	if tm.Computed != 0 || tm.Cached != 36 {
		t.Errorf("second run: computed %d, cached %d; want 0, 36", tm.Computed, tm.Cached)
	}
	if !bytes.Equal(resultJSON(t, first), resultJSON(t, again)) {
		t.Errorf("cached result differs from the computed one")
	}
	// More seeds and one more grid value: only the new cells are fitted.
	_, tm = mustRun(t, mustParse(t, smallSpec(8, "5, 20, 30, 40")), opt)
	if want := 2*4*8 - 36; tm.Computed != want {
		t.Errorf("grown run computed %d cells, want %d", tm.Computed, want)
	}
	// --fresh recomputes everything, and gives the same numbers.
	fresh, tm := mustRun(t, s, Options{Workers: 2, CacheDir: dir, Fresh: true})
	if tm.Computed != 36 {
		t.Errorf("fresh run computed %d cells, want 36", tm.Computed)
	}
	if !bytes.Equal(resultJSON(t, first), resultJSON(t, fresh)) {
		t.Errorf("fresh result differs from the first one")
	}
	// ... and keeps the cells of the grown spec that it did not refit.
	if _, tm = mustRun(t, mustParse(t, smallSpec(8, "5, 20, 30, 40")), opt); tm.Computed != 0 {
		t.Errorf("after a fresh run of a subset, the grown spec recomputed %d cells, want 0", tm.Computed)
	}
}

// TestRunProgress checks the Progress callback: one call per seed, counts
// that never exceed the total, and a last state that accounts for every cell
// (fitted on the first run, from the cache on the second).
func TestRunProgress(t *testing.T) {
	dir := t.TempDir()
	s := mustParse(t, smallSpec(5, "5, 20, 40"))
	const total = 2 * 3 * 5
	for _, want := range []Progress{{Computed: total, Total: total}, {Cached: total, Total: total}} {
		var mu sync.Mutex
		var calls []Progress
		opt := Options{Workers: 3, CacheDir: dir, Progress: func(p Progress) {
			mu.Lock()
			calls = append(calls, p)
			mu.Unlock()
		}}
		_, tm := mustRun(t, s, opt)
		if len(calls) != 5 {
			t.Errorf("Progress called %d times, want once per seed (5)", len(calls))
		}
		var last Progress
		for _, p := range calls {
			if p.Total != total || p.Computed+p.Cached > total {
				t.Errorf("Progress(%+v): total %d, want at most %d cells done", p, total, total)
			}
			// Concurrent calls may arrive out of order: keep the furthest.
			if p.Computed+p.Cached > last.Computed+last.Cached {
				last = p
			}
		}
		if last != want || tm.Computed != want.Computed || tm.Cached != want.Cached {
			t.Errorf("last Progress %+v, Timing %d computed %d cached; want %+v", last, tm.Computed, tm.Cached, want)
		}
	}
}

func TestRunCorruptedCacheIsRecomputed(t *testing.T) {
	dir := t.TempDir()
	s := mustParse(t, smallSpec(4, "10, 40"))
	want, _ := mustRun(t, s, Options{CacheDir: dir})
	var files []string
	filepath.WalkDir(dir, func(p string, d os.DirEntry, err error) error {
		if err == nil && !d.IsDir() {
			files = append(files, p)
		}
		return nil
	})
	if len(files) != 4 {
		t.Fatalf("cache holds %d files, want one per seed (4)", len(files))
	}
	// Flip a byte in one entry and truncate another.
	b, _ := os.ReadFile(files[0])
	b[len(b)-10] ^= 0xff
	os.WriteFile(files[0], b, 0o644)
	b, _ = os.ReadFile(files[1])
	os.WriteFile(files[1], b[:len(b)/2], 0o644)
	var log strings.Builder
	got, tm := mustRun(t, s, Options{CacheDir: dir, Log: &log})
	if tm.Computed != 2*2*2 {
		t.Errorf("computed %d cells after corrupting 2 of 4 seeds, want 8", tm.Computed)
	}
	if strings.Count(log.String(), "recomputing") != 2 {
		t.Errorf("log = %q, want two warnings", log.String())
	}
	if !bytes.Equal(resultJSON(t, want), resultJSON(t, got)) {
		t.Errorf("result after recomputing corrupted entries differs")
	}
}

type panicky struct{ models.Fitter }

func (p panicky) Path(t *models.Train, knob string, values []float64) []models.Fit {
	if t.X.At(0, 0) > 0 {
		panic("planted failure")
	}
	return p.Fitter.Path(t, knob, values)
}

func TestRunPanicBecomesCellError(t *testing.T) {
	defer func(f func(spec.Model) (models.Fitter, error)) { newFitter = f }(newFitter)
	newFitter = func(m spec.Model) (models.Fitter, error) {
		f, err := models.New(m)
		return panicky{f}, err
	}
	res, _ := mustRun(t, mustParse(t, smallSpec(10, "10")), Options{})
	pt := res.Models[0].Points[0]
	if len(pt.Errors) == 0 || len(pt.Errors) == 10 {
		t.Fatalf("%d of 10 seeds failed; want some (those whose first input is positive)", len(pt.Errors))
	}
	if pt.Seeds+len(pt.Errors) != 10 || !strings.Contains(pt.Errors[0].Msg, "planted failure") {
		t.Errorf("seeds %d, errors %v", pt.Seeds, pt.Errors)
	}
}

func TestRunCancelKeepsFinishedSeeds(t *testing.T) {
	dir := t.TempDir()
	s := mustParse(t, smallSpec(50, "10, 40"))
	ctx, cancel := context.WithCancel(context.Background())
	defer func(f func(spec.Model) (models.Fitter, error)) { newFitter = f }(newFitter)
	var calls int
	newFitter = func(m spec.Model) (models.Fitter, error) {
		f, err := models.New(m)
		return cancelAfter{f, &calls, 10, cancel}, err
	}
	_, err := Run(ctx, s, Options{Workers: 1, CacheDir: dir})
	if !errors.Is(err, context.Canceled) {
		t.Fatalf("Run after cancel: err = %v, want context.Canceled", err)
	}
	newFitter = models.New
	_, tm := mustRun(t, s, Options{Workers: 1, CacheDir: dir})
	if tm.Cached == 0 || tm.Computed == 0 {
		t.Errorf("after a cancelled run: computed %d, cached %d; want both > 0", tm.Computed, tm.Cached)
	}
}

type cancelAfter struct {
	models.Fitter
	calls  *int
	after  int
	cancel func()
}

func (c cancelAfter) Path(t *models.Train, knob string, values []float64) []models.Fit {
	if *c.calls++; *c.calls == c.after {
		c.cancel()
	}
	return c.Fitter.Path(t, knob, values)
}

// Omitted features under Gaussian design: with Σ = I, fitting OLS on the
// first p of d coordinates leaves X_o β_o + ε as noise independent of X_p,
// of variance σ² + ‖β_o‖², so by the inverse-Wishart mean (as in
// TestOLSInverseWishart) the expected excess risk given β is
//
//	‖β_o‖² + (σ² + ‖β_o‖²) p/(n − p − 1).
//
// With β uniform on the sphere of radius r, E‖β_o‖² = r²(d − p)/d (each
// coordinate carries r²/d by symmetry). With the truth redrawn per seed
// the run averages over β as well, so the mean risk must match the
// expectation over β; with a fixed truth, the formula at that β.
func TestOmittedFeaturesTruthModes(t *testing.T) {
	const n, d, sd, r = 60, 40, 0.5, 1.0
	for _, mode := range []string{spec.TruthFixed, spec.TruthPerSeed} {
		s := mustParse(t, fmt.Sprintf(`
name = "omitted"
[data]
source = "linear-gaussian"
n_train = %d
dim = %d
n_test = 1
truth = %q
noise = { kind = "gaussian", sd = %g }
signal = { kind = "sphere", norm = %g }
[[model]]
family = "least-squares"
[grid]
param = "features"
values = [10, 25]
[seeds]
count = 3000
`, n, d, mode, sd, r))
		res, _ := mustRun(t, s, Options{})
		if res.TruthPerSeed != (mode == spec.TruthPerSeed) {
			t.Errorf("%s: TruthPerSeed = %v", mode, res.TruthPerSeed)
		}
		var beta []float64
		if mode == spec.TruthFixed {
			src, err := newRun(s, Options{})
			if err != nil {
				t.Fatal(err)
			}
			beta = src.prob.Beta
		}
		for _, pt := range res.Models[0].Points {
			p := int(pt.Value)
			omitted := r * r * float64(d-p) / d
			if beta != nil {
				omitted = 0
				for _, b := range beta[p:] {
					omitted += b * b
				}
			}
			want := omitted + (sd*sd+omitted)*float64(p)/float64(n-p-1)
			got := float64(pt.Risk.Mean) - sd*sd
			t.Logf("%s p=%d: excess risk %v ± %v, want %v", mode, p, got, pt.Risk.SE, want)
			if se := float64(pt.Risk.SE); math.Abs(got-want) > 4*se {
				t.Errorf("%s p=%d: excess risk %v ± %v, want %v (4 SE)", mode, p, got, se, want)
			}
		}
	}
}
