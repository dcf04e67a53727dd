package reports

import (
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/stat/distuv"

	"riskgrid/runner"
)

// DefaultSigmas is the default k of Diff: a difference is flagged when it
// exceeds k standard errors. Why 4: a diff judges m = models × grid values
// × 8 metrics differences at once (240 for the double-descent example, 656
// for the reference sweep), so the per-row false-flag rate must be small.
// Under no change a row exceeds k standard errors with probability
// p(k) = 2(1 − Φ(k)) (normal), and by the union bound (Bonferroni) the
// chance of any false flag in the table is at most m·p(k):
//
//	k = 3: p = 2.7e-3, m·p = 0.65 at m = 240 (a false flag in most diffs)
//	k = 4: p = 6.3e-5, m·p = 0.015 at m = 240, 0.063 at m = 1000
//	k = 5: p = 5.7e-7
//
// k = 4 keeps the family-wise false-flag rate near 5% up to a thousand
// rows (the metrics of one point move together, so the effective m is
// smaller and the bound conservative) while a real change, measured with
// paired SEs on common random numbers, is usually many SEs. k = 5 would
// buy little safety and lose power. Since standard errors are estimated
// from S seeds, k is applied as the Student t quantile with the same tail
// probability for the SE's degrees of freedom (see Threshold).
//
// Reference: the Bonferroni inequality P(∪A_i) ≤ Σ P(A_i) (textbook); the
// normal tail values are standard table values (from memory, recomputed
// here with math.Erfc).
const DefaultSigmas = 4

// DiffOptions tunes Diff.
type DiffOptions struct {
	// Sigmas is k: flag a difference beyond k standard errors. Default
	// (0): DefaultSigmas.
	Sigmas float64
	// Within is the relative size below which a difference is never
	// flagged, whatever its SE, and the tolerance of quantities without
	// sampling error (SE 0, such as the noise σ²): |Δ| / max(|a|, |b|,
	// the point's mean of that unit) ≤ Within counts as equal. Default
	// (0): DefaultWithin. A negative value means exact equality.
	Within float64
}

func (o DiffOptions) withDefaults() DiffOptions {
	if o.Sigmas == 0 {
		o.Sigmas = DefaultSigmas
	}
	switch {
	case o.Within == 0:
		o.Within = DefaultWithin
	case o.Within < 0:
		o.Within = 0
	}
	return o
}

// Threshold returns the number of standard errors a difference must exceed
// to be flagged, for k normal-equivalent standard errors and an SE with nu
// degrees of freedom: the quantile of Student's t with the two-sided tail
// probability of k under the normal law,
//
//	p = 2(1 − Φ(k)) = erfc(k/√2),   threshold = t_ν⁻¹(1 − p/2),
//
// which is k itself as ν → ∞ and grows at small ν (the SE estimated from
// few seeds is itself uncertain). nu ≤ 0 or NaN means unknown: k.
//
// Reference: Student's t as the law of a mean over its estimated standard
// error under normality ("The probable error of a mean", Biometrika 6(1),
// 1908); Welch–Satterthwaite degrees of freedom for a difference of
// independent means (Biometrika 34, 1947); textbook.
func Threshold(k, nu float64) float64 {
	if !(nu > 0) || math.IsInf(nu, 1) {
		return k
	}
	p := math.Erfc(k / math.Sqrt2)
	return distuv.StudentsT{Mu: 0, Sigma: 1, Nu: nu}.Quantile(1 - p/2)
}

// SE bases of a DiffRow.
const (
	BasisPaired      = "paired"      // sd_s(b_s − a_s)/√S over common seeds of one data key
	BasisIndependent = "independent" // √(se_a² + se_b²)
	BasisExact       = "exact"       // both SEs 0: a quantity without sampling error
	BasisNone        = "none"        // an SE is undefined
)

// Marks of a DiffRow.
const (
	MarkFlagged = "*" // beyond the threshold: counted
	MarkTail    = "~" // beyond it at a heavy-tailed point: the SE is unreliable, not counted
	MarkUnknown = "?" // differs, but no SE to judge by: not counted
)

// DiffRow is one metric of one grid point of one model in both results.
type DiffRow struct {
	Model  string
	Value  float64
	Metric string
	A, B   float64 // the means
	Delta  float64 // B − A
	SE     float64 // standard error of Delta
	// SEIndependent is √(se_a² + se_b²), the SE had the two results been
	// independent (equal to SE unless Basis is BasisPaired).
	SEIndependent float64
	Basis         string
	Seeds         int     // seeds in the paired differences (BasisPaired)
	DF            float64 // degrees of freedom of SE
	Z             float64 // |Delta| / SE (+Inf when SE is 0 and Delta is not)
	Threshold     float64 // SEs Delta must exceed (Threshold(k, DF))
	Mark          string  // "", MarkFlagged, MarkTail or MarkUnknown
}

