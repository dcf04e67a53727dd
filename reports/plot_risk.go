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

// riskFloorGap puts the floor of a log risk axis two decades below the
// smallest risk: low enough to show a training risk well under the test
// risk, high enough that the training risk of an interpolating fit (~1e-30)
// does not stretch the axis over thirty decades.
const riskFloorGap = 100

// riskFigure draws the risk of the models ms against the grid value: per
// model the mean risk with a ±2 SE band, at heavy-tailed points the median
// with its q1–q3 bar instead of the band, the training risk, and the theory
// curve where the result carries one; the interpolation threshold as a
// vertical line. It returns nil when no model has a finite risk.
func riskFigure(r *runner.Result, g geometry, cs curveSet) *figure {
	ms := cs.curves
	var main []float64
	xlo, xhi := math.Inf(1), math.Inf(-1)
	for _, mi := range ms {
		for _, p := range r.Models[mi].Points {
			main = append(main, float64(p.Risk.Mean), float64(p.Theory))
			if p.HeavyTail {
				main = append(main, float64(p.RiskQ1), float64(p.RiskQ3))
			}
			if !p.Risk.Mean.IsNaN() {
				xlo, xhi = math.Min(xlo, p.Value), math.Max(xhi, p.Value)
			}
		}
	}
	if xlo > xhi {
		return nil // no finite risk anywhere
	}
	ys := newYScale(main, riskFloorGap)
	if ys.log {
		// A training risk that is not an interpolating fit's is worth
		// showing even far below the test risk: lower the floor to it,
		// by at most riskFloorGap once more.
		for _, mi := range ms {
			for _, p := range r.Models[mi].Points {
				t := float64(p.TrainRisk.Mean)
				if t > 0 && finite(t) && p.Interpolating < 0.5 {
					ys.floor = math.Max(math.Min(ys.floor, t), ys.floor/riskFloorGap)
				}
			}
		}
	}
	p := newPanel(g, ys, "risk (mean squared error, units of y²)")
	if r.RiskBasis == runner.RiskTestSet {
		p.Y.Label.Text = fmt.Sprintf("test risk (mean squared error on %d held-out points)", r.TestPoints)
	}
	single := len(ms) == 1
	if cs.title == "all models" {
		p.Title.Text = "risk against " + g.symbol + ", all models"
	} else {
		p.Title.Text = cs.title + ": risk against " + g.symbol
	}
	// The threshold goes first so that every curve is drawn over it; in
	// the colour of its curve when the curves have thresholds of their own.
	var rules []plot.Thumbnailer
	var ruleLabels, outside []string
	ths := thresholds(r, g, ms)
	empirical := false
	for _, t := range ths {
		empirical = empirical || t.empirical
		if t.x < xlo || t.x > xhi {
			outside = append(outside, t.label)
			continue
		}
		v := vrule{x: t.x, c: ruleGrey}
		if len(ths) > 1 {
			v.c = modelPalette(t.curve, false).risk
		}
		p.Add(v)
		rules = append(rules, v)
		ruleLabels = append(ruleLabels, t.label)
	}

	// Legend: alone, one entry per series in its colour; among several
	// models, one colour swatch per model, then the series styles in grey.
	leg := newLegend()
	key := modelPalette(0, true)
	if !single {
		key = seriesColours{risk: styleGrey, train: styleGrey, theory: color.Black, median: styleGrey}
	}
	var heavy, trainClamped, bandClamped, theory, train, bars bool
	var theoryLines []plot.Plotter // drawn over every model's curves
	for k, mi := range ms {
		m := &r.Models[mi]
		pal := modelPalette(k, single)
		s := riskSeries(m, ys)
		if len(s.mean) == 0 && len(s.heavyMean) == 0 {
			continue
		}
		heavy = heavy || len(s.heavyMean) > 0
		trainClamped = trainClamped || len(s.trainLow) > 0
		bandClamped = bandClamped || s.bandClamped
		theory = theory || len(s.theory) > 0
		train = train || len(s.train) > 0
		bars = bars || len(s.bandBars) > 0
		if !single {
			addKey(&leg, cs.keys[k], &swatch{pal.risk})
		}
		// Bands first, so the lines stay on top.
		for _, seg := range s.band {
			p.Add(band(seg, withAlpha(pal.risk, bandAlpha)))
		}
		if len(s.bandBars) > 0 {
			p.Add(errBars(s.bandBars, withAlpha(pal.risk, 0x90)))
		}
		for _, seg := range s.mean {
			p.Add(line(seg, riskLine(pal)))
		}
		if d := glyphs(s.meanDots, draw.CircleGlyph{}, pal.risk, 2.2); d != nil {
			p.Add(d)
		}
		if len(s.heavyMean) > 0 {
			p.Add(quartileBars(s.quart, pal.median), glyphs(s.median, diamondGlyph{}, pal.median, 3.4))
			p.Add(glyphs(s.heavyMean, draw.RingGlyph{}, pal.risk, 3.2))
		}
		for _, seg := range s.theory {
			theoryLines = append(theoryLines, line(seg, theoryLine(pal)))
		}
		for _, seg := range s.train {
			p.Add(line(seg, trainLine(pal)))
		}
		if sq := glyphs(s.trainDots, draw.BoxGlyph{}, pal.train, 1.8); sq != nil {
			p.Add(sq)
		}
		if low := glyphs(s.trainLow, downTriangle{}, pal.train, 3); low != nil {
			p.Add(low)
		}
	}
	for _, l := range theoryLines {
		p.Add(l)
	}
	one := plotter.XYs{{X: 0, Y: 0}}
	addKey(&leg, "risk: mean ± 2 SE", band(plotter.XYs{{X: 0, Y: 0}, {X: 1, Y: 0}, {X: 1, Y: 1}}, withAlpha(key.risk, bandAlpha)),
		line(plotter.XYs{{X: 0, Y: 0}, {X: 1, Y: 0}}, riskLine(key)), glyphs(one, draw.CircleGlyph{}, key.risk, 2.2))
	if heavy {
		addKey(&leg, "mean, heavy-tailed point", glyphs(one, draw.RingGlyph{}, key.risk, 3.2))
		addKey(&leg, "median and q1–q3 there", quartileBars(nil, key.median), glyphs(one, diamondGlyph{}, key.median, 3.4))
	}
	if theory {
		addKey(&leg, "theory: exact expected risk", line(plotter.XYs{{X: 0, Y: 0}, {X: 1, Y: 0}}, theoryLine(key)))
	}
	if train || trainClamped {
		th := []plot.Thumbnailer{line(plotter.XYs{{X: 0, Y: 0}, {X: 1, Y: 0}}, trainLine(key)), glyphs(one, draw.BoxGlyph{}, key.train, 1.8)}
		addKey(&leg, "training risk", th...)
	}
	if trainClamped {
		addKey(&leg, "training risk below the axis", glyphs(one, downTriangle{}, key.train, 3))
	}
	switch {
	case len(rules) == 1:
		addKey(&leg, "threshold "+ruleLabels[0], rules[0])
	case len(rules) > 1:
		// One key for all: each line has its curve's colour.
		addKey(&leg, "threshold of each curve", vrule{c: ruleGrey})
	}
	fixRanges(p, g, ys)

	var cap []string
	cap = append(cap, figureSource(r))
	bandText := "shaded band: mean ± 2 SE over seeds"
	if bars {
		bandText += " (a bar at a point without neighbours)"
	}
	cap = append(cap, "Risk: "+riskText(r)+"; "+bandText+".")
	if heavy {
		cap = append(cap, fmt.Sprintf("At heavy-tailed points (%s) the mean is unstable: "+
			"it is drawn as an open circle, off the line and without a band; the diamond and its bar give the median and q1–q3, the numbers to read.",
			heavyPhrase(r.Seeds)))
	}
	if theory {
		cap = append(cap, "Black dashes: the exact expected risk from a published formula, where one applies (result.json \"theory\"; the README lists the cases).")
	}
	if ys.log {
		note := "Log y axis"
		var what []string
		if trainClamped {
			what = append(what, "training risks (open triangles; an interpolating fit's is about 0)")
		}
		if bandClamped {
			what = append(what, "band edges")
		}
		if len(what) > 0 {
			note += "; " + strings.Join(what, " and ") + " below " + num(ys.floor) + " are drawn at " + num(ys.floor) + ", the bottom of the axis"
		}
		cap = append(cap, note+".")
	}
	if len(rules) > 1 {
		cap = append(cap, "Dash-dotted, in each curve's colour: its interpolation threshold ("+strings.Join(ruleLabels, "; ")+").")
	}
	if empirical {
		cap = append(cap, fmt.Sprintf("\"Half interpolate\": the first grid value, in order of growing capacity, at which at least half the seeds fit "+
			"the training sample exactly (training risk below %s times the mean squared response).", num(runner.InterpTol)))
	}
	if len(outside) > 0 {
		cap = append(cap, "Interpolation threshold outside the grid: "+strings.Join(outside, "; ")+".")
	}
	return &figure{panels: [][]*plot.Plot{{p}}, legend: leg, caption: cap, w: figW, h: figH}
}

