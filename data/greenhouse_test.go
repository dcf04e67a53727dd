package data

import (
	"bytes"
	"flag"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"testing"

	"riskgrid/spec"
)

var updateDemo = flag.Bool("update-demo", false, "rewrite ../specs/greenhouse.csv")

// greenhouseColumns are the columns of the invented demo file, target last.
var greenhouseColumns = []string{
	"temperature_c", "humidity_pct", "light_hours", "co2_ppm",
	"irrigation_l", "soil_ph", "nitrogen_g", "density", "yield_kg",
}

// greenhouseCSV makes the invented demo dataset (see specs/greenhouse.md):
// 600 plots with 8 inputs drawn from simple distributions and a response
// from a made-up multiplicative rule plus Gaussian noise. Every input is
// rounded to its printed precision before it enters the rule, so the file
// is exactly the rule applied to its own columns (plus the noise).
func greenhouseCSV() []byte {
	const rows = 600
	st := NewStream("riskgrid-demo-greenhouse-v1")
	uniform := func(lo, hi float64) float64 { return lo + (hi-lo)*st.Float64() }
	round := func(v float64, digits int) float64 {
		p := math.Pow(10, float64(digits))
		return math.Round(v*p) / p
	}
	var b bytes.Buffer
	for i, c := range greenhouseColumns {
		if i > 0 {
			b.WriteByte(',')
		}
		b.WriteString(c)
	}
	b.WriteByte('\n')
	for range rows {
		temp := round(uniform(14, 32), 1)
		irr := round(uniform(5, 45), 1)
		// Wetter plots are more humid: 40 % + 0.8 %/l plus spread.
		hum := round(math.Min(98, 40+0.8*irr+uniform(0, 25)), 0)
		light := round(uniform(8, 18), 1)
		co2 := round(uniform(380, 1200), 0)
		ph := round(5+3*st.Float64(), 2)
		nit := round(uniform(0, 30), 1)
		dens := round(uniform(2, 9), 1)

		// The made-up rule: a product of response curves, each in (0, ~1.3].
		fT := math.Exp(-sq((temp - 24) / 6))                        // warmth, best at 24 °C
		fL := 1 - math.Exp(-(light-6)/4)                            // light, saturating
		fC := 1 + 0.25*math.Log(co2/400)                            // CO2 enrichment
		fW := math.Max(0.1, 1-sq((irr-28)/25))                      // water, best at 28 l
		fP := math.Exp(-sq((ph - 6.3) / 1.2))                       // soil pH, best at 6.3
		fN := 0.4 + 0.6*nit/(nit+8)                                 // nitrogen, saturating
		fD := dens * math.Exp(1-dens/6) / 6                         // crowding, best at 6 plants/m²
		mould := 1 - 0.3*logistic((hum-85)/3)*logistic((temp-26)/2) // warm and humid: mould
		yield := 12*fT*fL*fC*fW*fP*fN*fD*mould + 0.6*st.Normal()
		yield = round(math.Max(0, yield), 2)

		vals := []float64{temp, hum, light, co2, irr, ph, nit, dens, yield}
		digits := []int{1, 0, 1, 0, 1, 2, 1, 1, 2}
		for i, v := range vals {
			if i > 0 {
				b.WriteByte(',')
			}
			b.WriteString(strconv.FormatFloat(v, 'f', digits[i], 64))
		}
		b.WriteByte('\n')
	}
	return b.Bytes()
}

func sq(x float64) float64       { return x * x }
func logistic(x float64) float64 { return 1 / (1 + math.Exp(-x)) }

// TestGreenhouseDemo regenerates the invented demo file in memory and
// checks the committed copy is identical byte for byte; with -update-demo
// it rewrites the file instead. It also checks that the file loads as a
// csv source.
func TestGreenhouseDemo(t *testing.T) {
	path := filepath.Join("..", "specs", "greenhouse.csv")
	want := greenhouseCSV()
	if *updateDemo {
		if err := os.WriteFile(path, want, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	got, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (regenerate with go test ./data -run TestGreenhouseDemo -update-demo)", err)
	}
	if !bytes.Equal(got, want) {
		line := 1 + bytes.Count(got[:commonPrefix(got, want)], []byte("\n"))
		t.Fatalf("%s differs from its generator from line %d on (regenerate with -update-demo)", path, line)
	}
	s := &spec.Spec{
		Name: "greenhouse",
		Path: filepath.Join("..", "specs", "greenhouse.toml"),
		Data: spec.Data{Source: spec.SourceCSV, File: "greenhouse.csv", Target: "yield_kg", NTrain: 100, TestFraction: 0.25},
	}
	src := mustNew(t, s, "demo")
	p := src.Problem()
	if m, d := p.TestX.Dims(); m != 150 || d != 8 {
		t.Errorf("greenhouse test set %d×%d, want 150×8", m, d)
	}
	// The rule must carry signal: the response is not constant.
	var lo, hi = math.Inf(1), math.Inf(-1)
	for _, v := range p.TestY {
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	if !(hi-lo > 1) {
		t.Errorf("greenhouse yield spans [%v, %v], want a spread > 1 kg", lo, hi)
	}
}

func commonPrefix(a, b []byte) int {
	n := 0
	for n < len(a) && n < len(b) && a[n] == b[n] {
		n++
	}
	return n
}
