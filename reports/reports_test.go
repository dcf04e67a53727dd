package reports

import (
	"bytes"
	"encoding/csv"
	"errors"
	"flag"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"riskgrid/runner"
)

var update = flag.Bool("update", false, "rewrite testdata/*.golden from the current output")

// renderer is the common signature of Terminal, Markdown and CSV.
type renderFunc func(io.Writer, *runner.Result) error

var renderers = []struct {
	name string
	fn   renderFunc
}{
	{"terminal", Terminal},
	{"markdown", Markdown},
	{"csv", CSV},
}

// TestGolden compares each renderer's output for the synthetic Results with
// testdata/<renderer>[_lumped].golden byte for byte. The Results are struct
// literals and the renderers only format them (no arithmetic whose last bit
// could differ between architectures: no fused multiply-add sits on a path
// that reaches the output), so an exact comparison is portable.
// Refresh with `go test ./reports -update` and review the diff.
func TestGolden(t *testing.T) {
	results := []struct {
		suffix string
		r      func() *runner.Result
	}{
		{"", synthetic},
		{"_lumped", lumpedResult},
		{"_outer", twoAxisResult},
	}
	for _, rd := range renderers {
		for _, res := range results {
			name := rd.name + res.suffix
			t.Run(name, func(t *testing.T) {
				var buf bytes.Buffer
				if err := rd.fn(&buf, res.r()); err != nil {
					t.Fatalf("%s: %v", name, err)
				}
				path := filepath.Join("testdata", name+".golden")
				if *update {
					if err := os.WriteFile(path, buf.Bytes(), 0o644); err != nil {
						t.Fatal(err)
					}
					return
				}
				want, err := os.ReadFile(path)
				if err != nil {
					t.Fatalf("%v (run go test ./reports -update to create it)", err)
				}
				if got := buf.String(); got != string(want) {
					t.Errorf("%s output differs from %s:\n--- got\n%s\n--- want\n%s", name, path, got, want)
				}
			})
		}
	}
}

// TestTerminalContent checks what the golden file cannot vouch for by
// itself: ASCII rules only, no "NaN", the lumped header, the flags and the
// failed-cell message.
func TestTerminalContent(t *testing.T) {
	var buf bytes.Buffer
	if err := Terminal(&buf, synthetic()); err != nil {
		t.Fatal(err)
	}
	out := buf.String()
	for _, bad := range []string{"NaN", "Inf", "─", "│", "┼", "┌", "╭"} {
		if strings.Contains(out, bad) {
			t.Errorf("Terminal output contains %q:\n%s", bad, out)
		}
	}
	for _, want := range []string{
		"+-----+",
		"| gap (risk−train) |",
		"| bias² |",
		"min-norm [ols]: grid p, 20 seeds; true risk (exact); bias²/variance exact over the input distribution",
		"! " + heavyNote,
		"| 1 failed |",
		"failed: p = 200, seed 7: cholesky: matrix not positive definite",
	} {
		if !strings.Contains(out, want) {
			t.Errorf("Terminal output lacks %q:\n%s", want, out)
		}
	}
	// The heavy-tailed row is p = 50 of min-norm and no other.
	var flagged []string
	for _, line := range strings.Split(out, "\n") {
		if strings.HasSuffix(line, "| !    |") {
			flagged = append(flagged, strings.Fields(strings.Trim(line, "|"))[0])
		}
	}
	if len(flagged) != 1 || flagged[0] != "50" {
		t.Errorf("heavy-tail flags on p = %v, want [50]", flagged)
	}

	buf.Reset()
	if err := Terminal(&buf, lumpedResult()); err != nil {
		t.Fatal(err)
	}
	out = buf.String()
	for _, want := range []string{
		"| bias²+noise |",
		"test risk (held-out test set, 500 points); truth unknown: bias² column is bias² + noise",
	} {
		if !strings.Contains(out, want) {
			t.Errorf("lumped Terminal output lacks %q:\n%s", want, out)
		}
	}
	if strings.Contains(out, "| bias² |") {
		t.Errorf("lumped Terminal output has a plain bias² column:\n%s", out)
	}
}

