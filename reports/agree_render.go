package reports

import (
	"bytes"
	"fmt"
	"io"
	"math"
	"strconv"

	"github.com/olekukonko/tablewriter"
	"github.com/olekukonko/tablewriter/renderer"
	"github.com/olekukonko/tablewriter/tw"
)

// WriteAgreement writes an Agreement as plain ASCII tables: per metric the
// largest absolute and relative difference and where they occur; the
// ill-conditioned points and the allowance they were held to; and, when
// anything moved, up to maxMoved of the numbers that moved (all when
// maxMoved ≤ 0), the worst first, and every difference of structure. The
// last line is the verdict.
func WriteAgreement(w io.Writer, a *Agreement, maxMoved int) error {
	var buf bytes.Buffer
	what := "result.json"
	if a.PerSeed {
		what = "result.json and the per-seed values of sums.json"
	}
	fmt.Fprintf(&buf, "compared %s; relative Δ = |stored − recomputed| / max(|stored|, |recomputed|, the point's mean of that unit)\n", what)
	fmt.Fprintf(&buf, "allowed relative Δ: %s", fmtTol(a.Within))
	if len(a.Widened) > 0 {
		fmt.Fprintf(&buf, ", wider at %s (%d·κ·eps, below)", plural(len(a.Widened), "ill-conditioned point"), CondSlack)
	}
	buf.WriteString("\n")
	var rows [][]string
	for _, s := range a.Spreads {
		rows = append(rows, []string{
			s.Metric, strconv.Itoa(s.Compared),
			fmtDiff(s.MaxAbs), at(s.MaxAbs, s.AbsAt, a.Param),
			fmtDiff(s.MaxRel), at(s.MaxRel, s.RelAt, a.Param),
			strconv.Itoa(s.Moved),
		})
	}
	if err := asciiTable(&buf, []string{"metric", "numbers", "largest |Δ|", "at", "largest relative Δ", "at", "moved"},
		rows, []tw.Align{tw.AlignLeft, tw.AlignRight, tw.AlignRight, tw.AlignLeft, tw.AlignRight, tw.AlignLeft, tw.AlignRight}); err != nil {
		return err
	}
	if len(a.Widened) > 0 {
		fmt.Fprintf(&buf, "\nill-conditioned points (largest condition number over seeds κ above %s): held to %d·κ·eps\n",
			fmtTol(a.Within/(CondSlack*eps)), CondSlack)
		rows = rows[:0]
		for _, p := range a.Widened {
			rows = append(rows, []string{p.Model, knob(p.Value), strconv.FormatFloat(p.Kappa, 'e', 1, 64), fmtTol(p.Allowed)})
		}
		if err := asciiTable(&buf, []string{"model", a.Param, "κ", "allowed relative Δ"}, rows,
			[]tw.Align{tw.AlignLeft, tw.AlignRight, tw.AlignRight, tw.AlignRight}); err != nil {
			return err
		}
	}
	if len(a.Moved) > 0 {
		n := len(a.Moved)
		if maxMoved > 0 && n > maxMoved {
			n = maxMoved
		}
		fmt.Fprintf(&buf, "\nmoved beyond the allowance (%s, the worst first):\n", plural(len(a.Moved), "number"))
		rows = rows[:0]
		for _, m := range a.Moved[:n] {
			seed := ""
			if m.HasSeed {
				seed = strconv.FormatUint(m.Seed, 10)
			}
			rows = append(rows, []string{m.Model, knob(m.Value), seed, m.Metric,
				fmtNum(m.Stored), fmtNum(m.Fresh), fmtDiff(m.Abs), fmtDiff(m.Rel), fmtTol(m.Allowed)})
		}
		if err := asciiTable(&buf, []string{"model", a.Param, "seed", "metric", "stored", "recomputed", "|Δ|", "relative Δ", "allowed"}, rows,
			[]tw.Align{tw.AlignLeft, tw.AlignRight, tw.AlignRight, tw.AlignLeft, tw.AlignRight, tw.AlignRight, tw.AlignRight, tw.AlignRight, tw.AlignRight}); err != nil {
			return err
		}
		if n < len(a.Moved) {
			fmt.Fprintf(&buf, "… and %d more\n", len(a.Moved)-n)
		}
	}
	if len(a.Shape) > 0 {
		fmt.Fprintf(&buf, "\nstructure differs:\n")
		for _, s := range a.Shape {
			fmt.Fprintf(&buf, "  %s\n", s)
		}
	}
	if a.OK() {
		fmt.Fprintf(&buf, "\nagrees: every number within its allowance\n")
	} else {
		fmt.Fprintf(&buf, "\nDISAGREES: %s moved, %s of structure\n", plural(len(a.Moved), "number"), plural(len(a.Shape), "difference"))
	}
	if _, err := w.Write(buf.Bytes()); err != nil {
		return fmt.Errorf("reports: write agreement: %w", err)
	}
	return nil
}

func at(d float64, w Where, param string) string {
	if d == 0 {
		return ""
	}
	return w.String(param)
}

// fmtDiff prints a difference with 2 significant digits.
func fmtDiff(x float64) string {
	switch {
	case x == 0:
		return "0"
	case math.IsInf(x, 1):
		return "∞ (number vs undefined)"
	}
	return strconv.FormatFloat(x, 'e', 1, 64)
}

// fmtTol prints a tolerance compactly: 1e-09, 2.3e-06.
func fmtTol(x float64) string {
	if x == 0 {
		return "0 (bit for bit)"
	}
	return strconv.FormatFloat(x, 'g', 2, 64)
}

// fmtNum prints a number in full (shortest round-trip form), so that two
// numbers that differ in their last bits print differently.
func fmtNum(x float64) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return blank
	}
	return strconv.FormatFloat(x, 'g', -1, 64)
}

// asciiTable renders a plain ASCII table with one alignment per column.
func asciiTable(w io.Writer, header []string, rows [][]string, align []tw.Align) error {
	t := tablewriter.NewTable(w,
		tablewriter.WithRenderer(renderer.NewBlueprint(tw.Rendition{
			Symbols: tw.NewSymbols(tw.StyleASCII),
		})),
		tablewriter.WithHeaderAutoFormat(tw.Off),
		tablewriter.WithHeaderAlignment(tw.AlignLeft),
		tablewriter.WithRowAlignmentConfig(tw.CellAlignment{Global: tw.AlignRight, PerColumn: align}),
	)
	t.Header(header)
	if err := t.Bulk(rows); err != nil {
		return fmt.Errorf("reports: table: %w", err)
	}
	if err := t.Render(); err != nil {
		return fmt.Errorf("reports: table: %w", err)
	}
	return nil
}

// plural writes a count and a noun, adding "s" unless the count is one.
func plural(n int, noun string) string {
	if n == 1 {
		return "1 " + noun
	}
	return strconv.Itoa(n) + " " + noun + "s"
}
