package reports

import (
	"bytes"
	"fmt"
	"io"
	"strconv"
	"strings"

	"riskgrid/runner"
	"riskgrid/spec"
)

// LaTeX writes r as LaTeX tables in the booktabs style (\toprule,
// \midrule, \bottomrule, no vertical rules), one table environment per
// model: a caption saying how risk and the split were measured, the
// standard-error style and the provenance (spec name, short hash, engine,
// seeds, the run's date), a \label, a tabular with one row per grid value,
// and notes for heavy-tailed points and failed cells. The document needs
// \usepackage{booktabs,graphicx}.
//
// Numbers are rounded exactly as in Terminal (see measure): risk, train,
// gap, bias² and variance carry their standard error, as 1.234\ (0.012)
// under spec.SEParentheses or 1.234 \pm 0.012 under spec.SEPlusMinus; ""
// takes the style recorded in the resolved spec ([tables] se_style in
// r.SpecTOML), else parentheses. The median, df and ‖b‖ are shown alone at the
// resolution of their own SE. To keep a table near the width of a page the
// noise σ², the same at every grid value, is stated in the caption, and the
// sum bias² + variance + noise (a check of the split, in the other tables)
// is left out; a table still wider than the line is scaled down to it.
// Every number is set in math mode, so a minus sign is a minus and 3.10e-29
// is 3.10\times10^{-29}. Labels, names and messages are escaped (see
// texText). Under the lumped split the bias² column holds bias² + noise.
//
// The whole output is formatted before the first byte is written, so an
// inconsistent Result (ErrResult) or an unknown style writes nothing.
func LaTeX(w io.Writer, r *runner.Result, style string) error {
	if err := check(r); err != nil {
		return err
	}
	if style == "" {
		style = spec.SEParentheses
		if v, ok := readRecorded(r.SpecTOML); ok && v.Tables.SEStyle != "" {
			style = v.Tables.SEStyle
		}
	}
	if !contains(spec.SEStyles, style) {
		return fmt.Errorf("reports: standard-error style %q (known: %s)", style, strings.Join(spec.SEStyles, ", "))
	}
	pv := provenanceOf(r)
	var buf bytes.Buffer
	fmt.Fprintf(&buf, "%% riskgrid tables of spec %s, hash %s; needs \\usepackage{booktabs,graphicx}\n", r.Name, pv.hash)
	for i := range r.Models {
		latexTable(&buf, r, pv, i, style)
	}
	if _, err := w.Write(buf.Bytes()); err != nil {
		return fmt.Errorf("reports: write latex tables: %w", err)
	}
	return nil
}

