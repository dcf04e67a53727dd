package reports

import (
	"bytes"
	"fmt"
	"io"

	"github.com/olekukonko/tablewriter"
	"github.com/olekukonko/tablewriter/renderer"
	"github.com/olekukonko/tablewriter/tw"

	"riskgrid/runner"
)

// Terminal writes r as plain ASCII tables, one per model: a heading line
// (label, family, grid knob, seeds, how risk and the bias²/variance split
// were measured), a table with one row per grid point, and footnotes for
// heavy-tailed points and failed cells; a footer line gives the provenance
// (spec name, short hash, engine, seeds, the run's date).
//
// Each mean is shown to the decimal place of its SE's second significant
// digit. NaN prints as "–". The whole output is formatted before the first
// byte is written, so an inconsistent Result (ErrResult) writes nothing.
func Terminal(w io.Writer, r *runner.Result) error {
	if err := check(r); err != nil {
		return err
	}
	var buf bytes.Buffer
	fmt.Fprintf(&buf, "%s\n", r.Name)
	if r.About != "" {
		fmt.Fprintf(&buf, "%s\n", r.About)
	}
	for i := range r.Models {
		m := &r.Models[i]
		fmt.Fprintf(&buf, "\n%s\n", heading(r, m))
		t := tablewriter.NewTable(&buf,
			tablewriter.WithRenderer(renderer.NewBlueprint(tw.Rendition{
				Symbols: tw.NewSymbols(tw.StyleASCII),
			})),
			tablewriter.WithHeaderAutoFormat(tw.Off),
			tablewriter.WithHeaderAlignment(tw.AlignRight),
			tablewriter.WithRowAlignmentConfig(align(len(header(r, m)))),
		)
		if err := fill(t, r, m); err != nil {
			return fmt.Errorf("reports: terminal table for %s: %w", m.Label, err)
		}
		for _, n := range notes(r, m, func(s string) string { return s }) {
			fmt.Fprintf(&buf, "%s\n", n)
		}
	}
	fmt.Fprintf(&buf, "\n%s\n", provenanceOf(r).text())
	if _, err := w.Write(buf.Bytes()); err != nil {
		return fmt.Errorf("reports: write terminal tables: %w", err)
	}
	return nil
}

// fill puts the header and one row per grid point into t and renders it.
func fill(t *tablewriter.Table, r *runner.Result, m *runner.ModelResult) error {
	t.Header(header(r, m))
	for i := range m.Points {
		if err := t.Append(row(r, m, &m.Points[i])); err != nil {
			return err
		}
	}
	return t.Render()
}

// align right-aligns every column but the last (the flag), which reads
// left to right.
func align(n int) tw.CellAlignment {
	a := tw.MakeAlign(n, tw.AlignRight)
	a[n-1] = tw.AlignLeft
	return tw.CellAlignment{Global: tw.AlignRight, PerColumn: a}
}
