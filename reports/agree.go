package reports

import (
	"fmt"
	"math"
	"slices"
	"sort"
	"strconv"

	"riskgrid/runner"
)

// DefaultWithin is the default relative tolerance of Agree (riskgrid
// verify -within). Why 1e-9 (measured on this project's example specs, by
// running each with a default build and with GOAMD64=v3, which lets the
// compiler fuse multiply-adds as arm64 builds always do, and comparing):
//
//   - Loose enough for last-bit differences between builds: fused
//     multiply-adds moved no number of result.json by more than 6e-14
//     relative (double-descent, n = 100, 50 seeds), and no per-seed value by
//     more than 1.5e-12 (bench-ridgeless-sweep, a per-seed risk at p = n =
//     200, κ = 8.7e6); ridge-penalty and greenhouse moved by at most 2e-14.
//     NUMERICS.md reports 8e-13 for a mean risk. 1e-9 is more than 600
//     times the largest of these.
//   - Tight enough to catch a real change: another draw of one seed moves
//     that seed's risk by O(1) relative, hence a mean over S seeds by
//     O(1/S); changing the ridge penalty by one part in a million (0.05 to
//     0.05000005 in double-descent) moved the mean risks by 3e-9 to 4e-7
//     relative, every point beyond 1e-9.
//
// Near the interpolation threshold κ can reach 1e8 and more, and rounding
// there is amplified beyond any fixed tolerance: see Allowance.
const DefaultWithin = 1e-9

// CondSlack is the factor g of the condition-scaled allowance g·κ·eps (see
// Allowance). The forward error of a backward-stable linear solve is of
// order κ·eps times a modest growth factor (Matrix Computations, 4th ed.,
// Johns Hopkins University Press, 2013, §2.6 and §3.3; textbook). In the
// measurements of DefaultWithin the largest per-seed relative change was at
// most 4.3·κ_max·eps at points with κ_max > 10 (16·κ_max·eps where κ_max ≈ 1,
// which the flat tolerance governs); g = 100 leaves a margin of more than
// twenty over it. (A measurement across two builds, not a unit test.)
const CondSlack = 100

// Allowance is the largest relative difference Agree accepts at a grid
// point whose largest condition number over seeds is kappa:
//
//	allowed = max(within, CondSlack · κ_max · eps),   eps = 2⁻⁵²,
//
// so well-conditioned points (κ_max ≤ within/(CondSlack·eps), 4.5e4 at the
// default) are held to within, and ill-conditioned ones (at and near the
// interpolation threshold) get what their conditioning allows. A NaN kappa
// (not computed) leaves within; within = 0 demands bit-for-bit equality
// everywhere (the promise of the same build).
func Allowance(within, kappa float64) float64 {
	if within == 0 || math.IsNaN(kappa) {
		return within
	}
	return math.Max(within, CondSlack*kappa*eps)
}

// eps is the unit roundoff of float64, 2⁻⁵².
const eps = 0x1p-52

// Where locates a number in a result: a model, a grid value and, for a
// per-seed value, the seed.
type Where struct {
	Model   string
	Value   float64
	Seed    uint64
	HasSeed bool
}

func (w Where) String(param string) string {
	s := fmt.Sprintf("%s, %s = %s", w.Model, param, knob(w.Value))
	if w.HasSeed {
		s += fmt.Sprintf(", seed %d", w.Seed)
	}
	return s
}

// Spread is, for one metric, the largest absolute and relative difference
// between two results and where each occurs.
type Spread struct {
	Metric   string
	Compared int     // numbers compared
	MaxAbs   float64 // largest |a − b|
	AbsAt    Where
	MaxRel   float64 // largest relative difference (see Agree)
	RelAt    Where
	Moved    int // numbers beyond their allowance
}

// Moved is one number that differs by more than its allowance.
type Moved struct {
	Where
	Metric         string
	Stored, Fresh  float64
	Abs, Rel       float64
	Allowed        float64
	IllConditioned bool
}

// Widened is a grid point whose allowance exceeds the tolerance because of
// its conditioning.
type Widened struct {
	Where
	Kappa   float64
	Allowed float64
}

// Agreement is the outcome of comparing a stored result with a
// recomputation of it (see Agree).
type Agreement struct {
	Param   string
	Within  float64
	Spreads []Spread  // one per metric, in a fixed order
	Moved   []Moved   // every number beyond its allowance
	Widened []Widened // points held to a condition-scaled allowance
	// Shape lists differences of structure: a model or grid value present
	// in one result only, a different number of successful seeds, a failed
	// cell on one side only, a heavy-tail flag that flipped.
	Shape []string
	// PerSeed says whether per-seed values (sums.json) were compared.
	PerSeed bool
}

