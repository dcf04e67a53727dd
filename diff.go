package main

import (
	"fmt"
	"io"
	"math"
	"path/filepath"

	"riskgrid/reports"
	"riskgrid/runner"
)

const diffSynopsis = "diff A B [-k K] [-within X] [-flagged]"

// cmdDiff compares two result folders (reports.Diff): aligned by model
// label and grid value, every metric of A beside B with B − A, its
// standard error (paired per seed on common random numbers) and a flag
// beyond k standard errors. Neither folder is written.
//
// Exit status: 0 nothing flagged; 1 something flagged; 2 bad usage, an
// unreadable result folder, or results that vary different knobs.
func cmdDiff(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("diff", diffSynopsis, stderr)
	k := fs.Float64("k", reports.DefaultSigmas, "flag a difference beyond `K` standard errors (normal-equivalent)")
	within := fs.Float64("within", reports.DefaultWithin,
		"never flag a difference below `X` relative; the tolerance of exact quantities (0: exact equality)")
	flagged := fs.Bool("flagged", false, "list only the rows that carry a mark")
	paths, err := parse(fs, args)
	if err != nil {
		return flagStatus(err)
	}
	if len(paths) != 2 {
		fmt.Fprintln(stderr, "riskgrid diff: give two result folders, A and B")
		fs.Usage()
		return exitBadInput
	}
	if !(*k > 0) || math.IsInf(*k, 0) {
		fmt.Fprintf(stderr, "riskgrid diff: -k %v: want a positive number of standard errors\n", *k)
		return exitBadInput
	}
	if !(*within >= 0 && *within < 1) {
		fmt.Fprintf(stderr, "riskgrid diff: -within %v: want a relative tolerance in [0, 1)\n", *within)
		return exitBadInput
	}
	var res [2]*runner.Result
	var sums [2]*runner.Sums
	for i, dir := range paths {
		if res[i], err = readResult(filepath.Join(dir, "result.json")); err != nil {
			fmt.Fprintf(stderr, "riskgrid diff: %v\n", err)
			return exitBadInput
		}
		if sums[i], err = readSums(filepath.Join(dir, "sums.json")); err != nil {
			fmt.Fprintf(stderr, "riskgrid diff: %v\n", err)
			return exitBadInput
		}
	}
	opt := reports.DiffOptions{Sigmas: *k, Within: *within}
	if *within == 0 {
		opt.Within = -1 // exact equality
	}
	d, err := reports.Diff(res[0], res[1], sums[0], sums[1], opt)
	if err != nil {
		fmt.Fprintf(stderr, "riskgrid diff: %s, %s: %v\n", paths[0], paths[1], err)
		return exitBadInput
	}
	for i, name := range []string{"A", "B"} {
		r := res[i]
		fmt.Fprintf(stdout, "%s  %s: %s, spec %s, engine %s, %d seeds\n", name, paths[i], r.Name, short(r.Hash), r.Engine, r.Seeds)
	}
	if err := reports.WriteDiff(stdout, d, *flagged); err != nil {
		fmt.Fprintf(stderr, "riskgrid diff: %v\n", err)
		return exitFailed
	}
	if d.Flagged > 0 {
		return exitFailed
	}
	return exitOK
}
