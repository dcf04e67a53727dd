package spec

import (
	"errors"
	"reflect"
	"slices"
	"strings"
	"testing"
)

// Pieces of two-axis specs for the tests below.
const (
	genNoNTrain = "[data]\nsource = \"linear-gaussian\"\ndim = 50\nnoise = { sd = 0.5 }\n"
	ridgeNoLam  = "[[model]]\nfamily = \"ridge\"\n"
	featGrid    = "[grid]\nparam = \"features\"\nvalues = [10, 20]\n"
)

func TestOuterResolved(t *testing.T) {
	s := mustParse(t, pieces{data: genNoNTrain, grid: featGrid + "[grid.outer]\nparam = \"n_train\"\nvalues = [40, 10, 20, 10]\n"}.src())
	want := Grid{Param: ParamFeatures, Values: []float64{10, 20}, Outer: &Grid{Param: ParamNTrain, Values: []float64{10, 20, 40}}}
	if !reflect.DeepEqual(s.Grid, want) {
		t.Errorf("Grid = %+v (outer %+v), want %+v (outer %+v)", s.Grid, s.Grid.Outer, want, want.Outer)
	}
	if s.Data.NTrain != 40 {
		t.Errorf("Data.NTrain = %d, want the largest outer value 40", s.Data.NTrain)
	}
	if !s.Grid.Sets(ParamNTrain) || !s.Grid.Sets(ParamFeatures) || s.Grid.Sets(ParamLambda) {
		t.Errorf("Sets: want features and n_train, not lambda")
	}

	// An outer lambda leaves λ out of the default labels, as a lambda grid does.
	s = mustParse(t, pieces{model: ridgeNoLam + ridgeNoLam + "intercept = true\n",
		grid: featGrid + "[grid.outer]\nparam = \"lambda\"\nfrom = 0.01\nto = 1\npoints = 3\nspacing = \"log\"\n"}.src())
	if s.Models[0].Label != "ridge" || s.Models[1].Label != "ridge (intercept)" {
		t.Errorf("labels %q, %q; want %q, %q", s.Models[0].Label, s.Models[1].Label, "ridge", "ridge (intercept)")
	}
	if !slices.Equal(s.Grid.Outer.Values, []float64{0.01, 0.1, 1}) {
		t.Errorf("outer log range = %v, want [0.01 0.1 1]", s.Grid.Outer.Values)
	}
}