// OK reports whether the results agree: nothing moved beyond its allowance
// and the structure is the same.
func (a *Agreement) OK() bool { return len(a.Moved) == 0 && len(a.Shape) == 0 }

// Agree compares a stored result with a fresh recomputation of the same
// spec, number by number: every mean and standard error of Point, the
// Monte Carlo SE, the sum, the risk quartiles and the share of
// interpolating fits, and, when both sums are given, every per-seed risk,
// training risk, norm, df and within-seed model variance. The median
// condition number is shown but not judged (see unitCond). Two
// numbers a (stored) and b (fresh) differ by
//
//	rel = |a − b| / max(|a|, |b|, scale),
//
// where scale is the point's stored mean of the metric's unit — the mean
// risk for the risk-like metrics (risk, train_risk, gap, bias2, the
// variances, noise, sum, quartiles and their SEs), the mean norm for norm, the mean df
// for df — so that a training risk of 1e-30 at interpolation, which is
// rounding, is read against the risk it sits beside and not against
// itself. A number moved when rel > Allowance(within, κ_max) with κ_max
// the point's largest condition number from kappa (indexed as
// fresh.Models × points; nil when unknown). Two NaNs agree; a NaN against
// a number is moved. The interpolating share is compared exactly (it
// counts seeds).
func Agree(stored, fresh *runner.Result, storedSums, freshSums *runner.Sums, kappa [][]float64, within float64) *Agreement {
	a := &Agreement{Param: fresh.Param, Within: within}
	spreads := map[string]*Spread{}
	spread := func(metric string) *Spread {
		s, ok := spreads[metric]
		if !ok {
			s = &Spread{Metric: metric}
			spreads[metric] = s
		}
		return s
	}
	if stored.Param != fresh.Param {
		a.Shape = append(a.Shape, fmt.Sprintf("grid knob: stored %q, recomputed %q", stored.Param, fresh.Param))
		return a
	}
	if stored.OuterParam != fresh.OuterParam {
		a.Shape = append(a.Shape, fmt.Sprintf("outer grid knob: stored %q, recomputed %q", stored.OuterParam, fresh.OuterParam))
		return a
	}
	if stored.ModelSeeds != fresh.ModelSeeds {
		a.Shape = append(a.Shape, fmt.Sprintf("model seeds per data seed: stored %d, recomputed %d", stored.ModelSeeds, fresh.ModelSeeds))
	}
	sums := storedSums != nil && freshSums != nil
	a.PerSeed = sums
	for mi := range fresh.Models {
		fm := &fresh.Models[mi]
		name := curveName(fresh, fm) // label, and outer value on a two-axis grid
		sm := findModel(stored, name)
		if sm == nil {
			a.Shape = append(a.Shape, fmt.Sprintf("model %q: recomputed, not in the stored result", name))
			continue
		}
		for pi := range fm.Points {
			fp := &fm.Points[pi]
			sp := findPoint(sm, fp.Value)
			w := Where{Model: name, Value: fp.Value}
			if sp == nil {
				a.Shape = append(a.Shape, fmt.Sprintf("%s: recomputed, not in the stored result", w.String(a.Param)))
				continue
			}
			k := math.NaN()
			if mi < len(kappa) && pi < len(kappa[mi]) {
				k = kappa[mi][pi]
			}
			allowed := Allowance(within, k)
			ill := allowed > within
			if ill {
				a.Widened = append(a.Widened, Widened{Where: w, Kappa: k, Allowed: allowed})
			}
			a.shape(w, sp, fp)
			cmp := func(metric string, x, y, scale, allowed float64, at Where) {
				s := spread(metric)
				s.Compared++
				d, rel := difference(x, y, scale)
				if s.Compared == 1 || d > s.MaxAbs {
					s.MaxAbs, s.AbsAt = d, at
				}
				if s.Compared == 1 || rel > s.MaxRel {
					s.MaxRel, s.RelAt = rel, at
				}
				if rel > allowed {
					s.Moved++
					a.Moved = append(a.Moved, Moved{Where: at, Metric: metric, Stored: x, Fresh: y,
						Abs: d, Rel: rel, Allowed: allowed, IllConditioned: ill})
				}
			}
			riskScale := math.Abs(float64(sp.Risk.Mean))
			for _, e := range estimates(sp, fp) {
				scale, judged := riskScale, allowed
				switch e.unit {
				case unitNorm:
					scale = math.Abs(float64(sp.Norm.Mean))
				case unitDF:
					scale = math.Abs(float64(sp.DF.Mean))
				case unitCond:
					scale, judged = 0, math.Inf(1)
				}
				cmp(e.name, float64(e.a), float64(e.b), scale, judged, w)
			}
			// The interpolating share counts fits: exact (it lies in [0, 1]).
			cmp("interpolating", float64(sp.Interpolating), float64(fp.Interpolating), 1, 0, w)
			if sums {
				a.perSeed(storedSums, freshSums, name, fp.Value, sp, allowed, cmp)
			}
		}
	}
	for mi := range stored.Models {
		sm := &stored.Models[mi]
		name := curveName(stored, sm)
		fm := findModel(fresh, name)
		if fm == nil {
			a.Shape = append(a.Shape, fmt.Sprintf("model %q: stored, not recomputed (the spec has no such model)", name))
			continue
		}
		for pi := range sm.Points {
			if findPoint(fm, sm.Points[pi].Value) == nil {
				w := Where{Model: name, Value: sm.Points[pi].Value}
				a.Shape = append(a.Shape, fmt.Sprintf("%s: stored, not recomputed", w.String(a.Param)))
			}
		}
	}
	for _, name := range metricOrder {
		if s, ok := spreads[name]; ok {
			a.Spreads = append(a.Spreads, *s)
		}
	}
	sort.SliceStable(a.Moved, func(i, j int) bool {
		return a.Moved[i].Rel/a.Moved[i].Allowed > a.Moved[j].Rel/a.Moved[j].Allowed
	})
	return a
}

