package runner

import (
	"math"
	"sort"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/stat"
)

func TestQuantile(t *testing.T) {
	// R: quantile(1:10, c(.25, .5, .75)) = 3.25 5.50 7.75 (type 7, R's
	// default; from memory). By hand from the definition: h = 9q, so
	// q = 0.25 gives x[2] + 0.25·(x[3] − x[2]) = 3.25.
	xs := []float64{1, 2, 3, 4, 5, 6, 7, 8, 9, 10}
	for _, c := range []struct{ q, want float64 }{{0.25, 3.25}, {0.5, 5.5}, {0.75, 7.75}, {0, 1}, {1, 10}} {
		if got := quantile(xs, c.q); got != c.want {
			t.Errorf("quantile(1:10, %v) = %v, want %v", c.q, got, c.want)
		}
	}
}

// meanSE against gonum's stat package (a reference library).
func TestMeanSE(t *testing.T) {
	xs := []float64{0.3, 1.7, 2.2, -0.4, 5.1, 3.3}
	m, se := MeanSE(xs)
	wm, wsd := stat.MeanStdDev(xs, nil)
	wse := stat.StdErr(wsd, float64(len(xs)))
	if !scalar.EqualWithinAbsOrRel(m, wm, 1e-15, 1e-15) || !scalar.EqualWithinAbsOrRel(se, wse, 1e-15, 1e-15) {
		t.Errorf("meanSE = (%v, %v), gonum stat = (%v, %v)", m, se, wm, wse)
	}
	if _, se := MeanSE([]float64{1}); !math.IsNaN(se) {
		t.Errorf("meanSE of one value: se = %v, want NaN", se)
	}
}

func TestHeavyTail(t *testing.T) {
	calm := make([]float64, 100)
	for i := range calm {
		calm[i] = 1 + 0.01*float64(i)
	}
	if heavyTail(calm) {
		t.Errorf("heavyTail flags 100 values within 1..2")
	}
	wild := append([]float64(nil), calm...)
	wild[7] = 500 // one seed carries more than half of the total
	sort.Float64s(wild)
	if !heavyTail(wild) {
		t.Errorf("heavyTail misses one value of 500 among 99 values near 1.5")
	}
}
