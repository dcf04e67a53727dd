package reports

import (
	"bytes"
	"fmt"
	"io"
	"math"
	"strconv"

	"github.com/olekukonko/tablewriter/tw"
)

// WriteDiff writes a Difference as plain ASCII tables, one per model of A:
// per grid value and metric the two means, B − A, its standard error, the
// difference in standard errors, the SE's basis and the mark. With
// onlyMarked, rows without a mark are left out. Then the points present in
// one result only, the notes, the medians of heavy-tailed points, a legend
// and the verdict.
func WriteDiff(w io.Writer, d *Difference, onlyMarked bool) error {
	var buf bytes.Buffer
	header := []string{d.Param, "metric", "A", "B", "B − A", "se(B − A)", "|B − A|/se", "se from", "flag"}
	align := []tw.Align{tw.AlignRight, tw.AlignLeft, tw.AlignRight, tw.AlignRight, tw.AlignRight, tw.AlignRight, tw.AlignRight, tw.AlignLeft, tw.AlignLeft}
	var rows [][]string
	model := ""
	flush := func() error {
		if model == "" {
			return nil
		}
		fmt.Fprintf(&buf, "\n%s\n", model)
		if len(rows) == 0 {
			buf.WriteString("  (no marked rows)\n")
			return nil
		}
		err := asciiTable(&buf, header, rows, align)
		rows = rows[:0]
		return err
	}
	last := math.NaN()
	for _, r := range d.Rows {
		if r.Model != model {
			if err := flush(); err != nil {
				return err
			}
			model, last = r.Model, math.NaN()
		}
		if onlyMarked && r.Mark == "" {
			continue
		}
		v := ""
		if r.Value != last {
			v, last = knob(r.Value), r.Value
		}
		rows = append(rows, []string{v, r.Metric, fmtSig(r.A, 6), fmtSig(r.B, 6), fmtSig(r.Delta, 3),
			fmtSE(r.SE), fmtZ(r), basisLabel(r), r.Mark})
	}
	if err := flush(); err != nil {
		return err
	}
	if len(d.OnlyA) > 0 {
		fmt.Fprintf(&buf, "\nonly in A: %s\n", joinList(d.OnlyA))
	}
	if len(d.OnlyB) > 0 {
		fmt.Fprintf(&buf, "only in B: %s\n", joinList(d.OnlyB))
	}
	if len(d.Notes) > 0 {
		buf.WriteString("\n")
		for _, n := range d.Notes {
			fmt.Fprintf(&buf, "note: %s\n", n)
		}
	}
	if len(d.Medians) > 0 {
		buf.WriteString("\n")
		for _, m := range d.Medians {
			fmt.Fprintf(&buf, "%s\n", m)
		}
	}
	fmt.Fprintf(&buf, "\n%s flagged: |B − A| above %g standard errors (the t quantile of the same tail for the se's degrees of freedom) and above %s relative; exact rows (se 0) when above %s relative\n",
		MarkFlagged, d.Options.Sigmas, fmtTol(d.Options.Within), fmtTol(d.Options.Within))
	fmt.Fprintf(&buf, "%s beyond the threshold at a heavy-tailed point: the mean's se is unreliable there; not counted\n", MarkTail)
	fmt.Fprintf(&buf, "%s differs, but without a standard error to judge by; not counted\n", MarkUnknown)
	fmt.Fprintf(&buf, "%d rows judged; with no real change, at most %.2g false flags are expected (Bonferroni)\n",
		d.Judged, d.FalseFlagBound())
	if d.Flagged == 0 {
		fmt.Fprintf(&buf, "\nno difference flagged\n")
	} else {
		fmt.Fprintf(&buf, "\nFLAGGED: %s beyond %g standard errors\n", plural(d.Flagged, "difference"), d.Options.Sigmas)
	}
	if _, err := w.Write(buf.Bytes()); err != nil {
		return fmt.Errorf("reports: write diff: %w", err)
	}
	return nil
}

func basisLabel(r DiffRow) string {
	if r.Basis == BasisPaired {
		return fmt.Sprintf("paired, %d seeds", r.Seeds)
	}
	return r.Basis
}

// fmtSig formats x with at most n significant digits, trailing zeros
// dropped ("–" for NaN).
func fmtSig(x float64, n int) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return blank
	}
	return strconv.FormatFloat(x, 'g', n, 64)
}

func fmtSE(x float64) string {
	switch {
	case math.IsNaN(x):
		return blank
	case x == 0:
		return "0"
	}
	return strconv.FormatFloat(x, 'e', 1, 64)
}

func fmtZ(r DiffRow) string {
	switch {
	case math.IsNaN(r.Z):
		return blank
	case math.IsInf(r.Z, 1):
		return "∞"
	case r.SE == 0 || math.IsNaN(r.SE):
		return blank
	}
	return strconv.FormatFloat(r.Z, 'f', 1, 64)
}

func joinList(xs []string) string {
	var b bytes.Buffer
	for i, x := range xs {
		if i > 0 {
			b.WriteString("; ")
		}
		b.WriteString(x)
	}
	return b.String()
}
