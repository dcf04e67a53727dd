package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"regexp"
	"sort"
	"strconv"
	"strings"
	"testing"

	"riskgrid/runner"
)

// runTiny runs tinySpec under dir/out and returns the spec path and the
// result folder.
func runTiny(t *testing.T, dir string) (specPath, resDir string) {
	t.Helper()
	specPath = writeSpec(t, dir, "tiny.toml", tinySpec)
	out := filepath.Join(dir, "out")
	if status, _, stderr := runCLI("run", specPath, "-o", out, "-j", "2"); status != exitOK {
		t.Fatalf("run: status %d: %s", status, stderr)
	}
	return specPath, resultFolder(t, out, "tiny")
}

// snapshot lists every file under root with its size and modification time.
func snapshot(t *testing.T, root string) string {
	t.Helper()
	var lines []string
	err := filepath.Walk(root, func(p string, info os.FileInfo, err error) error {
		if err != nil {
			return err
		}
		lines = append(lines, p+" "+strconv.FormatInt(info.Size(), 10)+" "+info.ModTime().String())
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	sort.Strings(lines)
	return strings.Join(lines, "\n")
}

func TestVerifyUnchangedAgrees(t *testing.T) {
	dir := t.TempDir()
	sp, res := runTiny(t, dir)
	out := filepath.Join(dir, "out")
	before := snapshot(t, out)
	for _, args := range [][]string{
		{"verify", res},
		{"verify", sp, "-o", out, "-j", "1"},
		{"verify", res, "-within", "0"}, // same build: bit for bit
	} {
		status, stdout, stderr := runCLI(args...)
		if status != exitOK || !strings.Contains(stdout, "agrees: every number within its allowance") {
			t.Errorf("%v: status %d\nstdout %s\nstderr %s", args, status, stdout, stderr)
		}
		if !strings.Contains(stdout, "engine    riskgrid-engine/") || !strings.Contains(stdout, "(same as this build)") {
			t.Errorf("%v: no provenance lines:\n%s", args, stdout)
		}
		if !strings.Contains(stdout, "recomputed 12 cells from scratch") {
			t.Errorf("%v: did not recompute every cell:\n%s", args, stdout)
		}
	}
	if after := snapshot(t, out); after != before {
		t.Errorf("verify changed the result folder or the cache:\nbefore\n%s\nafter\n%s", before, after)
	}
}

// editJSON rewrites a JSON file through a generic map.
func editJSON(t *testing.T, path string, edit func(m map[string]any)) {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	if err := json.Unmarshal(b, &m); err != nil {
		t.Fatal(err)
	}
	edit(m)
	if b, err = json.Marshal(m); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(path, b, 0o644); err != nil {
		t.Fatal(err)
	}
}

func jsonPoint(m map[string]any, model, pt int) map[string]any {
	return m["models"].([]any)[model].(map[string]any)["points"].([]any)[pt].(map[string]any)
}

// TestVerifyTamperedFails moves the stored mean risk at p = 5 by known
// relative amounts: 1e-12 is within the tolerance; 1e-6 is caught and
// reported with its size and place.
func TestVerifyTamperedFails(t *testing.T) {
	dir := t.TempDir()
	_, res := runTiny(t, dir)
	var stored runner.Result
	b, _ := os.ReadFile(filepath.Join(res, "result.json"))
	if err := json.Unmarshal(b, &stored); err != nil {
		t.Fatal(err)
	}
	scale := func(factor float64) {
		editJSON(t, filepath.Join(res, "result.json"), func(m map[string]any) {
			r := jsonPoint(m, 0, 0)["risk"].(map[string]any)
			r["mean"] = float64(stored.Models[0].Points[0].Risk.Mean) * factor
		})
	}

	scale(1 + 1e-12)
	if status, stdout, _ := runCLI("verify", res); status != exitOK {
		t.Errorf("risk × (1 + 1e-12): status %d, want 0:\n%s", status, stdout)
	}

	scale(1 + 1e-6)
	status, stdout, stderr := runCLI("verify", res)
	if status != exitFailed {
		t.Fatalf("risk × (1 + 1e-6): status %d, want 1\n%s\n%s", status, stdout, stderr)
	}
	if !strings.Contains(stdout, "DISAGREES: 1 number moved") {
		t.Errorf("verdict missing:\n%s", stdout)
	}
	// The moved row names the model, the grid value, the metric and the
	// relative difference (1e-6/(1+1e-6) = 1.0e-06 at 2 digits).
	row := regexp.MustCompile(`\| least-squares +\| +5 \| +\| risk +\| .*\| +1\.0e-06 \| +1e-09 \|`)
	if !row.MatchString(stdout) {
		t.Errorf("no moved row for risk at features = 5 with relative Δ 1.0e-06:\n%s", stdout)
	}
}

func TestVerifyTamperedSeed(t *testing.T) {
	dir := t.TempDir()
	_, res := runTiny(t, dir)
	editJSON(t, filepath.Join(res, "sums.json"), func(m map[string]any) {
		r := jsonPoint(m, 0, 2)["risk"].([]any)
		r[3] = r[3].(float64) * 1.01
	})
	status, stdout, _ := runCLI("verify", res)
	if status != exitFailed || !regexp.MustCompile(`\| least-squares +\| +30 \| +4 \| risk per seed +\|`).MatchString(stdout) {
		t.Errorf("a per-seed risk × 1.01 at seed 4: status %d\n%s", status, stdout)
	}
}

func TestVerifyReportsEngineMismatch(t *testing.T) {
	dir := t.TempDir()
	_, res := runTiny(t, dir)
	editJSON(t, filepath.Join(res, "result.json"), func(m map[string]any) {
		m["engine"] = "riskgrid-engine/0"
		m["platform"] = "plan9/arm"
	})
	status, stdout, _ := runCLI("verify", res)
	if status != exitOK {
		t.Errorf("status %d: the numbers are the same, want 0", status)
	}
	for _, want := range []string{
		"engine    riskgrid-engine/0 stored, riskgrid-engine/",
		"DIFFERENT engine",
		"platform  plan9/arm stored",
	} {
		if !strings.Contains(stdout, want) {
			t.Errorf("output lacks %q:\n%s", want, stdout)
		}
	}
}

func TestVerifyBadInput(t *testing.T) {
	dir := t.TempDir()
	sp, res := runTiny(t, dir)
	other := writeSpec(t, dir, "other.toml", strings.Replace(tinySpec, "count = 4", "count = 5", 1))
	for _, tc := range []struct {
		args []string
		want string
	}{
		{[]string{"verify"}, "give exactly one"},
		{[]string{"verify", filepath.Join(dir, "nowhere")}, "no such file"},
		{[]string{"verify", other, "-o", filepath.Join(dir, "out")}, "no stored result for"},
		{[]string{"verify", other, "-o", filepath.Join(dir, "out")}, "tiny-"}, // lists the other version
		{[]string{"verify", sp}, "no stored result"},                          // default -o results/
		{[]string{"verify", res, "-within", "-1"}, "-within"},
		{[]string{"verify", res, "-data", "x.csv"}, "has no data file"},
		{[]string{"verify", dir}, "result.json"}, // a folder without a result
	} {
		status, _, stderr := runCLI(tc.args...)
		if status != exitBadInput || !strings.Contains(stderr, tc.want) {
			t.Errorf("%v: status %d, stderr %q; want 2 and %q", tc.args, status, stderr, tc.want)
		}
	}
}

const verifyCSVSpec = `name = "csvv"
[data]
source = "csv"
file = "d.csv"
target = "y"
n_test = 4
n_train = 8
[[model]]
family = "ridge"
lambda = 0.1
[grid]
param = "features"
values = [1, 2]
[seeds]
count = 3
`

// TestVerifyCSV: a csv result folder is verified with its data file given
// by -data (the stored path is relative to the spec file, unknown to the
// folder); a data file that changed is named as such, and its numbers move
// unless only its bytes changed.
func TestVerifyCSV(t *testing.T) {
	dir := t.TempDir()
	rows := "a,b,y\n"
	for i := range 14 {
		rows += strconv.Itoa(i) + "," + strconv.Itoa(i*i%7) + "," + strconv.Itoa(3*i%5) + "\n"
	}
	writeSpec(t, filepath.Join(dir), "d.csv", rows)
	sp := writeSpec(t, dir, "csv.toml", verifyCSVSpec)
	out := filepath.Join(dir, "out")
	if status, _, stderr := runCLI("run", sp, "-o", out); status != exitOK {
		t.Fatalf("run: %s", stderr)
	}
	m, _ := filepath.Glob(filepath.Join(out, "csvv-*"))
	res := m[0]
	if status, _, stderr := runCLI("verify", res); status != exitBadInput || !strings.Contains(stderr, "-data FILE") {
		t.Errorf("csv folder without -data from another directory: status %d, %s", status, stderr)
	}
	data := filepath.Join(dir, "d.csv")
	if status, stdout, stderr := runCLI("verify", res, "-data", data); status != exitOK {
		t.Errorf("verify -data: status %d\n%s\n%s", status, stdout, stderr)
	}
	if status, stdout, stderr := runCLI("verify", sp, "-o", out); status != exitOK {
		t.Errorf("verify SPEC: status %d\n%s\n%s", status, stdout, stderr)
	}
	changed := filepath.Join(dir, "changed.csv")
	writeSpec(t, dir, "changed.csv", strings.Replace(rows, "\n5,4,0\n", "\n5,4,1\n", 1))
	status, stdout, _ := runCLI("verify", res, "-data", changed)
	if status != exitFailed || !strings.Contains(stdout, "DATA FILE DIFFERS") {
		t.Errorf("a changed data file: status %d, want 1 and the data file named:\n%s", status, stdout)
	}
	// The same numbers with other bytes (CRLF line endings): named, and
	// the numbers agree, since the streams keep the stored key.
	crlf := filepath.Join(dir, "crlf.csv")
	writeSpec(t, dir, "crlf.csv", strings.ReplaceAll(rows, "\n", "\r\n"))
	status, stdout, _ = runCLI("verify", res, "-data", crlf)
	if status != exitOK || !strings.Contains(stdout, "DATA FILE DIFFERS") {
		t.Errorf("a data file with CRLF line endings: status %d, want 0 and the data file named:\n%s", status, stdout)
	}
}

// A stored spec_toml that no longer hashes to the stored hash, on the same
// engine and without a data file, was edited: the note must say so rather
// than blame an engine or data file that did not change.
func TestVerifyEditedSpecNote(t *testing.T) {
	dir := t.TempDir()
	_, res := runTiny(t, dir)
	editJSON(t, filepath.Join(res, "result.json"), func(m map[string]any) {
		m["spec_toml"] = strings.Replace(m["spec_toml"].(string), "sd = 0.5", "sd = 0.5000001", 1)
	})
	_, stdout, _ := runCLI("verify", res)
	if !strings.Contains(stdout, "spec hash") || !strings.Contains(stdout, "spec_toml") {
		t.Errorf("the note on a changed hash should point at the stored spec_toml:\n%s", stdout)
	}
}
