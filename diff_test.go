package main

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"riskgrid/reports"
)

// diffSpec has a least-squares and a ridge model with fixed labels, so
// that a change of λ keeps the rows aligned by label.
const diffSpec = `name = "pair"
about = "ABOUT"
[data]
source = "linear-gaussian"
n_train = 20
dim = 40
noise = { kind = "gaussian", sd = 0.5 }
[[model]]
family = "least-squares"
label = "ls"
[[model]]
family = "ridge"
lambda = LAMBDA
label = "ridge"
[grid]
param = "features"
values = [5, 10, 30, 40]
[seeds]
count = 40
start = START
`

// runDiffSpec runs diffSpec with the given substitutions into its own
// output root and returns the result folder.
func runDiffSpec(t *testing.T, dir, tag, about, lambda, start string) string {
	t.Helper()
	src := strings.NewReplacer("ABOUT", about, "LAMBDA", lambda, "START", start).Replace(diffSpec)
	sp := writeSpec(t, dir, tag+".toml", src)
	out := filepath.Join(dir, "out-"+tag)
	if status, _, stderr := runCLI("run", sp, "-o", out, "-j", "2"); status != exitOK {
		t.Fatalf("run %s: %s", tag, stderr)
	}
	return resultFolder(t, out, "pair")
}

func loadDiff(t *testing.T, a, b string) *reports.Difference {
	t.Helper()
	ra, err := readResult(filepath.Join(a, "result.json"))
	if err != nil {
		t.Fatal(err)
	}
	rb, err := readResult(filepath.Join(b, "result.json"))
	if err != nil {
		t.Fatal(err)
	}
	sa, _ := readSums(filepath.Join(a, "sums.json"))
	sb, _ := readSums(filepath.Join(b, "sums.json"))
	d, err := reports.Diff(ra, rb, sa, sb, reports.DiffOptions{})
	if err != nil {
		t.Fatal(err)
	}
	return d
}

// TestDiffNullChanges: the same spec run under two output roots, and two
// specs that differ in their about text only (same data key and seeds:
// identical numbers, paired) or in their seeds (seeds.start: the same
// distribution, other draws, independent SEs) flag nothing.
func TestDiffNullChanges(t *testing.T) {
	dir := t.TempDir()
	a := runDiffSpec(t, dir, "a", "first", "0.1", "1")
	for _, tc := range []struct {
		name, about, start, basis string
	}{
		{"rerun", "first", "1", "paired, 40 seeds"},
		{"about", "second", "1", "paired, 40 seeds"},
		{"seeds", "first", "101", "independent"},
	} {
		b := runDiffSpec(t, dir, tc.name, tc.about, "0.1", tc.start)
		status, stdout, stderr := runCLI("diff", a, b)
		if status != exitOK || !strings.Contains(stdout, "no difference flagged") {
			t.Errorf("%s: status %d\n%s\n%s", tc.name, status, stdout, stderr)
		}
		if !strings.Contains(stdout, "| "+tc.basis) {
			t.Errorf("%s: no row with se from %q:\n%s", tc.name, tc.basis, stdout)
		}
	}
}

// TestDiffPlantedModelChange: λ 0.1 → 0.15 moves the ridge risks by many
// paired SEs and leaves least squares alone; on these common random
// numbers the paired SE of every ridge risk difference is far below the
// independent one.
func TestDiffPlantedModelChange(t *testing.T) {
	dir := t.TempDir()
	a := runDiffSpec(t, dir, "a", "x", "0.1", "1")
	b := runDiffSpec(t, dir, "b", "x", "0.15", "1")
	status, stdout, _ := runCLI("diff", a, b, "-flagged")
	if status != exitFailed || !strings.Contains(stdout, "FLAGGED:") {
		t.Fatalf("λ 0.1 → 0.15: status %d, want 1\n%s", status, stdout)
	}
	if strings.Contains(stdout[strings.Index(stdout, "\nls\n"):strings.Index(stdout, "\nridge\n")], "*") {
		t.Errorf("least squares flagged though only ridge changed:\n%s", stdout)
	}
	d := loadDiff(t, a, b)
	for _, r := range d.Rows {
		if r.Model != "ridge" || r.Metric != "risk" {
			continue
		}
		if r.Basis != reports.BasisPaired || !(r.SE < r.SEIndependent/2) {
			t.Errorf("ridge risk at p = %v: basis %s, paired SE %g, independent %g: want paired and far smaller",
				r.Value, r.Basis, r.SE, r.SEIndependent)
		}
		if r.Mark != reports.MarkFlagged {
			t.Errorf("ridge risk at p = %v: Δ %g, SE %g, not flagged", r.Value, r.Delta, r.SE)
		}
	}
}

