package spec

import (
	"reflect"
	"strings"
	"testing"
)

const (
	curveOK   = "[data]\nsource = \"curve\"\nn_train = 20\nshape = { kind = \"sine\", frequency = 1 }\nnoise = { sd = 0.5 }\n"
	teacherOK = "[data]\nsource = \"teacher\"\nn_train = 20\ndim = 30\nteacher = { kind = \"single-index\", link = \"relu\" }\nnoise = { sd = 0.5 }\n"
	oneFeat   = "[grid]\nparam = \"features\"\nvalues = [1]\n"
)

func TestNonlinearDefaults(t *testing.T) {
	c := mustParse(t, pieces{data: curveOK, grid: oneFeat}.src()).Data
	want := Data{
		Source: SourceCurve, NTrain: 20, NTest: DefaultCurveNodes, Dim: 1,
		Inputs: Inputs{Kind: InputsUniform, Low: -1, High: 1},
		Shape:  Shape{Kind: ShapeSine, Amplitude: 1, Frequency: 1},
		Noise:  Noise{Kind: NoiseGaussian, SD: 0.5},
	}
	if !reflect.DeepEqual(c, want) {
		t.Errorf("Parse(minimal curve).Data =\n%+v\nwant\n%+v", c, want)
	}
	g := mustParse(t, pieces{data: curveOK + "inputs = { kind = \"gaussian\" }\n", grid: oneFeat}.src()).Data.Inputs
	if g != (Inputs{Kind: InputsGaussian, SD: 1}) {
		t.Errorf("curve gaussian inputs default to %+v, want mean 0, sd 1", g)
	}
	f := mustParse(t, pieces{data: strings.Replace(curveOK, `{ kind = "sine", frequency = 1 }`, `{ kind = "fourier", frequencies = [1, 3], sin = [1, 0.5] }`, 1), grid: oneFeat}.src()).Data.Shape
	if !reflect.DeepEqual(f.Cos, []float64{0, 0}) || !reflect.DeepEqual(f.Sin, []float64{1, 0.5}) {
		t.Errorf("fourier amplitudes: cos %v sin %v, want [0 0] and [1 0.5]", f.Cos, f.Sin)
	}

	d := mustParse(t, pieces{data: teacherOK}.src()).Data
	wantT := Data{
		Source: SourceTeacher, NTrain: 20, NTest: DefaultTeacherTests, Dim: 30,
		Inputs:  Inputs{Kind: InputsGaussian},
		Teacher: Teacher{Kind: TeacherSingleIndex, Link: LinkReLU},
		Noise:   Noise{Kind: NoiseGaussian, SD: 0.5},
	}
	if !reflect.DeepEqual(d, wantT) {
		t.Errorf("Parse(minimal teacher).Data =\n%+v\nwant\n%+v", d, wantT)
	}
}

// TestNonlinearRoundTrip: Parse(Canonical()) gives back the same spec and
// hashes for every input law, shape and teacher kind.
func TestNonlinearRoundTrip(t *testing.T) {
	curve := func(extra string) string {
		return "[data]\nsource = \"curve\"\nn_train = 30\nnoise = { kind = \"student-t\", sd = 0.3, df = 4 }\n" + extra
	}
	teacher := func(extra string) string {
		return "[data]\nsource = \"teacher\"\nn_train = 30\ndim = 12\nnoise = { sd = 0.1 }\n" + extra
	}
	specs := map[string]string{
		"curve sine":       curve("shape = { kind = \"sine\", amplitude = 2, frequency = 1.5, phase = 0.25 }\ninputs = { kind = \"uniform\", low = 0, high = 3 }\n"),
		"curve step":       curve("shape = { kind = \"step\", at = 0.1, left = -1, right = 2 }\ncorrupt = 0.2\nn_test = 500\n"),
		"curve polynomial": curve("shape = { kind = \"polynomial\", coefficients = [1, 0, -3, 0.5] }\ninputs = { kind = \"gaussian\", mean = 1, sd = 2 }\n"),
		"curve fourier":    curve("shape = { kind = \"fourier\", frequencies = [1, 2.5], cos = [0.5, 0], sin = [1, -0.25] }\n"),
		"teacher relu":     teacher("teacher = { kind = \"single-index\", link = \"he3\" }\ninputs = { kind = \"sphere\" }\ncorrupt = 0.05\n"),
		"teacher two":      teacher("teacher = { kind = \"two-layer\", width = 40 }\nn_test = 300\n"),
	}
	for name, data := range specs {
		t.Run(name, func(t *testing.T) {
			grid := oneFeat
			if strings.Contains(data, "teacher") {
				grid = "[grid]\nparam = \"n_train\"\nvalues = [10, 30]\n"
				data = strings.Replace(data, "n_train = 30\n", "", 1)
			}
			s := mustParse(t, pieces{data: data, grid: grid}.src())
			checkRoundTrip(t, s)
		})
	}
}