// latexTable writes the table environment of model i.
func latexTable(buf *bytes.Buffer, r *runner.Result, pv provenance, i int, style string) {
	m := &r.Models[i]
	lumped := r.SplitBasis == runner.SplitLumped
	var flagged bool
	for j := range m.Points {
		flagged = flagged || flags(&m.Points[j]) != ""
	}
	head := []string{texParam(r.Param), "risk", "median", "train", "gap", "bias$^2$", "variance", "df", "$\\|b\\|_2$"}
	if lumped {
		head[5] = "bias$^2$ + noise"
	}
	// The noise σ² is the same at every grid value (it belongs to the data):
	// it goes into the caption, or into a column should it ever vary.
	noise, noiseCol := "", false
	if !lumped && len(m.Points) > 0 {
		v := meanAt(m.Points[0].Noise.Mean, m.Points[0].Noise.SE)
		for j := range m.Points {
			noiseCol = noiseCol || meanAt(m.Points[j].Noise.Mean, m.Points[j].Noise.SE) != v
		}
		if noiseCol {
			head = append(head[:7], append([]string{"noise $\\sigma^2$"}, head[7:]...)...)
		} else if v != blank {
			noise = " Noise $\\sigma^2 = " + texMath(v) + "$."
		}
	}
	// A randomized family with model seeds: the variance's parts due to
	// the training sample and to the model's own randomness.
	split := modelSplit(r, m)
	if split {
		head = append(head[:7], append([]string{"var.\\ (data)", "var.\\ (model)"}, head[7:]...)...)
	}
	cols := strings.Repeat("r", len(head))
	if flagged {
		head = append(head, "")
		cols += "l"
	}

	se := "standard errors in parentheses"
	if style == spec.SEPlusMinus {
		se = "$\\pm$ one standard error"
	}
	short := texText(curveName(r, m)) + " (" + texText(m.Family) + ")" // with the outer value on a two-axis grid
	fmt.Fprintf(buf, "\n\\begin{table}[htbp]\n\\centering\n\\small\n")
	fmt.Fprintf(buf, "\\caption[{%s}]{%s, family \\texttt{%s}, grid \\texttt{%s}: %s; %s.%s Means over %d seeds, %s, each rounded at the second significant digit of its standard error. Spec \\texttt{%s}, hash \\texttt{%s}, engine \\texttt{%s}, %s, %s.}\n",
		short, texText(curveName(r, m)), texText(m.Family), texText(r.Param), texText(riskText(r)), texText(splitText(r)),
		noise, r.Seeds, se, texText(pv.name), pv.hash, texText(pv.engine), texText(pv.seeds), texText(pv.date))
	fmt.Fprintf(buf, "\\label{tab:%s-%s-%d}\n", texLabel(r.Name), pv.hash, i+1)
	// Scaled down to the line width when wider, never up (graphicx: \width
	// is the natural width inside \resizebox's arguments).
	buf.WriteString("\\resizebox{\\ifdim\\width>\\linewidth\\linewidth\\else\\width\\fi}{!}{%\n")
	fmt.Fprintf(buf, "\\begin{tabular}{%s}\n\\toprule\n%s \\\\\n\\midrule\n", cols, strings.Join(head, " & "))
	for j := range m.Points {
		p := &m.Points[j]
		pair := func(e runner.Estimate) string {
			mean, s := measure(e.Mean, e.SE)
			return texMeasure(mean, s, style)
		}
		cells := []string{
			texNum(knob(p.Value)),
			pair(p.Risk), texNum(medianText(p)),
			pair(p.TrainRisk), pair(p.Gap), pair(p.Bias2), pair(p.Variance),
			texNum(meanAt(p.DF.Mean, p.DF.SE)), texNum(meanAt(p.Norm.Mean, p.Norm.SE)),
		}
		if split {
			cells = append(cells[:7], append([]string{pair(p.VarianceData), pair(p.VarianceModel)}, cells[7:]...)...)
		}
		if noiseCol {
			cells = append(cells[:7], append([]string{texNum(meanAt(p.Noise.Mean, p.Noise.SE))}, cells[7:]...)...)
		}
		if flagged {
			cells = append(cells, texText(flags(p)))
		}
		fmt.Fprintf(buf, "%s \\\\\n", strings.Join(cells, " & "))
	}
	buf.WriteString("\\bottomrule\n\\end{tabular}}\n")
	// An error message is marked with two private-use characters (dropped
	// from the message itself), escaped with the rest of its note, then
	// set in typewriter type.
	const open, shut = '\uE000', '\uE001'
	code := func(msg string) string {
		msg = strings.Map(func(c rune) rune {
			if c == open || c == shut {
				return -1
			}
			return c
		}, msg)
		return string(open) + msg + string(shut)
	}
	if ns := notes(r, m, code); len(ns) > 0 {
		buf.WriteString("\n\\smallskip\n\\footnotesize\n")
		tt := strings.NewReplacer(string(open), "\\texttt{", string(shut), "}")
		for _, n := range ns {
			fmt.Fprintf(buf, "%s\\par\n", tt.Replace(texText(n)))
		}
	}
	buf.WriteString("\\end{table}\n")
}

// texParam is the column head of a grid knob: its symbol in math mode where
// the trade has one, else its name.
func texParam(param string) string {
	switch param {
	case spec.ParamFeatures:
		return "$p$"
	case spec.ParamLambda:
		return "$\\lambda$"
	case spec.ParamNTrain:
		return "$n$"
	}
	return texText(param)
}

// texMeasure sets a mean and its standard error as printed by measure in
// one math-mode cell: "$m\ (s)$" (spec.SEParentheses) or "$m \pm s$"
// (spec.SEPlusMinus); the mean alone when s is blank; "--" (an en dash)
// when the mean is blank.
func texMeasure(m, s, style string) string {
	if m == blank {
		return "--"
	}
	if s == blank {
		return "$" + texMath(m) + "$"
	}
	if style == spec.SEPlusMinus {
		return "$" + texMath(m) + " \\pm " + texMath(s) + "$"
	}
	return "$" + texMath(m) + "\\ (" + texMath(s) + ")$"
}

