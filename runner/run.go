package runner

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"io"
	"math"
	"runtime"
	"strconv"
	"sync"
	"sync/atomic"
	"time"

	"golang.org/x/sync/errgroup"

	"riskgrid/data"
	"riskgrid/models"
	"riskgrid/spec"
)

// Options tunes a run. The zero value runs on every CPU without a cache.
type Options struct {
	// Workers bounds the seeds fitted at once. Default (0): runtime.NumCPU().
	Workers int
	// CacheDir is the content-addressed cache folder. Default "": cells are
	// kept in memory for this run only.
	CacheDir string
	// Fresh recomputes every cell, ignoring (and then overwriting) the cache.
	Fresh bool
	// Log receives warnings (a corrupted cache entry, say). Default: discarded.
	Log io.Writer
	// Progress, if set, is called after each seed with the cells done so
	// far. Calls come from the worker goroutines, possibly at once and out
	// of order (keep the largest count), so it must be safe for concurrent
	// use and quick. Default nil: no calls.
	Progress func(Progress)
}

// Progress counts the cells of a run so far.
type Progress struct {
	Computed int // cells fitted
	Cached   int // cells taken from the cache
	Total    int // cells of the run: models × grid values × seeds
}

// InterpTol is the interpolation tolerance: a fit interpolates when its
// training risk is at most InterpTol times the mean squared response
// (1/n)‖y‖². An exact interpolant solved by QR or Cholesky leaves residuals
// of order cond·eps·‖y‖, far below it; a fit that does not interpolate
// leaves residuals of the order of the noise, far above it.
const InterpTol = 1e-9

// newFitter makes a model's fitter; tests replace it to plant failures.
var newFitter = models.New

// Output is what a run produces.
type Output struct {
	Result *Result // result.json
	Sums   *Sums   // sums.json: the mergeable sufficient statistics
	Timing *Timing // timing.json: what varies from run to run
}

// Run fits every cell of s (model × grid value × seed), seeds in parallel,
// reusing cached cells, and reduces them to a Result. The Timing says how
// many cells were computed and how many came from the cache. When ctx is
// cancelled Run stops starting seeds, keeps in the cache every seed that
// finished, and returns ctx's error.
//
// A two-axis spec is run one outer value at a time (see runOuter).
func Run(ctx context.Context, s *spec.Spec, opt Options) (*Output, error) {
	if s.Grid.Outer != nil {
		return runOuter(ctx, s, opt)
	}
	start := time.Now()
	if opt.Workers <= 0 {
		opt.Workers = runtime.NumCPU()
	}
	if opt.Log == nil {
		opt.Log = io.Discard
	}
	// Seeds warn from several goroutines; the caller's writer need not be
	// safe for concurrent use.
	opt.Log = &lockedWriter{w: opt.Log}
	r, err := newRun(s, opt)
	if err != nil {
		return nil, err
	}
	if err := r.fitAll(ctx); err != nil {
		return nil, err
	}
	res, sums, err := r.reduce()
	if err != nil {
		return nil, err
	}
	tm := &Timing{
		Created:  start.UTC().Format(time.RFC3339),
		Workers:  opt.Workers,
		Computed: int(r.computed.Load()),
		Cached:   int(r.cached.Load()),
		Seconds:  time.Since(start).Seconds(),
	}
	res.Created = tm.Created
	return &Output{Result: res, Sums: sums, Timing: tm}, nil
}

type model struct {
	spec   spec.Model
	key    string
	fitter models.Fitter
	// seeds is the number of model seeds fitted per data seed: the spec's
	// [seeds] models for a family with randomness of its own, else 1.
	seeds int
}

type run struct {
	s      *spec.Spec
	opt    Options
	key    string // data key
	src    data.Source
	prob   *data.Problem
	models []model
	values []float64
	exact  bool // split in coefficient space with w = diag Σ
	// truthY is f* at the test inputs (nil on a held-out basis, and per
	// seed under a per-seed truth; see target).
	truthY []float64
	weight []float64 // w_j of the test inputs (test-input bases)
	st     *store
	mem    sync.Map // seed → *entry, when there is no cache folder

	computed, cached atomic.Int64
}

