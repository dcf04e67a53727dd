package reports

import (
	"bytes"
	"encoding/xml"
	"errors"
	"image"
	"image/png"
	"io"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/recorder"

	"riskgrid/runner"
)

// The figures are checked for what can go wrong without anyone noticing:
// a blank or tiny image, an SVG a browser refuses, a log axis fed a value
// ≤ 0 (gonum/plot panics), a heavy-tailed mean drawn as if it were stable.
// How they look was checked by eye on the example specs.

func TestFiguresRender(t *testing.T) {
	figs, err := Figures(synthetic())
	if err != nil {
		t.Fatal(err)
	}
	var names []string
	for _, f := range figs {
		names = append(names, f.Name)
	}
	want := []string{"risk-all", "split-all", "risk-1-min-norm", "split-1-min-norm", "risk-2-ridge-0-1", "split-2-ridge-0-1"}
	if strings.Join(names, " ") != strings.Join(want, " ") {
		t.Fatalf("figures %v, want %v", names, want)
	}
	for _, f := range figs {
		img, err := png.Decode(bytes.NewReader(f.PNG))
		if err != nil {
			t.Fatalf("%s.png: %v", f.Name, err)
		}
		b := img.Bounds()
		wantH := 600 // 5 in at 120 dpi
		if f.Name == "split-all" {
			wantH = int(math.Round((2*3 + 1.3) * 120)) // two panel rows and the caption
		}
		if b.Dx() != 960 || b.Dy() != wantH {
			t.Errorf("%s.png is %d×%d, want 960×%d", f.Name, b.Dx(), b.Dy(), wantH)
		}
		colours, ink := inkStats(img)
		// A figure with axes, curves, a legend and a caption has many
		// distinct colours (anti-aliasing) and a few per cent of ink;
		// a blank or all-black canvas has neither.
		if colours < 20 {
			t.Errorf("%s.png has %d distinct colours: blank?", f.Name, colours)
		}
		if ink < 0.02 || ink > 0.6 {
			t.Errorf("%s.png: %.3f of the pixels are not white, want between 0.02 and 0.6", f.Name, ink)
		}
		if err := wellFormedSVG(f.SVG); err != nil {
			t.Errorf("%s.svg: %v", f.Name, err)
		}
	}
}

// inkStats counts the distinct colours of img and the share of pixels that
// are not white, over every other pixel of every other row.
func inkStats(img image.Image) (colours int, ink float64) {
	seen := map[[4]uint32]bool{}
	b := img.Bounds()
	nonWhite, n := 0, 0
	for y := b.Min.Y; y < b.Max.Y; y += 2 {
		for x := b.Min.X; x < b.Max.X; x += 2 {
			n++
			r, g, bl, a := img.At(x, y).RGBA()
			seen[[4]uint32{r, g, bl, a}] = true
			if r < 0xf000 || g < 0xf000 || bl < 0xf000 {
				nonWhite++
			}
		}
	}
	return len(seen), float64(nonWhite) / float64(n)
}

// wellFormedSVG parses b as XML to the end and checks that the root is an
// <svg> element with a width and a height.
func wellFormedSVG(b []byte) error {
	d := xml.NewDecoder(bytes.NewReader(b))
	root := ""
	var w, h bool
	for {
		tok, err := d.Token()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return err
		}
		if se, ok := tok.(xml.StartElement); ok && root == "" {
			root = se.Name.Local
			for _, a := range se.Attr {
				w = w || a.Name.Local == "width"
				h = h || a.Name.Local == "height"
			}
		}
	}
	if root != "svg" || !w || !h {
		return errors.New("root element is not an <svg> with width and height")
	}
	return nil
}

