package reports

import (
	"bytes"
	"encoding/xml"
	"flag"
	"image"
	"image/color"
	"image/png"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"riskgrid/runner"
)

var heatOut = flag.String("heatmaps", "", "write the heat maps of TestHeatMapsRender into this `folder`, to look at them")

// thresholdResult is twoAxisResult on a features × n_train grid: n = 50 and
// 100 against p = 10 … 200, so the line p = n crosses the map.
func thresholdResult() *runner.Result {
	r := twoAxisResult()
	r.Param = "features"
	return r
}

// TestHeatMapsRender renders the maps of a two-axis result and checks the
// PNGs: the size asked for, many colours (a colour ramp, not a blank or
// flat image) and ink over a good part of the area; and that the SVG is
// well-formed XML.
func TestHeatMapsRender(t *testing.T) {
	maps, err := HeatMaps(thresholdResult())
	if err != nil {
		t.Fatal(err)
	}
	if len(maps) != 2 {
		t.Fatalf("%d heat maps, want one per model (2)", len(maps))
	}
	if maps[0].Name != "heatmap-1-min-norm" || maps[1].Name != "heatmap-2-ridge-0-1" {
		t.Errorf("names %q, %q", maps[0].Name, maps[1].Name)
	}
	for _, m := range maps {
		if *heatOut != "" {
			os.WriteFile(filepath.Join(*heatOut, m.Name+".png"), m.PNG, 0o644)
			os.WriteFile(filepath.Join(*heatOut, m.Name+".svg"), m.SVG, 0o644)
		}
		img, err := png.Decode(bytes.NewReader(m.PNG))
		if err != nil {
			t.Fatalf("%s: PNG does not decode: %v", m.Name, err)
		}
		// 8 × 6 in at 120 dpi.
		if b := img.Bounds(); b.Dx() != 960 || b.Dy() != 720 {
			t.Errorf("%s: PNG is %d × %d, want 960 × 720", m.Name, b.Dx(), b.Dy())
		}
		colours, ink := inkOf(img)
		if colours < 100 || ink < 0.3 {
			t.Errorf("%s: %d colours, %.0f%% non-white: looks blank", m.Name, colours, 100*ink)
		}
		if err := wellFormed(m.SVG); err != nil {
			t.Errorf("%s: SVG: %v", m.Name, err)
		}
		if !bytes.Contains(m.SVG, []byte("<svg")) {
			t.Errorf("%s: no <svg> element", m.Name)
		}
	}
}

// inkOf counts the distinct colours of img and the share of pixels that
// are not white.
func inkOf(img image.Image) (colours int, ink float64) {
	seen := map[color.RGBA]bool{}
	b := img.Bounds()
	n := 0
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			r, g, bl, a := img.At(x, y).RGBA()
			c := color.RGBA{uint8(r >> 8), uint8(g >> 8), uint8(bl >> 8), uint8(a >> 8)}
			seen[c] = true
			if c != (color.RGBA{255, 255, 255, 255}) {
				n++
			}
		}
	}
	return len(seen), float64(n) / float64(b.Dx()*b.Dy())
}

func wellFormed(b []byte) error {
	d := xml.NewDecoder(bytes.NewReader(b))
	for {
		_, err := d.Token()
		if err == io.EOF {
			return nil
		}
		if err != nil {
			return err
		}
	}
}

func TestHeatMapsOneAxis(t *testing.T) {
	maps, err := HeatMaps(synthetic())
	if err != nil || maps != nil {
		t.Errorf("HeatMaps(one-axis) = %v, %v; want nil, nil", maps, err)
	}
	bad := twoAxisResult()
	bad.Models[0].Outer = nil
	if _, err := HeatMaps(bad); err == nil {
		t.Errorf("HeatMaps of an inconsistent result: no error")
	}
}