// riskPoints is one model's risk figure data, already mapped through the
// y scale: line segments break at undefined values.
type riskPoints struct {
	mean        []plotter.XYs // mean risk, finite and not heavy-tailed
	meanDots    plotter.XYs   // mean at points that are not heavy-tailed
	heavyMean   plotter.XYs   // mean at heavy-tailed points
	band        []plotter.XYs // closed outlines of ±2 SE bands (runs of ≥ 2 points)
	bandBars    []bar         // ±2 SE of isolated points
	bandClamped bool
	median      plotter.XYs // median at heavy-tailed points
	quart       []bar       // q1–q3 at heavy-tailed points
	train       []plotter.XYs
	trainDots   plotter.XYs // training risk above the floor
	trainLow    plotter.XYs // training risk clamped to the floor
	theory      []plotter.XYs
}

// bar is a vertical interval at x.
type bar struct{ x, lo, hi float64 }

func riskSeries(m *runner.ModelResult, ys yScale) riskPoints {
	var s riskPoints
	n := len(m.Points)
	at := func(v runner.Num) (float64, bool) {
		y, _ := ys.at(float64(v))
		return y, !math.IsNaN(y)
	}
	// The mean line breaks at heavy-tailed points: their means stand alone.
	s.mean = runs(m.Points, func(p *runner.Point) (float64, bool) {
		if p.HeavyTail {
			return 0, false
		}
		return at(p.Risk.Mean)
	})
	s.theory = runs(m.Points, func(p *runner.Point) (float64, bool) { return at(p.Theory) })
	s.train = runs(m.Points, func(p *runner.Point) (float64, bool) { return at(p.TrainRisk.Mean) })
	// A band over each run of points with a stable mean and a finite SE.
	var lo, hi plotter.XYs
	flush := func() {
		switch len(lo) {
		case 0:
		case 1:
			s.bandBars = append(s.bandBars, bar{lo[0].X, lo[0].Y, hi[0].Y})
		default:
			outline := append(plotter.XYs{}, hi...)
			for i := len(lo) - 1; i >= 0; i-- {
				outline = append(outline, lo[i])
			}
			s.band = append(s.band, outline)
		}
		lo, hi = nil, nil
	}
	for i := 0; i < n; i++ {
		p := &m.Points[i]
		mean, se := float64(p.Risk.Mean), float64(p.Risk.SE)
		if !p.HeavyTail && !p.Risk.Mean.IsNaN() && !p.Risk.SE.IsNaN() {
			l, c := ys.at(mean - 2*se)
			h, _ := ys.at(mean + 2*se)
			s.bandClamped = s.bandClamped || c
			lo = append(lo, plotter.XY{X: p.Value, Y: l})
			hi = append(hi, plotter.XY{X: p.Value, Y: h})
		} else {
			flush()
		}
		if y, ok := at(p.Risk.Mean); ok {
			if p.HeavyTail {
				s.heavyMean = append(s.heavyMean, plotter.XY{X: p.Value, Y: y})
			} else {
				s.meanDots = append(s.meanDots, plotter.XY{X: p.Value, Y: y})
			}
		}
		if p.HeavyTail {
			if y, ok := at(p.RiskMedian); ok {
				s.median = append(s.median, plotter.XY{X: p.Value, Y: y})
			}
			q1, ok1 := at(p.RiskQ1)
			q3, ok3 := at(p.RiskQ3)
			if ok1 && ok3 {
				s.quart = append(s.quart, bar{p.Value, q1, q3})
			}
		}
		if y, c := ys.at(float64(p.TrainRisk.Mean)); !math.IsNaN(y) {
			if c {
				s.trainLow = append(s.trainLow, plotter.XY{X: p.Value, Y: y})
			} else {
				s.trainDots = append(s.trainDots, plotter.XY{X: p.Value, Y: y})
			}
		}
	}
	flush()
	return s
}

