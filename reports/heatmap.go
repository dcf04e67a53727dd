package reports

import (
	"bytes"
	"fmt"
	"image"
	"image/color"
	"math"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/palette"
	"gonum.org/v1/plot/palette/moreland"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"

	"riskgrid/runner"
	"riskgrid/spec"
)

// HeatMap is one rendered heat map of a two-axis result.
type HeatMap struct {
	// Name is the file name without extension ("heatmap-1-least-squares");
	// the files are Name+".svg" and Name+".png".
	Name string
	// Title says in one line what the map shows.
	Title string
	SVG   []byte
	PNG   []byte
}

// Heat map size: 8 × 6 in at 120 dpi, a 960 × 720 PNG.
const (
	heatW   = 8 * vg.Inch
	heatH   = 6 * vg.Inch
	heatDPI = 120
)

// HeatMaps draws, for a two-axis result, one heat map per model: the risk
// over the inner knob (x) × the outer knob (y), one cell per grid point.
//
// A cell's colour is its mean risk, or its median risk where the mean is
// carried by a few seeds (Point.HeavyTail; the mean then says little, and at
// the interpolation threshold it has no finite expectation): such cells are
// outlined and marked "!", and the caption says so. A cell with no
// successful fit is grey. The colour scale is logarithmic when the values
// span a decade or more (all positive), linear otherwise, and shared by the
// maps of all models, so two maps compare colour for colour. Cells are
// labelled with their value to two significant digits when they are large
// enough to hold it. On a features × n_train grid a dashed line marks the
// interpolation threshold p = n (p + 1 = n with an intercept). The caption gives the spec name, the
// short hash, the engine and the seeds.
//
// A one-axis result has no heat map: HeatMaps returns nil.
func HeatMaps(r *runner.Result) ([]HeatMap, error) {
	if err := check(r); err != nil {
		return nil, err
	}
	if r.OuterParam == "" {
		return nil, nil
	}
	maps := heatGrids(r)
	sc := newHeatScale(maps)
	var out []HeatMap
	for i, g := range maps {
		f := &heatFigure{r: r, g: g, sc: sc}
		svg, png, err := f.render()
		if err != nil {
			return nil, fmt.Errorf("reports: heat map of %s: %w", g.label, err)
		}
		out = append(out, HeatMap{
			Name:  fmt.Sprintf("heatmap-%d-%s", i+1, heatSlug(g.label)),
			Title: fmt.Sprintf("%s over %s × %s, %s", riskWord(r), r.Param, r.OuterParam, g.label),
			SVG:   svg,
			PNG:   png,
		})
	}
	return out, nil
}

// heatGrid is one model's values on the grid: rows are outer values, columns
// inner values.
type heatGrid struct {
	label, family string
	inner, outer  []float64
	z             [][]float64 // the value coloured: mean, or median where heavy; NaN without fits
	heavy         [][]bool
}

// heatGrids gathers the curves of each model (in order of first appearance)
// into its grid.
func heatGrids(r *runner.Result) []*heatGrid {
	var grids []*heatGrid
	byLabel := map[string]*heatGrid{}
	for i := range r.Models {
		m := &r.Models[i]
		g, ok := byLabel[m.Label]
		if !ok {
			g = &heatGrid{label: m.Label, family: m.Family}
			for _, p := range m.Points {
				g.inner = append(g.inner, p.Value)
			}
			byLabel[m.Label] = g
			grids = append(grids, g)
		}
		g.outer = append(g.outer, *m.Outer)
		row := make([]float64, len(g.inner))
		heavy := make([]bool, len(g.inner))
		for j, v := range g.inner {
			row[j] = math.NaN()
			for k := range m.Points {
				p := &m.Points[k]
				if p.Value != v || p.Seeds == 0 {
					continue
				}
				row[j] = float64(p.Risk.Mean)
				if p.HeavyTail {
					row[j], heavy[j] = float64(p.RiskMedian), true
				}
			}
		}
		g.z = append(g.z, row)
		g.heavy = append(g.heavy, heavy)
	}
	return grids
}

// heatScale maps a risk to a colour: through log10 when log is set.
type heatScale struct {
	log      bool
	lo, hi   float64 // in scale units (log10 of the risk when log)
	cm       palette.ColorMap
	min, max float64 // the risks at the ends
}