// TestHeatGrids: each model's curves become the rows of its grid; a
// heavy-tailed point shows its median and is marked; a point without fits
// is NaN.
func TestHeatGrids(t *testing.T) {
	r := thresholdResult()
	r.Models[3].Points[2].Seeds = 0 // ridge, n = 100, p = 50: every fit failed
	gs := heatGrids(r)
	if len(gs) != 2 || gs[0].label != "min-norm" || len(gs[0].outer) != 2 || gs[0].outer[1] != 100 || len(gs[0].inner) != 5 {
		t.Fatalf("grids %+v", gs)
	}
	mn := gs[0]
	if !mn.heavy[0][2] || mn.z[0][2] != 212.345 {
		t.Errorf("min-norm n = 50, p = 50: heavy %v, value %v; want the median 212.345, marked", mn.heavy[0][2], mn.z[0][2])
	}
	if mn.heavy[1][2] || mn.z[1][2] != 2.6123456e4/2 {
		t.Errorf("min-norm n = 100, p = 50: heavy %v, value %v; want the mean 13061.728", mn.heavy[1][2], mn.z[1][2])
	}
	if !math.IsNaN(gs[1].z[1][2]) {
		t.Errorf("a point without fits has value %v, want NaN", gs[1].z[1][2])
	}
	f := &heatFigure{r: r, g: gs[1], sc: newHeatScale(gs)}
	if c := f.sc.colour(math.NaN()); c != (color.Gray{0xc8}) {
		t.Errorf("NaN colour %v, want grey", c)
	}
	cap := f.caption()
	for _, want := range []string{"Grey: no successful fit.", "Dashed line: the interpolation threshold p = n.",
		"Spec double-descent-demo, hash 3f9a0c1de27b, engine e1.", "over 20 seeds"} {
		if !strings.Contains(cap, want) {
			t.Errorf("caption lacks %q:\n%s", want, cap)
		}
	}
	if strings.Contains(cap, "median") {
		t.Errorf("caption of a map without heavy cells mentions the median:\n%s", cap)
	}
	if cap := (&heatFigure{r: r, g: mn, sc: f.sc}).caption(); !strings.Contains(cap, "marked ! show the median risk") {
		t.Errorf("caption of a map with a heavy cell lacks the median note:\n%s", cap)
	}
}

func TestHeatScale(t *testing.T) {
	grid := func(vs ...float64) []*heatGrid { return []*heatGrid{{z: [][]float64{vs}}} }
	lg := newHeatScale(grid(0.5, 2, math.NaN(), 400))
	if !lg.log || lg.lo != math.Log10(0.5) || lg.hi != math.Log10(400) {
		t.Errorf("0.5…400: log %v, range %v…%v; want log10 of the ends", lg.log, lg.lo, lg.hi)
	}
	var labels []string
	for _, tk := range lg.ticks() {
		labels = append(labels, tk.Label)
	}
	if got := strings.Join(labels, " "); got != "1 10 100" {
		t.Errorf("log ticks over 0.5…400: %s, want 1 10 100", got)
	}
	labels = labels[:0]
	for _, tk := range newHeatScale(grid(0.11, 17)).ticks() {
		labels = append(labels, tk.Label)
	}
	if got := strings.Join(labels, " "); got != "0.2 0.5 1 2 5 10" {
		t.Errorf("log ticks over 0.11…17: %s, want 0.2 0.5 1 2 5 10", got)
	}
	if ln := newHeatScale(grid(1, 9.9)); ln.log {
		t.Errorf("1…9.9 (under a decade) on a log scale")
	}
	if ln := newHeatScale(grid(-0.1, 100)); ln.log {
		t.Errorf("a negative value on a log scale")
	}
	if one := newHeatScale(grid(3, 3)); !(one.lo < 3 && one.hi > 3) {
		t.Errorf("a single value: range %v…%v, want one around 3", one.lo, one.hi)
	}
}

func TestHeatNumbers(t *testing.T) {
	for _, tc := range []struct {
		v          float64
		cell, axis string
	}{
		{0.52341, "0.52", "0.523"},
		{8.94, "8.9", "8.94"},
		{26123.456, "26000", "2.61e4"},
		{1e-5, "1e-5", "1e-5"},
		{0.0031622776601683794, "0.0032", "0.00316"},
		{320, "320", "320"},
		{3.1e5, "3.1e5", "310000"},
		{0, "0", "0"},
	} {
		if got := heatNumber(tc.v); got != tc.cell {
			t.Errorf("heatNumber(%v) = %q, want %q", tc.v, got, tc.cell)
		}
		if got := axisNumber(tc.v); got != tc.axis {
			t.Errorf("axisNumber(%v) = %q, want %q", tc.v, got, tc.axis)
		}
	}
}