// difference returns |x − y| and |x − y| / max(|x|, |y|, scale); NaN
// against NaN is no difference, NaN against a number is an infinite one.
func difference(x, y, scale float64) (abs, rel float64) {
	xn, yn := math.IsNaN(x), math.IsNaN(y)
	switch {
	case xn && yn:
		return 0, 0
	case xn || yn:
		return math.Inf(1), math.Inf(1)
	case x == y: // also equal infinities
		return 0, 0
	}
	abs = math.Abs(x - y)
	den := math.Max(math.Max(math.Abs(x), math.Abs(y)), scale)
	if math.IsNaN(den) { // scale NaN (a stored mean undefined)
		den = math.Max(math.Abs(x), math.Abs(y))
	}
	return abs, abs / den
}

// shape records the structural differences of one point.
func (a *Agreement) shape(w Where, sp, fp *runner.Point) {
	at := w.String(a.Param)
	if sp.Seeds != fp.Seeds {
		a.Shape = append(a.Shape, fmt.Sprintf("%s: %d seeds fitted in the stored result, %d recomputed", at, sp.Seeds, fp.Seeds))
	}
	if !slices.Equal(errorSeeds(sp), errorSeeds(fp)) {
		a.Shape = append(a.Shape, fmt.Sprintf("%s: failed seeds %v stored, %v recomputed", at, errorSeeds(sp), errorSeeds(fp)))
	}
	if sp.HeavyTail != fp.HeavyTail {
		a.Shape = append(a.Shape, fmt.Sprintf("%s: heavy-tail flag %v stored, %v recomputed", at, sp.HeavyTail, fp.HeavyTail))
	}
}

// errorSeeds lists the failed fits of a point as "seed" or "seed#model seed".
func errorSeeds(p *runner.Point) []string {
	var s []string
	for _, e := range p.Errors {
		id := strconv.FormatUint(e.Seed, 10)
		if e.ModelSeed > 0 {
			id += "#" + strconv.Itoa(e.ModelSeed)
		}
		s = append(s, id)
	}
	return s
}

// perSeed compares the per-seed lists of one point.
func (a *Agreement) perSeed(ss, fs *runner.Sums, label string, v float64, sp *runner.Point, allowed float64,
	cmp func(metric string, x, y, scale, allowed float64, at Where)) {
	sps, fps := findPointSums(ss, label, v), findPointSums(fs, label, v)
	w := Where{Model: label, Value: v}
	if sps == nil || fps == nil {
		a.Shape = append(a.Shape, fmt.Sprintf("%s: no per-seed values in the stored sums.json", w.String(a.Param)))
		return
	}
	if !slices.Equal(sps.Seeds, fps.Seeds) {
		a.Shape = append(a.Shape, fmt.Sprintf("%s: stored per-seed values are for seeds %s, recomputed for %s",
			w.String(a.Param), seedRange(sps.Seeds), seedRange(fps.Seeds)))
		return
	}
	for _, l := range []struct {
		name  string
		a, b  []float64
		scale float64
	}{
		{"risk per seed", sps.Risk, fps.Risk, float64(sp.Risk.Mean)},
		{"train_risk per seed", sps.TrainRisk, fps.TrainRisk, float64(sp.Risk.Mean)},
		{"norm per seed", sps.Norm, fps.Norm, float64(sp.Norm.Mean)},
		{"df per seed", sps.DF, fps.DF, float64(sp.DF.Mean)},
		{"variance_model per seed", sps.ModelVar, fps.ModelVar, float64(sp.Risk.Mean)},
	} {
		if len(l.a) == 0 && len(l.b) == 0 && l.name == "variance_model per seed" {
			continue // a family without model seeds
		}
		if len(l.a) != len(sps.Seeds) || len(l.b) != len(fps.Seeds) {
			a.Shape = append(a.Shape, fmt.Sprintf("%s: %s lists of %d and %d values for %d seeds",
				w.String(a.Param), l.name, len(l.a), len(l.b), len(fps.Seeds)))
			continue
		}
		for i, seed := range fps.Seeds {
			at := w
			at.Seed, at.HasSeed = seed, true
			cmp(l.name, l.a[i], l.b[i], math.Abs(l.scale), allowed, at)
		}
	}
}

