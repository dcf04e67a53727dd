package runner

import (
	"bytes"
	"fmt"
	"testing"
)

// TestCacheKeepsRiskBasisApart checks that cells measured on one basis are
// never read back on another. Least squares on a linear-gaussian source is
// measured exactly when every model of the spec is linear (its cells hold
// coefficients), and on the Monte Carlo test inputs beside a non-linear
// family (its cells hold predictions); both runs have the same data key and
// model key, so the basis must enter the cache key. The spec with the
// non-linear family must give the same bytes whether or not the exact spec
// filled the cache before it.
func TestCacheKeepsRiskBasisApart(t *testing.T) {
	base := `
name = "basis-cache"
[data]
source = "linear-gaussian"
n_test = 200
dim = 5
noise = { sd = 0.5 }
[[model]]
family = "least-squares"
%s
[grid]
param = "n_train"
values = [10, 20]
[seeds]
count = 4
`
	exact := mustParse(t, fmt.Sprintf(base, ""))
	mixed := mustParse(t, fmt.Sprintf(base, "[[model]]\nfamily = \"nearest-neighbours\"\nneighbours = 3\n"))
	want, _ := mustRun(t, mixed, Options{Workers: 2})

	dir := t.TempDir()
	if res, _ := mustRun(t, exact, Options{Workers: 2, CacheDir: dir}); res.RiskBasis != RiskExact {
		t.Fatalf("basis %q, want exact", res.RiskBasis)
	}
	got, _ := mustRun(t, mixed, Options{Workers: 2, CacheDir: dir})
	if !bytes.Equal(resultJSON(t, want), resultJSON(t, got)) {
		t.Errorf("monte-carlo run after an exact run on the same cache: least squares %+v, want %+v",
			got.Models[0].Points[0].Risk, want.Models[0].Points[0].Risk)
	}
	// And the other way round: an exact run after the Monte Carlo one.
	dir = t.TempDir()
	wantExact, _ := mustRun(t, exact, Options{Workers: 2})
	mustRun(t, mixed, Options{Workers: 2, CacheDir: dir})
	gotExact, _ := mustRun(t, exact, Options{Workers: 2, CacheDir: dir})
	if !bytes.Equal(resultJSON(t, wantExact), resultJSON(t, gotExact)) {
		t.Errorf("exact run after a monte-carlo run on the same cache: least squares %+v, want %+v",
			gotExact.Models[0].Points[0].Risk, wantExact.Models[0].Points[0].Risk)
	}
}
