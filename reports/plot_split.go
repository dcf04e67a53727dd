package reports

import (
	"fmt"
	"image/color"
	"math"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"riskgrid/runner"
)

// Colours of the stacked parts (Okabe–Ito sky blue and orange, grey).
var (
	noiseColor = color.RGBA{0xC8, 0xC8, 0xC8, 0xff}
	biasColor  = color.RGBA{0x56, 0xB4, 0xE9, 0xff}
	varColor   = color.RGBA{0xE6, 0x9F, 0x00, 0xff}
	modelColor = color.RGBA{0xCC, 0x79, 0xA7, 0xff} // variance over model seeds
)

// splitFigure draws, per model of ms (one panel each), the mean risk split
// into noise, bias² and variance, stacked in that order from the bottom,
// with the total (bias² + variance + noise, the mean risk) as a line.
// A negative bias² estimate is stacked as 0 and named in the caption; under
// a lumped split the bottom band is bias² + noise. It returns nil when no
// model has a complete split at any grid value.
func splitFigure(r *runner.Result, g geometry, cs curveSet) *figure {
	ms := cs.curves
	lumped := r.SplitBasis == runner.SplitLumped
	var panels []*plot.Plot
	var negatives []string
	var heavy, logAny, clamped, splitVar bool
	// One decision for every panel: log y when any model's total spans a
	// decade, so that panels side by side read alike.
	var totals []float64
	for _, mi := range ms {
		for _, p := range r.Models[mi].Points {
			totals = append(totals, float64(p.Sum))
		}
	}
	logY := newYScale(totals, 1).log
	for k, mi := range ms {
		m := &r.Models[mi]
		st := stackSeries(m, lumped, logY)
		if len(st.runs) == 0 {
			continue
		}
		p := newPanel(g, st.ys, "risk and its parts (squared error, y²)")
		if r.RiskBasis == runner.RiskTestSet {
			p.Y.Label.Text = "test risk and its parts (squared error)"
		}
		name := cs.keys[k]
		if m.Outer != nil {
			name = m.Label + ", " + name
		}
		p.Title.Text = name
		if len(ms) == 1 {
			p.Title.Text += ": bias², variance and noise against " + g.symbol
		}
		for _, run := range st.runs {
			for layer, c := range []color.Color{noiseColor, biasColor, varColor, modelColor} {
				if lumped && layer == 1 || !st.splitVar && layer == 3 {
					continue
				}
				p.Add(stackBand(run, layer, c))
			}
		}
		for _, seg := range st.total {
			p.Add(line(seg, lineStyle(color.Black, 1.6, nil)))
		}
		if d := glyphs(st.totalDots, draw.CircleGlyph{}, color.Black, 2.2); d != nil {
			p.Add(d)
		}
		if o := glyphs(st.heavy, draw.RingGlyph{}, color.Black, 3.4); o != nil {
			p.Add(o)
			heavy = true
		}
		for _, n := range st.negative {
			negatives = append(negatives, fmt.Sprintf("%s of %s at %s = %s: %s", n.part, m.Label+atOuter(r, m), g.symbol, knob(n.x), num(n.v)))
		}
		splitVar = splitVar || st.splitVar
		logAny = logAny || st.ys.log
		clamped = clamped || st.clamped
		fixRanges(p, g, st.ys)
		panels = append(panels, p)
	}
	if len(panels) == 0 {
		return nil
	}
	leg := newLegend()
	if splitVar {
		addKey(&leg, "variance over model seeds", &plotter.Polygon{Color: modelColor})
		addKey(&leg, "variance over samples", &plotter.Polygon{Color: varColor})
	} else {
		addKey(&leg, "variance", &plotter.Polygon{Color: varColor})
	}
	if lumped {
		addKey(&leg, "bias² + noise (truth unknown)", &plotter.Polygon{Color: noiseColor})
	} else {
		addKey(&leg, "bias²", &plotter.Polygon{Color: biasColor})
		addKey(&leg, "noise σ²", &plotter.Polygon{Color: noiseColor})
	}
	total, _ := plotter.NewLine(plotter.XYs{{X: 0, Y: 0}, {X: 1, Y: 0}})
	total.LineStyle = lineStyle(color.Black, 1.6, nil)
	addKey(&leg, "total = mean risk", total, glyphs(plotter.XYs{{X: 0, Y: 0}}, draw.CircleGlyph{}, color.Black, 2.2))
	if heavy {
		addKey(&leg, "total, heavy-tailed (unstable)", glyphs(plotter.XYs{{X: 0, Y: 0}}, draw.RingGlyph{}, color.Black, 3.4))
	}

	var cap []string
	cap = append(cap, figureSource(r))
	if lumped {
		cap = append(cap, "Stacked from the bottom: bias² + noise together (the truth is unknown, so they cannot be told apart), "+
			"then the variance over training sets. The line is their sum, the mean risk.")
	} else {
		cap = append(cap, "Stacked from the bottom: noise σ², bias², variance; "+splitText(r)+". The line is their sum, the mean risk.")
	}
	if splitVar {
		cap = append(cap, "Where the model has randomness of its own, its variance is split into the part due to the training sample "+
			"and the part due to the model seeds (result.json variance_data and variance_model, each unbiased for the nested design).")
	}
	if len(negatives) > 0 {
		cap = append(cap, "The parts are estimated without bias and can fall below 0 where they are small; negative estimates are stacked as 0 ("+
			strings.Join(negatives, "; ")+"), so the stack may end slightly above the line.")
	}
	if heavy {
		cap = append(cap, fmt.Sprintf("Open circle: a heavy-tailed point (%s); its mean, and the variance part, are unstable.",
			heavyPhrase(r.Seeds)))
	}
	if logAny {
		note := "Log y axis: band heights are not proportional to the parts; read the boundaries (running sums)"
		if clamped {
			note += "; the bottom band starts at the axis floor"
		}
		cap = append(cap, note+".")
	}
	// One column of panels sharing the x range, two past three models.
	cols := 1
	w := figW
	if len(panels) > 3 {
		cols, w = 2, wideW
	}
	rows := (len(panels) + cols - 1) / cols
	grid := make([][]*plot.Plot, rows)
	for i := range grid {
		grid[i] = make([]*plot.Plot, cols)
	}
	for i, p := range panels {
		grid[i/cols][i%cols] = p
	}
	h := figH
	if rows > 1 {
		h = vg.Length(rows)*panelRowH + captionH
	}
	return &figure{panels: grid, legend: leg, caption: cap, w: w, h: h}
}