// TestNonlinearDataKey: every key that changes the distribution changes
// DataKey (the cache trusts it).
func TestNonlinearDataKey(t *testing.T) {
	key := func(data string) string {
		t.Helper()
		return mustParse(t, pieces{data: data, grid: oneFeat}.src()).DataKey()
	}
	base := key(curveOK)
	for _, v := range []string{
		strings.Replace(curveOK, "frequency = 1", "frequency = 2", 1),
		strings.Replace(curveOK, "frequency = 1", "frequency = 1, phase = 0.1", 1),
		strings.Replace(curveOK, "frequency = 1", "frequency = 1, amplitude = 3", 1),
		curveOK + "inputs = { kind = \"uniform\", low = -2 }\n",
		curveOK + "inputs = { kind = \"uniform\", high = 2 }\n",
		curveOK + "inputs = { kind = \"gaussian\" }\n",
		curveOK + "inputs = { kind = \"gaussian\", mean = 0.5 }\n",
		curveOK + "corrupt = 0.1\n",
		curveOK + "n_test = 100\n",
		strings.Replace(curveOK, "sd = 0.5", "sd = 0.4", 1),
	} {
		if key(v) == base {
			t.Errorf("DataKey unchanged by\n%s", v)
		}
	}
	stepKey := func(s string) string {
		return key(strings.Replace(curveOK, `{ kind = "sine", frequency = 1 }`, s, 1))
	}
	steps := []string{`{ kind = "step", at = 0, left = 0, right = 1 }`, `{ kind = "step", at = 0.5, left = 0, right = 1 }`,
		`{ kind = "step", at = 0, left = 2, right = 1 }`, `{ kind = "step", at = 0, left = 0, right = 3 }`,
		`{ kind = "polynomial", coefficients = [0, 1] }`, `{ kind = "polynomial", coefficients = [0, 1, 0] }`,
		`{ kind = "fourier", frequencies = [1], cos = [1] }`, `{ kind = "fourier", frequencies = [1], sin = [1] }`,
		`{ kind = "fourier", frequencies = [2], cos = [1] }`}
	seen := map[string]string{}
	for _, s := range steps {
		k := stepKey(s)
		if prev, dup := seen[k]; dup {
			t.Errorf("shapes %s and %s share a DataKey", prev, s)
		}
		seen[k] = s
	}
	tk := func(data string) string { return mustParse(t, pieces{data: data}.src()).DataKey() }
	tbase := tk(teacherOK)
	for _, v := range []string{
		strings.Replace(teacherOK, "relu", "tanh", 1),
		strings.Replace(teacherOK, `{ kind = "single-index", link = "relu" }`, `{ kind = "two-layer", width = 3 }`, 1),
		strings.Replace(teacherOK, "dim = 30", "dim = 31", 1),
		teacherOK + "inputs = { kind = \"sphere\" }\n",
		teacherOK + "corrupt = 0.3\n",
	} {
		if tk(v) == tbase {
			t.Errorf("DataKey unchanged by\n%s", v)
		}
	}
	if tk(strings.Replace(teacherOK, `{ kind = "single-index", link = "relu" }`, `{ kind = "two-layer", width = 3 }`, 1)) ==
		tk(strings.Replace(teacherOK, `{ kind = "single-index", link = "relu" }`, `{ kind = "two-layer", width = 4 }`, 1)) {
		t.Errorf("teacher width does not enter DataKey")
	}
}

