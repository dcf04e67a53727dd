package reports

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"
	"unicode"

	"github.com/BurntSushi/toml"

	"riskgrid/runner"
)

// FigureDir is the subfolder of a result folder that holds the figures.
const FigureDir = "figures"

// Figure is one rendered figure of a Result, in two formats.
type Figure struct {
	// Name is the file name without extension ("risk-all",
	// "split-1-least-squares"); the files are Name+".svg" and Name+".png".
	Name string
	// Title says in one line what the figure shows (the alt text of the
	// report page).
	Title string
	SVG   []byte
	PNG   []byte
}

// Figures draws r:
//
//   - risk-all: the risk of every model against the grid value, with the
//     training risk and any theory curve the result carries;
//   - split-all: the bias² / variance / noise split of every model, one
//     panel per model;
//   - risk-K-LABEL and split-K-LABEL: the same for model K alone (K from 1).
//
// With a single model the "-all" figures would repeat the per-model ones
// and are left out. A two-axis result has one curve per model and outer
// value; it gets the per-model figures only, each with one curve (one
// split panel) per outer value. A model with no successful fit at any grid
// value gets no figure of its own. Every figure carries a caption with the
// spec name, the short hash and the engine, and says in words how to read
// it (bands, markers, clamped values). Figures never refits anything.
func Figures(r *runner.Result) ([]Figure, error) {
	if err := check(r); err != nil {
		return nil, err
	}
	g := newGeometry(r)
	var figs []Figure
	add := func(name, title string, f *figure) error {
		if f == nil {
			return nil
		}
		svg, png, err := f.render()
		if err != nil {
			return fmt.Errorf("reports: figure %s: %w", name, err)
		}
		figs = append(figs, Figure{Name: name, Title: title, SVG: svg, PNG: png})
		return nil
	}
	sets := curveSets(r)
	if r.OuterParam == "" && len(r.Models) > 1 {
		all := curveSet{title: "all models"}
		for i := range r.Models {
			all.curves = append(all.curves, i)
			all.keys = append(all.keys, r.Models[i].Label)
		}
		if err := add("risk-all", "risk against "+g.symbol+", all models", riskFigure(r, g, all)); err != nil {
			return nil, err
		}
		if err := add("split-all", "bias², variance and noise against "+g.symbol+", all models", splitFigure(r, g, all)); err != nil {
			return nil, err
		}
	}
	for k, cs := range sets {
		base := fmt.Sprintf("%d-%s", k+1, slug(cs.title))
		if err := add("risk-"+base, "risk against "+g.symbol+", "+cs.title, riskFigure(r, g, cs)); err != nil {
			return nil, err
		}
		if err := add("split-"+base, "bias², variance and noise against "+g.symbol+", "+cs.title, splitFigure(r, g, cs)); err != nil {
			return nil, err
		}
	}
	return figs, nil
}

// curveSet is the curves one figure shows: indices into Result.Models,
// the legend key (or panel title) of each, and what the set is.
type curveSet struct {
	title  string // "all models", or the model label
	curves []int
	keys   []string
}

// curveSets returns one set per model: its curve alone, or on a two-axis
// grid its curves at every outer value, keyed "n_train = 50".
func curveSets(r *runner.Result) []curveSet {
	var sets []curveSet
	at := map[string]int{}
	for i := range r.Models {
		m := &r.Models[i]
		k, ok := at[m.Label]
		if !ok {
			k = len(sets)
			at[m.Label] = k
			sets = append(sets, curveSet{title: m.Label})
		}
		key := m.Label
		if m.Outer != nil {
			key = fmt.Sprintf("%s = %s", symbolOf(r.OuterParam), knob(*m.Outer))
		}
		sets[k].curves = append(sets[k].curves, i)
		sets[k].keys = append(sets[k].keys, key)
	}
	return sets
}

