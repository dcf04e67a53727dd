package reports

import (
	"bytes"
	"encoding/csv"
	"errors"
	"slices"
	"strings"
	"testing"

	"riskgrid/runner"
)

// twoAxisResult is synthetic() on a two-axis grid p × n_train: each model's
// curve at n = 50 and, invented likewise, at n = 100 (risks scaled down).
// Layout only, no run behind it.
func twoAxisResult() *runner.Result {
	r := synthetic()
	r.OuterParam = "n_train"
	r.NTrain = 100
	one := r.Models
	r.Models = nil
	for _, n := range []float64{50, 100} {
		for _, m := range one {
			m.Outer = &n
			m.Points = append([]runner.Point(nil), m.Points...)
			if n == 100 {
				for j := range m.Points {
					p := &m.Points[j]
					p.Risk.Mean /= 2
					p.HeavyTail = false
					p.Errors = nil
				}
			}
			r.Models = append(r.Models, m)
		}
	}
	return r
}

func TestTwoAxisTables(t *testing.T) {
	r := twoAxisResult()
	var term, md bytes.Buffer
	if err := Terminal(&term, r); err != nil {
		t.Fatal(err)
	}
	if err := Markdown(&md, r); err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{
		"min-norm [ols], n_train = 50: grid p, 20 seeds",
		"ridge λ=0.1 [ridge], n_train = 100: grid p, 20 seeds",
	} {
		if !strings.Contains(term.String(), want) {
			t.Errorf("Terminal output lacks %q:\n%s", want, term.String())
		}
	}
	if got := strings.Count(md.String(), "### "); got != 4 {
		t.Errorf("Markdown has %d blocks, want 4 (2 models × 2 outer values)", got)
	}
	if !strings.Contains(md.String(), "### min-norm, n_train = 100\n") {
		t.Errorf("Markdown lacks the heading of min-norm at n_train = 100:\n%s", md.String())
	}
}

// TestTwoAxisCSV: one tidy row per model × outer value × grid value, the
// outer knob and value in their own columns after value.
func TestTwoAxisCSV(t *testing.T) {
	r := twoAxisResult()
	var buf bytes.Buffer
	if err := CSV(&buf, r); err != nil {
		t.Fatal(err)
	}
	recs, err := csv.NewReader(&buf).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if got, want := strings.Join(recs[0][:6], ","), "model,family,param,value,outer_param,outer_value"; got != want {
		t.Errorf("CSV header starts %s, want %s", got, want)
	}
	if len(recs[0]) != len(csvHeader)+2 {
		t.Errorf("CSV has %d columns, want %d", len(recs[0]), len(csvHeader)+2)
	}
	if len(recs) != 1+2*2*5 {
		t.Fatalf("CSV has %d rows, want 1 + 20", len(recs))
	}
	seen := map[string]bool{}
	for _, rec := range recs[1:] {
		if rec[4] != "n_train" || len(rec) != len(recs[0]) {
			t.Errorf("row %v: outer_param %q, want n_train", rec[:6], rec[4])
		}
		key := rec[0] + "|" + rec[3] + "|" + rec[5]
		if seen[key] {
			t.Errorf("row model %s p %s n %s repeated", rec[0], rec[3], rec[5])
		}
		seen[key] = true
	}
	if !seen["min-norm|50|100"] || !seen["ridge λ=0.1|200|50"] {
		t.Errorf("CSV lacks expected (model, p, n) rows: %v", seen)
	}
	// The n = 100 risk of min-norm at p = 10 is half the n = 50 one.
	risk := slices.Index(recs[0], "risk")
	for _, rec := range recs[1:] {
		if rec[0] == "min-norm" && rec[3] == "10" && rec[5] == "100" && rec[risk] != "0.9061728" {
			t.Errorf("min-norm p=10 n=100 risk %s, want 0.9061728", rec[risk])
		}
	}
}

func TestTwoAxisInconsistent(t *testing.T) {
	noOuter := twoAxisResult()
	noOuter.Models[1].Outer = nil
	stray := synthetic()
	v := 3.0
	stray.Models[0].Outer = &v
	for name, r := range map[string]*runner.Result{"curve without outer": noOuter, "outer without outer_param": stray} {
		for _, rd := range renderers {
			var buf bytes.Buffer
			if err := rd.fn(&buf, r); !errors.Is(err, ErrResult) || buf.Len() != 0 {
				t.Errorf("%s(%s) = %v and %d bytes, want ErrResult and nothing written", rd.name, name, err, buf.Len())
			}
		}
	}
}

// TestAgreeTwoAxis: Agree pairs the curves of two-axis results by label and
// outer value, so equal results agree and a change is placed on its slice.
func TestAgreeTwoAxis(t *testing.T) {
	stored := twoAxisResult()
	if a := Agree(stored, clone(t, stored), nil, nil, nil, 0); !a.OK() {
		t.Fatalf("identical two-axis results disagree: moved %v, shape %v", a.Moved, a.Shape)
	}
	fresh := clone(t, stored)
	fresh.Models[2].Points[0].Risk.Mean *= 1 + 1e-6 // min-norm, n_train = 100, p = 10
	a := Agree(stored, fresh, nil, nil, nil, DefaultWithin)
	if len(a.Moved) != 1 || a.Moved[0].Model != "min-norm, n_train = 100" || a.Moved[0].Value != 10 {
		t.Errorf("moved %+v, want one number: min-norm, n_train = 100 at p = 10", a.Moved)
	}
	other := clone(t, stored)
	other.OuterParam = "lambda"
	if a := Agree(stored, other, nil, nil, nil, DefaultWithin); a.OK() || !strings.Contains(strings.Join(a.Shape, "\n"), `outer grid knob: stored "n_train", recomputed "lambda"`) {
		t.Errorf("a different outer knob: shape %v", a.Shape)
	}
}

// TestTwoAxisLaTeX: one table per model and outer value, the outer value in
// its caption.
func TestTwoAxisLaTeX(t *testing.T) {
	var buf bytes.Buffer
	if err := LaTeX(&buf, twoAxisResult(), "parentheses"); err != nil {
		t.Fatal(err)
	}
	out := buf.String()
	if n := strings.Count(out, "\\begin{table}"); n != 4 {
		t.Errorf("%d tables, want 4 (2 models × 2 outer values)", n)
	}
	for _, want := range []string{`\caption[{min-norm, n\_train = 100 (ols)}]`, `{ridge $\lambda$=0.1, n\_train = 50, family`} {
		if !strings.Contains(out, want) {
			t.Errorf("LaTeX lacks %q:\n%s", want, out)
		}
	}
}
