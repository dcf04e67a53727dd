package spec

import (
	"maps"
	"strings"
	"testing"
)

const hashBase = `name = "h"
about = "hash test"

[data]
source = "linear-gaussian"
n_train = 20
dim = 50
spectrum = { kind = "power-law", exponent = 1 }
noise = { sd = 0.5 }

[[model]]
family = "ridge"
lambda = 0.1

[grid]
param = "features"
values = [10, 20, 50]

[seeds]
count = 5
`

func TestHashStable(t *testing.T) {
	base := mustParse(t, hashBase)
	same := map[string]string{
		"keys reordered, comments, dotted keys": `# a comment
about = "hash test"   # trailing comment
name = "h"

[seeds]
count = 5

[grid]
values = [50, 10, 20, 20]
param = "features"

[[model]]
lambda = 0.1
family = "ridge"

[data]
noise.sd = 0.5
spectrum.exponent = 1.0
spectrum.kind = "power-law"
dim = 50
n_train = 20
source = "linear-gaussian"
`,
		"defaults written out, range grid": `name = "h"
about = "hash test"
[data]
source = "linear-gaussian"
n_train = 20
n_test = 1000
dim = 50
truth = "fixed"
[data.spectrum]
kind = "power-law"
exponent = 1
[data.signal]
kind = "sphere"
norm = 1
[data.noise]
kind = "gaussian"
sd = 5e-1
[[model]]
family = "ridge"
label = "ridge λ=0.1"
lambda = 0.1
intercept = false
[grid]
param = "features"
from = 10
to = 50
points = 2
spacing = "linear"
include = [20]
[seeds]
count = 5
start = 1
truth = 0
`,
		"canonical": base.Canonical(),
		// Presentation only: same numbers, same hash and cache keys.
		"tables style": hashBase + "[tables]\nse_style = \"plus-minus\"\n",
	}
	for name, src := range same {
		s := mustParse(t, src)
		if s.Hash() != base.Hash() {
			t.Errorf("%s: Hash() differs from the base spec\n%s\nvs\n%s", name, s.HashInputs(), base.HashInputs())
		}
		if s.DataKey() != base.DataKey() {
			t.Errorf("%s: DataKey() differs from the base spec", name)
		}
	}

	type change struct {
		name, from, to string
		dataKey        bool // whether DataKey must change too
	}
	changes := []change{
		{"name", `name = "h"`, `name = "h2"`, false},
		{"about", `about = "hash test"`, `about = "other"`, false},
		{"label", "lambda = 0.1\n", "lambda = 0.1\nlabel = \"r\"\n", false},
		{"lambda", "lambda = 0.1", "lambda = 0.2", false},
		{"grid value", "values = [10, 20, 50]", "values = [10, 20, 40]", false},
		{"seed count", "count = 5", "count = 6", false},
		{"seed start", "count = 5", "count = 5\nstart = 2", false},
		{"seed truth", "count = 5", "count = 5\ntruth = 1", true},
		{"noise sd", "sd = 0.5", "sd = 0.25", true},
		{"exponent", "exponent = 1", "exponent = 1.0000000000000002", true},
		{"n_train", "n_train = 20", "n_train = 21", true},
		{"truth mode", "dim = 50", "dim = 50\ntruth = \"per-seed\"", true},
	}
	for _, c := range changes {
		if !strings.Contains(hashBase, c.from) {
			t.Fatalf("%s: base lacks %q", c.name, c.from)
		}
		s := mustParse(t, strings.Replace(hashBase, c.from, c.to, 1))
		if s.Hash() == base.Hash() {
			t.Errorf("%s changed but Hash() did not", c.name)
		}
		if got := s.DataKey() != base.DataKey(); got != c.dataKey {
			t.Errorf("%s changed: DataKey changed = %v, want %v", c.name, got, c.dataKey)
		}
	}
}

func TestDataKeyNestedNTrain(t *testing.T) {
	src := func(values string) string {
		return pieces{data: "[data]\nsource = \"linear-gaussian\"\ndim = 5\nnoise = { sd = 1 }\n",
			grid: "[grid]\nparam = \"n_train\"\nvalues = " + values + "\n"}.src()
	}
	a, b := mustParse(t, src("[10, 20]")), mustParse(t, src("[10, 20, 40]"))
	if a.DataKey() != b.DataKey() {
		t.Errorf("DataKey changes when an n_train grid grows:\n%s\nvs\n%s", a.DataKeyInputs(), b.DataKeyInputs())
	}
	if !strings.Contains(a.DataKeyInputs(), `data.n_train "grid"`) {
		t.Errorf("DataKeyInputs() = %s, want n_train written as grid", a.DataKeyInputs())
	}
	if a.Hash() == b.Hash() {
		t.Errorf("Hash does not change when the n_train grid grows")
	}
}

func TestModelKey(t *testing.T) {
	r := Model{Family: FamilyRidge, Label: "a", Lambda: 0.1}
	relabelled := r
	relabelled.Label = "b"
	if ModelKey(r, ParamFeatures) != ModelKey(relabelled, ParamFeatures) {
		t.Errorf("ModelKey depends on the label")
	}
	other := r
	other.Lambda = 0.2
	if ModelKey(r, ParamFeatures) == ModelKey(other, ParamFeatures) {
		t.Errorf("ModelKey ignores lambda on a features grid")
	}
	if ModelKey(r, ParamLambda) != ModelKey(other, ParamLambda) {
		t.Errorf("ModelKey depends on lambda on a lambda grid")
	}
	icpt := r
	icpt.Intercept = true
	if ModelKey(r, ParamFeatures) == ModelKey(icpt, ParamFeatures) {
		t.Errorf("ModelKey ignores the intercept")
	}
	ls := Model{Family: FamilyLeastSquares}
	if ModelKey(ls, ParamFeatures) == ModelKey(Model{Family: FamilyRidge}, ParamLambda) {
		t.Errorf("ModelKey does not separate families")
	}
	if in := ModelKeyInputs(r, ParamFeatures); !strings.Contains(in, Engine) || strings.Contains(in, `"a"`) {
		t.Errorf("ModelKeyInputs() = %s, want the engine salt and no label", in)
	}
	if len(ModelKey(r, ParamFeatures)) != 64 {
		t.Errorf("ModelKey is not a hex SHA-256")
	}
}

// TestModelKeyFamilyParams checks that every written parameter and choice
// of a family enters its model key, and the grid param does not.
func TestModelKeyFamilyParams(t *testing.T) {
	net := Model{Family: FamilyTwoLayer, Params: map[string]float64{
		"width": 10, "steps": 100, "step_size": 0.05, "init_scale": 1, "batch": 0}}
	for _, k := range []string{"width", "steps", "step_size", "init_scale", "batch"} {
		other := net
		other.Params = maps.Clone(net.Params)
		other.Params[k]++
		if ModelKey(net, ParamNTrain) == ModelKey(other, ParamNTrain) {
			t.Errorf("ModelKey ignores %s", k)
		}
		if k == "width" && ModelKey(net, ParamWidth) != ModelKey(other, ParamWidth) {
			t.Errorf("ModelKey depends on width on a width grid")
		}
	}
	rf := Model{Family: FamilyRandomFeatures, Params: map[string]float64{"features": 5, "scale": 1},
		Options: map[string]string{"activation": "relu"}}
	fourier := rf
	fourier.Options = map[string]string{"activation": "fourier"}
	if ModelKey(rf, ParamLambda) == ModelKey(fourier, ParamLambda) {
		t.Errorf("ModelKey ignores the activation")
	}
}