// slug makes a file-name part of a model label: lower-case ASCII letters and
// digits, other runs turned into one '-' ("ridge λ=0.05" → "ridge-0-05").
func slug(label string) string {
	var b strings.Builder
	dash := false
	for _, c := range strings.ToLower(label) {
		if c < unicode.MaxASCII && (unicode.IsLetter(c) || unicode.IsDigit(c)) {
			if dash && b.Len() > 0 {
				b.WriteByte('-')
			}
			b.WriteRune(c)
			dash = false
		} else {
			dash = true
		}
	}
	if b.Len() == 0 {
		return "model"
	}
	return b.String()
}

// geometry is what the figures of one Result share: the grid's name and
// scale, the number of features and which models fit an intercept (read
// back from the resolved spec, for the interpolation threshold).
type geometry struct {
	xName  string  // axis label of the grid value
	symbol string  // short symbol of the knob ("p", "n", "λ")
	logX   bool    // log x axis
	log1pX bool    // log(x0 + x) x axis: a log-spaced grid that starts at 0
	x0     float64 // the offset of that axis: 1, or the smallest positive value when below 1
	dim    int     // features available, 0 when unknown
	icept  map[string]bool
}

func newGeometry(r *runner.Result) geometry {
	g := geometry{icept: map[string]bool{}}
	g.xName, g.symbol = knobName(r.Param), symbolOf(r.Param)
	var xs []float64
	for _, m := range r.Models {
		for _, p := range m.Points {
			xs = append(xs, p.Value)
		}
	}
	g.logX = logSpaced(xs)
	g.x0 = zeroStartOffset(xs)
	g.log1pX = !g.logX && log1pSpaced(xs, g.x0)
	if g.log1pX {
		g.xName += " (axis: log of " + knob(g.x0) + " + " + g.symbol + ")"
	}
	// The resolved spec names the dimension (generator) or the feature
	// columns (csv) and each model's intercept. A result whose spec text
	// does not decode just has no known dimension.
	var sp struct {
		Data struct {
			Dim      int      `toml:"dim"`
			Features []string `toml:"features"`
		} `toml:"data"`
		Model []struct {
			Label     string `toml:"label"`
			Intercept bool   `toml:"intercept"`
		} `toml:"model"`
	}
	if _, err := toml.Decode(r.SpecTOML, &sp); err == nil {
		g.dim = sp.Data.Dim
		if g.dim == 0 {
			g.dim = len(sp.Data.Features)
		}
		for _, m := range sp.Model {
			g.icept[m.Label] = m.Intercept
		}
	}
	return g
}

// logSpaced reports whether a grid reads better on a log axis: every value
// is positive, they span at least a factor of 10, and the sorted distinct
// values are closer to evenly spaced in log than in linear terms (a higher
// R² of the straight line through (rank, value)). A grid from spacing =
// "log" passes; an even linear grid does not.
func logSpaced(vs []float64) bool {
	u := distinct(vs)
	if len(u) < 3 || u[0] <= 0 || math.IsNaN(u[0]) || math.IsInf(u[len(u)-1], 0) {
		return false
	}
	if u[len(u)-1]/u[0] < 10 {
		return false
	}
	logs := make([]float64, len(u))
	for i, v := range u {
		logs[i] = math.Log(v)
	}
	return rankFit(logs) > rankFit(u)
}

// log1pSpaced reports whether a grid that starts at 0 (0 steps, degree 0)
// reads better on a log(1 + x) axis: the values are ≥ 0, the positive ones
// span at least a factor of 10, there are at least 4, and log(1 + x) is
// closer to evenly spaced than x (as in logSpaced).
func log1pSpaced(vs []float64, x0 float64) bool {
	u := distinct(vs)
	if len(u) < 4 || u[0] != 0 || math.IsInf(u[len(u)-1], 0) || u[len(u)-1]/u[1] < 10 {
		return false
	}
	l := make([]float64, len(u))
	for i, v := range u {
		l[i] = math.Log(x0 + v)
	}
	return rankFit(l) > rankFit(u)
}

// zeroStartOffset is the offset x0 of the log(x0 + x) axis of a grid that
// starts at 0: 1 for counts (steps, degree); a tenth of the smallest
// positive value where that is below 1 (a penalty grid 0, 1e-7, …, 1,
// which log(1 + λ) would squeeze onto 0), so that each decade gets its
// share of the axis and 0 sits a decade left of the smallest value, room
// for both tick labels.
func zeroStartOffset(vs []float64) float64 {
	small := 1.0
	for _, v := range vs {
		if v > 0 && v < small && !math.IsNaN(v) {
			small = v
		}
	}
	if small < 1 {
		return small / 10
	}
	return 1
}

