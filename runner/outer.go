package runner

import (
	"context"
	"fmt"
	"slices"
	"strconv"
	"time"

	"riskgrid/spec"
)

// runOuter runs a two-axis spec as a layer over the one-axis run: for each
// outer value v in order it runs the slice s.At(v) (n_train or every
// model's λ fixed at v) with Run, then joins the slices into one Output.
// Each slice has the data key and model keys of a one-axis spec of the same
// setting, so the cache serves both ways: a slice computed by a one-axis run
// is not refitted, and the other way round.
//
// The joined Result is that of s (its name, hash and canonical spec) with,
// per outer value and model, the slice's curve unchanged, marked with its
// outer value (ModelResult.Outer). Every slice is deterministic, so the
// join is too, for any number of workers. When ctx is cancelled the slices
// and seeds that finished stay in the cache.
func runOuter(ctx context.Context, s *spec.Spec, opt Options) (*Output, error) {
	start := time.Now()
	o := s.Grid.Outer
	res := &Result{}
	sums := &Sums{}
	tm := &Timing{Created: start.UTC().Format(time.RFC3339)}
	sub := opt
	if opt.Progress != nil { // count the whole grid, not the slice
		total := Size(s, 1).Cells
		sub.Progress = func(p Progress) {
			opt.Progress(Progress{Computed: tm.Computed + p.Computed, Cached: tm.Cached + p.Cached, Total: total})
		}
	}
	for i, v := range o.Values {
		sl, err := Run(ctx, s.At(v), sub)
		if err != nil {
			return nil, fmt.Errorf("%s = %s: %w", o.Param, strconv.FormatFloat(v, 'g', -1, 64), err)
		}
		r, sm := sl.Result, sl.Sums
		if i == 0 {
			*res = *r
			res.Models = nil
			res.Hash, res.SpecTOML = s.Hash(), s.Canonical()
			res.OuterParam, res.NTrain = o.Param, s.Data.NTrain
			*sums = *sm
			sums.Models = nil
			sums.Hash, sums.DataKey, sums.OuterParam = res.Hash, s.DataKey(), o.Param
		} else if r.RiskBasis != res.RiskBasis || r.SplitBasis != res.SplitBasis || r.TestPoints != res.TestPoints ||
			r.TruthPerSeed != res.TruthPerSeed || !slices.Equal(sm.Weights, sums.Weights) {
			// The outer knob changes neither the data source nor the test set.
			panic(fmt.Sprintf("runner: slice %s = %v measures differently from the first", o.Param, v))
		}
		for j := range r.Models {
			m := r.Models[j]
			m.Outer = &v
			res.Models = append(res.Models, m)
			ms := sm.Models[j]
			ms.Outer, ms.DataKey = &v, sm.DataKey
			sums.Models = append(sums.Models, ms)
		}
		tm.Workers = sl.Timing.Workers
		tm.Computed += sl.Timing.Computed
		tm.Cached += sl.Timing.Cached
	}
	tm.Seconds = time.Since(start).Seconds()
	res.Created = tm.Created
	return &Output{Result: res, Sums: sums, Timing: tm}, nil
}

// sameOuter reports whether two outer values are both absent or equal.
func sameOuter(a, b *float64) bool {
	if a == nil || b == nil {
		return a == b
	}
	return *a == *b
}
