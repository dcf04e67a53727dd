package spec

import (
	"errors"
	"strings"
	"testing"
)

// Pieces of a small valid spec; a test case replaces some of them. "-"
// leaves a piece out.
const (
	topOK   = "name = \"t\"\n"
	dataOK  = "[data]\nsource = \"linear-gaussian\"\nn_train = 20\ndim = 50\nnoise = { sd = 0.5 }\n"
	modelOK = "[[model]]\nfamily = \"least-squares\"\n"
	gridOK  = "[grid]\nparam = \"features\"\nvalues = [10, 20]\n"
	seedsOK = "[seeds]\ncount = 3\n"
	csvOK   = "[data]\nsource = \"csv\"\nn_train = 20\nfile = \"g.csv\"\ntarget = \"y\"\n"
	dim3    = "[data]\nsource = \"linear-gaussian\"\nn_train = 20\ndim = 3\nnoise = { sd = 0.5 }\n"
)

type pieces struct{ top, data, model, grid, seeds string }

func (p pieces) src() string {
	var b strings.Builder
	for _, s := range []struct{ got, def string }{
		{p.top, topOK}, {p.data, dataOK}, {p.model, modelOK}, {p.grid, gridOK}, {p.seeds, seedsOK},
	} {
		switch s.got {
		case "":
			b.WriteString(s.def)
		case "-":
		default:
			b.WriteString(s.got)
		}
		b.WriteString("\n")
	}
	return b.String()
}

// markedLine is the 1-based line holding the marker "#<", 0 if none: the
// line an error must name.
func markedLine(src string) int {
	for i, l := range strings.Split(src, "\n") {
		if strings.Contains(l, "#<") {
			return i + 1
		}
	}
	return 0
}

func TestParseValidBase(t *testing.T) {
	for _, p := range []pieces{{}, {data: csvOK}, {data: dim3, grid: "[grid]\nparam = \"lambda\"\nvalues = [0, 1]\n", model: "[[model]]\nfamily = \"ridge\"\n"}} {
		if _, err := Parse("t.toml", []byte(p.src())); err != nil {
			t.Fatalf("Parse(base) = %v, want no error\n%s", err, p.src())
		}
	}
}

