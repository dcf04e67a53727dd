package reports

import (
	"bytes"
	"fmt"
	"io"
	"math"
	"strings"

	"riskgrid/runner"
)

// PageName is the file name of the report page in a result folder.
const PageName = "report.md"

// Page writes the report page of r as Markdown, for a result folder that
// is committed and read in a git host:
//
//   - the spec name as the title, its about text and where the numbers come
//     from (spec, hash, engine, seeds, date; how risk and the split were
//     measured);
//   - a summary per model (per curve on a two-axis grid): the largest and
//     the smallest mean risk over the grid and where, flagged when the
//     mean there is heavy-tailed (with the median beside it), the
//     interpolation threshold — the first grid value, in order of growing
//     capacity, at which at least half the seeds interpolate, or "none in
//     the grid" — and, where the result carries a theory curve, how far
//     the mean risk strays from it in standard errors;
//   - the figures (figs, then the heat maps), linked relative to the page:
//     the PNG shown, the SVG linked;
//   - the tables, as Markdown writes them;
//   - the resolved spec, fenced TOML.
//
// The page is formatted whole before the first byte is written.
func Page(w io.Writer, r *runner.Result, figs []Figure, maps []HeatMap) error {
	if err := check(r); err != nil {
		return err
	}
	var b bytes.Buffer
	fmt.Fprintf(&b, "# %s\n\n", r.Name)
	if a := strings.TrimSpace(r.About); a != "" {
		fmt.Fprintf(&b, "%s\n\n", a)
	}
	p := provenanceOf(r)
	fmt.Fprintf(&b, "Spec `%s`, hash `%s`, engine `%s`, %s, %s. %s; %s.\n\n",
		p.name, shortHash(r.Hash), p.engine, p.seeds, p.date, capitalise(riskText(r)), splitText(r))

	b.WriteString("## Summary\n\n")
	writeSummary(&b, r)

	if len(figs)+len(maps) > 0 {
		b.WriteString("\n## Figures\n")
		for _, f := range figs {
			writeFigureLink(&b, f.Name, f.Title)
		}
		for _, m := range maps {
			writeFigureLink(&b, m.Name, m.Title)
		}
	}

	b.WriteString("\n## Tables\n\n")
	if err := Markdown(&b, r); err != nil {
		return err
	}

	b.WriteString("\n## Resolved spec\n\n")
	specText := strings.TrimRight(r.SpecTOML, "\n")
	fence := codeFence(specText)
	fmt.Fprintf(&b, "%stoml\n%s\n%s\n", fence, specText, fence)

	if _, err := w.Write(b.Bytes()); err != nil {
		return fmt.Errorf("reports: write %s: %w", PageName, err)
	}
	return nil
}

// writeFigureLink shows a figure's PNG with its title as the alt text and
// links its SVG, both relative to the page.
func writeFigureLink(b *bytes.Buffer, name, title string) {
	png := FigureDir + "/" + name + ".png"
	svg := FigureDir + "/" + name + ".svg"
	fmt.Fprintf(b, "\n![%s](%s)\n\n", escapeBrackets(title), png)
	fmt.Fprintf(b, "*%s* ([SVG](%s))\n", escapeInline(title), svg)
}

