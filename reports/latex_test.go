package reports

import (
	"bytes"
	"errors"
	"io"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"riskgrid/runner"
	"riskgrid/spec"
)

// numberToken matches a decimal number as the renderers print it.
var numberToken = regexp.MustCompile(`-?[0-9]+(\.[0-9]+)?`)

// sameUpToRounding compares two rendered tables: the text between numbers
// must be identical, and each number with a decimal point may differ from
// the golden one by at most one unit in the coarser of their last printed
// places (the most a last-bit difference in the input can move a correctly
// rounded decimal, at a rounding boundary, including one of its SE that
// moves the place); integers, which also stand for seeds,
// grid values and exponents, must be identical. It returns a description of
// the first difference, "" when there is none.
func sameUpToRounding(got, want string) string {
	gi, wi := numberToken.FindAllStringIndex(got, -1), numberToken.FindAllStringIndex(want, -1)
	if len(gi) != len(wi) {
		return "different count of numbers: " + strconv.Itoa(len(gi)) + " vs " + strconv.Itoa(len(wi))
	}
	gp, wp := 0, 0
	for k := range gi {
		if a, b := got[gp:gi[k][0]], want[wp:wi[k][0]]; a != b {
			return "text differs: " + strconv.Quote(a) + " vs " + strconv.Quote(b)
		}
		g, w := got[gi[k][0]:gi[k][1]], want[wi[k][0]:wi[k][1]]
		if g != w {
			dot := strings.IndexByte(w, '.')
			if dot < 0 || strings.IndexByte(g, '.') < 0 {
				return "integer " + g + " vs " + w
			}
			gv, _ := strconv.ParseFloat(g, 64)
			wv, _ := strconv.ParseFloat(w, 64)
			// The coarser of the two last places: a flip of the SE's own
			// rounding moves the place the mean is rounded at.
			ulp := math.Pow10(-min(len(w)-dot-1, len(g)-strings.IndexByte(g, '.')-1))
			if math.Abs(gv-wv) > ulp*(1+1e-9) {
				return "number " + g + " vs " + w + " (tolerance " + strconv.FormatFloat(ulp, 'g', -1, 64) + ")"
			}
		}
		gp, wp = gi[k][1], wi[k][1]
	}
	if got[gp:] != want[wp:] {
		return "trailing text differs"
	}
	return ""
}

// TestSameUpToRounding checks the golden comparator itself, so that the
// LaTeX golden test can fail.
func TestSameUpToRounding(t *testing.T) {
	tests := []struct {
		got, want string
		same      bool
	}{
		{"$1.812\\ (0.041)$", "$1.812\\ (0.041)$", true},
		{"$1.813\\ (0.041)$", "$1.812\\ (0.041)$", true},   // one unit in the last place
		{"$1.814\\ (0.041)$", "$1.812\\ (0.041)$", false},  // two units
		{"$1.81\\ (0.041)$", "$1.812\\ (0.041)$", true},    // a digit fewer, within its unit
		{"$1.79\\ (0.041)$", "$1.812\\ (0.041)$", false},   // a digit fewer, two of its units
		{"seed 8", "seed 7", false},                        // integers are exact
		{"$1.812 \\pm 0.041$", "$1.812\\ (0.041)$", false}, // text between numbers
		{"a 1.0 b", "a 1.0", false},
	}
	for _, tt := range tests {
		if got := sameUpToRounding(tt.got, tt.want) == ""; got != tt.same {
			t.Errorf("sameUpToRounding(%q, %q) same = %v, want %v", tt.got, tt.want, got, tt.same)
		}
	}
}

// TestLaTeXGolden compares LaTeX's output for the synthetic Results in both
// standard-error styles with testdata/latex_*.golden, numbers within one
// unit in their last printed place (see sameUpToRounding). Refresh with
// `go test ./reports -run LaTeXGolden -update` and review the diff.
func TestLaTeXGolden(t *testing.T) {
	for _, tc := range []struct {
		name  string
		r     func() *runner.Result
		style string
	}{
		{"latex_parentheses", synthetic, spec.SEParentheses},
		{"latex_plus-minus", synthetic, spec.SEPlusMinus},
		{"latex_lumped", lumpedResult, spec.SEParentheses},
	} {
		t.Run(tc.name, func(t *testing.T) {
			var buf bytes.Buffer
			if err := LaTeX(&buf, tc.r(), tc.style); err != nil {
				t.Fatal(err)
			}
			path := filepath.Join("testdata", tc.name+".golden")
			if *update {
				if err := os.WriteFile(path, buf.Bytes(), 0o644); err != nil {
					t.Fatal(err)
				}
				return
			}
			want, err := os.ReadFile(path)
			if err != nil {
				t.Fatalf("%v (run go test ./reports -run LaTeXGolden -update to create it)", err)
			}
			if d := sameUpToRounding(buf.String(), string(want)); d != "" {
				t.Errorf("%s differs from %s: %s\n--- got\n%s\n--- want\n%s", tc.name, path, d, buf.String(), want)
			}
		})
	}
}