// TestOuterErrors: every bad two-axis spec names the file, the line (the
// one marked "#<") and the key, and says what is accepted.
func TestOuterErrors(t *testing.T) {
	outer := func(body string) string { return featGrid + "[grid.outer]\n" + body }
	tests := []errorCase{
		{"outer not a table", pieces{grid: featGrid + "outer = \"n_train\" #<\n"}, "grid.outer",
			"has type string (accepted: a table, [grid.outer] or outer = { … })"},
		{"outer unknown key", pieces{data: genNoNTrain, grid: outer("param = \"n_train\"\nvalues = [10]\nstep = 2 #<\n")}, "grid.outer.step",
			"unknown key (known: param, values, from, to, points, spacing, include)"},
		{"outer of outer", pieces{data: genNoNTrain, grid: outer("param = \"n_train\"\nvalues = [10]\n[grid.outer.outer] #<\nparam = \"lambda\"\n")}, "grid.outer.outer",
			"unknown key (known: param, values, from, to, points, spacing, include)"},
		{"outer no param", pieces{grid: featGrid + "[grid.outer] #<\nvalues = [10]\n"}, "grid.outer.param",
			`required key is missing (accepted: "features", "lambda", "n_train", "degree"`},
		{"outer unknown param", pieces{grid: outer("param = \"depth\" #<\nvalues = [1]\n")}, "grid.outer.param",
			`unknown param "depth" (accepted: "features", "lambda", "n_train"`},
		{"outer equals inner", pieces{grid: outer("param = \"features\" #<\nvalues = [1]\n")}, "grid.outer.param",
			`"features" is also the grid param (accepted: an outer param other than "features")`},
		{"outer n_train equals inner", pieces{data: genNoNTrain, grid: "[grid]\nparam = \"n_train\"\nvalues = [10]\n[grid.outer]\nparam = \"n_train\" #<\nvalues = [1]\n"}, "grid.outer.param",
			`"n_train" is also the grid param (accepted: an outer param other than "n_train")`},
		{"outer features of ridge", pieces{model: "[[model]]\nfamily = \"ridge\" #<\n", grid: "[grid]\nparam = \"lambda\"\nvalues = [1]\n[grid.outer]\nparam = \"features\"\nvalues = [5]\n"}, "model[1].family",
			`"ridge" has no parameter features for the outer grid param to fix at each of its values (accepted: outer param "n_train", or one of the family's parameters: "lambda"; or features as the inner grid param)`},
		{"outer width of least-squares", pieces{model: "[[model]]\nfamily = \"least-squares\" #<\n", grid: outer("param = \"width\"\nvalues = [1]\n")}, "model[1].family",
			`"least-squares" has no parameter width for the outer grid param to fix at each of its values (accepted: outer param "n_train", the family has no parameter of its own; or width as the inner grid param)`},
		{"outer n_train with data n_train", pieces{grid: outer("param = \"n_train\"\nvalues = [10, 20]\n"),
			data: "[data]\nsource = \"linear-gaussian\"\nn_train = 20 #<\ndim = 50\nnoise = { sd = 0.5 }\n"}, "data.n_train",
			"the outer grid param is n_train, which sets the training sizes (accepted: leave n_train out of [data])"},
		{"outer lambda with least-squares", pieces{grid: outer("param = \"lambda\"\nvalues = [0.1]\n"),
			model: ridgeNoLam + "[[model]]\nfamily = \"least-squares\" #<\n"}, "model[2].family",
			`"least-squares" has no parameter lambda for the outer grid param`},
		{"outer lambda with model lambda", pieces{grid: outer("param = \"lambda\"\nvalues = [0.1]\n"),
			model: "[[model]]\nfamily = \"ridge\"\nlambda = 0.1 #<\n"}, "model[1].lambda",
			"the outer grid param is lambda, which sets it (accepted: leave lambda out of [[model]])"},
		{"outer no values", pieces{data: genNoNTrain, grid: featGrid + "[grid.outer] #<\nparam = \"n_train\"\n"}, "grid.outer.values",
			"required key is missing (accepted: values = [...], or from, to and points)"},
		{"outer n_train zero", pieces{data: genNoNTrain, grid: outer("param = \"n_train\"\nvalues = [0, 10] #<\n")}, "grid.outer.values",
			"element 1 is 0 (accepted: whole numbers ≥ 1)"},
		{"outer lambda negative", pieces{model: ridgeNoLam, grid: outer("param = \"lambda\"\nvalues = [-1] #<\n")}, "grid.outer.values",
			"element 1 is -1 (accepted: penalties ≥ 0)"},
		{"outer values and from", pieces{data: genNoNTrain, grid: outer("param = \"n_train\"\nvalues = [10]\nfrom = 1 #<\n")}, "grid.outer.from",
			"given together with values"},
		{"outer from above to", pieces{data: genNoNTrain, grid: outer("param = \"n_train\"\nfrom = 10\nto = 5 #<\npoints = 2\n")}, "grid.outer.to",
			"5 is below from = 10 (accepted: to ≥ from)"},
		{"outer log from 0", pieces{model: ridgeNoLam, grid: outer("param = \"lambda\"\nfrom = 0 #<\nto = 1\npoints = 3\nspacing = \"log\"\n")}, "grid.outer.from",
			`0 with log spacing (accepted: from > 0, or spacing = "linear")`},
		{"outer n_train from rounds to 0", pieces{data: genNoNTrain, grid: outer("param = \"n_train\"\nfrom = 0.2 #<\nto = 5\npoints = 2\n")}, "grid.outer.from",
			"0.2 rounds to 0 (accepted: whole numbers ≥ 1)"},
		// The inner axis keeps its own checks with an outer axis present.
		{"inner features above dim", pieces{data: genNoNTrain, grid: "[grid]\nparam = \"features\"\nvalues = [10, 60] #<\n[grid.outer]\nparam = \"n_train\"\nvalues = [10]\n"}, "grid.values",
			"60 features exceed dim = 50"},
	}
	checkErrorCases(t, tests)
}

func TestOuterCSVAbovePool(t *testing.T) {
	// greenhouse.csv has 12 rows; n_test = 3 leaves 9 to draw from.
	src := csvSpec("file = \"greenhouse.csv\"\ntarget = \"yield\"\nn_test = 3\n",
		featGrid[:len(featGrid)-len("values = [10, 20]\n")]+"values = [1, 2]\n[grid.outer]\nparam = \"n_train\"\nvalues = [5, 10] #<\n")
	p := writeSpec(t, src)
	_, err := Load(p)
	var e *Error
	if !errors.As(err, &e) || e.Key != "grid.outer.values" || e.Line != markedLine(src) || !strings.Contains(e.Msg, "n_train = 10 exceeds the 9 training rows") {
		t.Errorf("Load() = %v, want grid.outer.values at line %d: n_train = 10 exceeds the 9 training rows", err, markedLine(src))
	}
}

// TestOuterHash: the outer axis enters the spec hash; a one-axis spec hashes
// without any outer line, as before the outer axis existed.
func TestOuterHash(t *testing.T) {
	one := mustParse(t, pieces{}.src())
	if strings.Contains(one.HashInputs(), "outer") || strings.Contains(one.DataKeyInputs(), "outer") {
		t.Errorf("a one-axis spec hashes outer lines:\n%s", one.HashInputs())
	}
	src := func(outerVals string) string {
		return pieces{data: genNoNTrain, grid: featGrid + "[grid.outer]\nparam = \"n_train\"\nvalues = " + outerVals + "\n"}.src()
	}
	a, b := mustParse(t, src("[20, 40]")), mustParse(t, src("[20, 41]"))
	if a.Hash() == b.Hash() {
		t.Errorf("Hash ignores the outer values")
	}
	if !strings.Contains(a.HashInputs(), "grid.outer.param \"n_train\"\n") {
		t.Errorf("HashInputs() lacks the outer param:\n%s", a.HashInputs())
	}
	lam := mustParse(t, pieces{model: ridgeNoLam, grid: featGrid + "[grid.outer]\nparam = \"lambda\"\nvalues = [20, 40]\n"}.src())
	if lam.Hash() == a.Hash() || lam.Hash() == one.Hash() {
		t.Errorf("Hash does not separate outer params")
	}
}