// newHeatScale spans every finite value of every map. It is logarithmic
// when all values are positive and the largest is at least ten times the
// smallest.
func newHeatScale(maps []*heatGrid) heatScale {
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, g := range maps {
		for _, row := range g.z {
			for _, v := range row {
				if !math.IsNaN(v) && !math.IsInf(v, 0) {
					lo, hi = math.Min(lo, v), math.Max(hi, v)
				}
			}
		}
	}
	if math.IsInf(lo, 1) { // no value at all
		lo, hi = 0, 1
	}
	sc := heatScale{min: lo, max: hi, cm: moreland.ExtendedBlackBody()}
	if lo > 0 && hi >= 10*lo {
		sc.log = true
		lo, hi = math.Log10(lo), math.Log10(hi)
	}
	if hi == lo { // one value: a range around it, so the colour map is defined
		hi, lo = hi+0.5, lo-0.5
	}
	sc.lo, sc.hi = lo, hi
	sc.cm.SetMin(lo)
	sc.cm.SetMax(hi)
	return sc
}

// unit maps a risk to scale units.
func (sc heatScale) unit(v float64) float64 {
	if sc.log {
		return math.Log10(v)
	}
	return v
}

// colour is the colour of risk v; grey for NaN.
func (sc heatScale) colour(v float64) color.Color {
	if math.IsNaN(v) {
		return color.Gray{0xc8}
	}
	u := math.Min(math.Max(sc.unit(v), sc.lo), sc.hi)
	c, err := sc.cm.At(u)
	if err != nil { // only outside [lo, hi], excluded above
		return color.Gray{0xc8}
	}
	return c
}

// ticks are the colour bar's marks, in scale units, labelled in risk units:
// on a log scale the decades, with 2 and 5 between them when fewer than
// three decades fall in the range; on a linear scale about five round steps.
func (sc heatScale) ticks() []plot.Tick {
	var ts []plot.Tick
	if sc.log {
		mults := []float64{1} // the decades; with 2 and 5 between when under three fit
		if math.Floor(sc.hi)-math.Ceil(sc.lo) < 2 {
			mults = []float64{1, 2, 5}
		}
		for e := math.Floor(sc.lo); e <= math.Ceil(sc.hi); e++ {
			for _, m := range mults {
				u := e + math.Log10(m)
				if u >= sc.lo-1e-9 && u <= sc.hi+1e-9 {
					ts = append(ts, plot.Tick{Value: u, Label: heatNumber(math.Pow(10, u))})
				}
			}
		}
		if len(ts) >= 2 {
			return ts
		}
		// Fewer than two marks inside: label the ends instead.
		return []plot.Tick{{Value: sc.lo, Label: heatNumber(sc.min)}, {Value: sc.hi, Label: heatNumber(sc.max)}}
	}
	step := niceStep((sc.hi - sc.lo) / 5)
	for u := math.Ceil(sc.lo/step) * step; u <= sc.hi+step*1e-9; u += step {
		ts = append(ts, plot.Tick{Value: u, Label: heatNumber(u)})
	}
	return ts
}

// niceStep rounds x up to 1, 2 or 5 times a power of ten.
func niceStep(x float64) float64 {
	if !(x > 0) {
		return 1
	}
	p := math.Pow(10, math.Floor(math.Log10(x)))
	for _, m := range []float64{1, 2, 5, 10} {
		if m*p >= x {
			return m * p
		}
	}
	return 10 * p
}

// heatNumber prints v with two significant digits, without an exponent
// from 0.001 to 99 999 ("0.0052", "0.52", "8.9", "45", "8900", "12000"),
// and as "3.1e5" outside.
func heatNumber(v float64) string {
	if math.IsNaN(v) {
		return ""
	}
	a := math.Abs(v)
	if a != 0 && (a < 1e-3 || a >= 1e5) {
		s := strconv.FormatFloat(v, 'e', 1, 64)
		mant, exp, _ := strings.Cut(s, "e")
		mant = strings.TrimSuffix(mant, ".0")
		e, _ := strconv.Atoi(exp)
		return mant + "e" + strconv.Itoa(e)
	}
	r, _ := strconv.ParseFloat(strconv.FormatFloat(v, 'g', 2, 64), 64)
	return strconv.FormatFloat(r, 'f', -1, 64)
}