// TestTexText checks the escaping of text: every character LaTeX gives a
// meaning to (The LaTeX Companion, 2nd ed., Addison-Wesley 2004, §7.1, the
// ten special characters; from memory), the OT1 look-alikes < > |, dashes,
// and the symbols this program writes (λ, ², β, ‖) set in math mode.
func TestTexText(t *testing.T) {
	tests := []struct{ in, want string }{
		{`a_b%c&d#e$f{g}h~i^j\k`, `a\_b\%c\&d\#e\$f\{g\}h\textasciitilde{}i\textasciicircum{}j\textbackslash{}k`},
		{"ridge λ=0.1", `ridge $\lambda$=0.1`},
		{"bias²/variance", `bias$^{2}$/variance`},
		{"λσ²", `$\lambda\sigma^{2}$`}, // one math run, not $…$$…$
		{"‖b‖ ≤ 1", `$\|$b$\|$ $\leq$ 1`},
		{"a<b>c|d", `a\textless{}b\textgreater{}c\textbar{}d`},
		{"seeds 1–20", "seeds 1--20"},
		{"line\nbreak\ttab\x01", "line break tab "},
		{"naïve café", "naïve café"}, // UTF-8 text passes through
		{"", ""},
	}
	for _, tt := range tests {
		if got := texText(tt.in); got != tt.want {
			t.Errorf("texText(%q) = %q, want %q", tt.in, got, tt.want)
		}
	}
}

// TestTexMath checks numbers in e-notation set as powers of ten.
func TestTexMath(t *testing.T) {
	tests := []struct{ in, want string }{
		{"3.10e-29", `3.10\times10^{-29}`},
		{"2.61e+07", `2.61\times10^{7}`},
		{"1e-06", `10^{-6}`},
		{"-1e-06", `-10^{-6}`},
		{"-0.0123", "-0.0123"},
		{"26000", "26000"},
	}
	for _, tt := range tests {
		if got := texMath(tt.in); got != tt.want {
			t.Errorf("texMath(%q) = %q, want %q", tt.in, got, tt.want)
		}
	}
}

// balanced reports whether the braces of s balance and its $ signs pair up,
// escaped ones (\{ \} \$) aside: a rough structural check of LaTeX source.
func balanced(s string) bool {
	s = strings.NewReplacer(`\\`, "", `\{`, "", `\}`, "", `\$`, "").Replace(s)
	depth := 0
	for _, c := range s {
		switch c {
		case '{':
			depth++
		case '}':
			depth--
			if depth < 0 {
				return false
			}
		}
	}
	return depth == 0 && strings.Count(s, "$")%2 == 0
}

// TestLaTeXEscapesNames puts every special character into a label, a
// family, the grid knob and an error message, and checks that each comes
// out escaped and that the source stays balanced.
func TestLaTeXEscapesNames(t *testing.T) {
	const nasty = `a_b & 50% #1 {x} ~y^ \z $w] λ`
	r := synthetic()
	r.Param = "knob_1"
	r.Models[0].Label = nasty
	r.Models[1].Family = "fam%ily"
	r.Models[1].Points[4].Errors[0].Msg = `solve{A}: 100% \failed` + "\uE001"
	var buf bytes.Buffer
	if err := LaTeX(&buf, r, ""); err != nil {
		t.Fatal(err)
	}
	out := buf.String()
	esc := `a\_b \& 50\% \#1 \{x\} \textasciitilde{}y\textasciicircum{} \textbackslash{}z \$w] $\lambda$`
	for _, want := range []string{
		`\caption[{` + esc + ` (ols)}]{` + esc + `, family \texttt{ols}`,
		`\texttt{fam\%ily}`,
		`knob\_1 & risk`,
		`failed: knob\_1 = 200, seed 7: \texttt{solve\{A\}: 100\% \textbackslash{}failed}\par`,
	} {
		if !strings.Contains(out, want) {
			t.Errorf("LaTeX output lacks %q:\n%s", want, out)
		}
	}
	if !balanced(out) {
		t.Errorf("LaTeX output has unbalanced braces or $:\n%s", out)
	}
}

