package runner

import (
	"context"
	"encoding/json"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

func runSums(t *testing.T, src string) *Output {
	t.Helper()
	out, err := Run(context.Background(), mustParse(t, src), Options{})
	if err != nil {
		t.Fatal(err)
	}
	return out
}

// Two shards over disjoint seeds merge into the statistics of the whole:
// the merged sums give the full run's bias², variance and risk.
func TestSumsMergeShards(t *testing.T) {
	full := runSums(t, smallSpec(20, "5, 30, 45"))
	a := runSums(t, smallSpec(10, "5, 30, 45"))
	b := runSums(t, strings.Replace(smallSpec(10, "5, 30, 45"), "count = 10", "count = 10\nstart = 11", 1))
	if err := a.Sums.Merge(b.Sums); err != nil {
		t.Fatal(err)
	}
	if err := a.Sums.Merge(b.Sums); err == nil {
		t.Errorf("merging the same seeds twice succeeded")
	}
	for mi, m := range a.Sums.Models {
		for pi, ps := range m.Points {
			want := full.Result.Models[mi].Points[pi]
			b2, v := ps.Split(a.Sums.Weights, a.Sums.ModelSeeds)
			mean, _ := MeanSE(ps.Risk)
			// The one-pass sums lose ~⟨ē,ē⟩/V̂·eps to cancellation; 1e-9 leaves
			// room for ratios up to 1e6.
			const tol = 1e-9
			for _, c := range []struct {
				name      string
				got, want float64
			}{
				{"bias²", b2, float64(want.Bias2.Mean)},
				{"variance", v, float64(want.Variance.Mean)},
				{"risk", mean, float64(want.Risk.Mean)},
			} {
				if !scalar.EqualWithinAbsOrRel(c.got, c.want, tol, tol) {
					t.Errorf("%s p=%v: merged %s = %v, full run %v (tol %g)", m.Label, ps.Value, c.name, c.got, c.want, tol)
				}
			}
			if len(ps.Seeds) != 20 || ps.Seeds[10] != 11 {
				t.Errorf("merged seeds %v", ps.Seeds)
			}
		}
	}
}

// A per-seed df list with NaN (a network reports none) survives a JSON
// round trip as null, where a plain []float64 cannot be encoded at all.
func TestSumsNaNDF(t *testing.T) {
	in := PointSums{Value: 4, Seeds: []uint64{1, 2}, DF: Floats{math.NaN(), 3.5}}
	b, err := json.Marshal(in)
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(b), `"df":[null,3.5]`) {
		t.Errorf("encoded %s, want df [null,3.5]", b)
	}
	var out PointSums
	if err := json.Unmarshal(b, &out); err != nil {
		t.Fatal(err)
	}
	if len(out.DF) != 2 || !math.IsNaN(out.DF[0]) || out.DF[1] != 3.5 {
		t.Errorf("decoded df %v, want [NaN 3.5]", out.DF)
	}
}