// A negative bias² estimate on a log axis: the stack starts at a positive
// floor, every boundary is positive (a log scale panics on values ≤ 0), the
// negative value is stacked as 0 and named in the caption.
func TestSplitNegativeBiasOnLogAxis(t *testing.T) {
	r := synthetic()
	mn := &r.Models[0]
	mn.Points[1].Bias2.Mean = -0.0123
	mn.Points[1].Sum = mn.Points[1].Bias2.Mean + mn.Points[1].Variance.Mean + mn.Points[1].Noise.Mean
	st := stackSeries(mn, false, true)
	if !st.ys.log || !(st.ys.floor > 0) {
		t.Fatalf("y scale %+v, want a log axis with a positive floor", st.ys)
	}
	if len(st.negative) != 1 || st.negative[0] != (negativePart{"bias²", 40, -0.0123}) {
		t.Errorf("negative bias² recorded as %v, want [(40, -0.0123)]", st.negative)
	}
	for _, run := range st.runs {
		for _, sp := range run {
			for j, b := range sp.b {
				if !(b >= st.ys.floor) {
					t.Errorf("p=%v: boundary %d = %v below the floor %v", sp.x, j, b, st.ys.floor)
				}
			}
			if sp.x == 40 && sp.b[2] != sp.b[1] {
				t.Errorf("p=40: bias² band from %v to %v, want empty (stacked as 0)", sp.b[1], sp.b[2])
			}
		}
	}
	f := splitFigure(r, newGeometry(r), oneCurve(r, 0))
	if f == nil {
		t.Fatal("no split figure")
	}
	cap := strings.Join(f.caption, " ")
	for _, want := range []string{"bias² of min-norm at p = 40: -0.0123", "Log y axis", "double-descent-demo", "3f9a0c1de27b"} {
		if !strings.Contains(cap, want) {
			t.Errorf("caption %q lacks %q", cap, want)
		}
	}
	if _, _, err := f.render(); err != nil {
		t.Errorf("render: %v", err)
	}
}

// On the risk figure's log axis, the training risk of interpolating fits
// (3.1e-29 and exactly 0 in the fixture) is drawn at the floor and marked;
// the heavy-tailed point leaves the mean line and gets its quartiles.
func TestRiskLogAxisClampsAndHeavyTail(t *testing.T) {
	r := synthetic()
	f := riskFigure(r, newGeometry(r), oneCurve(r, 0))
	if f == nil {
		t.Fatal("no risk figure")
	}
	var main []float64
	for _, p := range r.Models[0].Points {
		main = append(main, float64(p.Risk.Mean))
	}
	ys := newYScale(main, riskFloorGap)
	if !ys.log {
		t.Fatalf("risks from 1.8 to 26000 should get a log axis")
	}
	s := riskSeries(&r.Models[0], ys)
	if len(s.trainLow) != 3 {
		t.Errorf("%d training risks clamped, want 3 (p = 50, 60, 200)", len(s.trainLow))
	}
	for _, xy := range s.trainLow {
		if xy.Y != ys.floor {
			t.Errorf("clamped training risk at %v drawn at %v, want the floor %v", xy.X, xy.Y, ys.floor)
		}
	}
	for _, seg := range s.mean {
		for _, xy := range seg {
			if xy.X == 50 {
				t.Errorf("the mean line passes through the heavy-tailed point p = 50")
			}
		}
	}
	for _, seg := range s.band {
		for _, xy := range seg {
			if xy.X == 50 {
				t.Errorf("a ±2 SE band covers the heavy-tailed point p = 50")
			}
		}
	}
	if len(s.heavyMean) != 1 || len(s.median) != 1 || len(s.quart) != 1 ||
		s.median[0].Y != 212.345 || s.quart[0] != (bar{50, 81.2345, 1890.12345}) {
		t.Errorf("heavy point: mean %v, median %v, quartiles %v", s.heavyMean, s.median, s.quart)
	}
	cap := strings.Join(f.caption, " ")
	for _, want := range []string{"open circle", "median and q1–q3", "below " + num(ys.floor)} {
		if !strings.Contains(cap, want) {
			t.Errorf("caption %q lacks %q", cap, want)
		}
	}
}