// TestHeatThreshold: on features × n_train the line p = n runs through the
// cells where p = n, by log interpolation between columns, out to the
// edges of the map; other grids have none.
func TestHeatThreshold(t *testing.T) {
	r := thresholdResult()
	g := heatGrids(r)[0] // p = 10, 40, 50, 60, 200; n = 50, 100
	pts, ok := (&heatFigure{r: r, g: g}).threshold()
	if !ok || len(pts) != 4 {
		t.Fatalf("threshold %v, %v; want 4 points (2 rows and the two edges)", pts, ok)
	}
	// n = 50 is column 2 exactly; n = 100 lies between p = 60 (3) and 200
	// (4) at log(100/60)/log(200/60) = 0.4243.
	want100 := 3 + math.Log(100.0/60)/math.Log(200.0/60)
	if pts[1] != [2]float64{2, 0} || math.Abs(pts[2][0]-want100) > 1e-12 || pts[2][1] != 1 {
		t.Errorf("row points %v, %v; want (2, 0) and (%v, 1)", pts[1], pts[2], want100)
	}
	if pts[0][1] != -0.5 || pts[3][1] != 1.5 {
		t.Errorf("ends %v, %v; want the line run on to the edges y = -0.5 and 1.5", pts[0], pts[3])
	}
	if _, ok := (&heatFigure{r: twoAxisResult(), g: g}).threshold(); ok {
		t.Errorf("a threshold line on a p × n_train grid whose inner knob is not features")
	}
	if x, ok := indexOf([]float64{10, 20, 40}, 5); ok {
		t.Errorf("indexOf below the range = %v, true", x)
	}
}

func TestHeatSlug(t *testing.T) {
	for in, want := range map[string]string{"ridge λ=0.1 (intercept)": "ridge-0-1-intercept", "  ": "model", "Least-Squares": "least-squares"} {
		if got := heatSlug(in); got != want {
			t.Errorf("heatSlug(%q) = %q, want %q", in, got, want)
		}
	}
}

// TestHeatThresholdIntercept: with an intercept a linear fit has p + 1
// parameters, so it interpolates from p + 1 = n (as the risk figure marks
// it): the line at row n passes through p = n − 1, and the caption says so.
func TestHeatThresholdIntercept(t *testing.T) {
	r := thresholdResult()
	g := heatGrids(r)[0] // p = 10, 40, 50, 60, 200; n = 50, 100
	r.SpecTOML += "\n[[model]]\nlabel = \"" + g.label + "\"\nintercept = true\n"
	f := &heatFigure{r: r, g: g}
	pts, ok := f.threshold()
	if !ok || len(pts) != 4 {
		t.Fatalf("threshold %v, %v; want 4 points", pts, ok)
	}
	want49 := 1 + math.Log(49.0/40)/math.Log(50.0/40) // n = 50: p = 49, between 40 and 50
	if math.Abs(pts[1][0]-want49) > 1e-12 || pts[1][1] != 0 {
		t.Errorf("row n = 50 at %v; want (%v, 0), the column of p = 49", pts[1], want49)
	}
	if c := f.caption(); !strings.Contains(c, "p + 1 = n") {
		t.Errorf("caption of a model with an intercept %q; want the threshold p + 1 = n", c)
	}
}

// TestHeatThresholdReachesEdges: the threshold line runs on to the edges of
// the map even where a row's crossing lies outside the columns (with an
// intercept, n = 10 against p from 10 up crosses at p = 9): it leaves the
// first and last segments through the map's border, never stops inside.
func TestHeatThresholdReachesEdges(t *testing.T) {
	r := thresholdResult()
	one := r.Models[:len(r.Models)/2] // the n = 50 slice of every model
	var ms []runner.ModelResult
	for _, n := range []float64{10, 50, 100} {
		for _, m := range one {
			m.Outer = &n
			ms = append(ms, m)
		}
	}
	r.Models = ms
	g := heatGrids(r)[0] // p = 10, 40, 50, 60, 200; n = 10, 50, 100
	r.SpecTOML += "\n[[model]]\nlabel = \"" + g.label + "\"\nintercept = true\n"
	pts, ok := (&heatFigure{r: r, g: g}).threshold()
	if !ok {
		t.Fatal("no threshold line")
	}
	onBorder := func(p [2]float64) bool {
		const e = 1e-9
		return math.Abs(p[0]+0.5) < e || math.Abs(p[0]-4.5) < e || math.Abs(p[1]+0.5) < e || math.Abs(p[1]-2.5) < e
	}
	if first, last := pts[0], pts[len(pts)-1]; !onBorder(first) || !onBorder(last) {
		t.Errorf("line from %v to %v; want both ends on the map's border", first, last)
	}
}