// stack is one model's split, mapped through its y scale.
type stack struct {
	ys        yScale
	runs      [][]stackPoint // runs of points with a complete split
	total     []plotter.XYs
	totalDots plotter.XYs
	heavy     plotter.XYs
	negative  []negativePart // parts estimated below 0, stacked as 0
	clamped   bool
	splitVar  bool // variance split into sample and model-seed parts
}

// negativePart is a part of the split estimated below 0.
type negativePart struct {
	part string // "bias²", ...
	x, v float64
}

// stackPoint holds the running sums at one grid value: b[0] the bottom of
// the stack, b[1] after the noise, b[2] after bias², b[3] after the
// variance over samples (all of it when it is not split), b[4] after the
// variance over model seeds.
type stackPoint struct {
	x float64
	b [5]float64
}

func stackSeries(m *runner.ModelResult, lumped, logY bool) stack {
	var st stack
	type raw struct {
		x            float64
		n, b2, v, vm float64
		ok, heavyPts bool
	}
	rs := make([]raw, len(m.Points))
	var totals, bounds []float64
	for _, p := range m.Points {
		if v := float64(p.VarianceModel.Mean); finite(v) && v != 0 {
			st.splitVar = true
		}
	}
	nonNeg := func(part string, x, v float64) float64 {
		if v < 0 {
			st.negative = append(st.negative, negativePart{part, x, v})
			return 0
		}
		return v
	}
	for i := range m.Points {
		p := &m.Points[i]
		r := raw{x: p.Value, heavyPts: p.HeavyTail}
		if lumped {
			r.n, r.b2 = float64(p.Bias2.Mean), 0 // the bias² column holds bias² + noise
		} else {
			r.n, r.b2 = float64(p.Noise.Mean), nonNeg("bias²", p.Value, float64(p.Bias2.Mean))
		}
		r.v = float64(p.Variance.Mean)
		if st.splitVar {
			r.v = nonNeg("variance over samples", p.Value, float64(p.VarianceData.Mean))
			r.vm = nonNeg("variance over model seeds", p.Value, float64(p.VarianceModel.Mean))
		}
		r.ok = finite(r.n) && finite(r.b2) && finite(r.v) && finite(r.vm)
		if lumped && r.n < 0 {
			r.n = 0 // bias² + noise estimate below 0: nothing to stack
		}
		rs[i] = r
		if r.ok {
			bounds = append(bounds, r.n, r.n+r.b2, r.n+r.b2+r.v, r.n+r.b2+r.v+r.vm)
		}
		if !p.Sum.IsNaN() {
			totals = append(totals, float64(p.Sum))
		}
	}
	if logY {
		// The floor sits a factor 2 below the lowest positive boundary or
		// total, so the bottom band is visible however small it is.
		lo := math.Inf(1)
		for _, b := range append(bounds, totals...) {
			if b > 0 && !math.IsInf(b, 0) {
				lo = math.Min(lo, b)
			}
		}
		if !math.IsInf(lo, 0) {
			st.ys = yScale{log: true, floor: lo / 2}
		}
	}
	var cur []stackPoint
	for _, r := range rs {
		if !r.ok {
			if len(cur) > 0 {
				st.runs = append(st.runs, cur)
			}
			cur = nil
			continue
		}
		sp := stackPoint{x: r.x}
		sums := [5]float64{0, r.n, r.n + r.b2, r.n + r.b2 + r.v, r.n + r.b2 + r.v + r.vm}
		for j, s := range sums {
			y, c := st.ys.at(s)
			if st.ys.log && j == 0 {
				y, c = st.ys.floor, false
			}
			st.clamped = st.clamped || c
			sp.b[j] = y
		}
		cur = append(cur, sp)
	}
	if len(cur) > 0 {
		st.runs = append(st.runs, cur)
	}
	st.total = runs(m.Points, func(p *runner.Point) (float64, bool) {
		y, _ := st.ys.at(float64(p.Sum))
		return y, !math.IsNaN(y)
	})
	for i := range m.Points {
		p := &m.Points[i]
		y, _ := st.ys.at(float64(p.Sum))
		if math.IsNaN(y) {
			continue
		}
		if p.HeavyTail {
			st.heavy = append(st.heavy, plotter.XY{X: p.Value, Y: y})
		} else {
			st.totalDots = append(st.totalDots, plotter.XY{X: p.Value, Y: y})
		}
	}
	return st
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// stackBand is the polygon of layer l (0 noise, 1 bias², 2 variance over
// samples, 3 variance over model seeds)
// between the running sums b[l] and b[l+1] over a run of points. A run of
// one point becomes a thin bar.
func stackBand(run []stackPoint, l int, c color.Color) *plotter.Polygon {
	var outline plotter.XYs
	if len(run) == 1 {
		w := math.Max(math.Abs(run[0].x)*0.01, 1e-9)
		sp := run[0]
		outline = plotter.XYs{{X: sp.x - w, Y: sp.b[l+1]}, {X: sp.x + w, Y: sp.b[l+1]}, {X: sp.x + w, Y: sp.b[l]}, {X: sp.x - w, Y: sp.b[l]}}
	} else {
		for _, sp := range run {
			outline = append(outline, plotter.XY{X: sp.x, Y: sp.b[l+1]})
		}
		for i := len(run) - 1; i >= 0; i-- {
			outline = append(outline, plotter.XY{X: run[i].x, Y: run[i].b[l]})
		}
	}
	poly, err := plotter.NewPolygon(outline)
	if err != nil {
		panic("reports: stack band: " + err.Error()) // the points were checked finite
	}
	poly.Color = c
	poly.LineStyle.Width = 0
	return poly
}