// runs returns the polyline segments of f over the points, broken where f
// is undefined; a run of one point is kept (drawn by its marker).
func runs(pts []runner.Point, f func(*runner.Point) (float64, bool)) []plotter.XYs {
	var out []plotter.XYs
	var cur plotter.XYs
	for i := range pts {
		y, ok := f(&pts[i])
		if !ok {
			if len(cur) > 0 {
				out = append(out, cur)
			}
			cur = nil
			continue
		}
		cur = append(cur, plotter.XY{X: pts[i].Value, Y: y})
	}
	if len(cur) > 0 {
		out = append(out, cur)
	}
	return out
}

// thresholds returns the distinct interpolation thresholds of the curves,
// each with the position in ms of the first curve that has it.
func thresholds(r *runner.Result, g geometry, ms []int) []threshold {
	var out []threshold
	seen := map[float64]bool{}
	for k, mi := range ms {
		t, ok := interpThreshold(r, g, &r.Models[mi])
		if !ok || seen[t.x] {
			continue
		}
		seen[t.x] = true
		t.curve = k
		out = append(out, t)
	}
	return out
}

// figureSource is the first caption line: where the figure came from.
func figureSource(r *runner.Result) string {
	p := provenanceOf(r)
	return fmt.Sprintf("Spec %s, hash %s, engine %s, %s, %s.", p.name, p.hash, p.engine, p.seeds, p.date)
}