// TestDiffPlantedTamper copies a result, removes B's per-seed values (so
// the SEs are independent) and moves B's ridge risk at p = 10 by 2 and by
// 6 independent SEs: 6 is flagged and shown as 6.0 SEs, 2 is not.
func TestDiffPlantedTamper(t *testing.T) {
	dir := t.TempDir()
	a := runDiffSpec(t, dir, "a", "x", "0.1", "1")
	b := filepath.Join(dir, "b")
	if err := os.MkdirAll(b, 0o755); err != nil {
		t.Fatal(err)
	}
	raw, err := os.ReadFile(filepath.Join(a, "result.json"))
	if err != nil {
		t.Fatal(err)
	}
	ra, _ := readResult(filepath.Join(a, "result.json"))
	p := ra.Models[1].Points[1] // ridge, p = 10
	se := math.Sqrt2 * float64(p.Risk.SE)
	for _, tc := range []struct {
		z    float64
		flag bool
	}{{2, false}, {6, true}} {
		if err := os.WriteFile(filepath.Join(b, "result.json"), raw, 0o644); err != nil {
			t.Fatal(err)
		}
		editJSON(t, filepath.Join(b, "result.json"), func(m map[string]any) {
			jsonPoint(m, 1, 1)["risk"].(map[string]any)["mean"] = float64(p.Risk.Mean) + tc.z*se
		})
		status, stdout, _ := runCLI("diff", a, b)
		if (status == exitFailed) != tc.flag {
			t.Errorf("risk + %v SE: status %d\n%s", tc.z, status, stdout)
		}
		// The row: knob 10, risk, …, |B − A|/se to one decimal, independent, mark.
		row := regexp.MustCompile(`\| +10 \| risk +\|[^\n]*\| +` + regexp.QuoteMeta(fmt.Sprintf("%.1f", tc.z)) +
			` \| independent +\| ([*]?) +\|`)
		m := row.FindStringSubmatch(stdout)
		if m == nil {
			t.Errorf("risk + %v SE: no row with %v SEs:\n%s", tc.z, tc.z, stdout)
		} else if (m[1] == "*") != tc.flag {
			t.Errorf("risk + %v SE: mark %q", tc.z, m[1])
		}
	}
}

func TestDiffBadInput(t *testing.T) {
	dir := t.TempDir()
	a := runDiffSpec(t, dir, "a", "x", "0.1", "1")
	lam := writeSpec(t, dir, "lam.toml", `name = "lam"
[data]
source = "linear-gaussian"
n_train = 20
dim = 10
noise = { kind = "gaussian", sd = 0.5 }
[[model]]
family = "ridge"
[grid]
param = "lambda"
values = [0.1, 1]
[seeds]
count = 3
`)
	if status, _, stderr := runCLI("run", lam, "-o", filepath.Join(dir, "lam")); status != exitOK {
		t.Fatal(stderr)
	}
	m, _ := filepath.Glob(filepath.Join(dir, "lam", "lam-*"))
	for _, tc := range []struct {
		args []string
		want string
	}{
		{[]string{"diff", a}, "give two result folders"},
		{[]string{"diff", a, filepath.Join(dir, "nowhere")}, "no such file"},
		{[]string{"diff", a, m[0]}, `A varies "features", B varies "lambda"`},
		{[]string{"diff", a, a, "-k", "0"}, "-k 0"},
		{[]string{"diff", a, a, "-within", "2"}, "-within 2"},
	} {
		status, _, stderr := runCLI(tc.args...)
		if status != exitBadInput || !strings.Contains(stderr, tc.want) {
			t.Errorf("%v: status %d, stderr %q; want 2 and %q", tc.args, status, stderr, tc.want)
		}
	}
}

// TestDiffTwoAxis: curves of a two-axis grid align by label and outer
// value, and pair within each slice's data key.
func TestDiffTwoAxis(t *testing.T) {
	dir := t.TempDir()
	sp := writeSpec(t, dir, "tiny-2d.toml", twoAxisSpec)
	var res [2]string
	for i, o := range []string{"a", "b"} {
		out := filepath.Join(dir, o)
		if status, _, stderr := runCLI("run", sp, "-o", out); status != exitOK {
			t.Fatalf("run: %s", stderr)
		}
		m, _ := filepath.Glob(filepath.Join(out, "tiny-2d-*"))
		res[i] = m[0]
	}
	status, stdout, _ := runCLI("diff", res[0], res[1])
	if status != exitOK || !strings.Contains(stdout, "\nleast-squares, n_train = 10\n") ||
		!strings.Contains(stdout, "\nleast-squares, n_train = 20\n") || !strings.Contains(stdout, "| paired, 4 seeds") {
		t.Errorf("two-axis rerun: status %d\n%s", status, stdout)
	}
	if strings.Contains(stdout, "only in") || strings.Contains(stdout, "different data keys") {
		t.Errorf("two-axis rerun: curves not aligned or not paired:\n%s", stdout)
	}
	one := writeSpec(t, dir, "tiny.toml", tinySpec)
	if s, _, e := runCLI("run", one, "-o", filepath.Join(dir, "c")); s != exitOK {
		t.Fatal(e)
	}
	m, _ := filepath.Glob(filepath.Join(dir, "c", "tiny-*"))
	if status, _, stderr := runCLI("diff", res[0], m[0]); status != exitBadInput || !strings.Contains(stderr, "outer knob") {
		t.Errorf("two-axis against one-axis: status %d, %s", status, stderr)
	}
}