// TestBasisText checks the heading wording for each split basis.
func TestBasisText(t *testing.T) {
	tests := []struct {
		name  string
		split string
		per   bool
		want  string
	}{
		{"exact", runner.SplitExact, false, "bias²/variance exact over the input distribution"},
		{"test inputs", runner.SplitTestInputs, false, "bias²/variance on 500 fixed test inputs"},
		{"per-seed truth", runner.SplitTestInputs, true, "bias²/variance on 500 fixed test inputs, each seed against its own β"},
		{"lumped", runner.SplitLumped, false, "truth unknown: bias² column is bias² + noise"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			r := synthetic()
			r.SplitBasis, r.TruthPerSeed, r.TestPoints = tt.split, tt.per, 500
			if err := check(r); err != nil {
				t.Fatal(err)
			}
			if got := splitText(r); got != tt.want {
				t.Errorf("splitText(%q) = %q, want %q", tt.split, got, tt.want)
			}
		})
	}
}

// TestMarkdownContent checks the per-model headings and provenance lines.
func TestMarkdownContent(t *testing.T) {
	var buf bytes.Buffer
	r := synthetic()
	if err := Markdown(&buf, r); err != nil {
		t.Fatal(err)
	}
	out := buf.String()
	if n := strings.Count(out, "\n### "); n+boolInt(strings.HasPrefix(out, "### ")) != len(r.Models) {
		t.Errorf("Markdown has %d ### headings, want %d:\n%s", n, len(r.Models), out)
	}
	prov := "Spec `double-descent-demo`, hash `3f9a0c1de27b`, engine `e1`, seeds 101–120, run 2025-06-30 14:05 UTC; true risk (exact)."
	if n := strings.Count(out, prov); n != len(r.Models) {
		t.Errorf("Markdown has %d provenance lines %q, want %d:\n%s", n, prov, len(r.Models), out)
	}
	for _, want := range []string{"|----:|", "`cholesky: matrix not positive definite`"} {
		if !strings.Contains(out, want) {
			t.Errorf("Markdown lacks %q:\n%s", want, out)
		}
	}
	if strings.Contains(out, "NaN") {
		t.Errorf("Markdown contains NaN:\n%s", out)
	}
}

func boolInt(b bool) int {
	if b {
		return 1
	}
	return 0
}

// TestCodeSpan checks the fence rule of CommonMark 0.31 §6.1 (a code span
// containing backticks needs a longer fence; a leading or trailing backtick
// needs a space).
func TestCodeSpan(t *testing.T) {
	tests := []struct{ in, want string }{
		{"plain", "`plain`"},
		{"a `b` c", "``a `b` c``"},
		{"``x", "``` ``x ```"},
	}
	for _, tt := range tests {
		if got := codeSpan(tt.in); got != tt.want {
			t.Errorf("codeSpan(%q) = %q, want %q", tt.in, got, tt.want)
		}
	}
}