// axisNumber prints a grid value for an axis: as given when that takes at
// most 6 characters ("320", "0.0001", "1e-05" → "1e-5"), else to 3
// significant digits ("0.00316", "3.16"). Tables and CSV carry the exact
// values.
func axisNumber(v float64) string {
	s := knob(v)
	if len(s) > 6 {
		s = strconv.FormatFloat(v, 'g', 3, 64)
	}
	if mant, exp, ok := strings.Cut(s, "e"); ok {
		e, _ := strconv.Atoi(exp)
		s = mant + "e" + strconv.Itoa(e)
	}
	return s
}

// heatSlug makes a label safe in a file name: lower-case letters and
// digits, other runs turned into one '-', at most 40 characters.
func heatSlug(label string) string {
	var b strings.Builder
	dash := false
	for _, c := range strings.ToLower(label) {
		switch {
		case c >= 'a' && c <= 'z' || c >= '0' && c <= '9':
			b.WriteRune(c)
			dash = false
		case !dash && b.Len() > 0:
			b.WriteByte('-')
			dash = true
		}
	}
	s := strings.Trim(b.String(), "-")
	if len(s) > 40 {
		s = strings.TrimRight(s[:40], "-")
	}
	if s == "" {
		s = "model"
	}
	return s
}

// riskWord names what the colour is: true risk or test risk.
func riskWord(r *runner.Result) string {
	if r.RiskBasis == runner.RiskTestSet {
		return "test risk"
	}
	return "true risk"
}

// knobAxis names a knob on an axis: the spec name and its symbol.
func knobAxis(param string) string {
	sym := map[string]string{
		spec.ParamFeatures: "p", spec.ParamNTrain: "n", spec.ParamLambda: "λ",
		spec.ParamDegree: "degree", spec.ParamBandwidth: "bandwidth", spec.ParamNeighbours: "k",
		spec.ParamSteps: "steps", spec.ParamWidth: "width",
	}[param]
	if sym == "" || sym == param {
		return param
	}
	return param + " (" + sym + ")"
}

// heatFigure lays out one heat map: the map, a colour bar on its right and
// a caption under both.
type heatFigure struct {
	r  *runner.Result
	g  *heatGrid
	sc heatScale
}

func heatText(size vg.Length, c color.Color) text.Style {
	return text.Style{Color: c, Font: font.From(sans, size), Handler: plot.DefaultTextHandler,
		XAlign: draw.XCenter, YAlign: draw.YCenter}
}

func (f *heatFigure) render() (svg, png []byte, err error) {
	sc := vgsvg.New(heatW, heatH)
	f.draw(draw.New(sc))
	var sb bytes.Buffer
	if _, err := sc.WriteTo(&sb); err != nil {
		return nil, nil, fmt.Errorf("svg: %w", err)
	}
	ic := vgimg.NewWith(vgimg.UseWH(heatW, heatH), vgimg.UseDPI(heatDPI))
	f.draw(draw.New(ic))
	var pb bytes.Buffer
	if _, err := (vgimg.PngCanvas{Canvas: ic}).WriteTo(&pb); err != nil {
		return nil, nil, fmt.Errorf("png: %w", err)
	}
	return sb.Bytes(), pb.Bytes(), nil
}

// caption says where the figure comes from and how to read it.
func (f *heatFigure) caption() string {
	r, g := f.r, f.g
	var b strings.Builder
	model := g.label
	if g.family != g.label {
		model += " (" + g.family + ")"
	}
	scale := "linear"
	if f.sc.log {
		scale = "logarithmic"
	}
	fmt.Fprintf(&b, "Colour: the mean %s of %s over %d seeds in each cell of %s × %s; %s colour scale, shared by the maps of every model of this result.",
		riskWord(r), model, r.Seeds, r.Param, r.OuterParam, scale)
	heavy, empty := false, false
	for i := range g.z {
		for j := range g.z[i] {
			heavy = heavy || g.heavy[i][j]
			empty = empty || math.IsNaN(g.z[i][j])
		}
	}
	if heavy {
		b.WriteString(" Outlined cells marked ! show the median risk instead: there the mean is carried by a few seeds (heavy tail) and is not a stable summary.")
	}
	if empty {
		b.WriteString(" Grey: no successful fit.")
	}
	if _, ok := f.threshold(); ok {
		if f.intercept() {
			b.WriteString(" Dashed line: the interpolation threshold p + 1 = n (p features and the intercept).")
		} else {
			b.WriteString(" Dashed line: the interpolation threshold p = n.")
		}
	}
	fmt.Fprintf(&b, " Spec %s, hash %s, engine %s.", r.Name, shortHash(r.Hash), r.Engine)
	return b.String()
}

