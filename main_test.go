package main

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"riskgrid/runner"
)

const tinySpec = `name = "tiny"
[data]
source = "linear-gaussian"
n_train = 20
dim = 30
n_test = 10
noise = { kind = "gaussian", sd = 0.5 }
[[model]]
family = "least-squares"
[grid]
param = "features"
values = [5, 20, 30]
[seeds]
count = 4
`

func writeSpec(t *testing.T, dir, name, src string) string {
	t.Helper()
	p := filepath.Join(dir, name)
	if err := os.WriteFile(p, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

func runCLI(args ...string) (status int, stdout, stderr string) {
	var o, e bytes.Buffer
	status = cli(args, &o, &e)
	return status, o.String(), e.String()
}

func TestRunWritesArtifactsAndCaches(t *testing.T) {
	dir := t.TempDir()
	sp := writeSpec(t, dir, "tiny.toml", tinySpec)
	out := filepath.Join(dir, "out")
	status, stdout, stderr := runCLI("run", sp, "-o", out, "-j", "2")
	if status != exitOK {
		t.Fatalf("run: status %d, stderr %s", status, stderr)
	}
	if !strings.Contains(stdout, "least-squares") || !strings.Contains(stderr, "12 cells computed, 0 from the cache") {
		t.Errorf("run: stdout %q\nstderr %q", stdout, stderr)
	}
	res := resultFolder(t, out, "tiny")
	for _, f := range []string{"result.json", "sums.json", "timing.json", "table.md", "table.csv", "table.tex"} {
		if _, err := os.Stat(filepath.Join(res, f)); err != nil {
			t.Errorf("missing artifact: %v", err)
		}
	}
	first, _ := os.ReadFile(filepath.Join(res, "result.json"))
	var r runner.Result
	if err := json.Unmarshal(first, &r); err != nil || r.Schema != runner.Schema || len(r.Models[0].Points) != 3 {
		t.Errorf("result.json: err %v, schema %q", err, r.Schema)
	}

	// The second run fits nothing, says so, and writes the same result.
	status, _, stderr = runCLI("run", "-j", "1", sp, "-o", out)
	if status != exitOK || !strings.Contains(stderr, "0 cells computed, 12 from the cache") {
		t.Errorf("second run: status %d, stderr %q", status, stderr)
	}
	again, _ := os.ReadFile(filepath.Join(res, "result.json"))
	if !bytes.Equal(first, again) {
		t.Errorf("result.json of the cached run (-j 1) differs from the first (-j 2)")
	}

	// report re-renders without fitting.
	os.Remove(filepath.Join(res, "table.md"))
	status, stdout, stderr = runCLI("report", res)
	if status != exitOK || !strings.Contains(stdout, "least-squares") {
		t.Errorf("report: status %d, stderr %q", status, stderr)
	}
	if _, err := os.Stat(filepath.Join(res, "table.md")); err != nil {
		t.Errorf("report did not rewrite table.md: %v", err)
	}
}

func TestBadSpecExits2AndWritesNothing(t *testing.T) {
	dir := t.TempDir()
	bad := strings.Replace(tinySpec, "n_train = 20", "n_train = 20\nlamda = 3", 1)
	sp := writeSpec(t, dir, "bad.toml", bad)
	out := filepath.Join(dir, "out")
	status, stdout, stderr := runCLI("run", sp, "-o", out)
	if status != exitBadInput {
		t.Errorf("status %d, want %d", status, exitBadInput)
	}
	if stdout != "" || !strings.Contains(stderr, "bad.toml:5") || !strings.Contains(stderr, "lamda") {
		t.Errorf("stderr %q should name the file, line 5 and the key", stderr)
	}
	if _, err := os.Stat(out); !os.IsNotExist(err) {
		t.Errorf("a bad spec left %s on disk", out)
	}
	if status, _, _ := runCLI("check", sp); status != exitBadInput {
		t.Errorf("check of a bad spec: status %d, want %d", status, exitBadInput)
	}
}

// badCSVSpec writes into dir a spec whose data file has a non-numeric cell
// at row 3, column b, and returns its path.
func badCSVSpec(t *testing.T, dir string) string {
	t.Helper()
	writeSpec(t, dir, "d.csv", "a,b,y\n1,2,3\n4,x,6\n7,8,9\n1,1,1\n2,2,2\n")
	sp := writeSpec(t, dir, "csv.toml", `name = "csv"
[data]
source = "csv"
file = "d.csv"
target = "y"
n_test = 2
n_train = 2
[[model]]
family = "least-squares"
[grid]
param = "features"
values = [1, 2]
[seeds]
count = 2
`)
	return sp
}

// resultFolder returns the one result folder of spec name under out.
func resultFolder(t *testing.T, out, name string) string {
	t.Helper()
	m, _ := filepath.Glob(filepath.Join(out, name+"-????????????"))
	if len(m) != 1 {
		t.Fatalf("result folders %v, want one %s-<hash12>", m, name)
	}
	return m[0]
}

func TestBadDataFileExits2(t *testing.T) {
	dir := t.TempDir()
	sp := badCSVSpec(t, dir)
	status, _, stderr := runCLI("run", sp, "-o", filepath.Join(dir, "out"))
	if status != exitBadInput || !strings.Contains(stderr, "d.csv:3") || !strings.Contains(stderr, `"b"`) {
		t.Errorf("status %d, stderr %q; want 2 and the file, row 3 and column b", status, stderr)
	}
}

func TestCheckPrintsResolvedSpec(t *testing.T) {
	dir := t.TempDir()
	sp := writeSpec(t, dir, "tiny.toml", tinySpec)
	status, stdout, _ := runCLI("check", sp)
	if status != exitOK {
		t.Fatalf("check: status %d", status)
	}
	for _, want := range []string{"hash", "12 (1 models × 3 grid values × 4 seeds)", "memory", `spectrum`, `start = 1`} {
		if !strings.Contains(stdout, want) {
			t.Errorf("check output lacks %q:\n%s", want, stdout)
		}
	}
	_, stdout, _ = runCLI("check", sp, "-inputs")
	for _, want := range []string{"inputs of the data key", `data.noise.sd "0.5"`, `model.family "least-squares"`} {
		if !strings.Contains(stdout, want) {
			t.Errorf("check -inputs output lacks %q:\n%s", want, stdout)
		}
	}
}

func TestUsage(t *testing.T) {
	for _, c := range []struct {
		args []string
		want int
	}{
		{nil, exitBadInput},
		{[]string{"frobnicate"}, exitBadInput},
		{[]string{"-h"}, exitOK},
		{[]string{"run", "-h"}, exitOK},
		{[]string{"check", "-h"}, exitOK},
		{[]string{"report", "-h"}, exitOK},
		{[]string{"run"}, exitBadInput},
		{[]string{"run", "x.toml", "-j", "0"}, exitBadInput},
		{[]string{"run", "--bogus"}, exitBadInput},
		{[]string{"report", "/nonexistent"}, exitBadInput},
	} {
		if got, _, _ := runCLI(c.args...); got != c.want {
			t.Errorf("riskgrid %v: status %d, want %d", c.args, got, c.want)
		}
	}
}

// tableFiles are the tables a run writes into its result folder.
var tableFiles = []string{"table.md", "table.csv", "table.tex"}

// TestTablesDeterministicAcrossWorkers checks that the tables written by a
// run do not depend on -j, and that `report` re-renders them byte for byte.
// The tables carry the run's date, so the -j 8 folder gets the -j 1 run's
// timing.json (the same date injected) and is re-rendered by `report`; its
// tables must then equal those the -j 1 run wrote.
func TestTablesDeterministicAcrossWorkers(t *testing.T) {
	dir := t.TempDir()
	sp := writeSpec(t, dir, "tiny.toml", tinySpec)
	folder := func(out string) string {
		m, _ := filepath.Glob(filepath.Join(out, "tiny-*"))
		if len(m) != 1 {
			t.Fatalf("result folders %v, want one", m)
		}
		return m[0]
	}
	var res [2]string
	for i, j := range []string{"1", "8"} {
		out := filepath.Join(dir, "out"+j)
		if status, _, stderr := runCLI("run", sp, "-o", out, "-j", j); status != exitOK {
			t.Fatalf("run -j %s: status %d, stderr %s", j, status, stderr)
		}
		res[i] = folder(out)
	}
	timing, err := os.ReadFile(filepath.Join(res[0], "timing.json"))
	if err != nil {
		t.Fatal(err)
	}
	var tm runner.Timing
	if err := json.Unmarshal(timing, &tm); err != nil || tm.Created == "" {
		t.Fatalf("timing.json: %v, created %q", err, tm.Created)
	}
	if err := os.WriteFile(filepath.Join(res[1], "timing.json"), timing, 0o644); err != nil {
		t.Fatal(err)
	}
	if status, _, stderr := runCLI("report", res[1]); status != exitOK {
		t.Fatalf("report: status %d, stderr %s", status, stderr)
	}
	for _, f := range tableFiles {
		a, errA := os.ReadFile(filepath.Join(res[0], f))
		b, errB := os.ReadFile(filepath.Join(res[1], f))
		if errA != nil || errB != nil {
			t.Fatalf("%s: %v, %v", f, errA, errB)
		}
		if !bytes.Equal(a, b) {
			t.Errorf("%s written by run -j 1 differs from report of the -j 8 result with the same date:\n%s\n---\n%s", f, a, b)
		}
		if !bytes.Contains(a, []byte(tm.Created[:10])) {
			t.Errorf("%s does not carry the run's date %s:\n%s", f, tm.Created[:10], a)
		}
	}
}

// TestSEStyle checks how table.tex gets its standard-error style: from the
// spec's [tables] se_style, overridden by -se-style on run (recorded in
// spec_toml, so report renders the same way) and on report; the style does
// not change the hash, so every run lands in the same folder and is cached.
func TestSEStyle(t *testing.T) {
	dir := t.TempDir()
	out := filepath.Join(dir, "out")
	plain := writeSpec(t, dir, "tiny.toml", tinySpec)
	pm := writeSpec(t, dir, "tiny-pm.toml", tinySpec+"[tables]\nse_style = \"plus-minus\"\n")
	tex := func() string {
		t.Helper()
		m, _ := filepath.Glob(filepath.Join(out, "tiny-*", "table.tex"))
		if len(m) != 1 {
			t.Fatalf("table.tex files %v, want one (the style must not change the hash)", m)
		}
		b, err := os.ReadFile(m[0])
		if err != nil {
			t.Fatal(err)
		}
		return string(b)
	}
	isPM := func(s string) bool { return strings.Contains(s, ` \pm `) }
	isParen := func(s string) bool { return regexp.MustCompile(`\$[0-9.]+\\ \([0-9.]+\)\$`).MatchString(s) }
	for _, c := range []struct {
		name string
		args []string
		pm   bool
	}{
		{"default", []string{"run", plain}, false},
		{"spec plus-minus", []string{"run", pm}, true},
		{"flag over spec", []string{"run", pm, "-se-style", "parentheses"}, false},
		{"report keeps the run's choice", []string{"report"}, false},
		{"flag on run", []string{"run", plain, "-se-style", "plus-minus"}, true},
		{"report keeps the flag's choice", []string{"report"}, true},
		{"flag on report", []string{"report", "-se-style", "parentheses"}, false},
	} {
		args := c.args
		if args[0] == "report" {
			m, _ := filepath.Glob(filepath.Join(out, "tiny-*"))
			args = append(args, m...)
		} else {
			args = append(args, "-o", out, "--quiet")
		}
		if status, _, stderr := runCLI(args...); status != exitOK {
			t.Fatalf("%s: riskgrid %v: status %d, stderr %s", c.name, args, status, stderr)
		}
		if s := tex(); isPM(s) != c.pm || isParen(s) == c.pm {
			t.Errorf("%s: table.tex plus-minus = %v, parentheses = %v; want plus-minus %v:\n%s", c.name, isPM(s), isParen(s), c.pm, s)
		}
	}
	for _, args := range [][]string{{"run", plain, "-se-style", "brackets"}, {"report", out, "-se-style", "pm"}} {
		if status, _, stderr := runCLI(args...); status != exitBadInput || !strings.Contains(stderr, "accepted: parentheses, plus-minus") {
			t.Errorf("riskgrid %v: status %d, stderr %q; want 2 naming the accepted styles", args, status, stderr)
		}
	}
}

func TestRunAndReportWriteFigures(t *testing.T) {
	dir := t.TempDir()
	sp := writeSpec(t, dir, "tiny.toml", tinySpec)
	out := filepath.Join(dir, "out")
	if status, _, stderr := runCLI("run", sp, "-o", out); status != exitOK {
		t.Fatalf("run: status %d, stderr %s", status, stderr)
	}
	res := resultFolder(t, out, "tiny")
	figs := filepath.Join(res, "figures")
	var names []string
	for _, ext := range []string{"png", "svg"} {
		for _, f := range []string{"risk-1-least-squares", "split-1-least-squares"} {
			names = append(names, f+"."+ext)
		}
	}
	for _, n := range names {
		if fi, err := os.Stat(filepath.Join(figs, n)); err != nil || fi.Size() == 0 {
			t.Errorf("run: figure %s missing or empty (%v)", n, err)
		}
	}
	page, err := os.ReadFile(filepath.Join(res, "report.md"))
	if err != nil {
		t.Fatalf("run wrote no report.md: %v", err)
	}
	for _, want := range []string{"# tiny\n", "## Summary", "](figures/risk-1-least-squares.png)", "## Tables", "```toml\n# riskgrid spec"} {
		if !strings.Contains(string(page), want) {
			t.Errorf("report.md lacks %q:\n%s", want, page)
		}
	}
	// report redraws them from result.json.
	os.RemoveAll(figs)
	os.Remove(filepath.Join(res, "report.md"))
	if status, _, stderr := runCLI("report", res); status != exitOK {
		t.Fatalf("report: status %d, stderr %s", status, stderr)
	}
	for _, n := range append(names, "../report.md") {
		if _, err := os.Stat(filepath.Join(figs, n)); err != nil {
			t.Errorf("report: %v", err)
		}
	}
}

// A bad data file is bad input like a bad spec: check reports it, and run
// reports it before fitting any spec, so `run good.toml bad.toml` writes
// nothing (README: run "checks every spec first"; check "validates a spec").
func TestBadDataFileCaughtBeforeAnyFit(t *testing.T) {
	dir := t.TempDir()
	bad := badCSVSpec(t, dir)
	if status, _, stderr := runCLI("check", bad); status != exitBadInput || !strings.Contains(stderr, "d.csv:3") {
		t.Errorf("check of a spec with a bad data file: status %d, stderr %q; want 2 and the file and row", status, stderr)
	}
	good := writeSpec(t, dir, "tiny.toml", tinySpec)
	out := filepath.Join(dir, "out")
	status, _, stderr := runCLI("run", good, bad, "-o", out)
	if status != exitBadInput || !strings.Contains(stderr, "d.csv:3") {
		t.Errorf("run good bad: status %d, stderr %q; want 2 and the file and row", status, stderr)
	}
	if _, err := os.Stat(out); !os.IsNotExist(err) {
		t.Errorf("run good bad: fitted the good spec before finding the bad data file (%s exists)", out)
	}
}

// An output root that cannot be a folder fails the run before any fit:
// exit 1 (the output could not be written), one error naming it, and no
// per-seed cache warnings from seeds fitted for nothing.
func TestRunUnwritableOutputFailsFirst(t *testing.T) {
	dir := t.TempDir()
	sp := writeSpec(t, dir, "tiny.toml", tinySpec)
	out := writeSpec(t, dir, "afile", "not a folder\n")
	status, _, stderr := runCLI("run", sp, "-o", out, "-j", "1")
	if status != exitFailed {
		t.Errorf("status %d, want %d", status, exitFailed)
	}
	if strings.Contains(stderr, "warning") || strings.Count(stderr, "\n") != 1 || !strings.Contains(stderr, out) {
		t.Errorf("stderr %q; want one line naming %s, before any seed is fitted", stderr, out)
	}
}
