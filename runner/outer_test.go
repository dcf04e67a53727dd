package runner

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"strings"
	"sync"
	"testing"
)

// twoAxisSpec crosses features (inner) with n_train (outer) for a
// least-squares and a ridge model.
func twoAxisSpec(seeds int, ns string) string {
	return fmt.Sprintf(`
name = "two-axis"
[data]
source = "linear-gaussian"
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
values = [5, 20, 30, 45]
[grid.outer]
param = "n_train"
values = [%s]
[seeds]
count = %d
`, ns, seeds)
}

// oneAxisSpec is the one-axis spec of the same setting at n_train = n: what a
// user would write to get the slice on its own.
func oneAxisSpec(seeds, n int) string {
	return strings.Replace(smallSpec(seeds, "5, 20, 30, 45"), "n_train = 30", fmt.Sprintf("n_train = %d", n), 1)
}

func modelJSON(t *testing.T, m ModelResult) []byte {
	t.Helper()
	m.Outer = nil
	b, err := json.Marshal(m)
	if err != nil {
		t.Fatal(err)
	}
	return b
}

// TestOuterEqualsOneAxisRuns: the curves of a two-axis run are, bit for bit,
// those of the one-axis runs at each outer value, written independently.
func TestOuterEqualsOneAxisRuns(t *testing.T) {
	two, err := Run(context.Background(), mustParse(t, twoAxisSpec(6, "20, 30, 45")), Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	res := two.Result
	if res.Schema != Schema || res.OuterParam != "n_train" || res.Param != "features" || res.NTrain != 45 || len(res.Models) != 3*2 {
		t.Fatalf("two-axis result: schema %q outer %q param %q n_train %d, %d curves; want %q n_train features 45, 6 curves",
			res.Schema, res.OuterParam, res.Param, res.NTrain, len(res.Models), Schema)
	}
	if !strings.Contains(res.SpecTOML, "[grid.outer]") {
		t.Errorf("SpecTOML lacks the outer axis:\n%s", res.SpecTOML)
	}
	for k, n := range []int{20, 30, 45} {
		one, _ := mustRun(t, mustParse(t, oneAxisSpec(6, n)), Options{Workers: 1})
		for j := range one.Models {
			got := res.Models[k*2+j]
			if got.Outer == nil || *got.Outer != float64(n) {
				t.Errorf("curve %d: outer %v, want %d", k*2+j, got.Outer, n)
			}
			if g, w := modelJSON(t, got), modelJSON(t, one.Models[j]); !bytes.Equal(g, w) {
				t.Errorf("n_train = %d, %s: two-axis curve differs from the one-axis run:\n%s\nvs\n%s", n, got.Label, g, w)
			}
			ms := two.Sums.Models[k*2+j]
			if ms.Outer == nil || *ms.Outer != float64(n) || ms.DataKey != mustParse(t, oneAxisSpec(6, n)).DataKey() {
				t.Errorf("sums curve %d: outer %v, data key %s; want %d and the slice's data key", k*2+j, ms.Outer, ms.DataKey, n)
			}
		}
	}
}

// An outer penalty: each slice is the ridge run at that λ, here on an inner
// n_train grid (nested samples).
func TestOuterLambdaEqualsOneAxisRuns(t *testing.T) {
	spec := func(model, grid string) string {
		return `
name = "lam"
[data]
source = "linear-gaussian"
dim = 20
n_test = 10
noise = { sd = 0.5 }
[[model]]
family = "ridge"
` + model + `
[grid]
param = "n_train"
values = [10, 20, 40]
` + grid + `
[seeds]
count = 5
`
	}
	res, _ := mustRun(t, mustParse(t, spec("", "[grid.outer]\nparam = \"lambda\"\nvalues = [0, 0.1, 3]")), Options{})
	if len(res.Models) != 3 {
		t.Fatalf("%d curves, want 3", len(res.Models))
	}
	for k, lam := range []string{"0", "0.1", "3"} {
		one, _ := mustRun(t, mustParse(t, spec("lambda = "+lam+"\nlabel = \"ridge\"", "")), Options{Workers: 3})
		if g, w := modelJSON(t, res.Models[k]), modelJSON(t, one.Models[0]); !bytes.Equal(g, w) {
			t.Errorf("λ = %s: two-axis curve differs from the one-axis run:\n%s\nvs\n%s", lam, g, w)
		}
	}
}

func TestOuterDeterministicAcrossWorkers(t *testing.T) {
	s := mustParse(t, twoAxisSpec(8, "20, 45"))
	r1, _ := mustRun(t, s, Options{Workers: 1})
	r2, _ := mustRun(t, s, Options{Workers: 2})
	r8, _ := mustRun(t, s, Options{Workers: 8})
	b1, b2, b8 := resultJSON(t, r1), resultJSON(t, r2), resultJSON(t, r8)
	if !bytes.Equal(b1, b2) || !bytes.Equal(b1, b8) {
		t.Errorf("two-axis result.json differs between -j 1, -j 2 and -j 8")
	}
}

// TestOuterCache: a two-axis run takes the slice a one-axis run computed
// from the cache, and a one-axis run afterwards takes its slice from the
// two-axis run's cells.
func TestOuterCache(t *testing.T) {
	opt := Options{Workers: 2, CacheDir: t.TempDir()}
	const seeds, cells = 4, 2 * 4 * 4 // per slice: models × features × seeds
	one, tm := mustRun(t, mustParse(t, oneAxisSpec(seeds, 20)), opt)
	if tm.Computed != cells {
		t.Fatalf("one-axis run computed %d cells, want %d", tm.Computed, cells)
	}
	two, tm := mustRun(t, mustParse(t, twoAxisSpec(seeds, "20, 30")), opt)
	if tm.Cached != cells || tm.Computed != cells {
		t.Errorf("two-axis run after the n_train = 20 run: computed %d, cached %d; want %d and %d", tm.Computed, tm.Cached, cells, cells)
	}
	if !bytes.Equal(modelJSON(t, two.Models[0]), modelJSON(t, one.Models[0])) {
		t.Errorf("cached slice differs from the one-axis result")
	}
	if _, tm = mustRun(t, mustParse(t, oneAxisSpec(seeds, 30)), opt); tm.Computed != 0 || tm.Cached != cells {
		t.Errorf("one-axis run at n_train = 30 after the two-axis run: computed %d, cached %d; want 0 and %d", tm.Computed, tm.Cached, cells)
	}
	fresh, tm := mustRun(t, mustParse(t, twoAxisSpec(seeds, "20, 30")), Options{Workers: 1, CacheDir: opt.CacheDir, Fresh: true})
	if tm.Computed != 2*cells {
		t.Errorf("fresh two-axis run computed %d cells, want %d", tm.Computed, 2*cells)
	}
	if !bytes.Equal(resultJSON(t, two), resultJSON(t, fresh)) {
		t.Errorf("fresh two-axis result differs from the cached one")
	}
}

func TestOuterSumsMerge(t *testing.T) {
	run := func(src string) *Sums {
		out, err := Run(context.Background(), mustParse(t, src), Options{})
		if err != nil {
			t.Fatal(err)
		}
		return out.Sums
	}
	a := run(twoAxisSpec(4, "20, 30"))
	b := run(strings.Replace(twoAxisSpec(4, "20, 30"), "count = 4", "count = 4\nstart = 5", 1))
	if a.Schema != SumsSchema || a.OuterParam != "n_train" || len(a.Models) != 4 {
		t.Fatalf("sums: schema %q outer %q, %d curves", a.Schema, a.OuterParam, len(a.Models))
	}
	other := run(strings.Replace(twoAxisSpec(4, "20, 31"), "count = 4", "count = 4\nstart = 5", 1))
	if err := a.Merge(other); !errors.Is(err, ErrMerge) {
		t.Errorf("merging sums of other outer values: %v, want ErrMerge", err)
	}
	if err := a.Merge(b); err != nil {
		t.Fatalf("merging disjoint seeds: %v", err)
	}
	full := run(twoAxisSpec(8, "20, 30"))
	for i := range full.Models {
		if got, want := a.Models[i].Points[1].Risk, full.Models[i].Points[1].Risk; fmt.Sprint(got) != fmt.Sprint(want) {
			t.Errorf("curve %d: merged risks %v, full run %v", i, got, want)
		}
	}
}

func TestOuterSize(t *testing.T) {
	s := mustParse(t, twoAxisSpec(4, "20, 30, 45"))
	p := Size(s, 2)
	if p.Cells != 3*2*4*4 || p.Paths != 3*2*4 || p.Seeds != 4 {
		t.Errorf("Size = %+v, want 96 cells, 24 paths, 4 seeds", p)
	}
	if top := Size(s.At(45), 2); p.PeakBytes != top.PeakBytes {
		t.Errorf("peak %d, want the largest slice's %d", p.PeakBytes, top.PeakBytes)
	}
}

// TestOuterProgress: the progress of a two-axis run counts the whole grid,
// carrying the finished slices' cells over into the next slice's calls.
func TestOuterProgress(t *testing.T) {
	const total = 3 * 2 * 4 * 5 // outer values × models × features × seeds
	var mu sync.Mutex
	var last Progress
	calls := 0
	opt := Options{Workers: 2, Progress: func(p Progress) {
		mu.Lock()
		defer mu.Unlock()
		calls++
		if p.Total != total || p.Computed+p.Cached > total {
			t.Errorf("Progress(%+v), want total %d and at most that many cells done", p, total)
		}
		if p.Computed+p.Cached > last.Computed+last.Cached {
			last = p
		}
	}}
	res, tm := mustRun(t, mustParse(t, twoAxisSpec(5, "20, 30, 45")), opt)
	if calls != 3*5 || last.Computed != total || tm.Computed != total {
		t.Errorf("%d calls, last %+v, computed %d; want 15 calls and %d cells", calls, last, tm.Computed, total)
	}
	if res.Created != tm.Created || res.Created == "" {
		t.Errorf("Result.Created %q, want Timing.Created %q", res.Created, tm.Created)
	}
}

// TestOuterConditioning: the condition numbers of a two-axis run come per
// curve in Result order, each row that of the slice's one-axis run.
func TestOuterConditioning(t *testing.T) {
	dir := t.TempDir()
	s := mustParse(t, twoAxisSpec(3, "20, 45"))
	res, _ := mustRun(t, s, Options{CacheDir: dir})
	k, err := Conditioning(s, dir)
	if err != nil {
		t.Fatal(err)
	}
	if len(k) != len(res.Models) {
		t.Fatalf("%d rows of condition numbers for %d curves", len(k), len(res.Models))
	}
	one, err := Conditioning(s.At(45), dir)
	if err != nil {
		t.Fatal(err)
	}
	if fmt.Sprint(k[2:]) != fmt.Sprint(one) {
		t.Errorf("rows of n_train = 45: %v, want the slice's %v", k[2:], one)
	}
}