// TestLaTeXStyles checks the two standard-error styles, the default, the
// booktabs rules and that an unknown style is an error that writes nothing.
func TestLaTeXStyles(t *testing.T) {
	render := func(style string) string {
		t.Helper()
		var buf bytes.Buffer
		if err := LaTeX(&buf, synthetic(), style); err != nil {
			t.Fatalf("LaTeX(%q): %v", style, err)
		}
		return buf.String()
	}
	paren, pm, def := render(spec.SEParentheses), render(spec.SEPlusMinus), render("")
	if def != paren {
		t.Errorf("the default style differs from %q", spec.SEParentheses)
	}
	// min-norm at p = 10: risk 1.8123456 ± 0.0412345 (fixture_test.go).
	if !strings.Contains(paren, `$10$ & $1.812\ (0.041)$ &`) || strings.Contains(paren, `\pm`) {
		t.Errorf("parentheses style: want $1.812\\ (0.041)$ and no \\pm:\n%s", paren)
	}
	if !strings.Contains(pm, `$10$ & $1.812 \pm 0.041$ &`) || strings.Contains(pm, `\ (`) {
		t.Errorf("plus-minus style: want $1.812 \\pm 0.041$ and no parentheses:\n%s", pm)
	}
	for _, out := range []string{paren, pm} {
		if n := strings.Count(out, `\begin{table}`); n != 2 {
			t.Errorf("%d table environments, want one per model (2)", n)
		}
		for _, rule := range []string{`\toprule`, `\midrule`, `\bottomrule`} {
			if strings.Count(out, rule) != 2 {
				t.Errorf("want %s once per table", rule)
			}
		}
		for _, line := range strings.Split(out, "\n") {
			if strings.HasPrefix(line, `\begin{tabular}`) && strings.Contains(line, "|") {
				t.Errorf("vertical rule in %s", line)
			}
		}
		if !balanced(out) {
			t.Errorf("unbalanced braces or $:\n%s", out)
		}
	}
	// "" takes the style the resolved spec records; an explicit one wins.
	r := synthetic()
	r.SpecTOML += "\n[tables]\nse_style = \"plus-minus\"\n"
	var buf bytes.Buffer
	if err := LaTeX(&buf, r, ""); err != nil || buf.String() != pm {
		t.Errorf("LaTeX(\"\") with se_style = \"plus-minus\" recorded: err %v, output differs from the plus-minus style", err)
	}
	buf.Reset()
	if err := LaTeX(&buf, r, spec.SEParentheses); err != nil || buf.String() != paren {
		t.Errorf("LaTeX(parentheses) with plus-minus recorded: err %v, output differs from the parentheses style", err)
	}
	r.SpecTOML += "\n[tables]\nse_style = \"brackets\"\n" // a repeated table: does not decode
	buf.Reset()
	if err := LaTeX(&buf, r, ""); err != nil || !strings.Contains(buf.String(), `$1.812\ (0.041)$`) {
		t.Errorf("LaTeX(\"\") with an undecodable spec_toml: err %v, want the default style:\n%s", err, buf.String())
	}
	buf.Reset()
	if err := LaTeX(&buf, synthetic(), "brackets"); err == nil || !strings.Contains(err.Error(), "parentheses, plus-minus") || buf.Len() != 0 {
		t.Errorf("LaTeX(style brackets) = %v, wrote %d bytes; want an error naming the known styles and no output", err, buf.Len())
	}
}

// TestLaTeXErrors runs the checks every renderer passes: an inconsistent
// Result writes nothing, a failing writer's error is returned, nil panics.
func TestLaTeXErrors(t *testing.T) {
	r := synthetic()
	r.RiskBasis = "oracle"
	var buf bytes.Buffer
	if err := LaTeX(&buf, r, ""); !errors.Is(err, ErrResult) || buf.Len() != 0 {
		t.Errorf("LaTeX(bad basis) = %v after %d bytes, want ErrResult and no output", err, buf.Len())
	}
	if err := LaTeX(failWriter{}, synthetic(), ""); !errors.Is(err, errDisk) {
		t.Errorf("LaTeX(failWriter) = %v, want %v", err, errDisk)
	}
	defer func() {
		if v := recover(); v == nil {
			t.Errorf("LaTeX(nil) did not panic")
		}
	}()
	_ = LaTeX(io.Discard, nil, "")
}

// TestLaTeXNoise checks where σ² goes: into the caption when it is the same
// at every grid value (the fixture's σ² = 1), into a column when it varies,
// nowhere under the lumped split.
func TestLaTeXNoise(t *testing.T) {
	render := func(r *runner.Result) string {
		var buf bytes.Buffer
		if err := LaTeX(&buf, r, ""); err != nil {
			t.Fatal(err)
		}
		return buf.String()
	}
	out := render(synthetic())
	if strings.Count(out, `Noise $\sigma^2 = 1.000$.`) != 2 || strings.Contains(out, `& noise $\sigma^2$`) {
		t.Errorf("constant noise: want it in both captions and no column:\n%s", out)
	}
	r := synthetic()
	r.Models[0].Points[1].Noise.Mean = 2
	out = render(r)
	if !strings.Contains(out, `variance & noise $\sigma^2$ & df`) || !strings.Contains(out, `$0.0412\ (0.0021)$ & $1.000$ & $10.00$`) ||
		!strings.Contains(out, `& $2.000$ &`) {
		t.Errorf("varying noise: want a noise column:\n%s", out)
	}
	if out := render(lumpedResult()); strings.Contains(out, "Noise $") || strings.Contains(out, `& noise`) {
		t.Errorf("lumped: want no noise caption or column:\n%s", out)
	}
}