// seedRange prints a seed list compactly: "1…50 (50)" when consecutive.
func seedRange(s []uint64) string {
	if len(s) == 0 {
		return "none"
	}
	consecutive := true
	for i := 1; i < len(s); i++ {
		consecutive = consecutive && s[i] == s[i-1]+1
	}
	if consecutive {
		return fmt.Sprintf("%d…%d (%d)", s[0], s[len(s)-1], len(s))
	}
	return fmt.Sprint(s)
}

// Metric units: the stored mean a relative difference is read against.
const (
	unitRisk = iota
	unitNorm
	unitDF
)

type pair struct {
	name string
	unit int
	a, b runner.Num
}

// unitCond marks a diagnostic that Agree shows but does not judge: the
// median condition number estimate. LAPACK-style estimators follow sign
// patterns of their iterates, so a last-bit change can switch them to
// another (equally valid) lower bound; the estimate says how hard the
// problem is, it is not one of the study's numbers.
const unitCond = -1

// estimates lists the numbers of a point that Agree compares, stored (a)
// beside fresh (b), in metricOrder.
func estimates(a, b *runner.Point) []pair {
	est := func(name string, unit int, x, y runner.Estimate) []pair {
		return []pair{{name, unit, x.Mean, y.Mean}, {"se(" + name + ")", unit, x.SE, y.SE}}
	}
	var out []pair
	out = append(out, est("risk", unitRisk, a.Risk, b.Risk)...)
	out = append(out, pair{"risk_mc_se", unitRisk, a.RiskMCSE, b.RiskMCSE})
	out = append(out, est("train_risk", unitRisk, a.TrainRisk, b.TrainRisk)...)
	out = append(out, est("gap", unitRisk, a.Gap, b.Gap)...)
	out = append(out, est("bias2", unitRisk, a.Bias2, b.Bias2)...)
	out = append(out, est("variance", unitRisk, a.Variance, b.Variance)...)
	out = append(out, est("variance_data", unitRisk, a.VarianceData, b.VarianceData)...)
	out = append(out, est("variance_model", unitRisk, a.VarianceModel, b.VarianceModel)...)
	out = append(out, est("noise", unitRisk, a.Noise, b.Noise)...)
	out = append(out,
		pair{"sum", unitRisk, a.Sum, b.Sum},
		pair{"risk_q1", unitRisk, a.RiskQ1, b.RiskQ1},
		pair{"risk_median", unitRisk, a.RiskMedian, b.RiskMedian},
		pair{"risk_q3", unitRisk, a.RiskQ3, b.RiskQ3})
	out = append(out, est("norm", unitNorm, a.Norm, b.Norm)...)
	out = append(out, est("df", unitDF, a.DF, b.DF)...)
	out = append(out, pair{"cond_median", unitCond, a.CondMedian, b.CondMedian})
	return out
}

// metricOrder is the order of Agreement.Spreads.
var metricOrder = []string{
	"risk", "se(risk)", "risk_mc_se", "train_risk", "se(train_risk)", "gap", "se(gap)",
	"bias2", "se(bias2)", "variance", "se(variance)", "variance_data", "se(variance_data)",
	"variance_model", "se(variance_model)", "noise", "se(noise)",
	"sum", "risk_q1", "risk_median", "risk_q3", "norm", "se(norm)", "df", "se(df)",
	"interpolating", "cond_median",
	"risk per seed", "train_risk per seed", "norm per seed", "df per seed", "variance_model per seed",
}

// findModel finds a curve by its curveName.
func findModel(r *runner.Result, name string) *runner.ModelResult {
	for i := range r.Models {
		if curveName(r, &r.Models[i]) == name {
			return &r.Models[i]
		}
	}
	return nil
}

func findPoint(m *runner.ModelResult, v float64) *runner.Point {
	for i := range m.Points {
		if m.Points[i].Value == v {
			return &m.Points[i]
		}
	}
	return nil
}

func findPointSums(s *runner.Sums, name string, v float64) *runner.PointSums {
	for i := range s.Models {
		if sumsCurveName(s, &s.Models[i]) != name {
			continue
		}
		for j := range s.Models[i].Points {
			if s.Models[i].Points[j].Value == v {
				return &s.Models[i].Points[j]
			}
		}
	}
	return nil
}