// texNum sets a number printed by this package in math mode.
func texNum(s string) string { return texMeasure(s, blank, "") }

// texMath rewrites a number in strconv's e-notation ("3.10e-29", "1e-06")
// as LaTeX math ("3.10\times10^{-29}", "10^{-6}"); other numbers are
// returned as they are.
func texMath(s string) string {
	mant, exp, ok := strings.Cut(s, "e")
	if !ok {
		return s
	}
	e, err := strconv.Atoi(exp)
	if err != nil {
		return s
	}
	pow := "10^{" + strconv.Itoa(e) + "}"
	switch mant {
	case "1":
		return pow
	case "-1":
		return "-" + pow
	}
	return mant + "\\times" + pow
}

// texSpecial maps the characters LaTeX gives a meaning to, and those the
// default OT1 font encoding prints as other glyphs (< > |), to commands
// that print them.
var texSpecial = map[rune]string{
	'\\': `\textbackslash{}`,
	'{':  `\{`,
	'}':  `\}`,
	'$':  `\$`,
	'&':  `\&`,
	'#':  `\#`,
	'%':  `\%`,
	'_':  `\_`,
	'~':  `\textasciitilde{}`,
	'^':  `\textasciicircum{}`,
	'<':  `\textless{}`,
	'>':  `\textgreater{}`,
	'|':  `\textbar{}`,
	'–':  `--`,
	'—':  `---`,
	'…':  `\ldots{}`,
	'\n': ` `,
	'\t': ` `,
	'\r': ` `,
}

// texMathRune maps characters that this program writes in labels and
// headings (λ in a default ridge label, ² in bias², β, ‖, −) and other
// mathematical symbols to math-mode commands, so that pdfLaTeX, which knows
// no Greek letters in text, typesets them.
var texMathRune = map[rune]string{
	'α': `\alpha`, 'β': `\beta`, 'γ': `\gamma`, 'δ': `\delta`, 'ε': `\varepsilon`,
	'η': `\eta`, 'θ': `\theta`, 'κ': `\kappa`, 'λ': `\lambda`, 'μ': `\mu`,
	'ν': `\nu`, 'ξ': `\xi`, 'π': `\pi`, 'ρ': `\rho`, 'σ': `\sigma`, 'τ': `\tau`,
	'φ': `\phi`, 'χ': `\chi`, 'ψ': `\psi`, 'ω': `\omega`,
	'Γ': `\Gamma`, 'Δ': `\Delta`, 'Θ': `\Theta`, 'Λ': `\Lambda`, 'Σ': `\Sigma`,
	'Φ': `\Phi`, 'Ψ': `\Psi`, 'Ω': `\Omega`,
	'²': `^{2}`, '³': `^{3}`, '−': `-`, '±': `\pm`, '×': `\times`, '·': `\cdot`,
	'≤': `\leq`, '≥': `\geq`, '≈': `\approx`, '‖': `\|`, '∞': `\infty`,
}

// texText escapes s for LaTeX text: the special characters of texSpecial
// become commands that print them, the symbols of texMathRune are set in
// math mode (one $…$ for a run of them), control characters become spaces,
// and every other character is written as itself (UTF-8, which LaTeX reads
// by default since 2018).
func texText(s string) string {
	var b strings.Builder
	inMath := false
	for _, c := range s {
		if m, ok := texMathRune[c]; ok {
			if !inMath {
				b.WriteByte('$')
				inMath = true
			}
			b.WriteString(m)
			continue
		}
		if inMath {
			b.WriteByte('$')
			inMath = false
		}
		if t, ok := texSpecial[c]; ok {
			b.WriteString(t)
		} else if c < 0x20 || c == 0x7f {
			b.WriteByte(' ')
		} else {
			b.WriteRune(c)
		}
	}
	if inMath {
		b.WriteByte('$')
	}
	return b.String()
}

// texLabel keeps the characters of s that are safe in a \label key.
func texLabel(s string) string {
	return strings.Map(func(c rune) rune {
		if c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= '0' && c <= '9' || c == '.' || c == '-' {
			return c
		}
		return '-'
	}, s)
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}
