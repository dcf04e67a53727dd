// Command riskgrid runs learning-theory experiments declared in TOML specs:
// it fits model families along a capacity grid over many seeds, in
// parallel and cached, and reports per grid point the true and training
// risk, their gap and the bias²/variance/noise split with standard errors.
//
//	riskgrid run SPEC… [-j N] [-o DIR] [--fresh]
//	riskgrid check SPEC
//	riskgrid report DIR
//	riskgrid verify DIR|SPEC
//	riskgrid diff A B
package main

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"os/signal"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"syscall"

	"riskgrid/data"
	"riskgrid/reports"
	"riskgrid/runner"
	"riskgrid/spec"
)

// Exit statuses.
const (
	exitOK          = 0
	exitFailed      = 1 // a run failed: a cell error, or the output could not be written
	exitBadInput    = 2 // bad usage, a bad spec or a bad data file
	exitInterrupted = 130
)

const usage = `riskgrid runs learning-theory experiments declared in TOML specs.

Usage:
  riskgrid run SPEC… [-j N] [-o DIR] [--fresh]   fit every cell and write tables and result.json
  riskgrid check SPEC [-inputs]                  validate a spec and print it resolved, with its size
  riskgrid report DIR                            re-render the tables of a result folder
  riskgrid verify DIR|SPEC [-within X]           recompute a stored result from scratch and compare
  riskgrid diff A B [-k K]                       compare two result folders, with standard errors

Run 'riskgrid COMMAND -h' for a command's options.
`

func main() {
	os.Exit(cli(os.Args[1:], os.Stdout, os.Stderr))
}

// cli runs one command and returns its exit status.
func cli(args []string, stdout, stderr io.Writer) int {
	if len(args) == 0 {
		fmt.Fprint(stderr, usage)
		return exitBadInput
	}
	switch args[0] {
	case "run":
		return cmdRun(args[1:], stdout, stderr)
	case "check":
		return cmdCheck(args[1:], stdout, stderr)
	case "report":
		return cmdReport(args[1:], stdout, stderr)
	case "verify":
		return cmdVerify(args[1:], stdout, stderr)
	case "diff":
		return cmdDiff(args[1:], stdout, stderr)
	case "-h", "-help", "--help", "help":
		fmt.Fprint(stdout, usage)
		return exitOK
	}
	fmt.Fprintf(stderr, "riskgrid: unknown command %q (known: run, check, report, verify, diff)\n\n%s", args[0], usage)
	return exitBadInput
}

// parse parses flags that may stand before, between or after the
// positional arguments, and returns the positionals.
func parse(fs *flag.FlagSet, args []string) ([]string, error) {
	var pos []string
	for {
		if err := fs.Parse(args); err != nil {
			return nil, err
		}
		if fs.NArg() == 0 {
			return pos, nil
		}
		pos = append(pos, fs.Arg(0))
		args = fs.Args()[1:]
	}
}