func TestNonlinearErrors(t *testing.T) {
	curve := func(lines string) string {
		return "[data]\nsource = \"curve\"\nn_train = 20\nnoise = { sd = 0.5 }\n" + lines + "\n"
	}
	sine := "shape = { kind = \"sine\", frequency = 1 }\n"
	teacher := func(lines string) string {
		return "[data]\nsource = \"teacher\"\nn_train = 20\nnoise = { sd = 0.5 }\n" + lines + "\n"
	}
	relu := "teacher = { kind = \"single-index\", link = \"relu\" }\n"
	tests := []errorCase{
		{"curve dim", pieces{data: curve(sine + "dim = 2 #<"), grid: oneFeat}, "data.dim", `not a key of source "curve" (keys for it: source, n_train, n_test, inputs, shape, noise, corrupt)`},
		{"curve truth", pieces{data: curve(sine + "truth = \"fixed\" #<"), grid: oneFeat}, "data.truth", `not a key of source "curve"`},
		{"curve no shape", pieces{data: "[data] #<\nsource = \"curve\"\nn_train = 20\nnoise = { sd = 0.5 }\n", grid: oneFeat}, "data.shape", "required key is missing"},
		{"curve shape no kind", pieces{data: curve("shape = { frequency = 1 } #<"), grid: oneFeat}, "data.shape.kind", `required key is missing (accepted: "sine", "step", "polynomial", "fourier")`},
		{"curve shape kind", pieces{data: curve("shape = { kind = \"square\" } #<"), grid: oneFeat}, "data.shape.kind", `unknown kind "square"`},
		{"sine no frequency", pieces{data: curve("shape = { kind = \"sine\" } #<"), grid: oneFeat}, "data.shape.frequency", "required key is missing"},
		{"sine key of step", pieces{data: curve("shape = { kind = \"sine\", frequency = 1, at = 0 } #<"), grid: oneFeat}, "data.shape.at", `not a key of shape kind "sine" (keys for it: kind, amplitude, frequency, phase)`},
		{"shape unknown key", pieces{data: curve("shape = { kind = \"sine\", freq = 1 } #<"), grid: oneFeat}, "data.shape.freq", "unknown key (known: kind, amplitude, frequency, phase, at, left, right, coefficients, frequencies, cos, sin)"},
		{"step outside", pieces{data: curve("shape = { kind = \"step\", at = 2, left = 0, right = 1 } #<"), grid: oneFeat}, "data.shape.at", "outside the input interval (-1, 1)"},
		{"step no right", pieces{data: curve("shape = { kind = \"step\", at = 0, left = 0 } #<"), grid: oneFeat}, "data.shape.right", "required key is missing"},
		{"polynomial empty", pieces{data: curve("shape = { kind = \"polynomial\", coefficients = [] } #<"), grid: oneFeat}, "data.shape.coefficients", "empty array"},
		{"fourier lengths", pieces{data: curve("shape = { kind = \"fourier\", frequencies = [1, 2], cos = [1] } #<"), grid: oneFeat}, "data.shape.cos", "has 1 amplitudes (accepted: one per frequency, 2)"},
		{"fourier no amplitudes", pieces{data: curve("shape = { kind = \"fourier\", frequencies = [1, 2] } #<"), grid: oneFeat}, "data.shape.cos", "required key is missing (accepted: cos and/or sin"},
		{"low ≥ high", pieces{data: curve(sine + "inputs = { kind = \"uniform\", low = 1, high = 1 } #<"), grid: oneFeat}, "data.inputs.high", "is empty (accepted: low < high"},
		{"low above default high", pieces{data: curve(sine + "inputs = { low = 3 } #<"), grid: oneFeat}, "data.inputs.low", "[3, 1] is empty"},
		{"input sd", pieces{data: curve(sine + "inputs = { kind = \"gaussian\", sd = 0 } #<"), grid: oneFeat}, "data.inputs.sd", "got 0 (accepted: a number > 0"},
		{"input sd on uniform", pieces{data: curve(sine + "inputs = { sd = 1 } #<"), grid: oneFeat}, "data.inputs.sd", `not a key of inputs kind "uniform"`},
		{"input sphere on curve", pieces{data: curve(sine + "inputs = { kind = \"sphere\" } #<"), grid: oneFeat}, "data.inputs.kind", `unknown kind "sphere" (accepted: "uniform", "gaussian")`},
		{"noise sd", pieces{data: "[data]\nsource = \"curve\"\nn_train = 20\n" + sine + "noise = { sd = -1 } #<\n", grid: oneFeat}, "data.noise.sd", "got -1 (accepted: a number ≥ 0)"},
		{"noise df", pieces{data: "[data]\nsource = \"curve\"\nn_train = 20\n" + sine + "noise = { kind = \"student-t\", sd = 1, df = 2 } #<\n", grid: oneFeat}, "data.noise.df", "a number > 2"},
		{"corrupt one", pieces{data: curve(sine + "corrupt = 1 #<"), grid: oneFeat}, "data.corrupt", "got 1 (accepted: a number in [0, 1)"},
		{"corrupt negative", pieces{data: curve(sine + "corrupt = -0.1 #<"), grid: oneFeat}, "data.corrupt", "got -0.1"},
		{"curve n_test", pieces{data: curve(sine + "n_test = 1 #<"), grid: oneFeat}, "data.n_test", "got 1 (accepted: an integer ≥ 2, the number of quadrature nodes)"},
		{"curve features", pieces{data: curve(sine), grid: "[grid]\nparam = \"features\"\nvalues = [1, 2] #<\n"}, "grid.values", "exceed dim = 1"},

		{"teacher no dim", pieces{data: "[data] #<\nsource = \"teacher\"\nn_train = 20\nnoise = { sd = 0.5 }\n" + relu}, "data.dim", "required key is missing"},
		{"teacher spectrum", pieces{data: teacher(relu + "dim = 3\nspectrum = { kind = \"isotropic\" } #<")}, "data.spectrum", `not a key of source "teacher"`},
		{"teacher no teacher", pieces{data: "[data] #<\nsource = \"teacher\"\nn_train = 20\ndim = 3\nnoise = { sd = 0.5 }\n"}, "data.teacher", "required key is missing"},
		{"teacher link", pieces{data: teacher("dim = 3\nteacher = { kind = \"single-index\", link = \"sigmoid\" } #<")}, "data.teacher.link", `unknown link "sigmoid" (accepted: "relu", "tanh", "he2", "he3")`},
		{"teacher no link", pieces{data: teacher("dim = 3\nteacher = { kind = \"single-index\" } #<")}, "data.teacher.link", "required key is missing"},
		{"teacher width 0", pieces{data: teacher("dim = 3\nteacher = { kind = \"two-layer\", width = 0 } #<")}, "data.teacher.width", "got 0 (accepted: an integer ≥ 1"},
		{"teacher width float", pieces{data: teacher("dim = 3\nteacher = { kind = \"two-layer\", width = 2.5 } #<")}, "data.teacher.width", "has type float"},
		{"teacher width on single", pieces{data: teacher("dim = 3\nteacher = { kind = \"single-index\", link = \"relu\", width = 3 } #<")}, "data.teacher.width", `not a key of teacher kind "single-index" (keys for it: kind, link)`},
		{"teacher input mean", pieces{data: teacher(relu + "dim = 3\ninputs = { kind = \"gaussian\", mean = 1 } #<")}, "data.inputs.mean", "unknown key (known: kind)"},
		{"teacher inputs uniform", pieces{data: teacher(relu + "dim = 3\ninputs = { kind = \"uniform\" } #<")}, "data.inputs.kind", `unknown kind "uniform" (accepted: "gaussian", "sphere")`},
		{"teacher n_test", pieces{data: teacher(relu + "dim = 3\nn_test = 0 #<")}, "data.n_test", "got 0 (accepted: an integer ≥ 2"},
		{"shape on teacher", pieces{data: teacher(relu + "dim = 3\nshape = { kind = \"sine\", frequency = 1 } #<")}, "data.shape", `not a key of source "teacher"`},
	}
	checkErrorCases(t, tests)
}
