package spec

import (
	"fmt"
	"math"
	"slices"
	"strconv"
)

// Expand returns the grid values a from/to/points grid stands for, sorted
// and without repeats, with include merged in:
//
//	linear: v_k = from + (to − from)·k/(points − 1)
//	log:    v_k = from · (to/from)^(k/(points − 1)),   k = 0 … points−1
//
// v_0 = from and v_{points−1} = to exactly. For an integer knob (features,
// n_train) each value is rounded to the nearest integer before repeats are
// dropped, so a log grid over a short range has fewer than points values.
// Other knobs (lambda) are rounded to 6 significant digits: the values are
// then the ones a table prints, and they do not hang on the last bits of
// math.Exp, which may differ between platforms (a different grid value
// would change the spec hash).
// points = 1 gives from. Expand assumes the inputs were checked (points ≥ 1,
// from ≤ to, from > 0 for log); it panics otherwise.
func Expand(param string, from, to float64, points int, spacing string, include []float64) []float64 {
	if points < 1 || from > to || (spacing == SpacingLog && from <= 0) {
		panic(fmt.Sprintf("spec: Expand(%g, %g, %d, %q): bad grid", from, to, points, spacing))
	}
	vals := make([]float64, 0, points+len(include))
	for k := range points {
		var v float64
		switch {
		case k == 0:
			v = from
		case k == points-1:
			v = to
		case spacing == SpacingLog:
			v = math.Exp(math.Log(from) + (math.Log(to)-math.Log(from))*float64(k)/float64(points-1))
		default:
			v = from + (to-from)*float64(k)/float64(points-1)
		}
		if integerParam(param) {
			v = math.Round(v)
		} else {
			v, _ = strconv.ParseFloat(strconv.FormatFloat(v, 'g', 6, 64), 64)
		}
		vals = append(vals, v)
	}
	vals = append(vals, include...)
	return sortUnique(vals)
}

func sortUnique(v []float64) []float64 {
	v = slices.Clone(v)
	slices.Sort(v)
	return slices.Compact(v)
}

// grid reads [grid] after param: values, or from/to/points/spacing/include.
// The resolved Grid holds Param and Values only.
func (d *decoder) grid(t table, s *Spec) error {
	d.gridT = t
	param := s.Grid.Param
	ok, accepted := gridValueCheck(param)
	explicit := t.has("values")
	ranged := []string{"from", "to", "points", "spacing", "include"}
	for _, k := range ranged {
		if explicit && t.has(k) {
			return d.errf(t.key(k), "given together with values (accepted: either values = [...] or from, to, points [, spacing, include])")
		}
	}
	var vals []float64
	if explicit {
		v, _, err := d.floats(t, "values", ok, accepted)
		if err != nil {
			return err
		}
		vals = sortUnique(v)
	} else {
		if !t.has("from") && !t.has("to") && !t.has("points") {
			return d.missing(t.key("values"), "values = [...], or from, to and points")
		}
		var from, to float64
		var pts int64
		var present bool
		var err error
		for _, k := range []string{"from", "to"} {
			var x float64
			if x, present, err = d.float(t, k, anyNumber, "a number"); err != nil {
				return err
			} else if !present {
				return d.missing(t.key(k), "a number, an end of the grid range")
			}
			if k == "from" {
				from = x
			} else {
				to = x
			}
		}
		if pts, present, err = d.integer(t, "points", 1, MaxPoints, fmt.Sprintf("an integer in 1..%d", MaxPoints)); err != nil {
			return err
		} else if !present {
			return d.missing(t.key("points"), "an integer ≥ 1, the number of grid values")
		}
		spacing, err := d.choice(t, "spacing", spacings, SpacingLinear)
		if err != nil {
			return err
		}
		include, _, err := d.floats(t, "include", ok, accepted)
		if err != nil {
			return err
		}
		switch {
		case from > to:
			return d.errf(t.key("to"), "%s is below from = %s (accepted: to ≥ from)", fmtFloat(to), fmtFloat(from))
		case spacing == SpacingLog && from <= 0:
			return d.errf(t.key("from"), "%s with log spacing (accepted: from > 0, or spacing = \"linear\")", fmtFloat(from))
		case pts == 1 && from != to:
			return d.errf(t.key("points"), "1 point cannot span %s..%s (accepted: points ≥ 2, or from = to)", fmtFloat(from), fmtFloat(to))
		}
		for _, end := range []struct {
			k string
			v float64
		}{{"from", from}, {"to", to}} {
			v := end.v
			if integerParam(param) {
				v = math.Round(v)
			}
			if !ok(v) {
				return d.errf(t.key(end.k), "%s rounds to %s (accepted: %s)", fmtFloat(end.v), fmtFloat(v), accepted)
			}
		}
		vals = Expand(param, from, to, int(pts), spacing, include)
	}
	s.Grid = Grid{Param: param, Values: vals}
	if param == ParamNTrain {
		s.Data.NTrain = int(vals[len(vals)-1])
	}
	return d.checkGridRange(t, s)
}

// gridValueCheck returns the per-value test of a grid param and its wording.
// gridKey names the key a grid value v came from.
func gridKey(t table, v float64) string {
	switch {
	case t.has("values"):
		return t.key("values")
	case t.has("include") && slices.Contains(includeValues(t), v):
		return t.key("include")
	case t.has("to"):
		return t.key("to")
	}
	return t.path
}

func includeValues(t table) []float64 {
	arr, _ := t.m["include"].([]any)
	var out []float64
	for _, e := range arr {
		if x, ok := number(e); ok {
			out = append(out, x)
		}
	}
	return out
}

// checkGridRange checks that a features grid does not exceed the input
// dimension (known for a generator, and for csv once the columns are).
func (d *decoder) checkGridRange(t table, s *Spec) error {
	if s.Grid.Param != ParamFeatures || s.Data.Dim == 0 {
		return nil
	}
	top := s.Grid.Values[len(s.Grid.Values)-1]
	if int(top) > s.Data.Dim {
		what := "dim"
		if s.Data.Source == SourceCSV {
			what = "the number of feature columns"
		}
		return d.errf(gridKey(t, top), "%s features exceed %s = %d (accepted: whole numbers in 1..%d)", fmtFloat(top), what, s.Data.Dim, s.Data.Dim)
	}
	return nil
}