func (f *heatFigure) draw(dc draw.Canvas) {
	full := dc.Rectangle
	dc.FillPolygon(color.White, []vg.Point{full.Min, {X: full.Min.X, Y: full.Max.Y}, full.Max, {X: full.Max.X, Y: full.Min.Y}})

	// Caption, in a strip at the bottom.
	cs := heatText(8.5, color.Gray{0x30})
	cs.XAlign, cs.YAlign = draw.XLeft, draw.YBottom
	capH := drawCaption(dc, cs, wrap(cs, f.caption(), full.Size().X-2*pad))

	// Colour bar on the right, the map in the rest.
	const barW = 1.25 * vg.Inch
	f.drawBar(draw.Crop(dc, full.Size().X-barW, -pad, capH+pad, -pad))
	f.drawMap(draw.Crop(dc, pad/2, -barW-pad, capH+pad/2, -pad/2))
}

// drawMap draws the cells with their axes and title into c.
func (f *heatFigure) drawMap(c draw.Canvas) {
	g := f.g
	p := plot.New()
	p.Title.Text = fmt.Sprintf("%s: %s", g.label, riskWord(f.r))
	p.Title.TextStyle.Font = font.From(sans, 12)
	p.X.Label.Text = knobAxis(f.r.Param)
	p.Y.Label.Text = knobAxis(f.r.OuterParam)
	for _, a := range []*plot.Axis{&p.X, &p.Y} {
		a.Label.TextStyle.Font = font.From(sans, 10.5)
		a.Tick.Label.Font = font.From(sans, 9)
		a.Padding = 0
	}
	p.X.Min, p.X.Max = -0.5, float64(len(g.inner))-0.5
	p.Y.Min, p.Y.Max = -0.5, float64(len(g.outer))-0.5

	// Thin the tick labels so that neighbours do not touch: the widest
	// label (plus a gap) per column, the label height per row.
	plotW := c.Size().X - 1.1*vg.Inch // about what the y axis leaves
	plotH := c.Size().Y - 0.9*vg.Inch // about what the title and the x axis leave
	xs := categoryTicks(g.inner, func(n int, ts []plot.Tick) bool {
		w := vg.Length(0)
		for _, t := range ts {
			w = max(w, p.X.Tick.Label.Width(t.Label))
		}
		return (w+vg.Points(6))*vg.Length(n) <= plotW
	})
	ys := categoryTicks(g.outer, func(n int, _ []plot.Tick) bool {
		return (p.Y.Tick.Label.Height("0")+vg.Points(4))*vg.Length(n) <= plotH
	})
	p.X.Tick.Marker = plot.ConstantTicks(xs)
	p.Y.Tick.Marker = plot.ConstantTicks(ys)
	p.Add(&heatCells{f: f, cellW: plotW / vg.Length(len(g.inner)), cellH: plotH / vg.Length(len(g.outer))})
	p.Draw(c)
}

// categoryTicks marks every k-th of the values (at their index), the
// smallest k for which fits(count, ticks) holds; the last value is always
// marked when it is k steps from the previous mark.
func categoryTicks(vals []float64, fits func(n int, ts []plot.Tick) bool) []plot.Tick {
	var ts []plot.Tick
	for k := 1; k <= len(vals); k++ {
		ts = ts[:0]
		for i := 0; i < len(vals); i += k {
			ts = append(ts, plot.Tick{Value: float64(i), Label: axisNumber(vals[i])})
		}
		if fits(len(vals)/k+1, ts) || k == len(vals) {
			break
		}
	}
	return ts
}

// heatCells is the plotter of the cells, their labels, the heavy-tail
// marks and the threshold line.
type heatCells struct {
	f            *heatFigure
	cellW, cellH vg.Length // about the size of a cell, to decide on labels
}

