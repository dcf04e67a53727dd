package runner

import (
	"fmt"
	"math"

	"riskgrid/data"
	"runtime"
	"sort"
	"sync"

	"riskgrid/spec"
)

// point gathers one grid point of one model across data seeds. With M model
// seeds per data seed, the per-seed scalars are means over the seed's M
// fits and the split runs on the per-seed mean deviations ê_s (see
// nestedSplit).
type point struct {
	seeds                 []uint64
	risk, train, norm, df []float64
	interp, fits          int       // fits that interpolate, of fits reduced
	cond                  []float64 // per fit, NaN dropped
	errs                  []CellError
	sp                    *split
	modelVar              []float64 // per seed: Σ_m ⟨e_sm − ê_s, ·⟩/(M−1), M > 1
	sumSq                 float64   // Σ_s mean_m ⟨e_sm, e_sm⟩
	sumSqIn               []float64 // Σ_s mean_m e_smj², test-input bases
}

// addSq adds ⟨e, e⟩·share and, per input, e_j²·share.
func (p *point) addSq(e, w []float64, perInput bool, share float64) {
	if perInput && p.sumSqIn == nil {
		p.sumSqIn = make([]float64, len(e))
	}
	for j, v := range e {
		p.sumSq += share * w[j] * v * v
		if perInput {
			p.sumSqIn[j] += share * v * v
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
	var devs [][]float64            // e_sm of the seed's fits, reused
	mean := make([]float64, len(w)) // ê_s over the seed's model seeds
	cells := make([]*cell, 0, 1)
	for pass := 1; pass <= 2; pass++ {
		err := r.inOrder(func(seed uint64, e *entry) error {
			target := r.target(e.Beta)
			for mi, m := range r.models {
				for vi, v := range r.values {
					p := pts[mi][vi]
					// A data seed counts only if all its model seeds'
					// fits succeeded: the nested split needs balanced
					// groups.
					cells = cells[:0]
					failed := false
					for ms := range m.seeds {
						c, ok := e.Cells[cellKey(m.key, r.s.Grid.Param, v, ms)]
						if !ok {
							return fmt.Errorf("seed %d: cell %s %g #%d missing after fitting", seed, m.spec.Label, v, ms)
						}
						if c.Err != "" {
							failed = true
							if pass == 1 {
								p.errs = append(p.errs, CellError{Seed: seed, ModelSeed: ms, Msg: c.Err})
							}
						}
						cells = append(cells, c)
					}
					if failed {
						continue
					}
					M := float64(len(cells))
					clear(mean)
					for len(devs) < len(cells) {
						devs = append(devs, make([]float64, len(w)))
					}
					for k, c := range cells {
						dev := devs[k]
						r.deviation(c, e.Beta, target, dev)
						for j, x := range dev {
							mean[j] += x / M
						}
						if pass == 1 {
							p.addSq(dev, w, !r.exact, 1/M)
						}
					}
					if pass == 2 {
						p.sp.revisit(mean)
						continue
					}
					p.sp.add(mean)
					if len(cells) > 1 {
						var within float64
						for _, dev := range devs[:len(cells)] {
							for j, x := range dev {
								u := x - mean[j]
								within += w[j] * u * u
							}
						}
						p.modelVar = append(p.modelVar, within/(M-1))
					}
					var risk, train, norm, df float64
					for _, c := range cells {
						risk += c.Risk / M
						train += c.TrainRisk / M
						norm += c.Norm / M
						df += c.DF / M
						if c.Interp {
							p.interp++
						}
						if !math.IsNaN(c.Cond) {
							p.cond = append(p.cond, c.Cond)
						}
					}
					p.fits += len(cells)
					p.seeds = append(p.seeds, seed)
					p.risk = append(p.risk, risk)
					p.train = append(p.train, train)
					p.norm = append(p.norm, norm)
					p.df = append(p.df, df)
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
	res.ModelSeeds = max(r.s.Seeds.Models, 1)
	switch {
	case r.exact:
		res.RiskBasis, res.SplitBasis = RiskExact, SplitExact
	case r.prob.TruthKnown:
		res.RiskBasis, res.SplitBasis, res.TestPoints = RiskMonteCarlo, SplitTestInputs, len(r.weight)
		if r.prob.TestBasis == data.TestQuadrature {
			res.RiskBasis = RiskQuadrature
		}
	default:
		res.RiskBasis, res.SplitBasis, res.TestPoints = RiskTestSet, SplitLumped, len(r.weight)
	}
	sums := &Sums{Schema: SumsSchema, Hash: res.Hash, DataKey: r.key, SplitBasis: res.SplitBasis,
		Param: res.Param, Weights: w, ModelSeeds: res.ModelSeeds}
	for mi, m := range r.models {
		mr := ModelResult{Label: m.spec.Label, Family: m.spec.Family}
		ms := ModelSums{Label: m.spec.Label, Key: m.key}
		for vi, v := range r.values {
			p := pts[mi][vi]
			pt := r.finish(v, p, res, m.seeds)
			pt.Theory = r.theory(m.spec, v)
			mr.Points = append(mr.Points, pt)
			ms.Points = append(ms.Points, PointSums{
				Value: v, Seeds: p.seeds, Risk: p.risk, TrainRisk: p.train, Norm: p.norm, DF: p.df,
				Interp: p.interp, SumDev: p.sp.sum, SumSqDev: p.sumSq, SumSqDevInput: p.sumSqIn,
				ModelVar: p.modelVar,
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
// intercept, as E x = 0) in coefficient space, or the test inputs' weights
// (1/m, or a quadrature rule's).
func (r *run) weights() []float64 {
	if r.exact {
		w := make([]float64, len(r.prob.Sigma)+1)
		copy(w, r.prob.Sigma)
		w[len(w)-1] = 1
		return w
	}
	return r.weight
}

// deviation writes e = f − f* of one cell into dst: (b padded − β, b0) in
// coefficient space, or predictions minus target (f* or the observed
// responses) on the test inputs.
func (r *run) deviation(c *cell, seedBeta, target []float64, dst []float64) {
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
		dst[j] = p - target[j]
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
	m, se := MeanSE(xs)
	return Estimate{Mean: Num(m), SE: Num(se)}
}

// finish reduces one grid point. With M model seeds per data seed the
// variance is split by the law of total variance (see nestedSplit); a
// family without randomness of its own (M = 1) has a model part of
// exactly zero.
func (r *run) finish(v float64, p *point, res *Result, modelSeeds int) Point {
	pt := Point{
		Value:     v,
		Seeds:     len(p.risk),
		Risk:      est(p.risk),
		TrainRisk: est(p.train),
		Gap:       est(gaps(p.risk, p.train)),
		Norm:      est(p.norm),
		DF:        est(p.df),
		RiskMCSE:  NaN,
		Errors:    p.errs,
	}
	ns := nestedSplit(p.sp, p.modelVar, modelSeeds)
	pt.Bias2 = Estimate{Num(ns.bias2), Num(ns.bias2SE)}
	pt.Variance = Estimate{Num(ns.variance), Num(ns.varianceSE)}
	pt.VarianceData = Estimate{Num(ns.data), Num(ns.dataSE)}
	pt.VarianceModel = Estimate{Num(ns.model), Num(ns.modelSE)}
	if res.SplitBasis == SplitLumped {
		pt.Noise = Estimate{NaN, NaN}
		pt.Sum = Num(ns.bias2 + ns.variance)
	} else {
		pt.Noise = Estimate{Num(r.prob.NoiseVar), 0}
		pt.Sum = Num(ns.bias2 + ns.variance + r.prob.NoiseVar)
	}
	if res.RiskBasis == RiskMonteCarlo && len(p.risk) > 0 {
		pt.RiskMCSE = Num(mcSE(p.sumSqIn, len(p.risk)))
	}
	sorted := append([]float64(nil), p.risk...)
	sort.Float64s(sorted)
	pt.RiskQ1 = Num(quantile(sorted, 0.25))
	pt.RiskMedian = Num(quantile(sorted, 0.5))
	pt.RiskQ3 = Num(quantile(sorted, 0.75))
	pt.HeavyTail = heavyTail(sorted)
	sort.Float64s(p.cond)
	pt.CondMedian = Num(quantile(p.cond, 0.5))
	if p.fits > 0 {
		pt.Interpolating = Num(float64(p.interp) / float64(p.fits))
	} else {
		pt.Interpolating = NaN
	}
	return pt
}

// mcSE is the Monte Carlo standard error of a risk measured on m
// independent test inputs: with D_j = (1/S) Σ_s mean_m e_smj² the mean
// squared error at input j (sumSqIn_j/S), the risk is the mean of the D_j
// plus the noise, and its error from the finite test sample is
//
//	se = sd_j(D_j)/√m,
//
// the standard error of a sample mean (the seeds' fits are held fixed).
func mcSE(sumSqIn []float64, seeds int) float64 {
	d := make([]float64, len(sumSqIn))
	for j, x := range sumSqIn {
		d[j] = x / float64(seeds)
	}
	_, se := MeanSE(d)
	return se
}