func TestParseErrors(t *testing.T) {
	ls := "[[model]]\nfamily = \"least-squares\"\n"
	ridge := "[[model]]\nfamily = \"ridge\"\nlambda = 0.1\n"
	lamGrid := "[grid]\nparam = \"lambda\"\nvalues = [0.1, 1]\n"
	ntGrid := "[grid]\nparam = \"n_train\"\nvalues = [10, 20]\n"
	genNoN := "[data]\nsource = \"linear-gaussian\"\ndim = 50\nnoise = { sd = 0.5 }\n"
	gen := func(extra string) string { return dataOK + extra + "\n" }
	tests := []errorCase{
		// TOML syntax and repeated keys.
		{"syntax", pieces{top: "name = \"t #<\n"}, "name", "TOML syntax"},
		{"duplicate key", pieces{data: gen("n_train = 30 #<")}, "data.n_train", "more than one value for this key"},
		{"duplicate table", pieces{seeds: "[seeds]\ncount = 3\n[seeds] #<\n"}, "seeds", "more than one value"},

		// Type mismatches.
		{"name type", pieces{top: "name = 3 #<\n"}, "name", "has type integer (accepted: a string)"},
		{"n_train string", pieces{data: "[data]\nsource = \"linear-gaussian\"\nn_train = \"200\" #<\ndim = 50\nnoise = { sd = 0.5 }\n"}, "data.n_train", "has type string (accepted: an integer ≥ 1)"},
		{"dim float", pieces{data: "[data]\nsource = \"linear-gaussian\"\nn_train = 20\ndim = 5.5 #<\nnoise = { sd = 0.5 }\n"}, "data.dim", "has type float (accepted: an integer ≥ 1)"},
		{"intercept string", pieces{model: ls + "intercept = \"yes\" #<\n"}, "model[1].intercept", "has type string (accepted: true or false)"},
		{"spectrum string", pieces{data: gen("spectrum = \"isotropic\" #<")}, "data.spectrum", "has type string (accepted: a table, [data.spectrum] or spectrum = { … })"},
		{"grid values string", pieces{grid: "[grid]\nparam = \"features\"\nvalues = \"10\" #<\n"}, "grid.values", "has type string (accepted: an array of numbers: whole numbers ≥ 1)"},
		{"grid value bool", pieces{grid: "[grid]\nparam = \"features\"\nvalues = [10, true] #<\n"}, "grid.values", "element 2 is boolean"},
		{"single model table", pieces{model: "[model] #<\nfamily = \"ridge\"\n"}, "model", "[[model]]"},
		{"datetime", pieces{top: "name = \"t\"\nabout = 1979-05-27 #<\n"}, "about", "has type datetime (accepted: a string)"},
		{"nan", pieces{data: "[data]\nsource = \"linear-gaussian\"\nn_train = 20\ndim = 50\nnoise = { sd = nan } #<\n"}, "data.noise.sd", "a finite number"},

		// Unknown keys.
		{"unknown top", pieces{top: "name = \"t\"\nseed = 1 #<\n"}, "seed", "unknown key (known: name, about, data, model, grid, seeds, tables)"},
		{"unknown data", pieces{data: gen("dimension = 3 #<")}, "data.dimension", "unknown key (known: source, n_train, n_test, dim,"},
		{"unknown model", pieces{model: ls + ridge + "lamda = 3 #<\n"}, "model[2].lamda", "unknown key (known: family, label, lambda, intercept)"},
		{"unknown spectrum", pieces{data: "[data]\nsource = \"linear-gaussian\"\nn_train = 20\ndim = 50\nnoise = { sd = 0.5 }\n[data.spectrum]\nkind = \"power-law\"\nexponant = 1 #<\n"}, "data.spectrum.exponant", "unknown key (known: kind, exponent, spikes, high, low, values)"},
		{"unknown grid", pieces{grid: gridOK + "step = 2 #<\n"}, "grid.step", "unknown key (known: param, values, from, to, points, spacing, include, outer)"},
		{"unknown seeds", pieces{seeds: seedsOK + "first = 2 #<\n"}, "seeds.first", "unknown key (known: count, start, truth, models)"},

		// Keys that do not belong to the chosen kind.
		{"lambda on least-squares", pieces{model: ls + "lambda = 0.1 #<\n"}, "model[1].lambda", `not a key of family "least-squares" (keys for it: family, label, intercept)`},
		{"exponent on isotropic", pieces{data: gen("spectrum = { kind = \"isotropic\", exponent = 1 } #<")}, "data.spectrum.exponent", `not a key of spectrum kind "isotropic" (keys for it: kind)`},
		{"exponent on default kind", pieces{data: gen("spectrum.exponent = 1 #<")}, "data.spectrum.exponent", `spectrum kind "isotropic"`},
		{"file on generator", pieces{data: gen("file = \"x.csv\" #<")}, "data.file", `not a key of source "linear-gaussian" (keys for it: source, n_train, n_test, dim, spectrum, signal, noise, truth)`},
		{"dim on csv", pieces{data: csvOK + "dim = 3 #<\n"}, "data.dim", `not a key of source "csv" (keys for it: source, n_train, n_test, file, target, features, test_fraction, sampling)`},
		{"noise on csv", pieces{data: csvOK + "[data.noise] #<\nsd = 1\n"}, "data.noise", `not a key of source "csv"`},
		{"df on gaussian", pieces{data: "[data]\nsource = \"linear-gaussian\"\nn_train = 20\ndim = 50\nnoise = { sd = 0.5, df = 4 } #<\n"}, "data.noise.df", `not a key of noise kind "gaussian" (keys for it: kind, sd)`},
		{"top on sphere", pieces{data: gen("signal = { top = 3 } #<")}, "data.signal.top", `not a key of signal kind "sphere" (keys for it: kind, norm)`},

		// Missing required keys.
		{"no name", pieces{top: "-"}, "name", "required key is missing (accepted: a string"},
		{"no data", pieces{data: "-"}, "data", "required key is missing (accepted: a [data] table"},
		{"no source", pieces{data: "[data] #<\nn_train = 20\n"}, "data.source", `required key is missing (accepted: "linear-gaussian", "csv", "curve", "teacher")`},
		{"no n_train", pieces{data: "[data] #<\nsource = \"linear-gaussian\"\ndim = 50\nnoise = { sd = 0.5 }\n"}, "data.n_train", "required key is missing (accepted: an integer ≥ 1"},
		{"no dim", pieces{data: "[data] #<\nsource = \"linear-gaussian\"\nn_train = 20\nnoise = { sd = 0.5 }\n"}, "data.dim", "required key is missing (accepted: an integer ≥ 1, the input dimension)"},
		{"no noise", pieces{data: "[data] #<\nsource = \"linear-gaussian\"\nn_train = 20\ndim = 50\n"}, "data.noise", `required key is missing (accepted: a table such as noise = { kind = "gaussian", sd = 0.5 })`},
		{"no sd", pieces{data: "[data]\nsource = \"linear-gaussian\"\nn_train = 20\ndim = 50\nnoise = { kind = \"gaussian\" } #<\n"}, "data.noise.sd", "required key is missing (accepted: a number ≥ 0"},
		{"no file", pieces{data: "[data] #<\nsource = \"csv\"\nn_train = 20\ntarget = \"y\"\n"}, "data.file", "required key is missing (accepted: the CSV path"},
		{"no target", pieces{data: "[data] #<\nsource = \"csv\"\nn_train = 20\nfile = \"g.csv\"\n"}, "data.target", "required key is missing (accepted: the name of the response column)"},
		{"no model", pieces{model: "-"}, "model", "required key is missing (accepted: one or more [[model]] tables"},
		{"no family", pieces{model: "[[model]] #<\nintercept = true\n"}, "model[1].family", `required key is missing (accepted: "least-squares", "ridge", "random-features", "polynomial", "kernel-ridge", "nearest-neighbours", "gradient-descent", "two-layer-net")`},
		{"no lambda", pieces{model: ls + "[[model]] #<\nfamily = \"ridge\"\n"}, "model[2].lambda", "required key is missing (accepted: a number ≥ 0, the ridge penalty)"},
		{"no grid", pieces{grid: "-"}, "grid", "required key is missing (accepted: a [grid] table"},
		{"no param", pieces{grid: "[grid] #<\nvalues = [10]\n"}, "grid.param", `required key is missing (accepted: "features", "lambda", "n_train", "degree", "bandwidth", "neighbours", "steps", "width")`},
		{"no values", pieces{grid: "[grid] #<\nparam = \"features\"\n"}, "grid.values", "required key is missing (accepted: values = [...], or from, to and points)"},
		{"no to", pieces{grid: "[grid] #<\nparam = \"features\"\nfrom = 1\npoints = 3\n"}, "grid.to", "required key is missing (accepted: a number"},
		{"no points", pieces{grid: "[grid] #<\nparam = \"features\"\nfrom = 1\nto = 3\n"}, "grid.points", "required key is missing (accepted: an integer ≥ 1"},
		{"no seeds", pieces{seeds: "-"}, "seeds", "required key is missing (accepted: a [seeds] table with count)"},
		{"no count", pieces{seeds: "[seeds] #<\nstart = 4\n"}, "seeds.count", "required key is missing (accepted: an integer ≥ 2"},
		{"no exponent", pieces{data: gen("spectrum = { kind = \"power-law\" } #<")}, "data.spectrum.exponent", "required key is missing (accepted: a number > 0"},
		{"no spikes", pieces{data: gen("spectrum = { kind = \"spiked\", high = 10, low = 1 } #<")}, "data.spectrum.spikes", "required key is missing (accepted: an integer in 1..49"},
		{"no low", pieces{data: gen("spectrum = { kind = \"spiked\", spikes = 3, high = 10 } #<")}, "data.spectrum.low", "required key is missing (accepted: a number > 0"},
		{"no spectrum values", pieces{data: gen("spectrum = { kind = \"list\" } #<")}, "data.spectrum.values", "required key is missing (accepted: 50 variances > 0"},
		{"no top", pieces{data: gen("signal = { kind = \"top\" } #<")}, "data.signal.top", "required key is missing (accepted: an integer in 1..50"},
		{"no signal values", pieces{data: gen("signal = { kind = \"list\" } #<")}, "data.signal.values", "required key is missing (accepted: 50 numbers"},
		{"no df", pieces{data: "[data]\nsource = \"linear-gaussian\"\nn_train = 20\ndim = 50\nnoise = { kind = \"student-t\", sd = 1 } #<\n"}, "data.noise.df", "required key is missing (accepted: a number > 2"},

		// Impossible values.
		{"bad name", pieces{top: "name = \"a/b\" #<\n"}, "name", "cannot name a folder (accepted: 1 to 100 letters"},
		{"n_train 0", pieces{data: "[data]\nsource = \"linear-gaussian\"\nn_train = 0 #<\ndim = 50\nnoise = { sd = 0.5 }\n"}, "data.n_train", "got 0 (accepted: an integer ≥ 1)"},
		{"n_test zero", pieces{data: gen("n_test = 0 #<")}, "data.n_test", "got 0 (accepted: an integer ≥ 1, the test inputs drawn)"},
		{"dim 0", pieces{data: "[data]\nsource = \"linear-gaussian\"\nn_train = 20\ndim = 0 #<\nnoise = { sd = 0.5 }\n"}, "data.dim", "got 0 (accepted: an integer ≥ 1)"},
		{"features 0", pieces{grid: "[grid]\nparam = \"features\"\nvalues = [0, 10] #<\n"}, "grid.values", "element 1 is 0 (accepted: whole numbers ≥ 1)"},
		{"features fractional", pieces{grid: "[grid]\nparam = \"features\"\nvalues = [10.5] #<\n"}, "grid.values", "element 1 is 10.5 (accepted: whole numbers ≥ 1)"},
		{"features above dim", pieces{grid: "[grid]\nparam = \"features\"\nvalues = [10, 60] #<\n"}, "grid.values", "60 features exceed dim = 50 (accepted: whole numbers in 1..50)"},
		{"features to above dim", pieces{grid: "[grid]\nparam = \"features\"\nfrom = 1\nto = 80 #<\npoints = 4\n"}, "grid.to", "80 features exceed dim = 50"},
		{"features include above dim", pieces{grid: "[grid]\nparam = \"features\"\nfrom = 1\nto = 40\npoints = 4\ninclude = [70] #<\n"}, "grid.include", "70 features exceed dim = 50"},
		{"features above listed csv columns", pieces{data: csvOK + "features = [\"a\", \"b\"]\n", grid: "[grid]\nparam = \"features\"\nvalues = [1, 3] #<\n"}, "grid.values", "3 features exceed the number of feature columns = 2"},
		{"features from rounds to 0", pieces{grid: "[grid]\nparam = \"features\"\nfrom = 0.4 #<\nto = 10\npoints = 4\n"}, "grid.from", "0.4 rounds to 0 (accepted: whole numbers ≥ 1)"},
		{"negative lambda", pieces{model: "[[model]]\nfamily = \"ridge\"\nlambda = -1 #<\n"}, "model[1].lambda", "got -1 (accepted: a number ≥ 0, the ridge penalty)"},
		{"negative lambda grid", pieces{model: "[[model]]\nfamily = \"ridge\"\n", grid: "[grid]\nparam = \"lambda\"\nvalues = [-0.5, 1] #<\n"}, "grid.values", "element 1 is -0.5 (accepted: penalties ≥ 0)"},
		{"lambda grid with least-squares", pieces{model: "[[model]]\nfamily = \"ridge\"\n[[model]]\nfamily = \"least-squares\" #<\n", grid: lamGrid}, "model[2].family", `"least-squares" has no knob lambda, the grid param (accepted: a family whose knobs include lambda; "least-squares" takes features, n_train)`},
		{"width grid with k-NN", pieces{model: "[[model]]\nfamily = \"nearest-neighbours\" #<\n", grid: "[grid]\nparam = \"width\"\nvalues = [1]\n"}, "model[1].family", `"nearest-neighbours" has no knob width`},
		{"grid param given in model", pieces{model: "[[model]]\nfamily = \"two-layer-net\"\nsteps = 10\nwidth = 5 #<\n", grid: "[grid]\nparam = \"width\"\nvalues = [1]\n"}, "model[1].width", `the grid param is width, which sets it`},
		{"missing family parameter", pieces{model: "[[model]] #<\nfamily = \"kernel-ridge\"\n", grid: lamGrid}, "model[1].bandwidth", `required key is missing (accepted: a number > 0)`},
		{"zero bandwidth", pieces{model: "[[model]]\nfamily = \"kernel-ridge\"\nbandwidth = 0 #<\n", grid: lamGrid}, "model[1].bandwidth", `got 0 (accepted: a number > 0)`},
		{"negative width", pieces{model: "[[model]]\nfamily = \"two-layer-net\"\nwidth = -3 #<\n", grid: "[grid]\nparam = \"steps\"\nvalues = [1]\n"}, "model[1].width", `got -3 (accepted: an integer ≥ 1`},
		{"fractional degree", pieces{model: "[[model]]\nfamily = \"polynomial\"\ndegree = 2.5 #<\n", grid: "[grid]\nparam = \"lambda\"\nvalues = [1]\n"}, "model[1].degree", `got 2.5`},
		{"unknown activation", pieces{model: "[[model]]\nfamily = \"random-features\"\nactivation = \"tanh\" #<\n"}, "model[1].activation", `unknown activation "tanh" (accepted: "relu", "fourier")`},
		{"key of another family", pieces{model: "[[model]]\nfamily = \"ridge\"\nlambda = 1\nwidth = 3 #<\n"}, "model[1].width", `not a key of family "ridge" (keys for it: family, label, lambda, intercept)`},
		{"polynomial interval", pieces{model: "[[model]]\nfamily = \"polynomial\"\nlow = 1\nhigh = 0 #<\n", grid: "[grid]\nparam = \"degree\"\nvalues = [1]\n"}, "model[1].high", `accepted: high > low`},
		{"features past dim with a linear family beside random features", pieces{model: "[[model]]\nfamily = \"random-features\"\n[[model]]\nfamily = \"least-squares\"\n", grid: "[grid]\nparam = \"features\"\nvalues = [10, 400] #<\n"}, "grid.values", `400 features exceed dim = 50`},
		{"polynomial on 50 inputs", pieces{model: "[[model]]\nfamily = \"polynomial\" #<\n", grid: "[grid]\nparam = \"degree\"\nvalues = [1, 2]\n"}, "model[1].family", `polynomial regression takes one input, the data have dim = 50`},
		{"zero model seeds", pieces{seeds: "[seeds]\ncount = 3\nmodels = 0 #<\n"}, "seeds.models", `accepted: an integer ≥ 1`},
		{"lambda grid with model lambda", pieces{model: ridge[:len(ridge)-1] + " #<\n", grid: lamGrid}, "model[1].lambda", "the grid param is lambda, which sets it (accepted: leave lambda out"},
		{"n_train with n_train grid", pieces{data: "[data]\nsource = \"linear-gaussian\"\nn_train = 20 #<\ndim = 50\nnoise = { sd = 0.5 }\n", grid: ntGrid}, "data.n_train", "the grid param is n_train, which sets the training sizes (accepted: leave n_train out of [data])"},
		{"n_train grid zero", pieces{data: genNoN, grid: "[grid]\nparam = \"n_train\"\nvalues = [0, 10] #<\n"}, "grid.values", "element 1 is 0 (accepted: whole numbers ≥ 1)"},
		{"n_train grid fractional", pieces{data: genNoN, grid: "[grid]\nparam = \"n_train\"\nvalues = [2.5] #<\n"}, "grid.values", "element 1 is 2.5 (accepted: whole numbers ≥ 1)"},
		{"empty grid", pieces{grid: "[grid]\nparam = \"features\"\nvalues = [] #<\n"}, "grid.values", "empty array (accepted: one or more numbers"},
		{"values and from", pieces{grid: gridOK + "from = 1 #<\n"}, "grid.from", "given together with values (accepted: either values = [...] or from, to, points"},
		{"values and include", pieces{grid: gridOK + "include = [5] #<\n"}, "grid.include", "given together with values"},
		{"log from 0", pieces{model: "[[model]]\nfamily = \"ridge\"\n", grid: "[grid]\nparam = \"lambda\"\nfrom = 0 #<\nto = 10\npoints = 5\nspacing = \"log\"\n"}, "grid.from", `0 with log spacing (accepted: from > 0, or spacing = "linear")`},
		{"points 0", pieces{grid: "[grid]\nparam = \"features\"\nfrom = 1\nto = 10\npoints = 0 #<\n"}, "grid.points", "got 0 (accepted: an integer in 1..10000)"},
		{"points 1 range", pieces{grid: "[grid]\nparam = \"features\"\nfrom = 1\nto = 10\npoints = 1 #<\n"}, "grid.points", "1 point cannot span 1..10 (accepted: points ≥ 2, or from = to)"},
		{"from above to", pieces{grid: "[grid]\nparam = \"features\"\nfrom = 10\nto = 1 #<\npoints = 3\n"}, "grid.to", "1 is below from = 10 (accepted: to ≥ from)"},
		{"one seed", pieces{seeds: "[seeds]\ncount = 1 #<\n"}, "seeds.count", "got 1 (accepted: an integer ≥ 2; a variance needs two seeds)"},
		{"negative start", pieces{seeds: "[seeds]\ncount = 2\nstart = -1 #<\n"}, "seeds.start", "got -1 (accepted: an integer ≥ 0)"},
		{"student-t df 2", pieces{data: "[data]\nsource = \"linear-gaussian\"\nn_train = 20\ndim = 50\nnoise = { kind = \"student-t\", sd = 1, df = 2 } #<\n"}, "data.noise.df", "got 2 (accepted: a number > 2, so that the variance is finite)"},
		{"negative sd", pieces{data: "[data]\nsource = \"linear-gaussian\"\nn_train = 20\ndim = 50\nnoise = { sd = -0.1 } #<\n"}, "data.noise.sd", "got -0.1 (accepted: a number ≥ 0)"},
		{"exponent 0", pieces{data: gen("spectrum = { kind = \"power-law\", exponent = 0 } #<")}, "data.spectrum.exponent", "got 0 (accepted: a number > 0)"},
		{"spiked high 0", pieces{data: gen("spectrum = { kind = \"spiked\", spikes = 2, high = 0, low = 1 } #<")}, "data.spectrum.high", "got 0 (accepted: a number > 0)"},
		{"spikes = dim", pieces{data: gen("spectrum = { kind = \"spiked\", spikes = 50, high = 9, low = 1 } #<")}, "data.spectrum.spikes", "got 50 (accepted: an integer in 1..dim-1 = 1..49)"},
		{"spectrum value 0", pieces{data: dim3 + "spectrum = { kind = \"list\", values = [1, 0, 2] } #<\n", grid: "[grid]\nparam = \"features\"\nvalues = [1]\n"}, "data.spectrum.values", "element 2 is 0 (accepted: variances > 0)"},
		{"spectrum list length", pieces{data: dim3 + "spectrum = { kind = \"list\", values = [1, 2] } #<\n", grid: "[grid]\nparam = \"features\"\nvalues = [1]\n"}, "data.spectrum.values", "has 2 values (accepted: exactly dim = 3)"},
		{"signal list length", pieces{data: dim3 + "signal = { kind = \"list\", values = [1, 2, 3, 4] } #<\n", grid: "[grid]\nparam = \"features\"\nvalues = [1]\n"}, "data.signal.values", "has 4 values (accepted: exactly dim = 3)"},
		{"signal top 0", pieces{data: gen("signal = { kind = \"top\", top = 0 } #<")}, "data.signal.top", "got 0 (accepted: an integer in 1..dim = 1..50)"},
		{"signal top above dim", pieces{data: gen("signal = { kind = \"top\", top = 51 } #<")}, "data.signal.top", "got 51 (accepted: an integer in 1..dim = 1..50)"},
		{"signal norm negative", pieces{data: gen("signal = { norm = -1 } #<")}, "data.signal.norm", "got -1 (accepted: a number ≥ 0)"},
		{"unknown source", pieces{data: "[data]\nsource = \"gaussian\" #<\n"}, "data.source", `unknown source "gaussian" (accepted: "linear-gaussian", "csv", "curve", "teacher")`},
		{"unknown spectrum kind", pieces{data: gen("spectrum = { kind = \"powerlaw\" } #<")}, "data.spectrum.kind", `unknown kind "powerlaw" (accepted: "isotropic", "power-law", "spiked", "list")`},
		{"unknown signal kind", pieces{data: gen("signal = { kind = \"ball\" } #<")}, "data.signal.kind", `(accepted: "sphere", "top", "list")`},
		{"unknown noise kind", pieces{data: "[data]\nsource = \"linear-gaussian\"\nn_train = 20\ndim = 50\nnoise = { kind = \"cauchy\", sd = 1 } #<\n"}, "data.noise.kind", `(accepted: "gaussian", "student-t")`},
		{"unknown family", pieces{model: "[[model]]\nfamily = \"lasso\" #<\n"}, "model[1].family", `unknown family "lasso" (accepted: "least-squares", "ridge", "random-features", "polynomial", "kernel-ridge", "nearest-neighbours", "gradient-descent", "two-layer-net")`},
		{"unknown param", pieces{grid: "[grid]\nparam = \"depth\" #<\nvalues = [1]\n"}, "grid.param", `unknown param "depth" (accepted: "features", "lambda", "n_train", "degree", "bandwidth", "neighbours", "steps", "width")`},
		{"unknown spacing", pieces{grid: "[grid]\nparam = \"features\"\nfrom = 1\nto = 10\npoints = 3\nspacing = \"geometric\" #<\n"}, "grid.spacing", `unknown spacing "geometric" (accepted: "linear", "log")`},
		{"unknown truth", pieces{data: gen("truth = \"random\" #<")}, "data.truth", `unknown truth "random" (accepted: "fixed", "per-seed")`},
		{"unknown sampling", pieces{data: csvOK + "sampling = \"jackknife\" #<\n"}, "data.sampling", `unknown sampling "jackknife" (accepted: "subsample", "bootstrap")`},
		{"test_fraction 1", pieces{data: csvOK + "test_fraction = 1.0 #<\n"}, "data.test_fraction", "got 1 (accepted: a number in (0, 1))"},
		{"test_fraction and n_test", pieces{data: csvOK + "n_test = 10\ntest_fraction = 0.2 #<\n"}, "data.test_fraction", "given together with n_test (accepted: one of n_test or test_fraction)"},
		{"csv n_test 0", pieces{data: csvOK + "n_test = 0 #<\n"}, "data.n_test", "got 0 (accepted: an integer ≥ 1, the held-out rows)"},
		{"features lists target", pieces{data: csvOK + "features = [\"a\", \"y\"] #<\n"}, "data.features", `lists the target "y" (accepted: columns other than the target)`},
		{"features twice", pieces{data: csvOK + "features = [\"a\", \"a\"] #<\n"}, "data.features", `lists "a" twice (accepted: each column once)`},
		{"duplicate labels", pieces{model: "[[model]]\nfamily = \"ridge\"\nlambda = 1\nlabel = \"m\"\n[[model]]\nfamily = \"least-squares\"\nlabel = \"m\" #<\n"}, "model[2].label", `label "m" is already used by model[1] (accepted: labels unique within the spec; set label)`},
		{"duplicate default labels", pieces{model: ridge + "[[model]] #<\nfamily = \"ridge\"\nlambda = 0.1\n"}, "model[2]", `label "ridge λ=0.1" is already used by model[1]`},
		{"blank label", pieces{model: ls + "label = \" \" #<\n"}, "model[1].label", "is blank (accepted: a non-empty name"},

		// [tables]: presentation settings, strict like the rest.
		{"tables unknown key", pieces{seeds: seedsOK + "[tables]\nse_style = \"plus-minus\"\nse_stlye = \"x\" #<\n"}, "tables.se_stlye", "unknown key (known: se_style)"},
		{"tables unknown style", pieces{seeds: seedsOK + "[tables]\nse_style = \"pm\" #<\n"}, "tables.se_style", `unknown se_style "pm" (accepted: "parentheses", "plus-minus")`},
		{"tables style type", pieces{seeds: seedsOK + "[tables]\nse_style = 1 #<\n"}, "tables.se_style", "has type integer (accepted: a string)"},
		{"tables not a table", pieces{top: "name = \"t\"\ntables = \"plus-minus\" #<\n"}, "tables", "has type string (accepted: a table"},
	}
	checkErrorCases(t, tests)
}

