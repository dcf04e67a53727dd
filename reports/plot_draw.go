package reports

import (
	"bytes"
	"fmt"
	"image/color"
	"math"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"
)

// Figure size and resolution: 8 × 5 in at 120 dpi is a 960 × 600 PNG,
// legible when pasted at page width. A grid of panels gets panelRowH per row.
const (
	figW      = 8 * vg.Inch
	figH      = 5 * vg.Inch
	panelRowH = 3 * vg.Inch   // height of a row of panels
	captionH  = 1.3 * vg.Inch // room left for the caption under panel rows
	wideW     = 11 * vg.Inch  // width of a figure with two columns of panels
	pngDPI    = 120
)

// figure is a set of panels laid out on a grid, a legend in a column on the
// right (outside every panel, so it hides no curve) and a caption under
// them.
type figure struct {
	panels  [][]*plot.Plot // rows × columns; nil cells stay empty
	legend  plot.Legend
	caption []string // paragraphs, wrapped to the figure's width
	w, h    vg.Length
}

// render draws f as SVG and as PNG.
func (f *figure) render() (svg, png []byte, err error) {
	sc := vgsvg.New(f.w, f.h)
	f.draw(draw.New(sc))
	var sb bytes.Buffer
	if _, err := sc.WriteTo(&sb); err != nil {
		return nil, nil, fmt.Errorf("svg: %w", err)
	}
	// The SVG names the font but does not embed it (that would add half a
	// megabyte per file): offer the faces metric-compatible with it, which
	// most viewers have, before a generic one.
	svg = bytes.ReplaceAll(sb.Bytes(), []byte("font-family:Liberation Sans;"), []byte(svgFonts))
	ic := vgimg.NewWith(vgimg.UseWH(f.w, f.h), vgimg.UseDPI(pngDPI))
	f.draw(draw.New(ic))
	var pb bytes.Buffer
	if _, err := (vgimg.PngCanvas{Canvas: ic}).WriteTo(&pb); err != nil {
		return nil, nil, fmt.Errorf("png: %w", err)
	}
	return svg, pb.Bytes(), nil
}

// svgFonts is the font list of the SVG text: Liberation Sans, which the
// figure was laid out with, then Arial and Helvetica, whose glyph widths
// it matches (it was designed as their metric-compatible substitute; from
// memory), then any sans-serif face.
const svgFonts = "font-family:'Liberation Sans',Arial,Helvetica,sans-serif;"

// slack is the share of the caption's width and of the legend column
// left free, so that an SVG viewer that substitutes a wider face (DejaVu
// Sans, measured here, is up to 15% wider) still fits the text.
const slack = 0.15

const pad = vg.Inch / 8

// sans is the face of every text in a figure (embedded in gonum/plot).
var sans = font.Font{Typeface: "Liberation", Variant: "Sans"}

func (f *figure) draw(dc draw.Canvas) {
	full := dc.Rectangle
	dc.FillPolygon(color.White, []vg.Point{full.Min, {X: full.Min.X, Y: full.Max.Y}, full.Max, {X: full.Max.X, Y: full.Min.Y}})

	// Caption, bottom up: wrapped lines in a strip under a hairline.
	cs := captionStyle()
	var lines []string
	for _, para := range f.caption {
		lines = append(lines, wrap(cs, para, (full.Size().X-2*pad)*(1-slack))...)
	}
	capH := drawCaption(dc, cs, lines)

	// Legend column on the right, sized to its longest entry.
	lr := f.legend.Rectangle(dc)
	legW := lr.Size().X*(1+slack) + 2*pad
	if maxW := full.Size().X * 0.42; legW > maxW {
		legW = maxW
	}
	lc := draw.Crop(dc, full.Size().X-legW+pad, -pad/2, capH+pad, -pad)
	f.legend.Draw(lc)

	area := draw.Crop(dc, 0, -legW, capH, -pad/2)
	rows := len(f.panels)
	cols := len(f.panels[0])
	if rows == 1 && cols == 1 {
		drawPanel(f.panels[0][0], area)
		return
	}
	// The panels' data areas line up (plot.Align), whatever the width of
	// their y tick labels, so that one x value sits at one horizontal place
	// in every panel of a column; each y-axis label goes in a strip of its
	// own left of its tile, as drawPanel puts it.
	lab := f.panels[0][0].Y.Label.TextStyle.FontExtents().Height + vg.Points(5)
	tiles := draw.Tiles{Rows: rows, Cols: cols, PadX: pad + lab, PadY: pad / 2}
	inner := draw.Crop(area, lab, 0, 0, 0)
	var labels []string
	for _, row := range f.panels {
		for _, p := range row {
			if p != nil {
				labels = append(labels, p.Y.Label.Text)
				p.Y.Label.Text = ""
			}
		}
	}
	aligned := plot.Align(f.panels, tiles, inner)
	k := 0
	for i, row := range f.panels {
		for j, p := range row {
			if p == nil {
				continue
			}
			if labels[k] != "" {
				sty := p.Y.Label.TextStyle
				sty.Rotation += math.Pi / 2
				sty.XAlign, sty.YAlign = draw.XCenter, draw.YTop
				t := tiles.At(inner, j, i)
				dc.FillText(sty, vg.Point{X: t.Min.X - lab, Y: (t.Min.Y + t.Max.Y) / 2}, labels[k])
			}
			p.Draw(aligned[i][j])
			p.Y.Label.Text = labels[k]
			k++
		}
	}
}