func TestYScaleClamp(t *testing.T) {
	ys := newYScale([]float64{1, 2, 50, math.NaN(), -3}, 100)
	if !ys.log || ys.floor != 0.01 {
		t.Fatalf("yScale %+v, want log with floor 0.01", ys)
	}
	for _, c := range []struct {
		in, want float64
		clamped  bool
	}{{5, 5, false}, {0, 0.01, true}, {-0.2, 0.01, true}, {1e-30, 0.01, true}} {
		got, cl := ys.at(c.in)
		if got != c.want || cl != c.clamped {
			t.Errorf("at(%v) = %v, %v; want %v, %v", c.in, got, cl, c.want, c.clamped)
		}
	}
	if got, _ := ys.at(math.Inf(1)); !math.IsNaN(got) {
		t.Errorf("at(+Inf) = %v, want NaN (not drawn)", got)
	}
	if lin := newYScale([]float64{1, 2, 9.9}, 100); lin.log {
		t.Errorf("a span under a decade got a log axis")
	}
}

func TestLogSpaced(t *testing.T) {
	for _, c := range []struct {
		name string
		vs   []float64
		want bool
	}{
		{"log grid", []float64{10, 18, 32, 56, 100, 180, 320, 560, 1000}, true},
		{"log grid with an included value", []float64{1e-5, 1e-4, 1e-3, 1e-2, 0.05, 0.1, 1, 10}, true},
		{"even grid", []float64{10, 20, 30, 40, 50, 60, 70, 80, 90, 100}, false},
		{"under a decade", []float64{2, 4, 8, 16}, false},
		{"zero in the grid", []float64{0, 0.01, 0.1, 1, 10}, false},
		{"two values", []float64{1, 1000}, false},
	} {
		if got := logSpaced(c.vs); got != c.want {
			t.Errorf("%s: logSpaced(%v) = %v, want %v", c.name, c.vs, got, c.want)
		}
	}
}

func TestInterpThreshold(t *testing.T) {
	r := synthetic()
	r.Param = "features"
	r.Models[0].Family = "least-squares"
	r.SpecTOML = "[data]\ndim = 300\n[[model]]\nlabel = \"min-norm\"\nintercept = false\n[[model]]\nlabel = \"ridge λ=0.1\"\nintercept = true\n"
	g := newGeometry(r)
	if th, ok := interpThreshold(r, g, &r.Models[0]); !ok || th.x != 50 || th.label != "p = n = 50" {
		t.Errorf("features grid: %+v %v, want p = n = 50", th, ok)
	}
	if th, ok := interpThreshold(r, g, &r.Models[1]); !ok || th.x != 49 {
		t.Errorf("features grid with an intercept: %+v %v, want p = 49", th, ok)
	}
	r.Param = "n_train"
	if th, ok := interpThreshold(r, g, &r.Models[0]); !ok || th.x != 300 || th.label != "n = p = 300" {
		t.Errorf("n_train grid: %+v %v, want n = 300", th, ok)
	}
	// Two-axis grids: the curve's own outer value.
	n40 := 40.0
	r.Models[0].Outer = &n40
	r.OuterParam = "features"
	if th, ok := interpThreshold(r, g, &r.Models[0]); !ok || th.x != 40 {
		t.Errorf("n_train × features grid at p = 40: %+v %v, want n = 40", th, ok)
	}
	r.Param, r.OuterParam = "features", "n_train"
	if th, ok := interpThreshold(r, g, &r.Models[0]); !ok || th.x != 40 || th.label != "p = n = 40" {
		t.Errorf("features × n_train grid at n = 40: %+v %v, want p = n = 40", th, ok)
	}
	r.Models[0].Outer, r.OuterParam = nil, ""
	// p = n means nothing to a nearest-neighbour average: the fallback.
	r.Models[0].Family = "nearest-neighbours"
	if th, ok := interpThreshold(r, g, &r.Models[0]); !ok || th.label != "p = 50 (half interpolate)" || !th.empirical {
		t.Errorf("nearest-neighbours on a features grid: %+v %v, want the fallback", th, ok)
	}
	r.Models[0].Family = "least-squares"
	// Without a known dimension: the first value where half the seeds
	// interpolate (p = 50 in the fixture), in order of growing capacity.
	r.SpecTOML = ""
	if th, ok := interpThreshold(r, newGeometry(r), &r.Models[0]); !ok || th.x != 50 {
		t.Errorf("fallback: %+v %v, want 50", th, ok)
	}
	r.Param = "lambda" // capacity grows as λ falls: scan from the largest
	if th, ok := interpThreshold(r, newGeometry(r), &r.Models[0]); !ok || th.x != 200 {
		t.Errorf("penalty grid: %+v %v, want 200", th, ok)
	}
	if _, ok := interpThreshold(r, newGeometry(r), &r.Models[1]); ok {
		t.Errorf("ridge never interpolates in the fixture, got a threshold")
	}
}

