package main

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"os/signal"
	"path/filepath"
	"regexp"
	"runtime"
	"strings"
	"syscall"

	"riskgrid/reports"
	"riskgrid/runner"
	"riskgrid/spec"
)

const verifySynopsis = "verify DIR|SPEC [-j N] [-o DIR] [-within X] [-data FILE] [-show N]"

// cmdVerify recomputes every cell of a stored result from scratch, in a
// temporary cache folder that it removes (the user's cache and the result
// folder are only read), and compares the numbers (reports.Agree).
//
// Given a result folder, the spec is re-created from the stored spec_toml.
// A csv source's file (stored relative to the original spec file, whose
// location the result does not record) is resolved against the working
// directory, or given with -data; its SHA-256 is compared with the one
// the stored spec records. Given a spec file, the result folder is
// -o/<name>-<hash12>, and the data file is resolved as run resolves it.
//
// Exit status: 0 the result agrees; 1 it disagrees (or the recomputation
// failed); 2 bad usage, a bad spec or data file, no stored result; 130
// interrupted.
func cmdVerify(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("verify", verifySynopsis, stderr)
	jobs := fs.Int("j", runtime.NumCPU(), "fit `N` seeds at once")
	out := fs.String("o", "results", "for a SPEC: look for its result folder under `DIR`")
	within := fs.Float64("within", reports.DefaultWithin,
		"allowed relative difference `X` at well-conditioned points (0: bit for bit everywhere)")
	dataFile := fs.String("data", "", "for a result folder of a csv spec: the data `FILE` (default: the stored path, against the working directory)")
	show := fs.Int("show", 40, "list at most `N` of the numbers that moved (0: all)")
	paths, err := parse(fs, args)
	if err != nil {
		return flagStatus(err)
	}
	if len(paths) != 1 {
		fmt.Fprintln(stderr, "riskgrid verify: give exactly one result folder or spec file")
		fs.Usage()
		return exitBadInput
	}
	if *jobs < 1 {
		fmt.Fprintf(stderr, "riskgrid verify: -j %d: need at least one worker\n", *jobs)
		return exitBadInput
	}
	if !(*within >= 0 && *within < 1) {
		fmt.Fprintf(stderr, "riskgrid verify: -within %v: want a relative tolerance in [0, 1)\n", *within)
		return exitBadInput
	}
	if *show < 0 {
		fmt.Fprintf(stderr, "riskgrid verify: -show %d: want a count ≥ 0\n", *show)
		return exitBadInput
	}
	arg := paths[0]
	info, err := os.Stat(arg)
	if err != nil {
		fmt.Fprintf(stderr, "riskgrid verify: %v\n", err)
		return exitBadInput
	}

	var s *spec.Spec
	var dir string
	var notes []string
	if info.IsDir() {
		dir = arg
		stored, err := readResult(filepath.Join(dir, "result.json"))
		if err != nil {
			fmt.Fprintf(stderr, "riskgrid verify: %v\n", err)
			return exitBadInput
		}
		var status int
		s, notes, status = specFromResult(dir, stored, *dataFile, stderr)
		if status != exitOK {
			return status
		}
	} else {
		if *dataFile != "" {
			fmt.Fprintln(stderr, "riskgrid verify: -data applies to a result folder; a spec file names its own data file")
			return exitBadInput
		}
		s, err = spec.Load(arg)
		if err != nil {
			fmt.Fprintln(stderr, err)
			return exitBadInput
		}
		dir = filepath.Join(*out, resultDirName(s))
		if _, err := os.Stat(filepath.Join(dir, "result.json")); err != nil {
			fmt.Fprintf(stderr, "riskgrid verify: no stored result for %s (hash %s) under %s: %s does not exist; run it first\n",
				arg, s.Hash()[:12], *out, filepath.Join(dir, "result.json"))
			if others, _ := filepath.Glob(filepath.Join(*out, s.Name+"-*", "result.json")); len(others) > 0 {
				fmt.Fprintf(stderr, "riskgrid verify: results of other versions of %q (the spec, its data file or the engine changed since):\n", s.Name)
				for _, o := range others {
					fmt.Fprintf(stderr, "  %s\n", filepath.Dir(o))
				}
			}
			return exitBadInput
		}
	}

	stored, err := readResult(filepath.Join(dir, "result.json"))
	if err != nil {
		fmt.Fprintf(stderr, "riskgrid verify: %v\n", err)
		return exitBadInput
	}
	storedSums, err := readSums(filepath.Join(dir, "sums.json"))
	if err != nil {
		fmt.Fprintf(stderr, "riskgrid verify: %v\n", err)
		return exitBadInput
	}
	if storedSums == nil {
		notes = append(notes, "no sums.json in the result folder: per-seed values are not compared")
	}
	if stored.Hash != s.Hash() {
		var why []string
		if stored.Engine != spec.Engine {
			why = append(why, "a different engine version")
		}
		if s.Data.Source == spec.SourceCSV {
			why = append(why, "a different data file")
		}
		why = append(why, "a stored spec_toml edited since, or resolved otherwise by this build")
		notes = append(notes, fmt.Sprintf("the stored result has spec hash %s, the spec recomputed here %s (%s; see above)",
			short(stored.Hash), short(s.Hash()), strings.Join(why, ", or ")))
	}

	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	tmp, err := os.MkdirTemp("", "riskgrid-verify-*")
	if err != nil {
		fmt.Fprintf(stderr, "riskgrid verify: temporary cache: %v\n", err)
		return exitFailed
	}
	defer os.RemoveAll(tmp)
	ro, err := runner.Run(ctx, s, runner.Options{Workers: *jobs, CacheDir: tmp, Fresh: true, Log: stderr})
	if err != nil {
		if ctx.Err() != nil {
			fmt.Fprintln(stderr, "riskgrid verify: interrupted")
			return exitInterrupted
		}
		fmt.Fprintf(stderr, "riskgrid verify: %s: %v\n", dir, err)
		return inputStatus(err)
	}
	kappa, err := runner.Conditioning(s, tmp)
	if err != nil {
		fmt.Fprintf(stderr, "riskgrid verify: condition numbers: %v\n", err)
		return exitFailed
	}
	fresh := ro.Result

	fmt.Fprintf(stdout, "verify %s (%s, spec %s)\n", dir, stored.Name, short(stored.Hash))
	for _, l := range provenance(stored, fresh) {
		fmt.Fprintf(stdout, "  %s\n", l)
	}
	fmt.Fprintf(stdout, "  recomputed %d cells from scratch with %d workers in %.2fs (cache not used)\n",
		ro.Timing.Computed, ro.Timing.Workers, ro.Timing.Seconds)
	for _, n := range notes {
		fmt.Fprintf(stdout, "  note: %s\n", n)
	}
	fmt.Fprintln(stdout)
	var freshSums *runner.Sums
	if storedSums != nil {
		freshSums = ro.Sums
	}
	a := reports.Agree(stored, fresh, storedSums, freshSums, kappa, *within)
	if err := reports.WriteAgreement(stdout, a, *show); err != nil {
		fmt.Fprintf(stderr, "riskgrid verify: %v\n", err)
		return exitFailed
	}
	if !a.OK() {
		return exitFailed
	}
	return exitOK
}