// drawPanel draws p in c with its y-axis label drawn here, centred on the
// panel: gonum/plot reserves room for a centred label at the arithmetic
// midpoint of the axis range, which on a log axis lies near the top, and
// shrinks the panel to make room for it there.
func drawPanel(p *plot.Plot, c draw.Canvas) {
	label := p.Y.Label.Text
	if label == "" {
		p.Draw(c)
		return
	}
	sty := p.Y.Label.TextStyle
	sty.Rotation += math.Pi / 2
	sty.XAlign, sty.YAlign = draw.XCenter, draw.YTop
	h := sty.FontExtents().Height
	c.FillText(sty, vg.Point{X: c.Min.X, Y: (c.Min.Y + c.Max.Y) / 2}, label)
	p.Y.Label.Text = ""
	defer func() { p.Y.Label.Text = label }()
	p.Draw(draw.Crop(c, h+vg.Points(5), 0, 0, 0))
}

// drawCaption writes lines in style cs at the bottom of dc, left-aligned
// and padded, under a thin rule, and returns the height of the strip.
func drawCaption(dc draw.Canvas, cs text.Style, lines []string) vg.Length {
	full := dc.Rectangle
	lineH := cs.FontExtents().Height * 1.15
	capH := vg.Length(len(lines))*lineH + pad
	y := full.Min.Y + capH - pad/2 - cs.FontExtents().Ascent
	for _, l := range lines {
		dc.FillText(cs, vg.Point{X: full.Min.X + pad, Y: y}, l)
		y -= lineH
	}
	dc.StrokeLine2(draw.LineStyle{Color: color.Gray{0xb0}, Width: vg.Points(0.5)},
		full.Min.X+pad, full.Min.Y+capH, full.Max.X-pad, full.Min.Y+capH)
	return capH
}

func captionStyle() text.Style {
	return text.Style{
		Color:   color.Gray{0x30},
		Font:    font.From(sans, 8.5),
		Handler: plot.DefaultTextHandler,
		XAlign:  draw.XLeft,
		YAlign:  draw.YBottom,
	}
}

// wrap breaks s into lines no wider than w in style sty, at spaces.
func wrap(sty text.Style, s string, w vg.Length) []string {
	var lines []string
	cur := ""
	for _, word := range strings.Fields(s) {
		try := word
		if cur != "" {
			try = cur + " " + word
		}
		if cur != "" && sty.Width(try) > w {
			lines = append(lines, cur)
			cur = word
			continue
		}
		cur = try
	}
	if cur != "" {
		lines = append(lines, cur)
	}
	return lines
}

func newLegend() plot.Legend {
	l := plot.NewLegend()
	l.TextStyle.Font = font.From(sans, 9.5)
	l.Top, l.Left = true, true
	l.ThumbnailWidth = vg.Points(24)
	l.Padding = vg.Points(3)
	return l
}

// maxKeyWidth bounds the text of a legend entry, so that the legend column
// leaves the panel most of the figure's width.
const maxKeyWidth = 2.9 * vg.Inch

