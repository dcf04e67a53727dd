package spec

import (
	"slices"
	"strconv"
)

// checkNeighbours rejects a number of neighbours k larger than a training
// size the spec will fit it on: k-NN averages k of the n_train rows. The
// smallest training size is data.n_train, or the smallest n_train value of
// the grid's axes. k comes from the neighbours axis (its largest value) or
// from a nearest-neighbours model's neighbours key.
func (d *decoder) checkNeighbours(s *Spec) error {
	n := s.Data.NTrain
	nKey := "data.n_train"
	for _, a := range []struct {
		g *Grid
		t table
	}{{&s.Grid, d.gridT}, {s.Grid.Outer, d.outerT}} {
		if a.g != nil && a.g.Param == ParamNTrain && len(a.g.Values) > 0 {
			n = int(a.g.Values[0])
			nKey = gridKey(a.t, a.g.Values[0])
		}
	}
	if n <= 0 {
		return nil
	}
	for _, a := range []struct {
		g *Grid
		t table
	}{{&s.Grid, d.gridT}, {s.Grid.Outer, d.outerT}} {
		if a.g == nil || a.g.Param != ParamNeighbours || len(a.g.Values) == 0 {
			continue
		}
		if k := slices.Max(a.g.Values); k > float64(n) {
			return d.errf(gridKey(a.t, k), "neighbours k = %s exceeds n_train = %d (%s) (accepted: whole numbers in 1..%d)",
				fmtFloat(k), n, nKey, n)
		}
	}
	for i, m := range s.Models {
		if k, ok := m.Params[ParamNeighbours]; ok && m.Family == FamilyNeighbours && k > float64(n) {
			return d.errf("model["+strconv.Itoa(i+1)+"]."+ParamNeighbours, "neighbours k = %s exceeds n_train = %d (%s) (accepted: an integer in 1..%d)",
				fmtFloat(k), n, nKey, n)
		}
	}
	return nil
}