// Difference is the outcome of Diff.
type Difference struct {
	Param    string
	Options  DiffOptions // as applied (defaults filled in)
	Rows     []DiffRow   // per model of A, grid value, metric
	OnlyA    []string    // "model" or "model, knob = v" present in A only
	OnlyB    []string
	Notes    []string // differences of setup worth knowing (bases, seeds, pairing)
	Flagged  int      // rows marked MarkFlagged
	Judged   int      // rows that could be flagged (an SE or exact)
	Paired   bool     // some rows used paired SEs
	Medians  []string // at heavy-tailed points: the medians to read instead
	PerPoint int      // metrics per point
}

// diffMetric names the metrics Diff compares, in order, with their unit
// and whether per-seed values exist for pairing.
var diffMetrics = []struct {
	name   string
	unit   int
	paired bool
	get    func(p *runner.Point) runner.Estimate
	seeds  func(ps *runner.PointSums) []float64
}{
	{"risk", unitRisk, true, func(p *runner.Point) runner.Estimate { return p.Risk },
		func(ps *runner.PointSums) []float64 { return ps.Risk }},
	{"train_risk", unitRisk, true, func(p *runner.Point) runner.Estimate { return p.TrainRisk },
		func(ps *runner.PointSums) []float64 { return ps.TrainRisk }},
	{"gap", unitRisk, true, func(p *runner.Point) runner.Estimate { return p.Gap },
		func(ps *runner.PointSums) []float64 { return gapsOf(ps) }},
	{"bias2", unitRisk, false, func(p *runner.Point) runner.Estimate { return p.Bias2 }, nil},
	{"variance", unitRisk, false, func(p *runner.Point) runner.Estimate { return p.Variance }, nil},
	{"noise", unitRisk, false, func(p *runner.Point) runner.Estimate { return p.Noise }, nil},
	{"norm", unitNorm, true, func(p *runner.Point) runner.Estimate { return p.Norm },
		func(ps *runner.PointSums) []float64 { return ps.Norm }},
	{"df", unitDF, true, func(p *runner.Point) runner.Estimate { return p.DF },
		func(ps *runner.PointSums) []float64 { return ps.DF }},
}

func gapsOf(ps *runner.PointSums) []float64 {
	if len(ps.Risk) != len(ps.TrainRisk) {
		return nil
	}
	g := make([]float64, len(ps.Risk))
	for i := range g {
		g[i] = ps.Risk[i] - ps.TrainRisk[i]
	}
	return g
}