func TestSyntaxErrorShowsCaret(t *testing.T) {
	src := "name = \"t\"\n[data]\nn_train = = 3\n"
	_, err := Parse("x.toml", []byte(src))
	var e *Error
	if !errors.As(err, &e) {
		t.Fatalf("Parse() = %v, want *spec.Error", err)
	}
	if e.Line != 3 || !strings.Contains(e.Msg, "At line 3") || !strings.Contains(e.Msg, "^") {
		t.Errorf("Parse() = %q (line %d), want line 3 with the caret context", e.Msg, e.Line)
	}
	if !strings.HasPrefix(err.Error(), "x.toml:3: data.n_train: TOML syntax: ") {
		t.Errorf("Error() = %q, want prefix %q", err.Error(), "x.toml:3: data.n_train: TOML syntax: ")
	}
}

func TestErrorFormat(t *testing.T) {
	tests := []struct {
		e    Error
		want string
	}{
		{Error{File: "specs/x.toml", Line: 12, Key: "model[1].lamda", Msg: "unknown key (known: family, label, lambda, intercept)"},
			"specs/x.toml:12: model[1].lamda: unknown key (known: family, label, lambda, intercept)"},
		{Error{File: "specs/x.toml", Key: "name", Msg: "required"}, "specs/x.toml: name: required"},
		{Error{File: "g.csv", Line: 3, Msg: "malformed"}, "g.csv:3: malformed"},
		{Error{Line: 3, Key: "k", Msg: "m"}, "line 3: k: m"},
	}
	for _, tc := range tests {
		if got := tc.e.Error(); got != tc.want {
			t.Errorf("Error() = %q, want %q", got, tc.want)
		}
	}
}