func newRun(s *spec.Spec, opt Options) (*run, error) {
	r := &run{s: s, opt: opt, key: s.DataKey(), values: s.Grid.Values}
	src, err := data.New(s, r.key)
	if err != nil {
		return nil, err
	}
	r.src = src
	r.prob = src.Problem()
	// Exact risks and splits need a known input law and fits the runner
	// can evaluate under it (linear in the input columns); otherwise every
	// model is measured on the same test inputs, so the tables compare.
	r.exact = r.prob.Sigma != nil
	for _, m := range s.Models {
		f, err := newFitter(m)
		if err != nil {
			return nil, fmt.Errorf("model %q: %w", m.Label, err)
		}
		ms := 1
		if spec.Randomized(m.Family) {
			ms = max(s.Seeds.Models, 1)
		}
		r.models = append(r.models, model{spec: m, key: spec.ModelKey(m, s.Grid.Param), fitter: f, seeds: ms})
		r.exact = r.exact && spec.Linear(m.Family)
	}
	if !r.exact {
		r.weight = r.prob.TestW
		if r.weight == nil {
			m, _ := r.prob.TestX.Dims()
			r.weight = make([]float64, m)
			for j := range r.weight {
				r.weight[j] = 1 / float64(m)
			}
		}
	}
	if opt.CacheDir != "" {
		r.st = &store{dir: opt.CacheDir}
	}
	return r, nil
}

func (r *run) seed(i int) uint64 { return r.s.Seeds.Start + uint64(i) }

// cells is the number of cells of the run: per model, grid values × data
// seeds × its model seeds.
func (r *run) cells() int {
	n := 0
	for _, m := range r.models {
		n += len(r.values) * r.s.Seeds.Count * m.seeds
	}
	return n
}

// entryKey addresses the cache entry of one seed. Any new influence on a
// cell that is not in the data key, the model key or the cell key must be
// added here.
func (r *run) entryKey(seed uint64) string {
	h := sha256.New()
	fmt.Fprintf(h, "entry %q\n", cacheMagic)
	fmt.Fprintf(h, "data %q\n", r.key)
	fmt.Fprintf(h, "seed %d\n", seed)
	// A source with a known input law is measured exactly when every model
	// is linear (cells hold coefficients) and on the test inputs otherwise
	// (cells hold predictions): the same data and model keys, other cells.
	// Only the second enters the key, so exact entries keep theirs.
	if r.prob.Sigma != nil && !r.exact {
		fmt.Fprintf(h, "basis %q\n", SplitTestInputs)
	}
	return hex.EncodeToString(h.Sum(nil))
}

// cellKey addresses a cell within a seed's entry. Model seed 0 has no
// suffix, so a family without randomness of its own, and the first model
// seed of one with, keep their cells when model seeds are added.
func cellKey(modelKey, param string, v float64, modelSeed int) string {
	k := modelKey + " " + param + " " + strconv.FormatFloat(v, 'g', -1, 64)
	if modelSeed > 0 {
		k += " #" + strconv.Itoa(modelSeed)
	}
	return k
}

func (r *run) load(seed uint64) (*entry, bool) {
	if r.st == nil {
		if e, ok := r.mem.Load(seed); ok {
			return e.(*entry), true
		}
		return nil, false
	}
	e, ok, bad := r.st.get(r.entryKey(seed))
	if bad != nil {
		fmt.Fprintf(r.opt.Log, "riskgrid: warning: %v; recomputing\n", bad)
	}
	return e, ok
}

func (r *run) save(seed uint64, e *entry) error {
	if r.st == nil {
		r.mem.Store(seed, e)
		return nil
	}
	return r.st.put(r.entryKey(seed), e)
}

