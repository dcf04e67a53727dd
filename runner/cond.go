package runner

import (
	"fmt"
	"math"
	"runtime"

	"riskgrid/spec"
)

// Conditioning returns, per model of s (in spec order) and grid value (in
// s.Grid.Values order), the largest condition number estimate over the fits
// that succeeded (every data seed, and every model seed of a family with
// randomness of its own),
//
//	κ_max = max_s Cond_s,
//
// where Cond is the 2-norm condition number (estimate) of the system the
// model solved for that seed (models.Fit.Cond). It reads the cache folder
// dir, which a Run of s must have filled. Fits whose Cond was not computed
// (NaN: the family reports none) are skipped; a point with none is NaN. A
// singular design gives +Inf. (Point.CondMedian is the median; the
// tolerance of verify needs the worst fit, which dominates a mean.)
//
// The rounding error of a backward-stable solve grows with κ; verify uses
// κ_max to widen its tolerance where the last bits of a fit are not
// reproducible across builds.
//
// For a two-axis spec the rows follow Result.Models: per outer value, the
// models of its slice.
func Conditioning(s *spec.Spec, dir string) ([][]float64, error) {
	if o := s.Grid.Outer; o != nil {
		var out [][]float64
		for _, v := range o.Values {
			k, err := Conditioning(s.At(v), dir)
			if err != nil {
				return nil, err
			}
			out = append(out, k...)
		}
		return out, nil
	}
	if dir == "" {
		return nil, fmt.Errorf("runner: Conditioning needs a cache folder")
	}
	r, err := newRun(s, Options{CacheDir: dir, Workers: runtime.NumCPU()})
	if err != nil {
		return nil, err
	}
	out := make([][]float64, len(r.models))
	for i := range out {
		out[i] = make([]float64, len(r.values))
		for j := range out[i] {
			out[i][j] = math.NaN()
		}
	}
	err = r.inOrder(func(seed uint64, e *entry) error {
		for mi, m := range r.models {
			for vi, v := range r.values {
				for ms := range m.seeds {
					c, ok := e.Cells[cellKey(m.key, r.s.Grid.Param, v, ms)]
					if !ok {
						return fmt.Errorf("seed %d: cell %s %g #%d not in the cache", seed, m.spec.Label, v, ms)
					}
					if c.Err != "" || math.IsNaN(c.Cond) {
						continue
					}
					if cur := out[mi][vi]; math.IsNaN(cur) || c.Cond > cur {
						out[mi][vi] = c.Cond
					}
				}
			}
		}
		return nil
	})
	if err != nil {
		return nil, err
	}
	return out, nil
}