// writeSummary writes the summary table: one row per curve.
func writeSummary(b *bytes.Buffer, r *runner.Result) {
	sym := symbolOf(r.Param)
	fmt.Fprintf(b, "| model | peak risk | at %s | minimum risk | at %s | interpolation threshold |\n", sym, sym)
	b.WriteString("|:--|--:|--:|--:|--:|:--|\n")
	var heavy bool
	var theory []string
	for i := range r.Models {
		m := &r.Models[i]
		hi, lo := -1, -1
		for j := range m.Points {
			v := m.Points[j].Risk.Mean
			if v.IsNaN() {
				continue
			}
			if hi < 0 || v > m.Points[hi].Risk.Mean {
				hi = j
			}
			if lo < 0 || v < m.Points[lo].Risk.Mean {
				lo = j
			}
		}
		peak, peakAt, low, lowAt := blank, blank, blank, blank
		if hi >= 0 {
			peak, peakAt = riskCell(&m.Points[hi]), knob(m.Points[hi].Value)
			low, lowAt = riskCell(&m.Points[lo]), knob(m.Points[lo].Value)
			heavy = heavy || m.Points[hi].HeavyTail || m.Points[lo].HeavyTail
		}
		th := "none in the grid"
		if k := firstInterpolating(r, m); k >= 0 {
			th = fmt.Sprintf("%s = %s", sym, knob(m.Points[k].Value))
		}
		fmt.Fprintf(b, "| %s | %s | %s | %s | %s | %s |\n",
			escapeCell(curveName(r, m)), peak, peakAt, low, lowAt, th)
		if t := theoryAgreement(r, m); t != "" {
			theory = append(theory, t)
		}
	}
	b.WriteString("\n")
	if heavy {
		fmt.Fprintf(b, "`!`: the mean is carried by a few seeds (%s) and is "+
			"not a stable summary; the median is given beside it.\n", heavyPhrase(r.Seeds))
	}
	fmt.Fprintf(b, "Peak and minimum are over the mean risk at each grid value, ± its standard error over seeds. "+
		"The interpolation threshold is the first grid value, in order of growing capacity, at which at least half "+
		"the seeds fit their training sample exactly (training risk below %s times the mean squared response).\n",
		num(runner.InterpTol))
	for _, t := range theory {
		fmt.Fprintf(b, "\n%s\n", t)
	}
}

// riskCell formats a point's mean risk with its SE, flagged and with the
// median when the point is heavy-tailed.
func riskCell(p *runner.Point) string {
	m, s := measure(p.Risk.Mean, p.Risk.SE)
	out := m
	if s != blank {
		out += " ± " + s
	}
	if p.HeavyTail {
		out += " `!` (median " + medianText(p) + ")"
	}
	return out
}

// theoryAgreement says how far the mean risk of m is from its theory
// curve, in standard errors, over the points that have both; "" when m has
// no theory.
func theoryAgreement(r *runner.Result, m *runner.ModelResult) string {
	n, worst, at := 0, -1.0, 0.0
	for _, p := range m.Points {
		if p.Theory.IsNaN() || p.Risk.Mean.IsNaN() || p.Risk.SE.IsNaN() || !(p.Risk.SE > 0) {
			continue
		}
		n++
		if z := math.Abs(float64(p.Risk.Mean-p.Theory)) / float64(p.Risk.SE); z > worst {
			worst, at = z, p.Value
		}
	}
	if n == 0 {
		return ""
	}
	return fmt.Sprintf("%s: at the %d grid values where a published formula gives the exact expected risk (result.json `theory`), "+
		"the mean risk is within %.1f standard errors of it (farthest at %s = %s).",
		escapeInline(curveName(r, m)), n, worst, symbolOf(r.Param), knob(at))
}

// codeFence returns a backtick fence longer than any run of backticks in s
// (at least three; CommonMark 0.31, §4.5 Fenced code blocks).
func codeFence(s string) string {
	return strings.Repeat("`", max(3, longestBackticks(s)+1))
}

// escapeCell makes s safe inside a Markdown table cell.
func escapeCell(s string) string {
	return strings.ReplaceAll(escapeInline(s), "|", `\|`)
}

// escapeInline backslash-escapes the characters that would start emphasis,
// code or a link in running Markdown text.
func escapeInline(s string) string {
	var b strings.Builder
	for _, c := range s {
		if strings.ContainsRune("\\`*_[]<>#", c) {
			b.WriteByte('\\')
		}
		b.WriteRune(c)
	}
	return b.String()
}

// escapeBrackets escapes the brackets of an image's alt text.
func escapeBrackets(s string) string {
	return strings.NewReplacer(`\`, `\\`, "[", `\[`, "]", `\]`).Replace(s)
}

// capitalise upper-cases the first letter of s.
func capitalise(s string) string {
	if s == "" {
		return s
	}
	r := []rune(s)
	return strings.ToUpper(string(r[0])) + string(r[1:])
}