// addKey adds a legend entry, its text cut with "…" to maxKeyWidth (the
// caption and the tables carry the full names).
func addKey(l *plot.Legend, txt string, thumbs ...plot.Thumbnailer) {
	if l.TextStyle.Width(txt) > maxKeyWidth {
		r := []rune(txt)
		for len(r) > 1 && l.TextStyle.Width(string(r)+"…") > maxKeyWidth {
			r = r[:len(r)-1]
		}
		txt = strings.TrimSpace(string(r)) + "…"
	}
	l.Add(txt, thumbs...)
}

// newPanel makes an empty panel with the grid's x axis and the given y axis.
func newPanel(g geometry, ys yScale, yLabel string) *plot.Plot {
	p := plot.New()
	p.Title.Padding = vg.Points(6)
	p.X.Label.Text = g.xName
	p.Y.Label.Text = yLabel
	p.Title.TextStyle.Font = font.From(sans, 11)
	p.X.Label.TextStyle.Font = font.From(sans, 10)
	p.Y.Label.TextStyle.Font = font.From(sans, 10)
	p.X.Tick.Label.Font = font.From(sans, 9)
	p.Y.Tick.Label.Font = font.From(sans, 9)
	p.X.Tick.Marker, p.Y.Tick.Marker = linearTicks{}, linearTicks{}
	switch {
	case g.logX:
		p.X.Scale = plot.LogScale{}
		p.X.Tick.Marker = logTicks{ends: true}
	case g.log1pX:
		p.X.Scale = log1pScale{x0: g.x0}
		p.X.Tick.Marker = log1pTicks{x0: g.x0}
	}
	if ys.log {
		p.Y.Scale = plot.LogScale{}
		p.Y.Tick.Marker = logTicks{}
	}
	grid := plotter.NewGrid()
	grid.Vertical.Color = color.Gray{0xe4}
	grid.Horizontal.Color = color.Gray{0xe4}
	p.Add(grid)
	return p
}

// fixRanges pads degenerate axis ranges (a single grid value, a constant
// risk) so that a log axis never sees min = max, and starts a linear risk
// axis at 0 when the data are non-negative and not far from it.
func fixRanges(p *plot.Plot, g geometry, ys yScale) {
	widen := func(a *plot.Axis, log bool) {
		if a.Min < a.Max {
			return
		}
		if log {
			a.Min, a.Max = a.Min/2, a.Max*2
			return
		}
		d := math.Max(math.Abs(a.Min)*0.1, 1)
		a.Min, a.Max = a.Min-d, a.Max+d
	}
	widen(&p.X, g.logX)
	widen(&p.Y, ys.log)
	if !ys.log && p.Y.Min > 0 && p.Y.Min < 0.25*p.Y.Max {
		p.Y.Min = 0
	}
}

// vrule is a vertical dash-dotted line at x across the whole panel height.
// It is added before the data so that curves are drawn over it, and has no
// data range: it marks x without widening the y axis. The caller keeps x
// inside the x range.
type vrule struct {
	x float64
	c color.Color
}

var ruleGrey = color.Gray{0x70}

func (v vrule) style() draw.LineStyle {
	return lineStyle(v.c, 1.1, []vg.Length{vg.Points(6), vg.Points(2.5), vg.Points(1.2), vg.Points(2.5)})
}

func (v vrule) Plot(c draw.Canvas, p *plot.Plot) {
	tx, _ := p.Transforms(&c)
	x := tx(v.x)
	c.StrokeLine2(v.style(), x, c.Min.Y, x, c.Max.Y)
}

func (v vrule) Thumbnail(c *draw.Canvas) {
	y := (c.Min.Y + c.Max.Y) / 2
	c.StrokeLine2(v.style(), c.Min.X, y, c.Max.X, y)
}

func lineStyle(c color.Color, width float64, dashes []vg.Length) draw.LineStyle {
	return draw.LineStyle{Color: c, Width: vg.Points(width), Dashes: dashes}
}

// line draws xys (finite by construction) in style ls.
func line(xys plotter.XYs, ls draw.LineStyle) *plotter.Line {
	l, err := plotter.NewLine(xys)
	if err != nil {
		panic("reports: line: " + err.Error())
	}
	l.LineStyle = ls
	return l
}