// distinct returns the sorted distinct finite values of vs.
func distinct(vs []float64) []float64 {
	var u []float64
	for _, v := range vs {
		if !math.IsNaN(v) && !math.IsInf(v, 0) {
			u = append(u, v)
		}
	}
	sort.Float64s(u)
	out := u[:0]
	for i, v := range u {
		if i == 0 || v != u[i-1] {
			out = append(out, v)
		}
	}
	return out
}

// rankFit is the R² of the least-squares line through (i, ys[i]).
func rankFit(ys []float64) float64 {
	n := float64(len(ys))
	var mi, my float64
	for i, y := range ys {
		mi += float64(i)
		my += y
	}
	mi, my = mi/n, my/n
	var sxy, sxx, syy float64
	for i, y := range ys {
		dx, dy := float64(i)-mi, y-my
		sxy += dx * dy
		sxx += dx * dx
		syy += dy * dy
	}
	if syy == 0 || sxx == 0 {
		return 1
	}
	return sxy * sxy / (sxx * syy)
}

// decadeSpan is the ratio of the largest to the smallest positive value of
// ys at which a y axis turns logarithmic: one order of magnitude.
const decadeSpan = 10

// yScale maps values to what a y axis can draw. On a log axis, values at or
// below floor (zero, a negative bias², the training risk of an
// interpolating fit, a band's lower edge) are drawn at floor; the caption
// says so.
type yScale struct {
	log   bool
	floor float64
}

// newYScale picks a log axis when the positive values of main span at
// least decadeSpan, with the floor below their minimum by a factor of
// floorGap; otherwise a linear axis.
func newYScale(main []float64, floorGap float64) yScale {
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, y := range main {
		if y > 0 && !math.IsInf(y, 0) {
			lo, hi = math.Min(lo, y), math.Max(hi, y)
		}
	}
	if math.IsInf(lo, 0) || hi/lo < decadeSpan {
		return yScale{}
	}
	return yScale{log: true, floor: lo / floorGap}
}

// at returns y as drawn and whether it was clamped to the floor. NaN and
// ±Inf stay NaN (not drawn).
func (s yScale) at(y float64) (v float64, clamped bool) {
	if math.IsNaN(y) || math.IsInf(y, 0) {
		return math.NaN(), false
	}
	if s.log && y < s.floor {
		return s.floor, true
	}
	return y, false
}

// threshold is a vertical line marking where fits start to interpolate.
type threshold struct {
	x     float64
	label string
	curve int // the figure's curve it belongs to (set by thresholds)
	// empirical is set when x is where half the seeds were seen to
	// interpolate, not where the parameters reach the sample size.
	empirical bool
}

// interpThreshold returns the interpolation threshold of curve m, for a
// family linear in its features (linearInFeatures; k = 1 with an intercept,
// else 0):
//
//   - features grid: p + k = n, n the curve's training-set size (the outer
//     value on a features × n_train grid);
//   - n_train grid, the number of input columns d known (the outer value on
//     an n_train × features grid), for a family on input columns: n = d + k;
//
// and otherwise the first grid value, in order of growing capacity
// (decreasing λ, bandwidth or k), at which at least half the seeds
// interpolate; none when no value does.
func interpThreshold(r *runner.Result, g geometry, m *runner.ModelResult) (threshold, bool) {
	k := 0
	if g.icept[m.Label] {
		k = 1
	}
	n, d := r.NTrain, g.dim
	if m.Outer != nil {
		switch r.OuterParam {
		case "n_train":
			n = int(*m.Outer)
		case "features":
			d = int(*m.Outer)
		}
	}
	switch {
	case r.Param == "features" && n > 0 && linearInFeatures[m.Family]:
		if k == 1 {
			return threshold{x: float64(n - 1), label: fmt.Sprintf("p + 1 = n = %d", n)}, true
		}
		return threshold{x: float64(n), label: fmt.Sprintf("p = n = %d", n)}, true
	case r.Param == "n_train" && d > 0 && linearInFeatures[m.Family] && m.Family != "random-features":
		if k == 1 {
			return threshold{x: float64(d + 1), label: fmt.Sprintf("n = p + 1 = %d", d+1)}, true
		}
		return threshold{x: float64(d), label: fmt.Sprintf("n = p = %d", d)}, true
	}
	if i := firstInterpolating(r, m); i >= 0 {
		return threshold{x: m.Points[i].Value, label: fmt.Sprintf("%s = %s (half interpolate)", symbolOf(r.Param), knob(m.Points[i].Value)), empirical: true}, true
	}
	return threshold{}, false
}