// TestAt: a slice of a two-axis spec is the one-axis spec of the same
// setting, down to the cache keys, so the cache serves both.
func TestAt(t *testing.T) {
	two := mustParse(t, pieces{data: genNoNTrain,
		model: "[[model]]\nfamily = \"least-squares\"\n[[model]]\nfamily = \"ridge\"\nlambda = 0.1\n",
		grid:  featGrid + "[grid.outer]\nparam = \"n_train\"\nvalues = [20, 40]\n"}.src())
	for _, n := range []string{"20", "40"} {
		one := mustParse(t, pieces{
			data:  "[data]\nsource = \"linear-gaussian\"\nn_train = " + n + "\ndim = 50\nnoise = { sd = 0.5 }\n",
			model: "[[model]]\nfamily = \"least-squares\"\n[[model]]\nfamily = \"ridge\"\nlambda = 0.1\n",
			grid:  featGrid}.src())
		sl := two.At(float64(one.Data.NTrain))
		if !reflect.DeepEqual(sl, one) {
			t.Errorf("At(%s) =\n%+v\nwant\n%+v", n, sl, one)
		}
		if sl.Hash() != one.Hash() || sl.DataKey() != one.DataKey() {
			t.Errorf("At(%s): hash or data key differ from the one-axis spec", n)
		}
	}
	if two.Grid.Outer == nil || two.Data.NTrain != 40 {
		t.Errorf("At changed its receiver")
	}

	lam := mustParse(t, pieces{model: ridgeNoLam, grid: featGrid + "[grid.outer]\nparam = \"lambda\"\nvalues = [0.5, 2]\n"}.src())
	sl := lam.At(2)
	one := mustParse(t, pieces{model: "[[model]]\nfamily = \"ridge\"\nlambda = 2\nlabel = \"ridge\"\n"}.src())
	if !reflect.DeepEqual(sl, one) {
		t.Errorf("At(2) of an outer lambda =\n%+v\nwant\n%+v", sl, one)
	}
	if ModelKey(sl.Models[0], sl.Grid.Param) != ModelKey(one.Models[0], one.Grid.Param) || sl.DataKey() != lam.DataKey() {
		t.Errorf("At(2): model or data key differ from the one-axis spec")
	}
	if lam.Models[0].Lambda != 0 {
		t.Errorf("At changed its receiver's models")
	}
	// A slice is a valid spec: its canonical form parses back to it.
	back := mustParse(t, sl.Canonical())
	if !reflect.DeepEqual(back, sl) {
		t.Errorf("Parse(At(2).Canonical()) =\n%+v\nwant\n%+v", back, sl)
	}
}

// An outer knob that is a parameter of the model family (here the number
// of random features, on an inner penalty grid): each slice sets it as the
// one-axis spec would, and the default label leaves it out.
func TestOuterFamilyParam(t *testing.T) {
	rf := "[[model]]\nfamily = \"random-features\"\nscale = 2\n"
	two := mustParse(t, pieces{model: rf, grid: "[grid]\nparam = \"lambda\"\nvalues = [0, 0.1]\n[grid.outer]\nparam = \"features\"\nvalues = [40, 10]\n"}.src())
	if got := two.Models[0].Label; strings.Contains(got, "features=") || strings.Contains(got, "λ") {
		t.Errorf("default label %q names a grid param", got)
	}
	if _, ok := two.Models[0].Params["features"]; ok {
		t.Errorf("the outer knob is stored as a model parameter: %v", two.Models[0].Params)
	}
	if strings.Contains(two.Canonical(), "\nfeatures = ") {
		t.Errorf("Canonical() writes the outer knob in [[model]]:\n%s", two.Canonical())
	}
	one := mustParse(t, pieces{model: rf + "features = 40\nlabel = " + tomlString(two.Models[0].Label) + "\n",
		grid: "[grid]\nparam = \"lambda\"\nvalues = [0, 0.1]\n"}.src())
	sl := two.At(40)
	if !reflect.DeepEqual(sl, one) {
		t.Errorf("At(40) =\n%+v\nwant\n%+v", sl, one)
	}
	if ModelKey(sl.Models[0], sl.Grid.Param) != ModelKey(one.Models[0], one.Grid.Param) {
		t.Errorf("At(40): model key differs from the one-axis spec's")
	}
	if two.At(10).Models[0].Params["features"] != 10 || sl.Models[0].Params["features"] != 40 {
		t.Errorf("slices share their parameters")
	}
	back := mustParse(t, two.Canonical())
	if !reflect.DeepEqual(back, two) || back.Hash() != two.Hash() {
		t.Errorf("Parse(Canonical()) of an outer family parameter does not round-trip:\n%s", two.Canonical())
	}
}