func (h *heatCells) Plot(c draw.Canvas, p *plot.Plot) {
	f, g := h.f, h.f.g
	trX, trY := p.Transforms(&c)
	lab := heatText(8, color.Black)
	small := heatText(7, color.Black)
	// Labels fit when the widest is under the cell width and the text
	// under its height.
	widest := vg.Length(0)
	for i := range g.z {
		for _, v := range g.z[i] {
			widest = max(widest, lab.Width(heatNumber(v)))
		}
	}
	label := widest+vg.Points(4) < h.cellW && lab.FontExtents().Height+vg.Points(2) < h.cellH
	type cell struct{ x0, x1, y0, y1 vg.Length }
	at := func(i, j int) cell {
		return cell{trX(float64(j) - 0.5), trX(float64(j) + 0.5), trY(float64(i) - 0.5), trY(float64(i) + 0.5)}
	}
	hair := vg.Points(0.25) // cells overlap by a hair: no seams between them
	for i := range g.outer {
		for j := range g.inner {
			k := at(i, j)
			c.FillPolygon(f.sc.colour(g.z[i][j]), []vg.Point{{X: k.x0 - hair, Y: k.y0 - hair}, {X: k.x0 - hair, Y: k.y1 + hair},
				{X: k.x1 + hair, Y: k.y1 + hair}, {X: k.x1 + hair, Y: k.y0 - hair}})
		}
	}
	if pts, ok := f.threshold(); ok {
		line := make([]vg.Point, len(pts))
		for k, pt := range pts {
			line[k] = vg.Point{X: trX(pt[0]), Y: trY(pt[1])}
		}
		c.StrokeLines(draw.LineStyle{Color: color.Black, Width: vg.Points(3)}, line)
		c.StrokeLines(draw.LineStyle{Color: color.White, Width: vg.Points(1.5), Dashes: []vg.Length{vg.Points(5), vg.Points(3)}}, line)
	}
	for i := range g.outer {
		for j := range g.inner {
			v, k := g.z[i][j], at(i, j)
			fill := f.sc.colour(v)
			ink := inkOn(fill)
			if g.heavy[i][j] {
				in := vg.Points(1.5)
				c.StrokeLines(draw.LineStyle{Color: ink, Width: vg.Points(1)}, []vg.Point{
					{X: k.x0 + in, Y: k.y0 + in}, {X: k.x0 + in, Y: k.y1 - in}, {X: k.x1 - in, Y: k.y1 - in}, {X: k.x1 - in, Y: k.y0 + in}, {X: k.x0 + in, Y: k.y0 + in}})
				small.Color = ink
				small.XAlign, small.YAlign = draw.XRight, draw.YTop
				c.FillText(small, vg.Point{X: k.x1 - vg.Points(3), Y: k.y1 - vg.Points(2.5)}, "!")
			}
			if label && !math.IsNaN(v) {
				// The label on a patch of its cell's colour, so that the
				// threshold line passes behind it.
				s := heatNumber(v)
				cx, cy := (k.x0+k.x1)/2, (k.y0+k.y1)/2
				hw, hh := lab.Width(s)/2+vg.Points(3), lab.FontExtents().Height/2+vg.Points(1)
				c.FillPolygon(fill, []vg.Point{{X: cx - hw, Y: cy - hh}, {X: cx - hw, Y: cy + hh}, {X: cx + hw, Y: cy + hh}, {X: cx + hw, Y: cy - hh}})
				lab.Color = ink
				c.FillText(lab, vg.Point{X: cx, Y: cy}, s)
			}
		}
	}
}

// DataRange spans the cells.
func (h *heatCells) DataRange() (xmin, xmax, ymin, ymax float64) {
	return -0.5, float64(len(h.f.g.inner)) - 0.5, -0.5, float64(len(h.f.g.outer)) - 0.5
}

// inkOn is black or white, whichever reads better on c (relative
// luminance above or below 0.4; WCAG 2.x definition, sRGB approximated by
// a 2.2 power).
func inkOn(c color.Color) color.Color {
	r, g, b, _ := c.RGBA()
	lin := func(v uint32) float64 { return math.Pow(float64(v)/0xffff, 2.2) }
	if 0.2126*lin(r)+0.7152*lin(g)+0.0722*lin(b) > 0.4 {
		return color.Black
	}
	return color.White
}

