package reports

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"riskgrid/runner"
)

// pageFigs stands for the figures of a run: the page only links them.
var pageFigs = []Figure{
	{Name: "risk-all", Title: "risk against p, all models"},
	{Name: "split-1-min-norm", Title: "bias², variance and noise against p, min-norm"},
}

// splitTables cuts a page into what precedes the tables, the tables, and
// what follows them.
func splitTables(t *testing.T, page string) (head, tables, tail string) {
	t.Helper()
	i := strings.Index(page, "\n## Tables\n\n")
	j := strings.Index(page, "\n## Resolved spec\n")
	if i < 0 || j < i {
		t.Fatalf("page lacks the Tables or Resolved spec section:\n%s", page)
	}
	return page[:i], page[i+len("\n## Tables\n\n") : j], page[j:]
}

// TestPageGolden compares the page around its tables with
// testdata/page[_outer].golden byte for byte (refresh with -update), and
// its tables with what Markdown writes, so that a change of the table
// layout (golden-tested on its own) does not need a new page golden.
func TestPageGolden(t *testing.T) {
	for _, c := range []struct {
		name string
		r    *runner.Result
		maps []HeatMap
	}{
		{"page", withTheory(synthetic()), nil},
		{"page_outer", twoAxisResult(), []HeatMap{{Name: "heatmap-1-min-norm", Title: "true risk over p × n_train, min-norm"}}},
	} {
		t.Run(c.name, func(t *testing.T) {
			c.r.SpecTOML = "name = \"demo\"\n[seeds]\ncount = 20\nstart = 1\n"
			var buf bytes.Buffer
			if err := Page(&buf, c.r, pageFigs, c.maps); err != nil {
				t.Fatal(err)
			}
			head, tables, tail := splitTables(t, buf.String())
			var md bytes.Buffer
			if err := Markdown(&md, c.r); err != nil {
				t.Fatal(err)
			}
			if tables != md.String() {
				t.Errorf("the page's tables differ from Markdown's:\n%s\n---\n%s", tables, md.String())
			}
			got := head + "\n## Tables\n\n[tables as Markdown writes them]\n" + tail
			path := filepath.Join("testdata", c.name+".golden")
			if *update {
				if err := os.WriteFile(path, []byte(got), 0o644); err != nil {
					t.Fatal(err)
				}
				return
			}
			want, err := os.ReadFile(path)
			if err != nil {
				t.Fatalf("%v (run go test ./reports -update to create it)", err)
			}
			if got != string(want) {
				t.Errorf("page differs from %s:\n--- got\n%s\n--- want\n%s", path, got, want)
			}
		})
	}
}

// withTheory gives the min-norm curve of the fixture a theory value at
// every point but the threshold, 1.5 SE off the mean at p = 40.
func withTheory(r *runner.Result) *runner.Result {
	for i := range r.Models[0].Points {
		p := &r.Models[0].Points[i]
		switch p.Value {
		case 50:
			p.Theory = runner.NaN
		case 40:
			p.Theory = p.Risk.Mean - 1.5*p.Risk.SE
		default:
			p.Theory = p.Risk.Mean
		}
	}
	return r
}

// TestPageContent checks what a reader relies on, independently of the
// golden file: the about text, the provenance, the summary numbers, the
// relative links, the resolved spec in a TOML fence that its own backticks
// cannot close.
func TestPageContent(t *testing.T) {
	r := withTheory(synthetic())
	r.SpecTOML = "name = \"demo\"\nabout = \"a ``` in the text\"\n"
	var buf bytes.Buffer
	if err := Page(&buf, r, pageFigs, nil); err != nil {
		t.Fatal(err)
	}
	page := buf.String()
	for _, want := range []string{
		"# double-descent-demo\n\nmin-norm least squares against ridge across p at n = 50\n",
		"hash `3f9a0c1de27b`, engine `e1`",
		// Peak at the heavy-tailed threshold, with its median; minimum at p = 10.
		"| min-norm | 26000 ± 21000 `!` (median 210) | 50 | 1.812 ± 0.041 | 10 | p = 50 |",
		"| ridge λ=0.1 | 2.011 ± 0.060 | 50 | 1.791 ± 0.040 | 10 | none in the grid |",
		"within 1.5 standard errors of it (farthest at p = 40)",
		"![risk against p, all models](figures/risk-all.png)",
		"([SVG](figures/split-1-min-norm.svg))",
		"\n````toml\nname = \"demo\"\nabout = \"a ``` in the text\"\n````\n",
	} {
		if !strings.Contains(page, want) {
			t.Errorf("page lacks %q:\n%s", want, page)
		}
	}
	if strings.Contains(page, "NaN") {
		t.Errorf("page prints NaN:\n%s", page)
	}
	// No theory: no agreement line.
	buf.Reset()
	if err := Page(&buf, synthetic(), nil, nil); err != nil {
		t.Fatal(err)
	}
	if strings.Contains(buf.String(), "published formula") || strings.Contains(buf.String(), "## Figures") {
		t.Errorf("page without theory or figures mentions them:\n%s", buf.String())
	}
}

func TestEscapes(t *testing.T) {
	if got := escapeCell("a|b *c* `d`"); got != "a\\|b \\*c\\* \\`d\\`" {
		t.Errorf("escapeCell = %q", got)
	}
	if got := codeFence("x ```` y"); got != "`````" {
		t.Errorf("codeFence = %q, want five backticks", got)
	}
	if got := codeFence("plain"); got != "```" {
		t.Errorf("codeFence = %q, want three backticks", got)
	}
}