// band fills a closed outline without an edge.
func band(outline plotter.XYs, c color.Color) *plotter.Polygon {
	poly, err := plotter.NewPolygon(outline)
	if err != nil {
		panic("reports: band: " + err.Error())
	}
	poly.Color = c
	poly.LineStyle.Width = 0
	return poly
}

// glyphs draws a marker at each point; nil when there are none.
func glyphs(xys plotter.XYs, shape draw.GlyphDrawer, c color.Color, radius float64) *plotter.Scatter {
	if len(xys) == 0 {
		return nil
	}
	s, err := plotter.NewScatter(xys)
	if err != nil {
		panic("reports: markers: " + err.Error())
	}
	s.GlyphStyle = draw.GlyphStyle{Color: c, Radius: vg.Points(radius), Shape: shape}
	return s
}

// errBars draws ±2 SE bars of isolated points.
func errBars(bars []bar, c color.Color) *intervals {
	return &intervals{bars: bars, style: lineStyle(c, 3, nil), cap: vg.Points(5)}
}

// quartileBars draws q1–q3 bars with caps.
func quartileBars(bars []bar, c color.Color) *intervals {
	return &intervals{bars: bars, style: lineStyle(c, 1.4, nil), cap: vg.Points(7)}
}

// intervals draws vertical bars from lo to hi at x with caps; it reports
// its data range so the axes include the whole bar.
type intervals struct {
	bars  []bar
	style draw.LineStyle
	cap   vg.Length
}

func (iv *intervals) Plot(c draw.Canvas, p *plot.Plot) {
	tx, ty := p.Transforms(&c)
	for _, b := range iv.bars {
		x, lo, hi := tx(b.x), ty(b.lo), ty(b.hi)
		c.StrokeLine2(iv.style, x, lo, x, hi)
		cs := iv.style
		cs.Width = vg.Points(1.2)
		c.StrokeLine2(cs, x-iv.cap/2, lo, x+iv.cap/2, lo)
		c.StrokeLine2(cs, x-iv.cap/2, hi, x+iv.cap/2, hi)
	}
}

func (iv *intervals) DataRange() (xmin, xmax, ymin, ymax float64) {
	xmin, ymin = math.Inf(1), math.Inf(1)
	xmax, ymax = math.Inf(-1), math.Inf(-1)
	for _, b := range iv.bars {
		xmin, xmax = math.Min(xmin, b.x), math.Max(xmax, b.x)
		ymin, ymax = math.Min(ymin, b.lo), math.Max(ymax, b.hi)
	}
	return
}

func (iv *intervals) Thumbnail(c *draw.Canvas) {
	x := (c.Min.X + c.Max.X) / 2
	c.StrokeLine2(iv.style, x, c.Min.Y, x, c.Max.Y)
}

// diamondGlyph is a filled diamond (the median).
type diamondGlyph struct{}

func (diamondGlyph) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	r := sty.Radius
	var p vg.Path
	p.Move(vg.Point{X: pt.X, Y: pt.Y + r})
	p.Line(vg.Point{X: pt.X + r, Y: pt.Y})
	p.Line(vg.Point{X: pt.X, Y: pt.Y - r})
	p.Line(vg.Point{X: pt.X - r, Y: pt.Y})
	p.Close()
	c.Fill(p)
}

// downTriangle is an open triangle pointing down: a value below the axis
// floor, drawn on it.
type downTriangle struct{}

func (downTriangle) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	c.SetLineStyle(draw.LineStyle{Color: sty.Color, Width: vg.Points(1)})
	r := sty.Radius
	var p vg.Path
	p.Move(vg.Point{X: pt.X, Y: pt.Y})
	p.Line(vg.Point{X: pt.X - r, Y: pt.Y + 1.6*r})
	p.Line(vg.Point{X: pt.X + r, Y: pt.Y + 1.6*r})
	p.Close()
	c.Stroke(p)
}

// logTicks labels a log axis: every power of ten, and 2 and 5 times it (or
// every integer multiple) when the axis spans too few decades for powers
// alone to give three labels. Minor ticks mark the other multiples. With
// ends set (the grid axis, whose ends are grid values) the ends are
// labelled too when no label sits within a factor 1.9 of them.
type logTicks struct{ ends bool }