// bandAlpha is the opacity of a ±2 SE band.
const bandAlpha = 0x38

// styleGrey draws the style keys of a legend shared by several models.
var styleGrey = color.Gray{0x40}

func riskLine(pal seriesColours) draw.LineStyle { return lineStyle(pal.risk, 1.6, nil) }

func theoryLine(pal seriesColours) draw.LineStyle {
	return lineStyle(pal.theory, 1.2, []vg.Length{vg.Points(5), vg.Points(3)})
}

func trainLine(pal seriesColours) draw.LineStyle {
	return lineStyle(pal.train, 1.2, []vg.Length{vg.Points(1.5), vg.Points(2.5)})
}

// swatch is a legend key of a model's colour.
type swatch struct{ c color.Color }

func (s *swatch) Thumbnail(c *draw.Canvas) {
	y := (c.Min.Y + c.Max.Y) / 2
	c.StrokeLine2(lineStyle(s.c, 5, nil), c.Min.X, y, c.Max.X, y)
}

// seriesColours is the colours of one model's series.
type seriesColours struct {
	risk, train, theory, median color.Color
}

// okabeIto is a palette that stays distinguishable under the common colour
// vision deficiencies ("Color Universal Design", Okabe and Ito, 2002; the
// hex values are common practice, from memory), yellow left out for
// contrast on white.
var okabeIto = []color.RGBA{
	{0x00, 0x72, 0xB2, 0xff}, // blue
	{0xD5, 0x5E, 0x00, 0xff}, // vermillion
	{0x00, 0x9E, 0x73, 0xff}, // bluish green
	{0xCC, 0x79, 0xA7, 0xff}, // reddish purple
	{0xE6, 0x9F, 0x00, 0xff}, // orange
	{0x56, 0xB4, 0xE9, 0xff}, // sky blue
	{0x00, 0x00, 0x00, 0xff}, // black
}

// modelPalette colours model k: alone, each series gets its own colour;
// among several models, every series of a model shares the model's colour
// and the line styles tell them apart.
func modelPalette(k int, single bool) seriesColours {
	if single {
		return seriesColours{risk: okabeIto[0], train: okabeIto[1], theory: color.Black, median: okabeIto[3]}
	}
	c := okabeIto[k%len(okabeIto)]
	// The theory curve lies on its model's mean: black dashes stay visible
	// over it, and only the curves that have one carry it.
	return seriesColours{risk: c, train: c, theory: color.Black, median: c}
}

func withAlpha(c color.Color, a uint8) color.Color {
	r, g, b, _ := c.RGBA()
	// Premultiplied, as color.RGBA expects.
	f := float64(a) / 0xff
	return color.RGBA{uint8(float64(r>>8) * f), uint8(float64(g>>8) * f), uint8(float64(b>>8) * f), a}
}
