package main

import (
	"bytes"
	"io"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"

	"riskgrid/runner"
)

// asTerminal makes the CLI treat stderr as a terminal or not, and draw the
// progress line from the first update on, for the duration of a test.
func asTerminal(t *testing.T, term bool) {
	t.Helper()
	isTerm, after, every := isTerminal, progressAfter, progressEvery
	isTerminal = func(io.Writer) bool { return term }
	progressAfter, progressEvery = 0, 0
	t.Cleanup(func() { isTerminal, progressAfter, progressEvery = isTerm, after, every })
}

// TestProgressOnTerminal: on a terminal the run redraws a progress line
// (carriage returns, cells done of the total), clears it, and ends with the
// one summary line.
func TestProgressOnTerminal(t *testing.T) {
	asTerminal(t, true)
	dir := t.TempDir()
	sp := writeSpec(t, dir, "tiny.toml", tinySpec)
	status, stdout, stderr := runCLI("run", sp, "-o", filepath.Join(dir, "out"), "-j", "1")
	if status != exitOK {
		t.Fatalf("run: status %d, stderr %q", status, stderr)
	}
	// One seed (3 cells of the one model) per update, -j 1: the last
	// state drawn is every cell done.
	for _, want := range []string{"\rriskgrid: tiny: 3/12 cells (0 from the cache)", "\rriskgrid: tiny: 12/12 cells (0 from the cache), ", " cells/s, 0s left"} {
		if !strings.Contains(stderr, want) {
			t.Errorf("stderr lacks progress %q:\n%q", want, stderr)
		}
	}
	last := stderr[strings.LastIndexByte(stderr, '\r')+1:]
	if strings.Count(stderr, "cells computed") != 1 || !strings.HasPrefix(last, "riskgrid: tiny: 12 cells computed, 0 from the cache, ") {
		t.Errorf("want the line cleared, then one summary line; stderr ends %q", last)
	}
	if !strings.Contains(stdout, "least-squares") {
		t.Errorf("stdout lacks the table: %q", stdout)
	}
}

// TestNoProgressOffTerminal: when stderr is not a terminal there is no
// progress line, only the summary.
func TestNoProgressOffTerminal(t *testing.T) {
	asTerminal(t, false)
	dir := t.TempDir()
	sp := writeSpec(t, dir, "tiny.toml", tinySpec)
	status, _, stderr := runCLI("run", sp, "-o", filepath.Join(dir, "out"))
	if status != exitOK {
		t.Fatalf("run: status %d, stderr %q", status, stderr)
	}
	if strings.Contains(stderr, "\r") || strings.Contains(stderr, "/12 cells") {
		t.Errorf("progress off a terminal:\n%q", stderr)
	}
	if !strings.Contains(stderr, "riskgrid: tiny: 12 cells computed, 0 from the cache, ") {
		t.Errorf("no summary line:\n%q", stderr)
	}
}

// TestQuiet: --quiet prints neither progress (even on a terminal), tables
// nor the summary line, and still writes every artifact; errors still show.
func TestQuiet(t *testing.T) {
	asTerminal(t, true)
	dir := t.TempDir()
	sp := writeSpec(t, dir, "tiny.toml", tinySpec)
	out := filepath.Join(dir, "out")
	status, stdout, stderr := runCLI("run", "--quiet", sp, "-o", out)
	if status != exitOK || stdout != "" || stderr != "" {
		t.Errorf("run --quiet: status %d, stdout %q, stderr %q; want 0 and no output", status, stdout, stderr)
	}
	if m, _ := filepath.Glob(filepath.Join(out, "tiny-*", "table.tex")); len(m) != 1 {
		t.Errorf("run --quiet wrote no table.tex")
	}
	bad := writeSpec(t, dir, "bad.toml", strings.Replace(tinySpec, "count = 4", "count = 1", 1))
	if status, _, stderr := runCLI("run", "--quiet", bad, "-o", out); status != exitBadInput || !strings.Contains(stderr, "seeds.count") {
		t.Errorf("run --quiet of a bad spec: status %d, stderr %q; want 2 and the error", status, stderr)
	}
}

// TestProgressLine checks the wording, the rate (fitted cells only) and the
// time left: 7000 cells at 900/2 s = 450 cells/s is 15.6 s.
func TestProgressLine(t *testing.T) {
	tests := []struct {
		p       runner.Progress
		elapsed time.Duration
		want    string
	}{
		{runner.Progress{Computed: 900, Cached: 300, Total: 8200}, 2 * time.Second,
			"riskgrid: x: 1200/8200 cells (300 from the cache), 450 cells/s, 16s left"},
		{runner.Progress{Cached: 300, Total: 8200}, time.Second,
			"riskgrid: x: 300/8200 cells (300 from the cache)"},
		{runner.Progress{Computed: 10, Total: 40010}, 5 * time.Second,
			"riskgrid: x: 10/40010 cells (0 from the cache), 2 cells/s, 5h33m left"},
	}
	for _, tt := range tests {
		if got := progressLine("x", tt.p, tt.elapsed); got != tt.want {
			t.Errorf("progressLine(%+v, %v) = %q, want %q", tt.p, tt.elapsed, got, tt.want)
		}
	}
	for d, want := range map[time.Duration]string{
		400 * time.Millisecond: "0s", 59 * time.Second: "59s", 125 * time.Second: "2m05s", 3725 * time.Second: "1h02m",
	} {
		if got := shortDuration(d); got != want {
			t.Errorf("shortDuration(%v) = %q, want %q", d, got, want)
		}
	}
}

// TestMeterWarning: a warning clears the progress line before it is
// printed, and an older count arriving late does not move the line back.
func TestMeterWarning(t *testing.T) {
	asTerminal(t, true)
	var buf bytes.Buffer
	m := startMeter(&buf, "x", true)
	m.update(runner.Progress{Computed: 6, Total: 12})
	m.update(runner.Progress{Computed: 3, Total: 12}) // late, out of order
	io.WriteString(m, "riskgrid: warning: bad entry; recomputing\n")
	m.finish()
	out := buf.String()
	if strings.Contains(out, "3/12") {
		t.Errorf("a late count moved the line back:\n%q", out)
	}
	if !strings.HasPrefix(out, "\rriskgrid: x: 6/12 cells (0 from the cache), ") {
		t.Errorf("want the progress line first:\n%q", out)
	}
	// The ticker may redraw the line after the warning (progressEvery is 0
	// here), so the warning need not be last: it must follow a cleared line.
	if !regexp.MustCompile(`\r {40,}\rriskgrid: warning: bad entry; recomputing\n`).MatchString(out) {
		t.Errorf("want the line cleared, then the warning:\n%q", out)
	}
}

// TestIsTerminal: a regular file and a pipe are not terminals.
func TestIsTerminal(t *testing.T) {
	f, err := os.CreateTemp(t.TempDir(), "x")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	r, w, err := os.Pipe()
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close()
	defer w.Close()
	for _, x := range []io.Writer{f, w, &bytes.Buffer{}} {
		if isTerminal(x) {
			t.Errorf("isTerminal(%T) = true, want false", x)
		}
	}
}