func (lt logTicks) Ticks(lo, hi float64) []plot.Tick {
	if !(lo > 0) || !(hi > lo) {
		return nil
	}
	decades := math.Log10(hi / lo)
	label := map[int]bool{1: true}
	switch {
	case decades < 0.7:
		for m := 2; m <= 9; m++ {
			label[m] = true
		}
	case decades < 3:
		label[2], label[5] = true, true
	}
	step := 1
	if decades > 8 {
		step = 2
	}
	// Past six decades the minor ticks would merge into a bar: powers only.
	minor := decades <= 6
	var ticks []plot.Tick
	for e := int(math.Floor(math.Log10(lo))); e <= int(math.Ceil(math.Log10(hi))); e++ {
		for m := 1; m <= 9; m++ {
			v := float64(m) * math.Pow10(e)
			if v < lo*(1-1e-9) || v > hi*(1+1e-9) {
				continue
			}
			t := plot.Tick{Value: v}
			if label[m] && (m != 1 || e%step == 0) {
				t.Label = num(v)
			}
			if t.Label == "" && !minor && m != 1 {
				continue
			}
			ticks = append(ticks, t)
		}
	}
	if lt.ends {
		first, last := math.Inf(1), math.Inf(-1)
		for _, t := range ticks {
			if t.Label != "" {
				first, last = math.Min(first, t.Value), math.Max(last, t.Value)
			}
		}
		if first > lo*1.9 {
			ticks = append(ticks, plot.Tick{Value: lo, Label: num(lo)})
		}
		if last < hi/1.9 {
			ticks = append(ticks, plot.Tick{Value: hi, Label: num(hi)})
		}
	}
	return ticks
}

// linearTicks labels a linear axis every 1, 2, 2.5 or 5 times a power of
// ten, whichever gives 4 to 8 labels, with a minor tick between labels;
// every label gets the same number of decimals.
type linearTicks struct{}

func (linearTicks) Ticks(lo, hi float64) []plot.Tick {
	if !(hi > lo) || math.IsInf(hi-lo, 0) {
		return nil
	}
	raw := (hi - lo) / 5
	e := math.Floor(math.Log10(raw))
	step := math.Pow10(int(e))
	for _, m := range []float64{1, 2, 2.5, 5, 10} {
		if m*math.Pow10(int(e)) >= raw*0.75 {
			step = m * math.Pow10(int(e))
			break
		}
	}
	decimals := 0
	for d := step; d < 1 && decimals < 12; d *= 10 {
		decimals++
	}
	if math.Abs(step*math.Pow10(decimals)-math.Round(step*math.Pow10(decimals))) > 1e-9 {
		decimals++ // 2.5 × 10^k needs one more
	}
	var ticks []plot.Tick
	first := math.Ceil(lo/step - 1e-9)
	for k := first; k*step <= hi+step*1e-9; k++ {
		v := k * step
		if math.Abs(v) < step*1e-9 {
			v = 0
		}
		ticks = append(ticks, plot.Tick{Value: v, Label: strconv.FormatFloat(v, 'f', decimals, 64)})
		if m := v + step/2; m <= hi {
			ticks = append(ticks, plot.Tick{Value: m})
		}
	}
	if first*step-step/2 >= lo {
		ticks = append(ticks, plot.Tick{Value: first*step - step/2})
	}
	return ticks
}

// log1pScale maps x to log(x0 + x), normalised to [0, 1] over [min, max]:
// a logarithmic axis that also shows 0 (x0 = 1: log(1 + x)).
type log1pScale struct{ x0 float64 }

func (s log1pScale) Normalize(min, max, x float64) float64 {
	f := func(v float64) float64 { return math.Log1p(v / s.x0) } // log(x0 + v) − log x0
	lo, hi := f(min), f(max)
	return (f(x) - lo) / (hi - lo)
}

// log1pTicks labels a log(x0 + x) axis at 0 and as logTicks does from the
// smallest positive grid value up.
type log1pTicks struct{ x0 float64 }

func (t log1pTicks) Ticks(lo, hi float64) []plot.Tick {
	var ticks []plot.Tick
	if lo <= 0 && hi >= 0 {
		ticks = append(ticks, plot.Tick{Value: 0, Label: "0"})
	}
	from := t.x0 // 1; or, below 1, the smallest positive value, 10·x0
	if from < 1 {
		from *= 10
	}
	return append(ticks, logTicks{ends: true}.Ticks(math.Max(lo, from), hi)...)
}
