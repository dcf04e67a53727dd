package spec

import (
	"fmt"
	"maps"
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

// grid reads [grid] after param: values, or from/to/points/spacing/include,
// and the outer axis [grid.outer] (its param was read by outerParam). The
// resolved Grid holds Param, Values and Outer (Param and Values) only.
func (d *decoder) grid(t table, s *Spec) error {
	d.gridT = t
	vals, err := d.axis(t, s.Grid.Param)
	if err != nil {
		return err
	}
	outer := s.Grid.Outer
	s.Grid = Grid{Param: s.Grid.Param, Values: vals}
	if s.Grid.Param == ParamNTrain {
		s.Data.NTrain = int(vals[len(vals)-1])
	}
	if outer != nil {
		ot, _, _ := d.sub(t, "outer") // checked by outerParam
		d.outerT = ot
		ov, err := d.axis(ot, outer.Param)
		if err != nil {
			return err
		}
		s.Grid.Outer = &Grid{Param: outer.Param, Values: ov}
		if outer.Param == ParamNTrain {
			s.Data.NTrain = int(ov[len(ov)-1])
		}
	}
	return d.checkGridRange(t, s)
}

// outerParam reads [grid.outer] far enough to know its param, which decides
// what [data] and [[model]] may hold: its keys, and a param that is a knob
// other than the inner one. It returns nil without an outer table.
//
// A slice of the grid must be a one-axis spec, so the outer knob must be a
// setting such a spec holds outside its grid: data.n_train, or a numeric
// parameter of every model's family (lambda, degree, bandwidth, …), which
// models checks. The number of features of a linear fit is no such setting:
// there it can only be the inner knob.
func (d *decoder) outerParam(gt table, inner string) (*Grid, error) {
	ot, ok, err := d.sub(gt, "outer")
	if err != nil || !ok {
		return nil, err
	}
	if err := d.known(ot, outerKeys); err != nil {
		return nil, err
	}
	param, err := d.choice(ot, "param", Params, "")
	if err != nil {
		return nil, err
	}
	if param == inner {
		return nil, d.errf(ot.key("param"), "%q is also the grid param (accepted: an outer param other than %q)", param, inner)
	}
	return &Grid{Param: param}, nil
}

// axis reads the values of one axis from t (the [grid] table or
// [grid.outer]): values, or from/to/points/spacing/include, resolved to the
// sorted list without repeats.
func (d *decoder) axis(t table, param string) ([]float64, error) {
	ok, accepted := gridValueCheck(param)
	explicit := t.has("values")
	ranged := []string{"from", "to", "points", "spacing", "include"}
	for _, k := range ranged {
		if explicit && t.has(k) {
			return nil, d.errf(t.key(k), "given together with values (accepted: either values = [...] or from, to, points [, spacing, include])")
		}
	}
	if explicit {
		v, _, err := d.floats(t, "values", ok, accepted)
		if err != nil {
			return nil, err
		}
		return sortUnique(v), nil
	}
	if !t.has("from") && !t.has("to") && !t.has("points") {
		return nil, d.missing(t.key("values"), "values = [...], or from, to and points")
	}
	var from, to float64
	var pts int64
	var present bool
	var err error
	for _, k := range []string{"from", "to"} {
		var x float64
		if x, present, err = d.float(t, k, anyNumber, "a number"); err != nil {
			return nil, err
		} else if !present {
			return nil, d.missing(t.key(k), "a number, an end of the grid range")
		}
		if k == "from" {
			from = x
		} else {
			to = x
		}
	}
	if pts, present, err = d.integer(t, "points", 1, MaxPoints, fmt.Sprintf("an integer in 1..%d", MaxPoints)); err != nil {
		return nil, err
	} else if !present {
		return nil, d.missing(t.key("points"), "an integer ≥ 1, the number of grid values")
	}
	spacing, err := d.choice(t, "spacing", spacings, SpacingLinear)
	if err != nil {
		return nil, err
	}
	include, _, err := d.floats(t, "include", ok, accepted)
	if err != nil {
		return nil, err
	}
	switch {
	case from > to:
		return nil, d.errf(t.key("to"), "%s is below from = %s (accepted: to ≥ from)", fmtFloat(to), fmtFloat(from))
	case spacing == SpacingLog && from <= 0:
		return nil, d.errf(t.key("from"), "%s with log spacing (accepted: from > 0, or spacing = \"linear\")", fmtFloat(from))
	case pts == 1 && from != to:
		return nil, d.errf(t.key("points"), "1 point cannot span %s..%s (accepted: points ≥ 2, or from = to)", fmtFloat(from), fmtFloat(to))
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
			return nil, d.errf(t.key(end.k), "%s rounds to %s (accepted: %s)", fmtFloat(end.v), fmtFloat(v), accepted)
		}
	}
	return Expand(param, from, to, int(pts), spacing, include), nil
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
	if err := d.checkNeighbours(s); err != nil {
		return err
	}
	if s.Grid.Param != ParamFeatures || s.Data.Dim == 0 {
		return nil
	}
	// The features knob counts input columns for the families linear in
	// them, and random features (any number) for random-features.
	columns := false
	for _, m := range s.Models {
		columns = columns || Linear(m.Family)
	}
	if !columns {
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

// Sets reports whether param is a knob of g, the inner or the outer one.
func (g *Grid) Sets(param string) bool {
	return g.Param == param || g.Outer != nil && g.Outer.Param == param
}

// At returns the one-axis spec of the slice of s at the outer grid value v:
// s with the inner grid only and the outer knob fixed at v, i.e.
//
//	outer n_train:   Data.NTrain = v
//	outer parameter: every model's parameter of that name = v (Lambda, or
//	                 Params[param])
//
// Labels are kept as resolved for s, so a model has the same label in every
// slice. The slice's DataKey and model keys are those of a one-axis spec of
// the same setting, so its cells are shared with such runs through the
// cache. Data's slices (features, spectrum and signal values) and the
// models' Options are shared with s, not copied. At panics when s has no
// outer axis.
func (s *Spec) At(v float64) *Spec {
	o := s.Grid.Outer
	if o == nil {
		panic("spec: At on a spec without an outer grid axis")
	}
	c := *s
	c.Grid = Grid{Param: s.Grid.Param, Values: slices.Clone(s.Grid.Values)}
	c.Models = slices.Clone(s.Models)
	switch {
	case o.Param == ParamNTrain:
		c.Data.NTrain = int(v)
	case o.Param == "lambda":
		for i := range c.Models {
			c.Models[i].Lambda = v
		}
	default:
		for i := range c.Models {
			m := &c.Models[i]
			m.Params = maps.Clone(m.Params)
			if m.Params == nil {
				m.Params = map[string]float64{}
			}
			m.Params[o.Param] = v
		}
	}
	return &c
}

// knobs returns the grid's params: the inner one, then the outer one if any.
func (g *Grid) knobs() []string {
	if g.Outer == nil {
		return []string{g.Param}
	}
	return []string{g.Param, g.Outer.Param}
}

// hasNum reports whether the family has the numeric parameter key, which
// an outer axis of that param fixes in each slice.
func (f Schema) hasNum(key string) bool {
	for _, n := range f.Nums {
		if n.Key == key {
			return true
		}
	}
	return false
}

// numKeys lists the family's numeric parameters.
func (f Schema) numKeys() []string {
	var k []string
	for _, n := range f.Nums {
		k = append(k, n.Key)
	}
	return k
}