// provenance compares the build that wrote the stored result with this one.
func provenance(stored, fresh *runner.Result) []string {
	var out []string
	row := func(what, a, b, consequence string) {
		if a == b {
			out = append(out, fmt.Sprintf("%-9s %s (same as this build)", what, a))
			return
		}
		out = append(out, fmt.Sprintf("%-9s %s stored, %s this build: DIFFERENT %s; %s", what, a, b, what, consequence))
	}
	row("engine", stored.Engine, fresh.Engine, "results may differ by design")
	row("go", stored.Go, fresh.Go, "the random stream is pinned, so only last bits should differ")
	row("platform", stored.Platform, fresh.Platform, "last bits may differ (fused multiply-adds)")
	return out
}

func short(h string) string {
	if len(h) > 12 {
		return h[:12]
	}
	return h
}

// storedDataHash finds the data file hash that Canonical writes as a
// comment into a csv spec.
var storedDataHash = regexp.MustCompile(`(?m)^# sha256 of file: ([0-9a-f]{64})$`)

// specFromResult re-creates the spec of the result folder dir from its
// stored spec_toml. For a csv source the data file is dataFile when given,
// else the stored path against the working directory; its SHA-256 is
// compared with the stored one, and a difference is returned as a note.
func specFromResult(dir string, res *runner.Result, dataFile string, stderr io.Writer) (*spec.Spec, []string, int) {
	label := filepath.Join(dir, "result.json") + " (spec_toml)"
	s, err := spec.Parse(label, []byte(res.SpecTOML))
	if err != nil {
		fmt.Fprintf(stderr, "riskgrid verify: the stored spec does not parse with this build (engine %s, stored %s): %v\n",
			spec.Engine, res.Engine, err)
		return nil, nil, exitBadInput
	}
	if s.Data.Source != spec.SourceCSV {
		if dataFile != "" {
			fmt.Fprintf(stderr, "riskgrid verify: -data: %s has no data file (source %q)\n", dir, s.Data.Source)
			return nil, nil, exitBadInput
		}
		return s, nil, exitOK
	}
	// The stored path is relative to the original spec file, which the
	// result does not locate: resolve it against the working directory
	// (Path "" does that), or take -data.
	s.Path = ""
	if dataFile != "" {
		s.Data.File = dataFile
	}
	b, err := os.ReadFile(s.DataPath())
	if err != nil {
		hint := "give the data file with -data FILE, or verify the spec file instead of the folder"
		if errors.Is(err, fs.ErrNotExist) && dataFile == "" {
			fmt.Fprintf(stderr, "riskgrid verify: %s: the stored spec reads %q, relative to its spec file, which the result does not record; not found against the working directory: %s\n",
				dir, s.Data.File, hint)
		} else {
			fmt.Fprintf(stderr, "riskgrid verify: data file: %v (%s)\n", err, hint)
		}
		return nil, nil, exitBadInput
	}
	sum := sha256.Sum256(b)
	s.DataHash = hex.EncodeToString(sum[:])
	var notes []string
	notes = append(notes, fmt.Sprintf("data file %s (SHA-256 %s)", s.DataPath(), short(s.DataHash)))
	if m := storedDataHash.FindStringSubmatch(res.SpecTOML); m == nil {
		notes = append(notes, "the stored spec records no data file hash: the data file cannot be checked")
	} else if m[1] != s.DataHash {
		// Every random stream (the test split, the per-seed draws) is keyed
		// by the data key, which holds the file's hash: keep the stored
		// one, so that the recomputation tests the file's contents under
		// the original streams (a file whose bytes changed but not its
		// numbers, say its line endings, still agrees).
		notes = append(notes, fmt.Sprintf("DATA FILE DIFFERS: %s has SHA-256 %s, the stored result was computed from a file with SHA-256 %s; "+
			"recomputed with the stored hash as the key of the random streams, so only the file's contents are tested",
			s.DataPath(), s.DataHash, m[1]))
		s.DataHash = m[1]
	}
	return s, notes, exitOK
}

// readSums reads a sums.json; a missing file is (nil, nil).
func readSums(path string) (*runner.Sums, error) {
	b, err := os.ReadFile(path)
	if errors.Is(err, fs.ErrNotExist) {
		return nil, nil
	}
	if err != nil {
		return nil, err
	}
	var s runner.Sums
	if err := json.Unmarshal(b, &s); err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	if s.Schema != runner.SumsSchema {
		return nil, fmt.Errorf("%s: schema %q, this riskgrid reads %q", path, s.Schema, runner.SumsSchema)
	}
	return &s, nil
}