// Diff aligns two results by model label (see alignModels) and grid value and compares every
// metric: B − A, its standard error, and a flag when the difference exceeds
// k standard errors (DiffOptions). The SE is
//
//	paired:       sd_s(b_s − a_s)/√S, ν = S − 1,
//	independent:  √(se_a² + se_b²),   ν by Welch–Satterthwaite,
//
// paired when both sums are given, share the data key (so the same seed
// draws the same training sample in both: common random numbers) and the
// point has the same seed list in both; for risk, train_risk, gap, norm and
// df, which have per-seed values. bias², variance and noise have only
// jackknife or exact SEs and are always independent; it is conservative
// when the results are positively correlated.
//
// A row is flagged when |Δ| > Threshold(k, ν)·SE and also |Δ| exceeds
// Within relative to max(|a|, |b|, the point's mean of that unit in A),
// so that last-bit differences with a tiny paired SE are not flagged; a
// row with SE 0 on both sides (exact, such as the noise σ²) is flagged when
// it exceeds Within. At a heavy-tailed point (either side) the mean has no
// stable SE: a difference beyond the threshold is marked MarkTail and not
// counted, and the medians are listed to read instead.
//
// It returns an error when the results vary different knobs.
func Diff(a, b *runner.Result, sa, sb *runner.Sums, opt DiffOptions) (*Difference, error) {
	opt = opt.withDefaults()
	if a.Param != b.Param {
		return nil, fmt.Errorf("%w: A varies %q, B varies %q: no grid values to align", ErrResult, a.Param, b.Param)
	}
	if a.OuterParam != b.OuterParam {
		return nil, fmt.Errorf("%w: the outer knob of A is %q, of B %q: no curves to align", ErrResult, a.OuterParam, b.OuterParam)
	}
	d := &Difference{Param: a.Param, Options: opt, PerPoint: len(diffMetrics)}
	if sa == nil || sb == nil {
		d.Notes = append(d.Notes, "a sums.json is missing: independent standard errors throughout")
	}
	keyNoted := false
	if a.RiskBasis != b.RiskBasis || a.SplitBasis != b.SplitBasis {
		d.Notes = append(d.Notes, fmt.Sprintf("measured differently: risk %s / split %s in A, %s / %s in B",
			a.RiskBasis, a.SplitBasis, b.RiskBasis, b.SplitBasis))
	}
	if a.Engine != b.Engine {
		d.Notes = append(d.Notes, fmt.Sprintf("engines differ: %s in A, %s in B", a.Engine, b.Engine))
	}
	for _, pr := range alignModels(a, b, d) {
		na, nb := curveName(a, pr.a), curveName(b, pr.b)
		sameKey := sa != nil && sb != nil && curveDataKey(sa, na) == curveDataKey(sb, nb)
		if sa != nil && sb != nil && !sameKey && !keyNoted {
			d.Notes = append(d.Notes, "different data keys (the data, its file or seeds.truth differ): the seeds draw different samples, so standard errors are independent")
			keyNoted = true
		}
		for pi := range pr.a.Points {
			pa := &pr.a.Points[pi]
			pb := findPoint(pr.b, pa.Value)
			if pb == nil {
				d.OnlyA = append(d.OnlyA, Where{Model: na, Value: pa.Value}.String(d.Param))
				continue
			}
			var psa, psb *runner.PointSums
			if sameKey {
				psa, psb = findPointSums(sa, na, pa.Value), findPointSums(sb, nb, pa.Value)
				if psa != nil && psb != nil && !slices.Equal(psa.Seeds, psb.Seeds) {
					psa, psb = nil, nil
				}
			}
			d.point(pr.name, pa, pb, psa, psb)
		}
		for pi := range pr.b.Points {
			if findPoint(pr.a, pr.b.Points[pi].Value) == nil {
				d.OnlyB = append(d.OnlyB, Where{Model: nb, Value: pr.b.Points[pi].Value}.String(d.Param))
			}
		}
	}
	return d, nil
}

// curveDataKey is the data key the seeds of the named curve were drawn
// under: its slice's on a two-axis grid, else the run's ("" when the curve
// is not in s).
func curveDataKey(s *runner.Sums, name string) string {
	for i := range s.Models {
		m := &s.Models[i]
		if sumsCurveName(s, m) != name {
			continue
		}
		if m.DataKey != "" {
			return m.DataKey
		}
		return s.DataKey
	}
	return ""
}

// outerEqual says whether two curves sit at the same outer value (both
// nil on a one-axis grid).
func outerEqual(a, b *float64) bool {
	if a == nil || b == nil {
		return a == nil && b == nil
	}
	return *a == *b
}

type modelPair struct {
	a, b *runner.ModelResult
	name string
}

// alignModels pairs the models of a and b by label (and outer value, on a
// two-axis grid: see curveName), in A's order. The
// models left without a partner are then paired in order when they are as
// many in A as in B and their families agree pair by pair (two specs that
// differ in one model setting have different default labels: "ridge
// λ=0.05" against "ridge λ=0.06"); such a pair is named "label A ⇄ label B"
// and noted. The rest are listed in OnlyA and OnlyB.
func alignModels(a, b *runner.Result, d *Difference) []modelPair {
	var out []modelPair
	var restA, restB []*runner.ModelResult
	for i := range a.Models {
		name := curveName(a, &a.Models[i])
		if mb := findModel(b, name); mb != nil {
			out = append(out, modelPair{&a.Models[i], mb, name})
		} else {
			restA = append(restA, &a.Models[i])
		}
	}
	for i := range b.Models {
		if findModel(a, curveName(b, &b.Models[i])) == nil {
			restB = append(restB, &b.Models[i])
		}
	}
	match := len(restA) == len(restB) && len(restA) > 0
	for i := range restA {
		match = match && restA[i].Family == restB[i].Family && outerEqual(restA[i].Outer, restB[i].Outer)
	}
	if match {
		for i := range restA {
			na, nb := curveName(a, restA[i]), curveName(b, restB[i])
			out = append(out, modelPair{restA[i], restB[i], restA[i].Label + " ⇄ " + nb})
			d.Notes = append(d.Notes, fmt.Sprintf("no label matches %q of A or %q of B: compared with each other (the only unmatched models, same family)",
				na, nb))
		}
		return out
	}
	for _, m := range restA {
		d.OnlyA = append(d.OnlyA, fmt.Sprintf("%q", curveName(a, m)))
	}
	for _, m := range restB {
		d.OnlyB = append(d.OnlyB, fmt.Sprintf("%q", curveName(b, m)))
	}
	return out
}