// TestCSVRoundTrip parses CSV's output with encoding/csv and compares every
// number with the Result. The tolerance is 0: CSV writes
// strconv.FormatFloat(v, 'g', -1, 64), the shortest form that reads back to
// the identical float64 (strconv package contract).
func TestCSVRoundTrip(t *testing.T) {
	const tol = 0.0
	for _, r := range []*runner.Result{synthetic(), lumpedResult()} {
		var buf bytes.Buffer
		if err := CSV(&buf, r); err != nil {
			t.Fatal(err)
		}
		recs, err := csv.NewReader(&buf).ReadAll()
		if err != nil {
			t.Fatalf("read back CSV: %v", err)
		}
		if got := strings.Join(recs[0], ","); got != strings.Join(csvHeader, ",") {
			t.Fatalf("CSV header = %s, want %s", got, strings.Join(csvHeader, ","))
		}
		col := map[string]int{}
		for i, h := range recs[0] {
			col[h] = i
		}
		rows := recs[1:]
		k := 0
		for _, m := range r.Models {
			for _, p := range m.Points {
				if k >= len(rows) {
					t.Fatalf("CSV has %d data rows, want more", len(rows))
				}
				rec := rows[k]
				k++
				get := func(name string) string { return rec[col[name]] }
				for name, want := range map[string]string{
					"model": m.Label, "family": m.Family, "param": r.Param,
					"seeds": strconv.Itoa(p.Seeds), "heavy_tail": strconv.FormatBool(p.HeavyTail),
					"errors": strconv.Itoa(len(p.Errors)), "risk_basis": r.RiskBasis,
					"split_basis": r.SplitBasis, "spec_hash": r.Hash,
					"spec_name": r.Name, "engine": r.Engine, "run_started": r.Created,
				} {
					if got := get(name); got != want {
						t.Errorf("CSV %s %s=%v %s = %q, want %q", m.Label, r.Param, p.Value, name, got, want)
					}
				}
				for name, want := range map[string]float64{
					"value": p.Value, "risk": float64(p.Risk.Mean), "risk_se": float64(p.Risk.SE),
					"risk_q1": float64(p.RiskQ1), "risk_median": float64(p.RiskMedian), "risk_q3": float64(p.RiskQ3),
					"train_risk": float64(p.TrainRisk.Mean), "train_risk_se": float64(p.TrainRisk.SE),
					"gap": float64(p.Gap.Mean), "gap_se": float64(p.Gap.SE),
					"bias2": float64(p.Bias2.Mean), "bias2_se": float64(p.Bias2.SE),
					"variance": float64(p.Variance.Mean), "variance_se": float64(p.Variance.SE),
					"noise": float64(p.Noise.Mean), "noise_se": float64(p.Noise.SE),
					"sum": float64(p.Sum), "df": float64(p.DF.Mean), "df_se": float64(p.DF.SE),
					"norm": float64(p.Norm.Mean), "norm_se": float64(p.Norm.SE),
					"interpolating": float64(p.Interpolating),
				} {
					cell := get(name)
					if math.IsNaN(want) {
						if cell != "" {
							t.Errorf("CSV %s %s=%v %s = %q, want empty for NaN", m.Label, r.Param, p.Value, name, cell)
						}
						continue
					}
					got, err := strconv.ParseFloat(cell, 64)
					if err != nil {
						t.Errorf("CSV %s %s=%v %s = %q: %v", m.Label, r.Param, p.Value, name, cell, err)
						continue
					}
					if !scalar.EqualWithinAbsOrRel(got, want, 0, tol) {
						t.Errorf("CSV %s %s=%v %s = %v, want %v (tol %g)", m.Label, r.Param, p.Value, name, got, want, tol)
					}
				}
			}
		}
		if k != len(rows) {
			t.Errorf("CSV has %d data rows, want %d", len(rows), k)
		}
	}
}

// TestBadResult checks that an inconsistent Result yields ErrResult naming
// the key and the accepted values, and that nothing is written.
func TestBadResult(t *testing.T) {
	tests := []struct {
		name   string
		modify func(*runner.Result)
		want   string
	}{
		{"unknown risk basis", func(r *runner.Result) { r.RiskBasis = "oracle" },
			`risk_basis "oracle" (known: "exact", "quadrature", "monte-carlo", "test-set")`},
		{"unknown split basis", func(r *runner.Result) { r.SplitBasis = "" },
			`split_basis "" (known: "exact", "test-inputs", "lumped")`},
		{"test set without points", func(r *runner.Result) { r.RiskBasis = runner.RiskTestSet },
			`risk_basis "test-set" needs test_points > 0, have 0`},
		{"test inputs without points", func(r *runner.Result) { r.SplitBasis = runner.SplitTestInputs },
			`split_basis "test-inputs" needs test_points > 0, have 0`},
	}
	for _, rd := range renderers {
		for _, tt := range tests {
			t.Run(rd.name+"/"+tt.name, func(t *testing.T) {
				r := synthetic()
				tt.modify(r)
				var buf bytes.Buffer
				err := rd.fn(&buf, r)
				if !errors.Is(err, ErrResult) || !strings.Contains(err.Error(), tt.want) {
					t.Errorf("%s(%s) = %v, want ErrResult with %q", rd.name, tt.name, err, tt.want)
				}
				if buf.Len() != 0 {
					t.Errorf("%s(%s) wrote %d bytes before failing", rd.name, tt.name, buf.Len())
				}
			})
		}
	}
}

