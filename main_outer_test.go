package main

import (
	"encoding/csv"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"riskgrid/runner"
)

const twoAxisSpec = `name = "tiny-2d"
[data]
source = "linear-gaussian"
dim = 30
n_test = 10
noise = { kind = "gaussian", sd = 0.5 }
[[model]]
family = "least-squares"
[grid]
param = "features"
values = [5, 20, 30]
[grid.outer]
param = "n_train"
values = [10, 20]
[seeds]
count = 4
`

func TestTwoAxisRun(t *testing.T) {
	dir := t.TempDir()
	one := writeSpec(t, dir, "tiny.toml", tinySpec) // n_train = 20: the second slice
	sp := writeSpec(t, dir, "tiny-2d.toml", twoAxisSpec)
	out := filepath.Join(dir, "out")

	status, stdout, _ := runCLI("check", sp, "-inputs")
	if status != exitOK {
		t.Fatalf("check: status %d", status)
	}
	for _, want := range []string{
		"24 (1 models × 3 features × 2 n_train values × 4 seeds)", "[grid.outer]",
		"inputs of the data key at n_train = 10", `data.n_train "20"`, `inputs of the model key of "least-squares" at n_train = 20`,
	} {
		if !strings.Contains(stdout, want) {
			t.Errorf("check output lacks %q:\n%s", want, stdout)
		}
	}

	if status, _, stderr := runCLI("run", one, "-o", out); status != exitOK {
		t.Fatalf("run one-axis: status %d, %s", status, stderr)
	}
	status, stdout, stderr := runCLI("run", sp, "-o", out)
	if status != exitOK || !strings.Contains(stderr, "12 cells computed, 12 from the cache") {
		t.Fatalf("run two-axis after the n_train = 20 run: status %d, stderr %q; want the n_train = 20 slice from the cache", status, stderr)
	}
	if !strings.Contains(stdout, "least-squares [least-squares], n_train = 10: grid features") {
		t.Errorf("stdout lacks the n_train = 10 block:\n%s", stdout)
	}
	res := resultFolder(t, out, "tiny-2d")
	b, _ := os.ReadFile(filepath.Join(res, "result.json"))
	var r runner.Result
	if err := json.Unmarshal(b, &r); err != nil || r.OuterParam != "n_train" || len(r.Models) != 2 || *r.Models[1].Outer != 20 {
		t.Errorf("result.json: err %v, outer %q, %d curves", err, r.OuterParam, len(r.Models))
	}
	f, _ := os.Open(filepath.Join(res, "table.csv"))
	recs, err := csv.NewReader(f).ReadAll()
	f.Close()
	if err != nil || len(recs) != 1+6 || recs[0][5] != "outer_value" || recs[6][5] != "20" {
		t.Errorf("table.csv: err %v, %d rows, want 7 with outer_value", err, len(recs))
	}

	// The heat map of the one model, as SVG and PNG; none for the one-axis run.
	hm := filepath.Join(res, "figures", "heatmap-1-least-squares")
	for _, ext := range []string{".svg", ".png"} {
		if st, err := os.Stat(hm + ext); err != nil || st.Size() < 1000 {
			t.Errorf("heat map %s: %v", hm+ext, err)
		}
	}
	if one, _ := filepath.Glob(filepath.Join(out, "tiny-????????????", "figures", "heatmap-*")); len(one) != 0 {
		t.Errorf("a one-axis result got heat maps: %v", one)
	}

	os.Remove(filepath.Join(res, "table.md"))
	os.Remove(hm + ".png")
	if status, _, stderr := runCLI("report", res); status != exitOK {
		t.Errorf("report: status %d, %s", status, stderr)
	}
	if md, err := os.ReadFile(filepath.Join(res, "table.md")); err != nil || !strings.Contains(string(md), "### least-squares, n_train = 20") {
		t.Errorf("report did not rewrite the two-axis table.md: %v", err)
	}
	if _, err := os.Stat(hm + ".png"); err != nil {
		t.Errorf("report did not redraw the heat map: %v", err)
	}
}

// TestTwoAxisVerify: verify recomputes a two-axis result and agrees; a
// planted change in the second slice is caught there and nowhere else.
func TestTwoAxisVerify(t *testing.T) {
	dir := t.TempDir()
	sp := writeSpec(t, dir, "tiny-2d.toml", twoAxisSpec)
	out := filepath.Join(dir, "out")
	if status, _, stderr := runCLI("run", sp, "-o", out); status != exitOK {
		t.Fatalf("run: status %d, %s", status, stderr)
	}
	res := resultFolder(t, out, "tiny-2d")
	if status, stdout, stderr := runCLI("verify", res); status != exitOK {
		t.Fatalf("verify of an unchanged two-axis result: status %d\n%s\n%s", status, stdout, stderr)
	}
	editJSON(t, filepath.Join(res, "result.json"), func(m map[string]any) {
		r := jsonPoint(m, 1, 0)["risk"].(map[string]any) // n_train = 20, features = 5
		r["mean"] = r["mean"].(float64) * (1 + 1e-6)
	})
	status, stdout, _ := runCLI("verify", res)
	if status != exitFailed || !strings.Contains(stdout, "DISAGREES: 1 number moved") || !strings.Contains(stdout, "least-squares, n_train = 20") {
		t.Errorf("verify of a planted change at n_train = 20: status %d, want 1 and one moved number there\n%s", status, stdout)
	}
}
