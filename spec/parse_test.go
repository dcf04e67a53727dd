package spec

import (
	"math"
	"reflect"
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

func mustParse(t *testing.T, src string) *Spec {
	t.Helper()
	s, err := Parse("t.toml", []byte(src))
	if err != nil {
		t.Fatalf("Parse() error %v\n%s", err, src)
	}
	return s
}

func TestDefaults(t *testing.T) {
	s := mustParse(t, pieces{}.src())
	want := &Spec{
		Name: "t",
		Path: "t.toml",
		Data: Data{
			Source:   SourceLinearGaussian,
			NTrain:   20,
			NTest:    1000,
			Dim:      50,
			Spectrum: Spectrum{Kind: SpectrumIsotropic},
			Signal:   Signal{Kind: SignalSphere, Norm: 1},
			Noise:    Noise{Kind: NoiseGaussian, SD: 0.5},
			Truth:    TruthFixed,
		},
		Models: []Model{{Family: FamilyLeastSquares, Label: "least-squares"}},
		Grid:   Grid{Param: ParamFeatures, Values: []float64{10, 20}},
		Seeds:  Seeds{Count: 3, Start: 1, Truth: 0, Models: 1},
		Tables: Tables{SEStyle: SEParentheses},
	}
	if !reflect.DeepEqual(s, want) {
		t.Errorf("Parse(minimal) =\n%+v\nwant\n%+v", s, want)
	}

	c := mustParse(t, pieces{data: csvOK}.src())
	wantData := Data{Source: SourceCSV, NTrain: 20, File: "g.csv", Target: "y", TestFraction: 0.25, Sampling: SamplingSubsample}
	if !reflect.DeepEqual(c.Data, wantData) {
		t.Errorf("Parse(minimal csv).Data = %+v, want %+v", c.Data, wantData)
	}
	c = mustParse(t, pieces{data: csvOK + "n_test = 4\n"}.src())
	if c.Data.NTest != 4 || c.Data.TestFraction != 0 {
		t.Errorf("Parse(csv, n_test = 4) gives NTest %d TestFraction %g, want 4 and 0", c.Data.NTest, c.Data.TestFraction)
	}
}

func TestLabels(t *testing.T) {
	models := "[[model]]\nfamily = \"ridge\"\nlambda = 0.1\n" +
		"[[model]]\nfamily = \"ridge\"\nlambda = 1e-7\nintercept = true\n" +
		"[[model]]\nfamily = \"least-squares\"\nlabel = \"min-norm\"\n"
	s := mustParse(t, pieces{model: models}.src())
	want := []string{"ridge λ=0.1", "ridge λ=1e-07 (intercept)", "min-norm"}
	for i, m := range s.Models {
		if m.Label != want[i] {
			t.Errorf("model[%d].Label = %q, want %q", i+1, m.Label, want[i])
		}
	}
	s = mustParse(t, pieces{model: "[[model]]\nfamily = \"ridge\"\n", grid: "[grid]\nparam = \"lambda\"\nvalues = [1]\n"}.src())
	if s.Models[0].Label != "ridge" {
		t.Errorf("label on a lambda grid = %q, want %q", s.Models[0].Label, "ridge")
	}
}

func TestNTrainGrid(t *testing.T) {
	data := "[data]\nsource = \"linear-gaussian\"\ndim = 5\nnoise = { sd = 1 }\n"
	s := mustParse(t, pieces{data: data, grid: "[grid]\nparam = \"n_train\"\nvalues = [40, 10, 20, 10]\n"}.src())
	if s.Data.NTrain != 40 || !slices.Equal(s.Grid.Values, []float64{10, 20, 40}) {
		t.Errorf("n_train grid: NTrain %d, Values %v; want 40 and [10 20 40]", s.Data.NTrain, s.Grid.Values)
	}
}

func TestExpand(t *testing.T) {
	// Reference: the definitions in Expand's doc comment,
	// v_k = from + (to−from)k/(points−1) and v_k = from·(to/from)^(k/(points−1)).
	tests := []struct {
		name     string
		param    string
		from, to float64
		points   int
		spacing  string
		include  []float64
		want     []float64
		tol      float64
	}{
		{"linear integers", ParamFeatures, 1, 10, 10, SpacingLinear, nil, []float64{1, 2, 3, 4, 5, 6, 7, 8, 9, 10}, 0},
		{"linear rounded and merged", ParamFeatures, 1, 2, 5, SpacingLinear, []float64{2}, []float64{1, 2}, 0},
		{"linear lambda", ParamLambda, 0, 1, 5, SpacingLinear, []float64{0.5}, []float64{0, 0.25, 0.5, 0.75, 1}, 0},
		// Powers of ten: (10^6)^(k/6) = 10^k; a log/exp round trip costs a few ulps.
		{"log lambda decades", ParamLambda, 1e-3, 1e3, 7, SpacingLog, []float64{0}, []float64{0, 1e-3, 1e-2, 1e-1, 1, 10, 100, 1e3}, 1e-13},
		{"log integers", ParamNTrain, 1, 16, 5, SpacingLog, nil, []float64{1, 2, 4, 8, 16}, 0},
		{"one point", ParamFeatures, 7, 7, 1, SpacingLinear, nil, []float64{7}, 0},
	}
	for _, tc := range tests {
		got := Expand(tc.param, tc.from, tc.to, tc.points, tc.spacing, tc.include)
		if len(got) != len(tc.want) {
			t.Errorf("%s: Expand(%g, %g, %d, %s, %v) = %v, want %v", tc.name, tc.from, tc.to, tc.points, tc.spacing, tc.include, got, tc.want)
			continue
		}
		for i := range got {
			if !scalar.EqualWithinAbsOrRel(got[i], tc.want[i], tc.tol, tc.tol) {
				t.Errorf("%s: Expand(…)[%d] = %v, want %v (tol %g)", tc.name, i, got[i], tc.want[i], tc.tol)
			}
		}
	}
}

func TestLogGridThroughParse(t *testing.T) {
	grid := "[grid]\nparam = \"features\"\nfrom = 10\nto = 1000\npoints = 40\nspacing = \"log\"\ninclude = [200]\n"
	data := "[data]\nsource = \"linear-gaussian\"\nn_train = 200\ndim = 1000\nnoise = { sd = 0.5 }\n"
	s := mustParse(t, pieces{data: data, grid: grid}.src())
	v := s.Grid.Values
	// The ratio between neighbours is 100^(1/39) ≈ 1.125, so from 10 upward
	// rounding never merges two values; 200 is not on the log grid (10·100^(k/39)
	// = 200 needs k = 25.3), so the count is 40 + 1.
	if len(v) != 41 {
		t.Errorf("log grid has %d values, want 41: %v", len(v), v)
	}
	for i := 1; i < len(v); i++ {
		if v[i] <= v[i-1] {
			t.Fatalf("log grid not strictly increasing at %d: %v", i, v)
		}
	}
	for _, x := range v {
		if x != math.Round(x) {
			t.Errorf("log grid value %v is not an integer", x)
		}
	}
	for _, x := range []float64{10, 200, 1000} {
		if !slices.Contains(v, x) {
			t.Errorf("log grid %v lacks %v", v, x)
		}
	}
	if s.Grid.From != 0 || s.Grid.To != 0 || s.Grid.Points != 0 || s.Grid.Spacing != "" || s.Grid.Include != nil {
		t.Errorf("resolved grid keeps range fields: %+v", s.Grid)
	}
}

// roundTripSpecs are valid specs covering every kind, family and source.
var roundTripSpecs = map[string]string{
	"minimal": pieces{}.src(),
	"power-law, top, student-t": pieces{
		data:  "[data]\nsource = \"linear-gaussian\"\nn_train = 30\nn_test = 1\ndim = 60\ntruth = \"per-seed\"\n[data.spectrum]\nkind = \"power-law\"\nexponent = 1.5\n[data.signal]\nkind = \"top\"\ntop = 5\nnorm = 2.25\n[data.noise]\nkind = \"student-t\"\nsd = 0.3\ndf = 2.5\n",
		model: "[[model]]\nfamily = \"ridge\"\nlambda = 0.1\nintercept = true\nlabel = \"r \\\"quoted\\\" \\t λ\"\n[[model]]\nfamily = \"least-squares\"\n",
		grid:  "[grid]\nparam = \"features\"\nfrom = 2\nto = 60\npoints = 9\nspacing = \"log\"\ninclude = [30]\n",
		seeds: "[seeds]\ncount = 50\nstart = 1000\ntruth = 7\n",
	}.src(),
	"spiked and lists": pieces{
		data: "[data]\nsource = \"linear-gaussian\"\nn_train = 4\ndim = 3\nspectrum = { kind = \"spiked\", spikes = 1, high = 100, low = 0.01 }\nsignal = { kind = \"list\", values = [1, -0.5, 0.1] }\nnoise = { sd = 0 }\n",
		grid: "[grid]\nparam = \"features\"\nvalues = [1, 2, 3]\n",
	}.src(),
	"list spectrum, lambda grid": pieces{
		data:  "[data]\nsource = \"linear-gaussian\"\nn_train = 4\ndim = 2\nspectrum = { kind = \"list\", values = [0.3333333333333333, 1e-300] }\nnoise = { sd = 1e-9 }\n",
		top:   "name = \"t\"\nmodel = [{ family = \"ridge\" }, { family = \"ridge\", intercept = true }]\n",
		model: "-",
		grid:  "[grid]\nparam = \"lambda\"\nfrom = 1e-6\nto = 10\npoints = 13\nspacing = \"log\"\ninclude = [0]\n",
	}.src(),
	"n_train grid": pieces{
		data: "[data]\nsource = \"linear-gaussian\"\ndim = 10\nnoise = { sd = 1 }\n",
		grid: "[grid]\nparam = \"n_train\"\nfrom = 2\nto = 40\npoints = 5\n",
	}.src(),
	"csv fraction":      pieces{data: csvOK + "test_fraction = 0.1\nsampling = \"bootstrap\"\nfeatures = [\"b\", \"a\"]\n", grid: "[grid]\nparam = \"features\"\nvalues = [1, 2]\n"}.src(),
	"csv n_test":        pieces{data: csvOK + "n_test = 7\n", model: "[[model]]\nfamily = \"ridge\"\nlambda = 3\n"}.src(),
	"plus-minus tables": pieces{seeds: seedsOK + "[tables]\nse_style = \"plus-minus\"\n"}.src(),
	"every family on n_train, model seeds": pieces{
		data: "[data]\nsource = \"linear-gaussian\"\ndim = 1\nnoise = { sd = 1 }\n",
		model: "[[model]]\nfamily = \"random-features\"\nfeatures = 40\nactivation = \"fourier\"\nscale = 2\n" +
			"[[model]]\nfamily = \"polynomial\"\ndegree = 5\nlow = 0\nhigh = 3\nbasis = \"chebyshev\"\nlambda = 1e-3\n" +
			"[[model]]\nfamily = \"kernel-ridge\"\nbandwidth = 0.5\nkernel = \"laplace\"\n" +
			"[[model]]\nfamily = \"nearest-neighbours\"\nneighbours = 3\n" +
			"[[model]]\nfamily = \"gradient-descent\"\nsteps = 100\n" +
			"[[model]]\nfamily = \"two-layer-net\"\nwidth = 20\nsteps = 50\nbatch = 8\n",
		grid:  "[grid]\nparam = \"n_train\"\nvalues = [5, 10]\n",
		seeds: "[seeds]\ncount = 3\nmodels = 4\n",
	}.src(),
	"random features past dim": pieces{
		model: "[[model]]\nfamily = \"random-features\"\n",
		grid:  "[grid]\nparam = \"features\"\nvalues = [10, 1000]\n",
	}.src(),
	"width grid": pieces{
		model: "[[model]]\nfamily = \"two-layer-net\"\nsteps = 10\nstep_size = 0.1\ninit_scale = 0.5\n",
		grid:  "[grid]\nparam = \"width\"\nfrom = 1\nto = 100\npoints = 4\nspacing = \"log\"\n",
	}.src(),
	"outer n_train": pieces{
		data:  "[data]\nsource = \"linear-gaussian\"\ndim = 50\nnoise = { sd = 0.5 }\n",
		model: "[[model]]\nfamily = \"least-squares\"\n[[model]]\nfamily = \"ridge\"\nlambda = 0.01\n",
		grid:  "[grid]\nparam = \"features\"\nfrom = 5\nto = 50\npoints = 4\nspacing = \"log\"\n[grid.outer]\nparam = \"n_train\"\nfrom = 10\nto = 40\npoints = 3\nspacing = \"log\"\ninclude = [25]\n",
	}.src(),
	"outer lambda, inline": pieces{
		data:  "[data]\nsource = \"linear-gaussian\"\ndim = 50\nnoise = { sd = 0.5 }\n",
		model: "[[model]]\nfamily = \"ridge\"\n[[model]]\nfamily = \"ridge\"\nintercept = true\n",
		grid:  "[grid]\nparam = \"n_train\"\nvalues = [10, 20]\nouter = { param = \"lambda\", from = 1e-4, to = 1, points = 5, spacing = \"log\", include = [0] }\n",
	}.src(),
	"csv, outer n_train, inner lambda": pieces{
		data:  "[data]\nsource = \"csv\"\nfile = \"g.csv\"\ntarget = \"y\"\n",
		model: "[[model]]\nfamily = \"ridge\"\n",
		grid:  "[grid]\nparam = \"lambda\"\nvalues = [0.1, 1]\n[grid.outer]\nparam = \"n_train\"\nvalues = [30, 10]\n",
	}.src(),
}

// checkRoundTrip checks that Parse(Canonical()) gives back s, that the
// canonical form is a fixed point and that the hashes survive.
func checkRoundTrip(t *testing.T, s *Spec) {
	t.Helper()
	c := s.Canonical()
	back, err := Parse("t.toml", []byte(c))
	if err != nil {
		t.Fatalf("Parse(Canonical()) error %v\n%s", err, c)
	}
	if !reflect.DeepEqual(back, s) {
		t.Errorf("Parse(Canonical()) =\n%+v\nwant\n%+v\ncanonical:\n%s", back, s, c)
	}
	if c2 := back.Canonical(); c2 != c {
		t.Errorf("Canonical() is not a fixed point:\n%s\nthen\n%s", c, c2)
	}
	if back.Hash() != s.Hash() || back.DataKey() != s.DataKey() {
		t.Errorf("hashes change over the round trip")
	}
}

func TestCanonicalRoundTrip(t *testing.T) {
	for name, src := range roundTripSpecs {
		t.Run(name, func(t *testing.T) {
			s := mustParse(t, src)
			checkRoundTrip(t, s)
		})
	}
}

func TestCanonicalShowsDefaults(t *testing.T) {
	c := mustParse(t, pieces{}.src()).Canonical()
	for _, want := range []string{
		"n_test = 1000\n", `truth = "fixed"`, `spectrum = { kind = "isotropic" }`,
		`signal = { kind = "sphere", norm = 1 }`, `noise = { kind = "gaussian", sd = 0.5 }`,
		`label = "least-squares"`, "intercept = false", "values = [10, 20]", "start = 1\n", "truth = 0\n",
	} {
		if !strings.Contains(c, want) {
			t.Errorf("Canonical() lacks %q:\n%s", want, c)
		}
	}
}

func TestTestSize(t *testing.T) {
	tests := []struct {
		d    Data
		rows int
		want int
	}{
		{Data{NTest: 7}, 100, 7},
		{Data{TestFraction: 0.25}, 12, 3},
		{Data{TestFraction: 0.25}, 10, 3}, // 2.5 rounds half away from zero
		{Data{TestFraction: 0.01}, 10, 1}, // at least one row
	}
	for _, tc := range tests {
		if got := tc.d.TestSize(tc.rows); got != tc.want {
			t.Errorf("TestSize(%d) with %+v = %d, want %d", tc.rows, tc.d, got, tc.want)
		}
	}
}

// TestTables checks the [tables] default and that the style is read.
func TestTables(t *testing.T) {
	if got := mustParse(t, pieces{}.src()).Tables.SEStyle; got != SEParentheses {
		t.Errorf("default se_style = %q, want %q", got, SEParentheses)
	}
	s := mustParse(t, pieces{seeds: seedsOK + "[tables]\nse_style = \"plus-minus\"\n"}.src())
	if s.Tables.SEStyle != SEPlusMinus {
		t.Errorf("se_style = %q, want %q", s.Tables.SEStyle, SEPlusMinus)
	}
	if c := s.Canonical(); !strings.Contains(c, "[tables]\nse_style = \"plus-minus\"\n") {
		t.Errorf("Canonical() does not record the style:\n%s", c)
	}
}
