package runner

import (
	"context"
	"testing"

	"riskgrid/spec"
)

// BenchmarkReferenceSweep runs the project's reference sweep
// (specs/bench-ridgeless-sweep.toml: n = 200, d = 1000, 40 feature counts,
// least squares and ridge, 100 seeds) without a cache, on every CPU. The
// target is under 3 s on two cores.
func BenchmarkReferenceSweep(b *testing.B) {
	s, err := spec.Load("../specs/bench-ridgeless-sweep.toml")
	if err != nil {
		b.Fatal(err)
	}
	for b.Loop() {
		if _, err := Run(context.Background(), s, Options{}); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkSeed fits one seed of the reference sweep (both models, every
// grid value) on one worker: the unit of work the runner schedules.
func BenchmarkSeed(b *testing.B) {
	s, err := spec.Load("../specs/bench-ridgeless-sweep.toml")
	if err != nil {
		b.Fatal(err)
	}
	s.Seeds.Count = 1
	r, err := newRun(s, Options{Workers: 1})
	if err != nil {
		b.Fatal(err)
	}
	for b.Loop() {
		r.mem.Clear()
		if _, _, err := r.fitSeed(1); err != nil {
			b.Fatal(err)
		}
	}
}