func TestSlug(t *testing.T) {
	for in, want := range map[string]string{
		"least-squares":            "least-squares",
		"ridge λ=0.05":             "ridge-0-05",
		"ridge λ=0.01 (intercept)": "ridge-0-01-intercept",
		"λ":                        "model",
		"  Min Norm  ":             "min-norm",
	} {
		if got := slug(in); got != want {
			t.Errorf("slug(%q) = %q, want %q", in, got, want)
		}
	}
}

// A model with no successful fit gets no figure; the others still do.
func TestFiguresSkipEmptyModel(t *testing.T) {
	r := synthetic()
	for i := range r.Models[1].Points {
		p := &r.Models[1].Points[i]
		*p = runner.Point{Value: p.Value, Risk: est(math.NaN(), math.NaN()), TrainRisk: est(math.NaN(), math.NaN()),
			Bias2: est(math.NaN(), math.NaN()), Variance: est(math.NaN(), math.NaN()), Noise: est(1, 0),
			Sum: runner.NaN, RiskQ1: runner.NaN, RiskMedian: runner.NaN, RiskQ3: runner.NaN, Interpolating: runner.NaN}
	}
	figs, err := Figures(r)
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range figs {
		if strings.Contains(f.Name, "ridge") {
			t.Errorf("figure %s drawn for a model without a fit", f.Name)
		}
	}
	if len(figs) != 4 {
		t.Errorf("%d figures, want 4 (risk-all, split-all and min-norm's two)", len(figs))
	}
}

func TestLinearTicks(t *testing.T) {
	ticks := linearTicks{}.Ticks(0, 2.7)
	var labels []string
	for _, tk := range ticks {
		if tk.Label != "" {
			labels = append(labels, tk.Label)
		}
	}
	if got := strings.Join(labels, " "); got != "0.0 0.5 1.0 1.5 2.0 2.5" {
		t.Errorf("labels over [0, 2.7]: %q", got)
	}
}

func oneCurve(r *runner.Result, i int) curveSet {
	return curveSet{title: r.Models[i].Label, curves: []int{i}, keys: []string{r.Models[i].Label}}
}