// fitAll runs every seed that has missing cells, opt.Workers at a time.
// Entries are written by a second group of goroutines, so that a worker
// fits its next seed while the last one's entry is synced to disk.
func (r *run) fitAll(ctx context.Context) error {
	g, gctx := errgroup.WithContext(ctx)
	g.SetLimit(r.opt.Workers)
	var saves errgroup.Group
	saves.SetLimit(r.opt.Workers)
	for i := 0; i < r.s.Seeds.Count; i++ {
		seed := r.seed(i)
		if gctx.Err() != nil {
			break
		}
		g.Go(func() error {
			if err := gctx.Err(); err != nil {
				return err
			}
			e, changed, err := r.fitSeed(seed)
			if err == nil && r.opt.Progress != nil {
				r.opt.Progress(Progress{
					Computed: int(r.computed.Load()),
					Cached:   int(r.cached.Load()),
					Total:    r.cells(),
				})
			}
			if err != nil || !changed {
				return err
			}
			saves.Go(func() error { return r.save(seed, e) })
			return nil
		})
	}
	err := g.Wait()
	if serr := saves.Wait(); err == nil {
		err = serr
	}
	if err != nil {
		return err
	}
	return ctx.Err()
}

// fitSeed fits the missing cells of one seed from one draw shared by every
// model and grid value, and returns the seed's entry and whether it gained
// cells (and so must be stored). With Fresh every cell of this spec counts
// as missing and is refitted; cells the entry holds for other specs (other
// models or grid values on the same data) are kept.
func (r *run) fitSeed(seed uint64) (*entry, bool, error) {
	e, _ := r.load(seed)
	if e == nil {
		e = &entry{Cells: map[string]*cell{}}
	}
	type todo struct {
		m         *model
		modelSeed int
		values    []float64
	}
	var work []todo
	for i := range r.models {
		m := &r.models[i]
		for ms := range m.seeds {
			var missing []float64
			for _, v := range r.values {
				if _, ok := e.Cells[cellKey(m.key, r.s.Grid.Param, v, ms)]; !ok || r.opt.Fresh {
					missing = append(missing, v)
				}
			}
			r.cached.Add(int64(len(r.values) - len(missing)))
			if len(missing) > 0 {
				work = append(work, todo{m, ms, missing})
			}
		}
	}
	if len(work) == 0 {
		return e, false, nil
	}
	smp, err := r.src.Draw(seed)
	if err != nil {
		return nil, false, fmt.Errorf("seed %d: %w", seed, err)
	}
	if smp.Beta != nil && r.prob.Beta == nil {
		e.Beta = smp.Beta
	}
	train := models.NewTrain(smp.X, smp.Y) // shared by the models of this seed
	if !r.exact {
		train.Test = r.prob.TestX
	}
	target := r.target(e.Beta)
	// ysq[k] = Σ_{i<k} y_i², the scale of the interpolation test for the
	// first k rows, once per seed rather than once per cell.
	ysq := make([]float64, len(smp.Y)+1)
	for i, y := range smp.Y {
		ysq[i+1] = ysq[i] + y*y
	}
	for _, w := range work {
		train.SetSeeds(r.key, seed, uint64(w.modelSeed))
		fits := safePath(w.m.fitter, train, r.s.Grid.Param, w.values)
		for i, v := range w.values {
			e.Cells[cellKey(w.m.key, r.s.Grid.Param, v, w.modelSeed)] = r.reduceFit(smp, ysq, target, v, &fits[i])
		}
		r.computed.Add(int64(len(w.values)))
	}
	return e, true, nil
}

// target returns f* at the test inputs: the fixed truth's, or under a
// per-seed truth the seed's own (TestX β_s); nil on a held-out basis.
func (r *run) target(seedBeta []float64) []float64 {
	if r.exact || !r.prob.TruthKnown {
		return r.prob.TestY
	}
	if r.prob.TestY != nil {
		return r.prob.TestY
	}
	if seedBeta == nil {
		return nil
	}
	return r.predict(seedBeta, 0)
}

// safePath calls the fitter and turns a panic into an error on every fit of
// the path: one broken fit must not crash the run.
func safePath(f models.Fitter, t *models.Train, knob string, values []float64) (fits []models.Fit) {
	defer func() {
		if p := recover(); p != nil {
			fits = make([]models.Fit, len(values))
			for i := range fits {
				fits[i].Err = fmt.Errorf("panic: %v", p)
			}
		}
	}()
	fits = f.Path(t, knob, values)
	if len(fits) != len(values) {
		panic(fmt.Sprintf("runner: fitter returned %d fits for %d values", len(fits), len(values)))
	}
	return fits
}

