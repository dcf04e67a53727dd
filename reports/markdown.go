package reports

import (
	"bytes"
	"fmt"
	"io"
	"strings"

	"github.com/olekukonko/tablewriter"
	"github.com/olekukonko/tablewriter/renderer"
	"github.com/olekukonko/tablewriter/tw"

	"riskgrid/runner"
)

// Markdown writes r as GitHub-flavoured Markdown: per model a "###" heading,
// a line saying how risk and the split were measured, a table with the
// same columns and rounding as Terminal, footnotes for heavy-tailed points
// and failed cells (messages in code spans), and a provenance line (spec
// name, first 12 hex digits of the spec hash, engine, seeds, the run's date,
// risk basis).
//
// The whole output is formatted before the first byte is written, so an
// inconsistent Result (ErrResult) writes nothing.
func Markdown(w io.Writer, r *runner.Result) error {
	if err := check(r); err != nil {
		return err
	}
	var buf bytes.Buffer
	pv := provenanceOf(r)
	for i := range r.Models {
		m := &r.Models[i]
		if i > 0 {
			buf.WriteString("\n")
		}
		fmt.Fprintf(&buf, "### %s%s\n\n", m.Label, atOuter(r, m))
		fmt.Fprintf(&buf, "Family `%s`, grid `%s`, %d seeds; %s; %s.\n\n",
			m.Family, r.Param, r.Seeds, riskText(r), splitText(r))
		t := tablewriter.NewTable(&buf,
			tablewriter.WithRenderer(renderer.NewMarkdown()),
			tablewriter.WithHeaderAutoFormat(tw.Off),
			tablewriter.WithHeaderAlignment(tw.AlignRight),
			tablewriter.WithRowAlignmentConfig(align(len(header(r, m)))),
		)
		if err := fill(t, r, m); err != nil {
			return fmt.Errorf("reports: markdown table for %s: %w", m.Label, err)
		}
		if ns := notes(r, m, codeSpan); len(ns) > 0 {
			buf.WriteString("\n")
			for _, n := range ns {
				fmt.Fprintf(&buf, "- %s\n", n)
			}
		}
		fmt.Fprintf(&buf, "\nSpec %s, hash `%s`, engine %s, %s, %s; %s.\n",
			codeSpan(pv.name), pv.hash, codeSpan(pv.engine), pv.seeds, pv.date, riskText(r))
	}
	if _, err := w.Write(buf.Bytes()); err != nil {
		return fmt.Errorf("reports: write markdown tables: %w", err)
	}
	return nil
}

// codeSpan wraps s in a Markdown code span whose fence is one backtick
// longer than the longest run inside s, padded with spaces when s starts or
// ends with a backtick (CommonMark 0.31, §6.1 Code spans).
func codeSpan(s string) string {
	fence := strings.Repeat("`", longestBackticks(s)+1)
	if strings.HasPrefix(s, "`") || strings.HasSuffix(s, "`") {
		s = " " + s + " "
	}
	return fence + s + fence
}

// longestBackticks is the length of the longest run of backticks in s.
func longestBackticks(s string) int {
	longest, run := 0, 0
	for _, c := range s {
		if c == '`' {
			run++
			longest = max(longest, run)
		} else {
			run = 0
		}
	}
	return longest
}