// A theory curve is drawn dashed where the result carries one, broken where
// it does not (null at the threshold), and said in the legend and caption.
func TestRiskTheoryCurve(t *testing.T) {
	r := synthetic()
	mn := r.Models[0].Points
	for i, v := range []float64{1.8, 5.2, math.NaN(), 9.9, 1.9} {
		mn[i].Theory = runner.Num(v)
	}
	ys := newYScale([]float64{1.8, 26000}, riskFloorGap)
	s := riskSeries(&r.Models[0], ys)
	if len(s.theory) != 2 || len(s.theory[0]) != 2 || len(s.theory[1]) != 2 || s.theory[1][0].X != 60 {
		t.Errorf("theory segments %v, want two, broken at p = 50", s.theory)
	}
	if s := riskSeries(&r.Models[1], ys); len(s.theory) != 0 {
		t.Errorf("ridge has no theory, got segments %v", s.theory)
	}
	f := riskFigure(r, newGeometry(r), curveSet{title: "all models", curves: []int{0, 1}, keys: []string{"min-norm", "ridge"}})
	if cap := strings.Join(f.caption, " "); !strings.Contains(cap, "Black dashes: the exact expected risk") {
		t.Errorf("caption %q does not explain the theory curve", cap)
	}
	if _, _, err := f.render(); err != nil {
		t.Error(err)
	}
}

// A model with randomness of its own: the variance band splits into the
// part over samples and the part over model seeds, stacked in that order,
// and a negative estimate of either is stacked as 0.
func TestSplitModelVariance(t *testing.T) {
	r := synthetic()
	m := &r.Models[1]
	for i := range m.Points {
		p := &m.Points[i]
		p.VarianceModel = est(float64(p.Variance.Mean)/4, 0.001)
		p.VarianceData = est(float64(p.Variance.Mean)*3/4, 0.001)
	}
	m.Points[0].VarianceModel.Mean = -0.002
	st := stackSeries(m, false, false)
	if !st.splitVar {
		t.Fatal("variance not split")
	}
	sp := st.runs[0][2] // p = 50
	p := m.Points[2]
	wantData := float64(p.Noise.Mean + p.Bias2.Mean + p.VarianceData.Mean)
	if math.Abs(sp.b[3]-wantData) > 1e-12 || math.Abs(sp.b[4]-(wantData+float64(p.VarianceModel.Mean))) > 1e-12 {
		t.Errorf("p = 50: boundaries %v, want the sample part to end at %v and the model part above it", sp.b, wantData)
	}
	if st.runs[0][0].b[4] != st.runs[0][0].b[3] {
		t.Errorf("p = 10: a negative model variance should stack as 0, boundaries %v", st.runs[0][0].b)
	}
	if len(st.negative) != 1 || st.negative[0].part != "variance over model seeds" {
		t.Errorf("negative parts %v", st.negative)
	}
	if st := stackSeries(&r.Models[0], false, false); st.splitVar {
		t.Errorf("a model without model variance got a split")
	}
	f := splitFigure(r, newGeometry(r), oneCurve(r, 1))
	if cap := strings.Join(f.caption, " "); !strings.Contains(cap, "model seeds") {
		t.Errorf("caption %q does not explain the split", cap)
	}
}

// A two-axis result: no "-all" figures, one figure per model with a curve
// (and a split panel) per outer value, each curve with its own threshold.
func TestFiguresTwoAxis(t *testing.T) {
	r := twoAxisResult()
	r.Param = "features"
	for i := range r.Models {
		r.Models[i].Family = "least-squares"
	}
	figs, err := Figures(r)
	if err != nil {
		t.Fatal(err)
	}
	var names []string
	for _, f := range figs {
		names = append(names, f.Name)
	}
	if got := strings.Join(names, " "); got != "risk-1-min-norm split-1-min-norm risk-2-ridge-0-1 split-2-ridge-0-1" {
		t.Errorf("figures %s", got)
	}
	sets := curveSets(r)
	if len(sets) != 2 || len(sets[0].curves) != 2 || sets[0].keys[1] != "n = 100" {
		t.Fatalf("curve sets %+v", sets)
	}
	ths := thresholds(r, newGeometry(r), sets[0].curves)
	if len(ths) != 2 || ths[0].x != 50 || ths[1].x != 100 || ths[1].curve != 1 {
		t.Errorf("thresholds %+v, want p = 50 and p = 100, one per curve", ths)
	}
	f := splitFigure(r, newGeometry(r), sets[0])
	if len(f.panels) != 2 || f.panels[1][0].Title.Text != "min-norm, n = 100" {
		t.Errorf("split panels %d, second titled %q", len(f.panels), f.panels[1][0].Title.Text)
	}
}