// point compares the metrics of one grid point; psa, psb are the per-seed
// values when they pair (nil otherwise).
func (d *Difference) point(label string, pa, pb *runner.Point, psa, psb *runner.PointSums) {
	heavy := pa.HeavyTail || pb.HeavyTail
	if heavy {
		d.Medians = append(d.Medians, fmt.Sprintf("%s: heavy-tailed; median risk %s in A, %s in B",
			Where{Model: label, Value: pa.Value}.String(d.Param), fmtSig(float64(pa.RiskMedian), 6), fmtSig(float64(pb.RiskMedian), 6)))
	}
	for _, m := range diffMetrics {
		ea, eb := m.get(pa), m.get(pb)
		r := DiffRow{Model: label, Value: pa.Value, Metric: m.name,
			A: float64(ea.Mean), B: float64(eb.Mean)}
		r.Delta = r.B - r.A
		sea, seb := float64(ea.SE), float64(eb.SE)
		r.SEIndependent = math.Hypot(sea, seb)
		r.SE, r.Basis = r.SEIndependent, BasisIndependent
		r.DF = welch(sea, seb, float64(pa.Seeds-1), float64(pb.Seeds-1))
		if m.paired && psa != nil && psb != nil {
			xa, xb := m.seeds(psa), m.seeds(psb)
			if len(xa) == len(psa.Seeds) && len(xb) == len(xa) && len(xa) >= 2 {
				diff := make([]float64, len(xa))
				for i := range xa {
					diff[i] = xb[i] - xa[i]
				}
				_, se := runner.MeanSE(diff)
				r.SE, r.Basis, r.Seeds, r.DF = se, BasisPaired, len(xa), float64(len(xa)-1)
				d.Paired = true
			}
		}
		if sea == 0 && seb == 0 && r.Basis == BasisIndependent {
			r.Basis = BasisExact
		}
		if math.IsNaN(r.SE) {
			r.Basis = BasisNone
		}
		scale := math.Abs(float64(pa.Risk.Mean))
		switch m.unit {
		case unitNorm:
			scale = math.Abs(float64(pa.Norm.Mean))
		case unitDF:
			scale = math.Abs(float64(pa.DF.Mean))
		}
		_, rel := difference(r.A, r.B, scale)
		moved := rel > d.Options.Within // also a NaN against a number (rel = +Inf)
		r.Threshold = Threshold(d.Options.Sigmas, r.DF)
		switch {
		case math.IsNaN(r.A) && math.IsNaN(r.B):
			r.Z = 0
		case r.SE == 0:
			r.Z = 0
			if moved {
				r.Z = math.Inf(1)
			}
		default:
			r.Z = math.Abs(r.Delta) / r.SE
		}
		switch {
		case r.Basis == BasisNone || math.IsNaN(r.Delta) && moved:
			if moved {
				r.Mark = MarkUnknown
			}
		case r.Basis == BasisExact || r.SE == 0:
			d.Judged++
			if moved {
				r.Mark = MarkFlagged
			}
		default:
			d.Judged++
			if moved && r.Z > r.Threshold {
				r.Mark = MarkFlagged
				if heavy {
					r.Mark = MarkTail
				}
			}
		}
		if r.Mark == MarkFlagged {
			d.Flagged++
		}
		d.Rows = append(d.Rows, r)
	}
}

// welch returns the Welch–Satterthwaite degrees of freedom of
// √(a² + b²) for SEs a, b with na, nb degrees of freedom,
//
//	ν = (a² + b²)² / (a⁴/na + b⁴/nb),
//
// the other side's ν when one SE is 0, NaN when both are.
func welch(a, b, na, nb float64) float64 {
	a2, b2 := a*a, b*b
	switch {
	case a2 == 0 && b2 == 0:
		return math.NaN()
	case a2 == 0:
		return nb
	case b2 == 0:
		return na
	}
	return (a2 + b2) * (a2 + b2) / (a2*a2/na + b2*b2/nb)
}

// FalseFlagBound is the Bonferroni bound on the expected number of false
// flags among the judged rows under no change: Judged · 2(1 − Φ(k)).
func (d *Difference) FalseFlagBound() float64 {
	return float64(d.Judged) * math.Erfc(d.Options.Sigmas/math.Sqrt2)
}