func newFlags(name, synopsis string, stderr io.Writer) *flag.FlagSet {
	fs := flag.NewFlagSet(name, flag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.Usage = func() {
		fmt.Fprintf(stderr, "Usage: riskgrid %s\n\nOptions:\n", synopsis)
		fs.PrintDefaults()
	}
	return fs
}

func flagStatus(err error) int {
	if errors.Is(err, flag.ErrHelp) {
		return exitOK
	}
	return exitBadInput
}

// inputStatus says whether err is the user's input (exit 2) or not (1).
func inputStatus(err error) int {
	var se *spec.Error
	var de *data.Error
	if errors.As(err, &se) || errors.As(err, &de) {
		return exitBadInput
	}
	return exitFailed
}

func cmdRun(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("run", "run SPEC… [-j N] [-o DIR] [--fresh] [--quiet] [-se-style S]", stderr)
	jobs := fs.Int("j", runtime.NumCPU(), "fit `N` seeds at once")
	out := fs.String("o", "results", "write result folders and the cache under `DIR`")
	fresh := fs.Bool("fresh", false, "recompute every cell, ignoring the cache")
	quiet := fs.Bool("quiet", false, "print only warnings and errors: no tables, progress or summary line")
	seStyle := seStyleFlag(fs)
	paths, err := parse(fs, args)
	if err != nil {
		return flagStatus(err)
	}
	if len(paths) == 0 {
		fmt.Fprintln(stderr, "riskgrid run: no spec given")
		fs.Usage()
		return exitBadInput
	}
	if *jobs < 1 {
		fmt.Fprintf(stderr, "riskgrid run: -j %d: need at least one worker\n", *jobs)
		return exitBadInput
	}
	if !checkSEStyle(*seStyle, "run", stderr) {
		return exitBadInput
	}
	// Check every spec before fitting any, so a typo in the last one does
	// not surface after an hour of work.
	specs := make([]*spec.Spec, len(paths))
	for i, p := range paths {
		s, err := loadSpec(p)
		if err != nil {
			fmt.Fprintln(stderr, err)
			return exitBadInput
		}
		if *seStyle != "" {
			// Recorded in spec_toml, so that report renders the same way;
			// presentation keys do not enter the hash.
			s.Tables.SEStyle = *seStyle
		}
		specs[i] = s
	}
	// The output root must take the cache and the result folders: find out
	// before fitting, not after every seed has been fitted for nothing.
	if err := os.MkdirAll(filepath.Join(*out, ".cache"), 0o755); err != nil {
		fmt.Fprintf(stderr, "riskgrid run: -o %s: cannot write there: %v\n", *out, err)
		return exitFailed
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	status := exitOK
	for _, s := range specs {
		meter := startMeter(stderr, s.Name, !*quiet && isTerminal(stderr))
		opt := runner.Options{Workers: *jobs, CacheDir: filepath.Join(*out, ".cache"), Fresh: *fresh, Log: meter, Progress: meter.update}
		ro, err := runner.Run(ctx, s, opt)
		meter.finish()
		if err != nil {
			if ctx.Err() != nil {
				fmt.Fprintf(stderr, "riskgrid: %s: interrupted; the seeds that finished are cached\n", s.Path)
				return exitInterrupted
			}
			fmt.Fprintf(stderr, "riskgrid: %s: %v\n", s.Path, err)
			return inputStatus(err)
		}
		res, tm := ro.Result, ro.Timing
		dir := filepath.Join(*out, resultDirName(s))
		if err := writeResult(dir, ro); err != nil {
			fmt.Fprintf(stderr, "riskgrid: %s: %v\n", s.Path, err)
			return exitFailed
		}
		if !*quiet {
			if err := reports.Terminal(stdout, res); err != nil {
				fmt.Fprintf(stderr, "riskgrid: %v\n", err)
				return exitFailed
			}
			fmt.Fprintf(stderr, "riskgrid: %s: %d cells computed, %d from the cache, %.2fs with %d workers; wrote %s\n",
				s.Name, tm.Computed, tm.Cached, tm.Seconds, tm.Workers, dir)
		}
		if n := failedCells(res); n > 0 {
			fmt.Fprintf(stderr, "riskgrid: %s: %d cells failed; their errors are in %s\n",
				s.Name, n, filepath.Join(dir, "result.json"))
			status = exitFailed
		}
	}
	return status
}

// loadSpec loads a spec and, for a csv source, reads its data file (every
// slice's, on a two-axis grid), so that a bad file is bad input found before
// any fit rather than after the specs before it have run.
func loadSpec(path string) (*spec.Spec, error) {
	s, err := spec.Load(path)
	if err != nil || s.Data.Source != spec.SourceCSV {
		return s, err
	}
	slices := []*spec.Spec{s}
	if o := s.Grid.Outer; o != nil {
		slices = slices[:0]
		for _, v := range o.Values {
			slices = append(slices, s.At(v))
		}
	}
	for _, sl := range slices {
		if _, err := data.New(sl, sl.DataKey()); err != nil {
			if strings.HasPrefix(err.Error(), s.Path+":") {
				return nil, err
			}
			return nil, fmt.Errorf("%s: %w", s.Path, err)
		}
	}
	return s, nil
}

// resultDirName names a result folder by the spec's name (spec.Load
// admits only [A-Za-z0-9._-] in it) and short hash.
func resultDirName(s *spec.Spec) string {
	return s.Name + "-" + s.Hash()[:12]
}

func failedCells(res *runner.Result) int {
	n := 0
	for _, m := range res.Models {
		for _, p := range m.Points {
			n += len(p.Errors)
		}
	}
	return n
}

// writeResult writes the artifacts of a run into dir: built in a temporary
// folder beside it, then swapped in, so dir never holds a half-written set.
func writeResult(dir string, ro *runner.Output) (err error) {
	parent := filepath.Dir(dir)
	if err := os.MkdirAll(parent, 0o755); err != nil {
		return err
	}
	tmp, err := os.MkdirTemp(parent, "."+filepath.Base(dir)+".tmp-*")
	if err != nil {
		return err
	}
	defer func() {
		if err != nil {
			os.RemoveAll(tmp)
		}
	}()
	if err = writeArtifacts(tmp, ro); err != nil {
		return err
	}
	if err = os.Chmod(tmp, 0o755); err != nil {
		return err
	}
	old := ""
	if _, statErr := os.Stat(dir); statErr == nil {
		old = tmp + ".old"
		if err = os.Rename(dir, old); err != nil {
			return err
		}
	}
	if err = os.Rename(tmp, dir); err != nil {
		if old != "" {
			os.Rename(old, dir)
		}
		return err
	}
	if old != "" {
		os.RemoveAll(old)
	}
	return nil
}

func writeArtifacts(dir string, ro *runner.Output) error {
	for _, f := range []struct {
		name   string
		v      any
		indent string
	}{
		{"result.json", ro.Result, " "},
		{"sums.json", ro.Sums, ""}, // long number lists: no indentation
		{"timing.json", ro.Timing, " "},
	} {
		b, err := json.MarshalIndent(f.v, "", f.indent)
		if err != nil {
			return fmt.Errorf("%s: %w", f.name, err)
		}
		if err := runner.WriteFile(filepath.Join(dir, f.name), append(b, '\n')); err != nil {
			return err
		}
	}
	if err := writeTables(dir, ro.Result); err != nil {
		return err
	}
	maps, err := writeHeatMaps(dir, ro.Result)
	if err != nil {
		return err
	}
	return writeFigures(dir, ro.Result, maps)
}

// writeTables writes the tables of res into dir, table.tex in the style its
// spec records.
func writeTables(dir string, res *runner.Result) error { return writeTablesAs(dir, res, "") }

// writeTablesAs writes the tables of res into dir, table.tex with standard
// errors in seStyle ("": the style res's spec records).
func writeTablesAs(dir string, res *runner.Result, seStyle string) error {
	latex := func(w io.Writer, r *runner.Result) error { return reports.LaTeX(w, r, seStyle) }
	for _, t := range []struct {
		name   string
		render func(io.Writer, *runner.Result) error
	}{{"table.md", reports.Markdown}, {"table.csv", reports.CSV}, {"table.tex", latex}} {
		var sb strings.Builder
		if err := t.render(&sb, res); err != nil {
			return fmt.Errorf("%s: %w", t.name, err)
		}
		if err := runner.WriteFile(filepath.Join(dir, t.name), []byte(sb.String())); err != nil {
			return err
		}
	}
	return nil
}

func cmdCheck(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("check", "check SPEC [-j N] [-inputs]", stderr)
	jobs := fs.Int("j", runtime.NumCPU(), "size the memory estimate for `N` workers")
	inputs := fs.Bool("inputs", false, "also print every input of the spec hash, the data key and the model keys (explains a cache miss)")
	paths, err := parse(fs, args)
	if err != nil {
		return flagStatus(err)
	}
	if len(paths) != 1 {
		fmt.Fprintln(stderr, "riskgrid check: give exactly one spec")
		fs.Usage()
		return exitBadInput
	}
	s, err := loadSpec(paths[0])
	if err != nil {
		fmt.Fprintln(stderr, err)
		return exitBadInput
	}
	plan := runner.Size(s, *jobs)
	fmt.Fprintf(stdout, "# %s: valid\n", s.Path)
	fmt.Fprintf(stdout, "# hash   %s\n", s.Hash())
	grid, values := fmt.Sprintf("%d grid values", len(s.Grid.Values)), len(s.Grid.Values)
	if o := s.Grid.Outer; o != nil {
		grid = fmt.Sprintf("%d %s × %d %s values", len(s.Grid.Values), s.Grid.Param, len(o.Values), o.Param)
		values *= len(o.Values)
	}
	if c := len(s.Models) * values * plan.Seeds; c != plan.Cells {
		fmt.Fprintf(stdout, "# cells  %d (%d models × %s × %d seeds, × %d model seeds for the randomized families), %d path fits\n",
			plan.Cells, len(s.Models), grid, plan.Seeds, s.Seeds.Models, plan.Paths)
	} else {
		fmt.Fprintf(stdout, "# cells  %d (%d models × %s × %d seeds), %d path fits\n",
			plan.Cells, len(s.Models), grid, plan.Seeds, plan.Paths)
	}
	fmt.Fprintf(stdout, "# memory about %s at peak with %d workers (estimate)\n", bytesIEC(plan.PeakBytes), *jobs)
	fmt.Fprintf(stdout, "# resolved spec:\n%s", s.Canonical())
	if *inputs {
		fmt.Fprintf(stdout, "\n# inputs of the spec hash %s:\n%s", s.Hash(), s.HashInputs())
		printKeys := func(sl *spec.Spec, at string) {
			fmt.Fprintf(stdout, "\n# inputs of the data key%s %s (seeds' streams and cache entries):\n%s", at, sl.DataKey(), sl.DataKeyInputs())
			for _, m := range sl.Models {
				fmt.Fprintf(stdout, "\n# inputs of the model key of %q%s %s:\n%s", m.Label, at,
					spec.ModelKey(m, sl.Grid.Param), spec.ModelKeyInputs(m, sl.Grid.Param))
			}
		}
		if o := s.Grid.Outer; o != nil { // each slice is run, and cached, as a one-axis spec
			for _, v := range o.Values {
				printKeys(s.At(v), fmt.Sprintf(" at %s = %s", o.Param, strconv.FormatFloat(v, 'g', -1, 64)))
			}
		} else {
			printKeys(s, "")
		}
	}
	return exitOK
}

func bytesIEC(b int64) string {
	const unit = 1024
	if b < unit {
		return fmt.Sprintf("%d B", b)
	}
	div, exp := int64(unit), 0
	for n := b / unit; n >= unit; n /= unit {
		div *= unit
		exp++
	}
	return fmt.Sprintf("%.1f %ciB", float64(b)/float64(div), "KMGTPE"[exp])
}

func cmdReport(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("report", "report DIR [-se-style S]", stderr)
	seStyle := seStyleFlag(fs)
	paths, err := parse(fs, args)
	if err != nil {
		return flagStatus(err)
	}
	if len(paths) != 1 {
		fmt.Fprintln(stderr, "riskgrid report: give exactly one result folder")
		fs.Usage()
		return exitBadInput
	}
	if !checkSEStyle(*seStyle, "report", stderr) {
		return exitBadInput
	}
	dir := paths[0]
	res, err := readResult(filepath.Join(dir, "result.json"))
	if err != nil {
		fmt.Fprintf(stderr, "riskgrid report: %v\n", err)
		return exitBadInput
	}
	res.Created = readCreated(filepath.Join(dir, "timing.json"))
	if err := writeTablesAs(dir, res, *seStyle); err != nil {
		fmt.Fprintf(stderr, "riskgrid report: %v\n", err)
		return exitFailed
	}
	maps, err := writeHeatMaps(dir, res)
	if err != nil {
		fmt.Fprintf(stderr, "riskgrid report: %v\n", err)
		return exitFailed
	}
	if err := writeFigures(dir, res, maps); err != nil {
		fmt.Fprintf(stderr, "riskgrid report: %v\n", err)
		return exitFailed
	}
	if err := reports.Terminal(stdout, res); err != nil {
		fmt.Fprintf(stderr, "riskgrid report: %v\n", err)
		return exitFailed
	}
	return exitOK
}

// readCreated returns the run's start time recorded in timing.json, for the
// tables' provenance line; "" (the tables say "date unknown") when the file
// is missing or unreadable, which does not stop a re-render.
func readCreated(path string) string {
	b, err := os.ReadFile(path)
	if err != nil {
		return ""
	}
	var tm runner.Timing
	if json.Unmarshal(b, &tm) != nil {
		return ""
	}
	return tm.Created
}

// seStyleFlag declares -se-style, the standard-error style of table.tex.
func seStyleFlag(fs *flag.FlagSet) *string {
	return fs.String("se-style", "", "write standard errors in table.tex as `S`: "+
		strings.Join(spec.SEStyles, " or ")+" (default: the spec's [tables] se_style, else "+spec.SEParentheses+")")
}

// checkSEStyle reports a -se-style value that is not a known style.
func checkSEStyle(style, cmd string, stderr io.Writer) bool {
	for _, s := range spec.SEStyles {
		if style == "" || style == s {
			return true
		}
	}
	fmt.Fprintf(stderr, "riskgrid %s: -se-style %q (accepted: %s)\n", cmd, style, strings.Join(spec.SEStyles, ", "))
	return false
}

func readResult(path string) (*runner.Result, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	var res runner.Result
	if err := json.Unmarshal(b, &res); err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	if res.Schema != runner.Schema {
		return nil, fmt.Errorf("%s: schema %q, this riskgrid reads %q", path, res.Schema, runner.Schema)
	}
	return &res, nil
}

// writeFigures draws the figures of res into dir/figures, each as SVG and
// PNG, and writes report.md, the page that shows them (and the heat maps)
// with the summary and the tables.
func writeFigures(dir string, res *runner.Result, maps []reports.HeatMap) error {
	figs, err := reports.Figures(res)
	if err != nil {
		return err
	}
	for _, f := range figs {
		for _, out := range []struct {
			ext string
			b   []byte
		}{{".svg", f.SVG}, {".png", f.PNG}} {
			if err := runner.WriteFile(filepath.Join(dir, reports.FigureDir, f.Name+out.ext), out.b); err != nil {
				return err
			}
		}
	}
	var page bytes.Buffer
	if err := reports.Page(&page, res, figs, maps); err != nil {
		return err
	}
	return runner.WriteFile(filepath.Join(dir, reports.PageName), page.Bytes())
}