// reduceFit keeps of a fit what the reduction needs, and its risk. ysq
// holds the prefix sums of y²; target is f* at the test inputs (or the
// observed test responses on a held-out basis).
func (r *run) reduceFit(smp *data.Sample, ysq, target []float64, v float64, f *models.Fit) *cell {
	if f.Err != nil {
		return &cell{Err: f.Err.Error()}
	}
	c := &cell{
		TrainRisk: f.TrainRisk, Norm: f.Norm, DF: f.DF, Cond: f.Cond,
		Method: f.Method, Intercept: f.Intercept,
	}
	n := len(smp.Y)
	if r.s.Grid.Param == spec.ParamNTrain {
		n = int(v)
	}
	c.Interp = f.TrainRisk <= InterpTol*ysq[n]/float64(n)
	switch {
	case r.exact:
		c.Coef = f.Coef
		beta := r.prob.Beta
		if beta == nil {
			beta = smp.Beta
		}
		c.Risk = r.exactRisk(f.Coef, f.Intercept, beta)
	default:
		c.Pred = f.Pred
		if c.Pred == nil {
			c.Pred = r.predict(f.Coef, f.Intercept)
		}
		m, _ := r.prob.TestX.Dims()
		if len(c.Pred) != m {
			return &cell{Err: fmt.Sprintf("%d predictions for %d test inputs (method %s)", len(c.Pred), m, f.Method)}
		}
		c.Risk = r.testRisk(c.Pred, target)
	}
	for _, v := range []struct {
		name string
		x    float64
	}{{"risk", c.Risk}, {"training risk", c.TrainRisk}, {"norm", c.Norm}} {
		if math.IsNaN(v.x) || math.IsInf(v.x, 0) {
			return &cell{Err: fmt.Sprintf("non-finite %s %v (method %s)", v.name, v.x, f.Method)}
		}
	}
	if math.IsInf(c.DF, 0) {
		return &cell{Err: fmt.Sprintf("infinite df (method %s)", f.Method)}
	}
	return c
}

// testRisk is the risk measured on the test inputs x_j with weights w_j:
//
//	known truth:  R = Σ_j w_j (f(x_j) − f*(x_j))² + Var ε
//	held out:     R = Σ_j w_j (f(x_j) − y_j)²
//
// With quadrature weights the first is the true risk up to the rule's
// error; with m independent inputs (w_j = 1/m) it is a Monte Carlo
// estimate, whose standard error the reduction reports.
func (r *run) testRisk(pred, target []float64) float64 {
	var ss float64
	for j, p := range pred {
		d := p - target[j]
		ss += r.weight[j] * d * d
	}
	if r.prob.TruthKnown {
		ss += r.prob.NoiseVar
	}
	return ss
}

// exactRisk is the true risk of the linear fit x ↦ b0 + xᵀb (b padded with
// zeros to the dimension d) under x ~ N(0, Σ), Σ diagonal, y = xᵀβ + ε:
//
//	R(b) = E(y − b0 − xᵀb)² = Σ_j Σ_jj (b_j − β_j)² + b0² + Var ε.
func (r *run) exactRisk(b []float64, b0 float64, beta []float64) float64 {
	sig := r.prob.Sigma
	risk := b0*b0 + r.prob.NoiseVar
	for j, bj := range beta {
		d := -bj
		if j < len(b) {
			d += b[j]
		}
		risk += sig[j] * d * d
	}
	return risk
}

// predict evaluates b0 + xᵀb at the test inputs (the first len(b) columns).
func (r *run) predict(b []float64, b0 float64) []float64 {
	x := r.prob.TestX
	m, _ := x.Dims()
	out := make([]float64, m)
	for i := range out {
		row := x.RawRowView(i)
		s := b0
		for j, bj := range b {
			s += row[j] * bj
		}
		out[i] = s
	}
	return out
}

// lockedWriter serializes writes to w.
type lockedWriter struct {
	mu sync.Mutex
	w  io.Writer
}

func (l *lockedWriter) Write(p []byte) (int, error) {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.w.Write(p)
}