// errorCase is a spec that must fail to parse: at the line marked "#<" in
// its source, with key, and a message containing want (what is wrong and
// what is accepted).
type errorCase struct {
	name string
	in   pieces
	key  string
	want string
}

// checkErrorCases parses each case and checks the error's file, line, key
// and message, and that the message says what is accepted.
func checkErrorCases(t *testing.T, tests []errorCase) {
	t.Helper()
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			src := tc.in.src()
			wantLine := markedLine(src)
			s, err := Parse("specs/x.toml", []byte(src))
			if err == nil {
				t.Fatalf("Parse() = %+v, nil; want an error at line %d key %s\n%s", s, wantLine, tc.key, src)
			}
			var e *Error
			if !errors.As(err, &e) {
				t.Fatalf("Parse() error %T %v, want *spec.Error", err, err)
			}
			if e.File != "specs/x.toml" || e.Line != wantLine || e.Key != tc.key {
				t.Errorf("Parse() error at %s:%d key %q, want specs/x.toml:%d key %q\nerror: %v\n%s", e.File, e.Line, e.Key, wantLine, tc.key, err, src)
			}
			if !strings.Contains(e.Msg, tc.want) {
				t.Errorf("Parse() message %q, want it to contain %q", e.Msg, tc.want)
			}
			if !strings.Contains(e.Msg, "accepted") && !strings.Contains(e.Msg, "known") && !strings.Contains(e.Msg, "keys for it") && !strings.Contains(e.Msg, "TOML syntax") {
				t.Errorf("Parse() message %q does not say what is accepted", e.Msg)
			}
		})
	}
}