// threshold returns the line p = n (p + 1 = n with an intercept) in cell
// coordinates on a features × n_train grid (either way round): per row, the column position of the
// row's value among the columns, by linear interpolation of the index in
// the logarithm of the values (rows whose value lies outside the columns'
// range are left out). False when the grid is not features × n_train or
// fewer than two rows cross the columns.
func (f *heatFigure) threshold() ([][2]float64, bool) {
	r, g := f.r, f.g
	pair := r.Param + "×" + r.OuterParam
	if pair != spec.ParamFeatures+"×"+spec.ParamNTrain && pair != spec.ParamNTrain+"×"+spec.ParamFeatures {
		return nil, false
	}
	// With an intercept a fit has p + 1 parameters: the line is p + 1 = n.
	k := 0.0
	if f.intercept() {
		k = 1
	}
	if r.Param == spec.ParamNTrain {
		k = -k // inner n, outer p: the column of n = p + 1
	}
	var pts [][2]float64
	for i, v := range g.outer {
		if x, ok := indexOf(g.inner, v-k); ok {
			pts = append(pts, [2]float64{x, float64(i)})
		}
	}
	if len(pts) < 2 {
		return nil, false
	}
	// Run on to the border of the map along the first and last segments:
	// to its bottom and top edges, or out through a side first (a row
	// whose crossing lies outside the columns has no point of its own).
	cols := float64(len(g.inner)) - 0.5
	extend := func(a, b [2]float64) [2]float64 {
		edge := -0.5
		if b[1] > a[1] {
			edge = float64(len(g.outer)) - 0.5
		}
		x := b[0] + (edge-b[1])*(b[0]-a[0])/(b[1]-a[1])
		if x < -0.5 || x > cols { // leaves through a side first
			side := math.Max(-0.5, math.Min(cols, x))
			return [2]float64{side, b[1] + (side-b[0])*(b[1]-a[1])/(b[0]-a[0])}
		}
		return [2]float64{x, edge}
	}
	pts = append([][2]float64{extend(pts[1], pts[0])}, pts...)
	pts = append(pts, extend(pts[len(pts)-2], pts[len(pts)-1]))
	return pts, true
}

// intercept reports whether the map's model fits an intercept.
func (f *heatFigure) intercept() bool { return newGeometry(f.r).icept[f.g.label] }

// indexOf places v among the sorted positive values vs: the fractional
// index, linear in log v between neighbours; false outside [vs[0], vs[n-1]].
func indexOf(vs []float64, v float64) (float64, bool) {
	if len(vs) == 0 || v < vs[0] || v > vs[len(vs)-1] || vs[0] <= 0 {
		return 0, false
	}
	for i := 0; i+1 < len(vs); i++ {
		if v <= vs[i+1] {
			t := math.Log(v/vs[i]) / math.Log(vs[i+1]/vs[i])
			return float64(i) + t, true
		}
	}
	return float64(len(vs) - 1), true
}

// drawBar draws the colour bar into c: the colour ramp with its scale on
// the left and the quantity above.
func (f *heatFigure) drawBar(c draw.Canvas) {
	p := plot.New()
	p.Title.Text = riskWord(f.r)
	if f.sc.log {
		p.Title.Text += "\n(log scale)"
	}
	p.Title.TextStyle.Font = font.From(sans, 9.5)
	p.HideX()
	p.Y.Tick.Label.Font = font.From(sans, 9)
	p.Y.Padding = 0
	p.Y.Min, p.Y.Max = f.sc.lo, f.sc.hi
	p.Y.Tick.Marker = plot.ConstantTicks(f.sc.ticks())
	p.Add(&heatRamp{sc: f.sc})
	// A narrow bar: leave room on its left for the tick labels only.
	p.Draw(draw.Crop(c, pad, -0.45*vg.Inch, 0, 0))
}

// heatRamp fills the colour bar with thin bands of the scale's colours.
type heatRamp struct{ sc heatScale }

func (h *heatRamp) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	// One pixel column of n colours, top row the largest value, stretched
	// over the bar: a smooth ramp in PNG and SVG alike.
	const n = 256
	img := image.NewRGBA(image.Rect(0, 0, 1, n))
	for k := range n {
		u := h.sc.lo + (h.sc.hi-h.sc.lo)*(float64(n-1-k)+0.5)/n
		col, err := h.sc.cm.At(u)
		if err != nil {
			col = color.Gray{0xc8}
		}
		img.Set(0, k, col)
	}
	c.DrawImage(vg.Rectangle{Min: vg.Point{X: trX(0), Y: trY(h.sc.lo)}, Max: vg.Point{X: trX(1), Y: trY(h.sc.hi)}}, img)
}

func (h *heatRamp) DataRange() (xmin, xmax, ymin, ymax float64) { return 0, 1, h.sc.lo, h.sc.hi }