// TestZeroStartAxisSpreadsSmallValues: a log-spaced grid that starts at 0
// gets a log axis that also shows 0. For step counts (0, 1, 10, …) that is
// log(1 + x); for a penalty grid 0, 1e-7, …, 1 log(1 + λ) ≈ λ would put
// every value below 0.01 on top of 0 (the kernel-penalty example's figure
// showed its whole curve at one x), so the offset is a tenth of the smallest
// positive value when that is below 1: each decade then gets its share.
func TestZeroStartAxisSpreadsSmallValues(t *testing.T) {
	r := synthetic()
	r.Param = "lambda"
	lams := []float64{0, 1e-7, 1e-6, 1e-5, 1e-4, 1e-3, 1e-2, 1e-1, 1}
	for i := range r.Models {
		var pts []runner.Point
		for k, l := range lams {
			p := r.Models[i].Points[k%len(r.Models[i].Points)]
			p.Value = l
			pts = append(pts, p)
		}
		r.Models[i].Points = pts
	}
	g := newGeometry(r)
	if !g.log1pX {
		t.Fatalf("a log-spaced penalty grid from 0 should get the log axis that shows 0")
	}
	p := newPanel(g, yScale{}, "risk")
	sc := p.X.Scale
	at := func(x float64) float64 { return sc.Normalize(0, 1, x) }
	for k := 1; k+1 < len(lams); k++ {
		if d := at(lams[k+1]) - at(lams[k]); d < 0.05 {
			t.Errorf("λ = %g and %g are %.4f of the axis apart; want each decade visible", lams[k], lams[k+1], d)
		}
	}
	if !strings.Contains(g.xName, "1e-08") {
		t.Errorf("axis name %q should give the offset of the log axis", g.xName)
	}
	// Step counts keep log(1 + x).
	r2 := synthetic()
	r2.Param = "steps"
	for i := range r2.Models {
		for k := range r2.Models[i].Points {
			r2.Models[i].Points[k].Value = []float64{0, 1, 10, 100, 1000}[k]
		}
	}
	g2 := newGeometry(r2)
	if got := newPanel(g2, yScale{}, "risk").X.Scale.Normalize(0, 1000, 1); !g2.log1pX || math.Abs(got-math.Log(2)/math.Log(1001)) > 1e-12 {
		t.Errorf("steps axis at 1: %v, want log(2)/log(1001)", got)
	}
}

// TestSplitPanelsAligned: the panels of a split figure share the x range,
// so one grid value must sit at one horizontal place in every panel of a
// column, however wide each panel's y tick labels are (a panel up to 1e5
// beside one up to 2 put p = 10 some 20 px apart in the teacher example).
func TestSplitPanelsAligned(t *testing.T) {
	r := synthetic()
	f := splitFigure(r, newGeometry(r), curveSet{title: "all models", curves: []int{0, 1}, keys: []string{"min-norm", "ridge"}})
	if len(f.panels) != 2 {
		t.Fatalf("%d panel rows, want 2", len(f.panels))
	}
	var rec recorder.Canvas
	f.draw(draw.NewCanvas(&rec, f.w, f.h))
	// The x tick label "20" once per panel (no y tick reads 20 here).
	var xs []vg.Length
	for _, a := range rec.Actions {
		if s, ok := a.(*recorder.FillString); ok && s.String == "20" {
			xs = append(xs, s.Point.X)
		}
	}
	if len(xs) != 2 {
		t.Fatalf("tick label 20 drawn %d times, want once per panel", len(xs))
	}
	if d := xs[0] - xs[1]; d > 0.01 || d < -0.01 {
		t.Errorf("x = 20 at %v in one panel and %v in the other; want the panels aligned", xs[0], xs[1])
	}
}