// failWriter fails every write.
type failWriter struct{}

var errDisk = errors.New("disk full")

func (failWriter) Write([]byte) (int, error) { return 0, errDisk }

// TestWriteError checks that a failing writer's error comes back wrapped.
func TestWriteError(t *testing.T) {
	for _, rd := range renderers {
		if err := rd.fn(failWriter{}, synthetic()); !errors.Is(err, errDisk) {
			t.Errorf("%s(failWriter) = %v, want an error wrapping %v", rd.name, err, errDisk)
		}
	}
}

// TestNilResultPanics checks that a nil Result is treated as a programmer
// error.
func TestNilResultPanics(t *testing.T) {
	for _, rd := range renderers {
		func() {
			defer func() {
				if v := recover(); v == nil || !strings.HasPrefix(v.(string), "reports: ") {
					t.Errorf("%s(nil) recovered %v, want a panic prefixed reports:", rd.name, v)
				}
			}()
			_ = rd.fn(io.Discard, nil)
		}()
	}
}

// BenchmarkTerminal renders a Result with one model and n grid points.
func BenchmarkTerminal(b *testing.B) {
	base := synthetic().Models[1].Points[0]
	for _, n := range []int{10, 100, 1000} {
		b.Run(strconv.Itoa(n), func(b *testing.B) {
			r := synthetic()
			pts := make([]runner.Point, n)
			for i := range pts {
				pts[i] = base
				pts[i].Value = float64(i + 1)
			}
			r.Models = []runner.ModelResult{{Label: "ridge", Family: "ridge", Points: pts}}
			for b.Loop() {
				if err := Terminal(io.Discard, r); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// TestProvenance checks the provenance fields: the seed range read from the
// resolved spec, the date from the run, and the fallbacks when either is
// missing. The CSV columns carry the same values, checked here on the rows.
func TestProvenance(t *testing.T) {
	tests := []struct {
		name      string
		specTOML  string
		created   string
		seeds     int
		wantSeeds string
		wantFirst string
		wantLast  string
		wantDate  string
	}{
		{"canonical seeds", "[seeds]\ncount = 20\nstart = 101\ntruth = 0\n", "2025-06-30T14:05:09Z", 20,
			"seeds 101–120", "101", "120", "run 2025-06-30 14:05 UTC"},
		{"start 0", "[seeds]\ncount = 3\nstart = 0\n", "2025-01-01T00:00:00+02:00", 3,
			"seeds 0–2", "0", "2", "run 2024-12-31 22:00 UTC"},
		{"no start key", "[seeds]\ncount = 3\n", "", 3, "3 seeds", "", "", "date unknown"},
		{"no spec text", "", "yesterday", 5, "5 seeds", "", "", "run yesterday"},
		{"spec text does not decode", "[seeds\n", "", 5, "5 seeds", "", "", "date unknown"},
		{"negative start", "[seeds]\nstart = -1\n", "", 5, "5 seeds", "", "", "date unknown"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			r := synthetic()
			r.SpecTOML, r.Created, r.Seeds = tt.specTOML, tt.created, tt.seeds
			p := provenanceOf(r)
			if p.seeds != tt.wantSeeds || p.first != tt.wantFirst || p.last != tt.wantLast || p.date != tt.wantDate {
				t.Errorf("provenanceOf = seeds %q [%q, %q] date %q; want %q [%q, %q] %q",
					p.seeds, p.first, p.last, p.date, tt.wantSeeds, tt.wantFirst, tt.wantLast, tt.wantDate)
			}
			var buf bytes.Buffer
			if err := Terminal(&buf, r); err != nil {
				t.Fatal(err)
			}
			footer := "spec double-descent-demo, hash 3f9a0c1de27b, engine e1, " + tt.wantSeeds + ", " + tt.wantDate + "\n"
			if !strings.HasSuffix(buf.String(), "\n\n"+footer) {
				t.Errorf("Terminal footer is not %q:\n%s", footer, buf.String())
			}
			buf.Reset()
			if err := CSV(&buf, r); err != nil {
				t.Fatal(err)
			}
			recs, err := csv.NewReader(&buf).ReadAll()
			if err != nil {
				t.Fatal(err)
			}
			n := len(csvHeader)
			for _, rec := range recs[1:] {
				if got := rec[n-3 : n]; got[0] != tt.wantFirst || got[1] != tt.wantLast || got[2] != tt.created {
					t.Errorf("CSV seed_first, seed_last, run_started = %q, want %q, %q, %q", got, tt.wantFirst, tt.wantLast, tt.created)
				}
			}
		})
	}
}

// TestVarianceParts checks that a randomized family fitted with model seeds
// shows the variance's data and model parts in every renderer, and that a
// family without randomness of its own, or one seed per fit, does not.
func TestVarianceParts(t *testing.T) {
	r := synthetic()
	r.ModelSeeds = 3
	r.Models[0].Family = "random-features"
	p := &r.Models[0].Points[0]
	p.VarianceData, p.VarianceModel = est(0.0301234, 0.0019), est(0.0111111, 0.0008)
	var term, md, tex, csv strings.Builder
	if err := Terminal(&term, r); err != nil {
		t.Fatal(err)
	}
	if err := Markdown(&md, r); err != nil {
		t.Fatal(err)
	}
	if err := LaTeX(&tex, r, ""); err != nil {
		t.Fatal(err)
	}
	if err := CSV(&csv, r); err != nil {
		t.Fatal(err)
	}
	for name, out := range map[string]string{"terminal": term.String(), "markdown": md.String()} {
		if n := strings.Count(out, "var (model)"); n != 1 {
			t.Errorf("%s: %d tables with a var (model) column, want 1 (the randomized family's)", name, n)
		}
		if !strings.Contains(out, "0.0111") {
			t.Errorf("%s: model part 0.0111 missing", name)
		}
	}
	if n := strings.Count(tex.String(), "var.\\ (model)"); n != 1 {
		t.Errorf("latex: %d tables with a model-variance column, want 1", n)
	}
	lines := strings.Split(csv.String(), "\n")
	if !strings.Contains(lines[0], "variance_model") || !strings.Contains(lines[1], ",3,") {
		t.Errorf("csv header or first row lacks the model part or model_seeds = 3:\n%s\n%s", lines[0], lines[1])
	}
	r.ModelSeeds = 1
	term.Reset()
	if err := Terminal(&term, r); err != nil {
		t.Fatal(err)
	}
	if strings.Contains(term.String(), "var (model)") {
		t.Errorf("one model seed: the table shows a model part")
	}
}

// TestMedianNotRoundedAway: at a heavy-tailed point whose quartiles spread
// over decades the median's SE exceeds the median; it still prints with two
// significant digits, not as 0.
func TestMedianNotRoundedAway(t *testing.T) {
	p := runner.Point{Seeds: 20, RiskQ1: 3e3, RiskMedian: 4.1e19, RiskQ3: 8e40}
	if got := medianText(&p); got != "4.1e+19" {
		t.Errorf("medianText = %q, want 4.1e+19", got)
	}
	p = runner.Point{Seeds: 20, RiskQ1: 1.55, RiskMedian: 1.6011, RiskQ3: 1.67}
	if got, want := medianText(&p), meanAt(p.RiskMedian, medianSE(&p)); got != want {
		t.Errorf("medianText = %q, want %q as before when the SE is small", got, want)
	}
}
