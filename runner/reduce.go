package runner

import (
	"fmt"
	"runtime"
	"sort"
	"sync"

	"riskgrid/spec"
)

// point gathers one grid point of one model across seeds.
type point struct {
	seeds                 []uint64
	risk, train, norm, df []float64
	interp                int
	errs                  []CellError
	sp                    *split
	sumSq                 float64   // Σ_s ⟨e_s, e_s⟩
	sumSqIn               []float64 // Σ_s e_sj², test-input bases
}

// addSq adds ⟨e, e⟩ and, per input, e_j².
func (p *point) addSq(e, w []float64, perInput bool) {
	if perInput && p.sumSqIn == nil {
		p.sumSqIn = make([]float64, len(e))
	}
	for j, v := range e {
		p.sumSq += w[j] * v * v
		if perInput {
			p.sumSqIn[j] += v * v
		}
	}
}

// reduce reads every seed's entry in seed order (twice: the split needs the
// mean deviation before the per-seed terms) and builds the Result and its
// Sums. Reading in a fixed order makes both the same bit for bit whatever
// the number of workers.
func (r *run) reduce() (*Result, *Sums, error) {
	w := r.weights()
	pts := make([][]*point, len(r.models))
	for i := range pts {
		pts[i] = make([]*point, len(r.values))
		for j := range pts[i] {
			pts[i][j] = &point{sp: newSplit(w)}
		}
	}
	dev := make([]float64, len(w))
	for pass := 1; pass <= 2; pass++ {
		err := r.inOrder(func(seed uint64, e *entry) error {
			for mi, m := range r.models {
				for vi, v := range r.values {
					c, ok := e.Cells[cellKey(m.key, r.s.Grid.Param, v)]
					if !ok {
						return fmt.Errorf("seed %d: cell %s %g missing after fitting", seed, m.spec.Label, v)
					}
					p := pts[mi][vi]
					if c.Err != "" {
						if pass == 1 {
							p.errs = append(p.errs, CellError{Seed: seed, Msg: c.Err})
						}
						continue
					}
					r.deviation(c, e.Beta, dev)
					if pass == 1 {
						p.sp.add(dev)
						p.addSq(dev, w, !r.exact)
						p.seeds = append(p.seeds, seed)
						p.risk = append(p.risk, c.Risk)
						p.train = append(p.train, c.TrainRisk)
						p.norm = append(p.norm, c.Norm)
						p.df = append(p.df, c.DF)
						if c.Interp {
							p.interp++
						}
					} else {
						p.sp.revisit(dev)
					}
				}
			}
			return nil
		})
		if err != nil {
			return nil, nil, err
		}
	}
	res := &Result{
		Schema:       Schema,
		Engine:       spec.Engine,
		Go:           runtime.Version(),
		Platform:     runtime.GOOS + "/" + runtime.GOARCH,
		Name:         r.s.Name,
		About:        r.s.About,
		Hash:         r.s.Hash(),
		SpecTOML:     r.s.Canonical(),
		Param:        r.s.Grid.Param,
		Seeds:        r.s.Seeds.Count,
		NTrain:       r.s.Data.NTrain,
		TruthPerSeed: r.s.Data.Truth == spec.TruthPerSeed,
	}
	switch {
	case r.exact:
		res.RiskBasis, res.SplitBasis = RiskExact, SplitExact
	case r.prob.TruthKnown:
		res.RiskBasis, res.SplitBasis, res.TestPoints = RiskTestSet, SplitTestInputs, len(r.prob.TestY)
	default:
		res.RiskBasis, res.SplitBasis, res.TestPoints = RiskTestSet, SplitLumped, len(r.prob.TestY)
	}
	sums := &Sums{Schema: SumsSchema, Hash: res.Hash, DataKey: r.key, SplitBasis: res.SplitBasis,
		Param: res.Param, Weights: w}
	for mi, m := range r.models {
		mr := ModelResult{Label: m.spec.Label, Family: m.spec.Family}
		ms := ModelSums{Label: m.spec.Label, Key: m.key}
		for vi, v := range r.values {
			p := pts[mi][vi]
			mr.Points = append(mr.Points, r.finish(v, p, res.SplitBasis))
			ms.Points = append(ms.Points, PointSums{
				Value: v, Seeds: p.seeds, Risk: p.risk, TrainRisk: p.train, Norm: p.norm, DF: p.df,
				Interp: p.interp, SumDev: p.sp.sum, SumSqDev: p.sumSq, SumSqDevInput: p.sumSqIn,
			})
		}
		res.Models = append(res.Models, mr)
		sums.Models = append(sums.Models, ms)
	}
	return res, sums, nil
}