// firstInterpolating returns the index of the first point, in order of
// growing capacity, where at least half the seeds interpolate, or -1.
// Capacity grows with the knob except where capacityFalls says it falls.
func firstInterpolating(r *runner.Result, m *runner.ModelResult) int {
	idx := make([]int, len(m.Points))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, b int) bool {
		va, vb := m.Points[idx[a]].Value, m.Points[idx[b]].Value
		if capacityFalls[r.Param] {
			return va > vb
		}
		return va < vb
	})
	for _, i := range idx {
		if s := m.Points[i].Interpolating; !s.IsNaN() && s >= 0.5 {
			return i
		}
	}
	return -1
}

// symbolOf is the short symbol of a knob on an axis or in a label.
func symbolOf(param string) string {
	switch param {
	case "features":
		return "p"
	case "n_train":
		return "n"
	case "lambda":
		return "λ"
	case "neighbours":
		return "k"
	}
	return param
}

// knobName is the x-axis label of a knob, with its meaning.
func knobName(param string) string {
	switch param {
	case "features":
		return "features p"
	case "n_train":
		return "training-set size n"
	case "lambda":
		return "penalty λ"
	case "degree":
		return "polynomial degree"
	case "bandwidth":
		return "kernel bandwidth"
	case "neighbours":
		return "neighbours k"
	case "steps":
		return "gradient steps"
	case "width":
		return "hidden units (width)"
	}
	return param
}

// capacityFalls lists the knobs along which capacity falls as the value
// grows: a larger penalty, bandwidth or neighbourhood fits less.
var capacityFalls = map[string]bool{"lambda": true, "bandwidth": true, "neighbours": true}

// linearInFeatures lists the families whose fit interpolates once its
// parameters (features, plus the intercept) reach the training-set size:
// linear least squares and its penalised and iterative versions, on input
// columns or on random features.
var linearInFeatures = map[string]bool{
	"least-squares": true, "ridge": true, "gradient-descent": true, "random-features": true,
}

// heavyCount is the number of largest seeds that carry half the total risk
// at a flagged point: ⌈S/20⌉ (see the README's definition of the flag).
func heavyCount(seeds int) int { return (seeds + 19) / 20 }

// heavyPhrase says which seeds carry half the total risk at a flagged point.
func heavyPhrase(seeds int) string {
	if k := heavyCount(seeds); k > 1 {
		return fmt.Sprintf("the largest %d of %d seeds carry half the total risk", k, seeds)
	}
	return fmt.Sprintf("one seed of %d carries half the total risk", seeds)
}

// num formats a value for a caption or legend with 3 significant digits.
func num(x float64) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return blank
	}
	s := strconv.FormatFloat(x, 'g', 3, 64)
	if a := math.Abs(x); a >= 1e-4 && a < 1e5 && strings.Contains(s, "e") {
		// 1e+03 → 1000, 0.0001 stays; 'g' switches to exponents too early
		v, _ := strconv.ParseFloat(s, 64)
		return strconv.FormatFloat(v, 'f', -1, 64)
	}
	// 1e+06 → 1e6, 3e-05 → 3e-5
	if i := strings.IndexByte(s, 'e'); i >= 0 {
		mant, exp := s[:i], s[i+1:]
		sign := ""
		if exp[0] == '-' {
			sign = "-"
		}
		exp = strings.TrimLeft(exp[1:], "0")
		s = mant + "e" + sign + exp
	}
	return s
}