// inOrder calls fn with every seed's entry in seed order. Entries are read
// and decoded opt.Workers at a time, a block of seeds ahead of fn, so the
// folding stays in a fixed order while the decoding runs in parallel; at
// most one block of entries is held at once.
func (r *run) inOrder(fn func(seed uint64, e *entry) error) error {
	block := max(r.opt.Workers, 1)
	entries := make([]*entry, block)
	for lo := 0; lo < r.s.Seeds.Count; lo += block {
		hi := min(lo+block, r.s.Seeds.Count)
		var wg sync.WaitGroup
		for i := lo; i < hi; i++ {
			wg.Go(func() {
				e, _ := r.load(r.seed(i))
				entries[i-lo] = e
			})
		}
		wg.Wait()
		for i := lo; i < hi; i++ {
			e := entries[i-lo]
			if e == nil {
				return fmt.Errorf("seed %d: cache entry vanished during the run", r.seed(i))
			}
			if err := fn(r.seed(i), e); err != nil {
				return err
			}
		}
	}
	return nil
}

// weights is the inner product of the split: diag Σ (and 1 for the
// intercept, as E x = 0) in coefficient space, or 1/m on the test inputs.
func (r *run) weights() []float64 {
	if r.exact {
		w := make([]float64, len(r.prob.Sigma)+1)
		copy(w, r.prob.Sigma)
		w[len(w)-1] = 1
		return w
	}
	m := len(r.prob.TestY)
	w := make([]float64, m)
	for j := range w {
		w[j] = 1 / float64(m)
	}
	return w
}

// deviation writes e = f − f* of one cell into dst: (b padded − β, b0) in
// coefficient space, or predictions minus targets on the test inputs.
func (r *run) deviation(c *cell, seedBeta []float64, dst []float64) {
	if r.exact {
		beta := r.prob.Beta
		if beta == nil {
			beta = seedBeta
		}
		for j, bj := range beta {
			d := -bj
			if j < len(c.Coef) {
				d += c.Coef[j]
			}
			dst[j] = d
		}
		dst[len(beta)] = c.Intercept
		return
	}
	for j, p := range c.Pred {
		dst[j] = p - r.prob.TestY[j]
	}
}

// gaps returns risk − train per seed (the gap is paired).
func gaps(risk, train []float64) []float64 {
	g := make([]float64, len(risk))
	for i := range g {
		g[i] = risk[i] - train[i]
	}
	return g
}

func est(xs []float64) Estimate {
	m, se := meanSE(xs)
	return Estimate{Mean: Num(m), SE: Num(se)}
}

func (r *run) finish(v float64, p *point, basis string) Point {
	pt := Point{
		Value:     v,
		Seeds:     len(p.risk),
		Risk:      est(p.risk),
		TrainRisk: est(p.train),
		Gap:       est(gaps(p.risk, p.train)),
		Norm:      est(p.norm),
		DF:        est(p.df),
		Errors:    p.errs,
	}
	b2, b2se, vr, vrse := p.sp.result()
	pt.Bias2 = Estimate{Num(b2), Num(b2se)}
	pt.Variance = Estimate{Num(vr), Num(vrse)}
	if basis == SplitLumped {
		pt.Noise = Estimate{NaN, NaN}
		pt.Sum = Num(b2 + vr)
	} else {
		pt.Noise = Estimate{Num(r.prob.NoiseVar), 0}
		pt.Sum = Num(b2 + vr + r.prob.NoiseVar)
	}
	sorted := append([]float64(nil), p.risk...)
	sort.Float64s(sorted)
	pt.RiskQ1 = Num(quantile(sorted, 0.25))
	pt.RiskMedian = Num(quantile(sorted, 0.5))
	pt.RiskQ3 = Num(quantile(sorted, 0.75))
	pt.HeavyTail = heavyTail(sorted)
	if len(p.risk) > 0 {
		pt.Interpolating = Num(float64(p.interp) / float64(len(p.risk)))
	} else {
		pt.Interpolating = NaN
	}
	return pt
}
