package spec

import (
	"fmt"
	"math"
	"os"
	"regexp"
	"slices"
	"strconv"
	"strings"

	"github.com/BurntSushi/toml"
)

// Accepted names, in the order error messages list them.
var (
	sources    = []string{SourceLinearGaussian, SourceCSV, SourceCurve, SourceTeacher}
	spectra    = []string{SpectrumIsotropic, SpectrumPowerLaw, SpectrumSpiked, SpectrumList}
	signals    = []string{SignalSphere, SignalTop, SignalList}
	noises     = []string{NoiseGaussian, NoiseStudentT}
	truths     = []string{TruthFixed, TruthPerSeed}
	samplings  = []string{SamplingSubsample, SamplingBootstrap}
	spacings   = []string{SpacingLinear, SpacingLog}
	topKeys    = []string{"name", "about", "data", "model", "grid", "seeds", "tables"}
	commonData = []string{"source", "n_train", "n_test"}
	genData    = []string{"dim", "spectrum", "signal", "noise", "truth"}
	csvData    = []string{"file", "target", "features", "test_fraction", "sampling"}
	gridKeys   = []string{"param", "values", "from", "to", "points", "spacing", "include", "outer"}
	outerKeys  = []string{"param", "values", "from", "to", "points", "spacing", "include"}
	seedKeys   = []string{"count", "start", "truth", "models"}
	tablesKeys = []string{"se_style"}

	spectrumKeys = map[string][]string{
		SpectrumIsotropic: {"kind"},
		SpectrumPowerLaw:  {"kind", "exponent"},
		SpectrumSpiked:    {"kind", "spikes", "high", "low"},
		SpectrumList:      {"kind", "values"},
	}
	signalKeys = map[string][]string{
		SignalSphere: {"kind", "norm"},
		SignalTop:    {"kind", "top", "norm"},
		SignalList:   {"kind", "values"},
	}
	noiseKeys = map[string][]string{
		NoiseGaussian: {"kind", "sd"},
		NoiseStudentT: {"kind", "sd", "df"},
	}
)

// Grid spacings.
const (
	SpacingLinear = "linear" // From + (To−From)·k/(Points−1)
	SpacingLog    = "log"    // From · (To/From)^(k/(Points−1))
)

// MaxPoints bounds grid.points.
const MaxPoints = 10000

// namePattern is what Spec.Name accepts: it labels a folder.
var namePattern = regexp.MustCompile(`^[A-Za-z0-9][A-Za-z0-9._-]{0,99}$`)

const maxInt = math.MaxInt64

// Load reads, checks and resolves the spec file at path. On top of Parse it
// reads the data file of a csv source: the header must hold the target and
// the listed features (Features defaults to every other column, Dim is set
// to len(Features)), the grid and the sizes must fit the rows, and DataHash
// is set to the hex SHA-256 of the file. Every error is an *Error.
func Load(path string) (*Spec, error) {
	src, err := os.ReadFile(path)
	if err != nil {
		return nil, &Error{File: path, Msg: fmt.Sprintf("cannot read spec file: %v", err), Err: err}
	}
	s, d, err := parse(path, src)
	if err != nil {
		return nil, err
	}
	if s.Data.Source == SourceCSV {
		if err := d.checkCSV(s); err != nil {
			return nil, err
		}
	}
	return s, nil
}

// Parse checks and resolves a spec from its TOML text without touching the
// disk; path is used in error messages and to resolve Data.File. For a csv
// source the header checks of Load are not made: Features stays empty and
// Dim 0 unless features are listed, and DataHash stays "". Every error is an
// *Error.
func Parse(path string, src []byte) (*Spec, error) {
	s, _, err := parse(path, src)
	return s, err
}

func parse(path string, src []byte) (*Spec, *decoder, error) {
	var raw map[string]any
	if _, err := toml.Decode(string(src), &raw); err != nil {
		return nil, nil, syntaxError(path, err)
	}
	d := &decoder{file: path, lines: locate(string(src))}
	s, err := d.spec(table{m: raw})
	if err != nil {
		return nil, nil, err
	}
	s.Path = path
	return s, d, nil
}

// facts records what was written, for the checks that span sections.
type facts struct {
	nTrain, nTest, testFraction bool
	lambda                      []bool // per model
}

func (d *decoder) spec(root table) (*Spec, error) {
	if err := d.known(root, topKeys); err != nil {
		return nil, err
	}
	s := &Spec{}
	var f facts
	name, ok, err := d.str(root, "name")
	if err != nil {
		return nil, err
	}
	if !ok {
		return nil, d.missing("name", "a string of letters, digits, '.', '_' and '-'")
	}
	if !namePattern.MatchString(name) {
		return nil, d.errf("name", "%q cannot name a folder (accepted: 1 to 100 letters, digits, '.', '_' or '-', not starting with '.', '_' or '-')", name)
	}
	s.Name = name
	if s.About, _, err = d.str(root, "about"); err != nil {
		return nil, err
	}

	// Grid first: whether n_train and lambda may be written depends on it.
	gt, ok, err := d.sub(root, "grid")
	if err != nil {
		return nil, err
	}
	if !ok {
		return nil, d.missing("grid", "a [grid] table with param and values")
	}
	if err := d.known(gt, gridKeys); err != nil {
		return nil, err
	}
	if s.Grid.Param, err = d.choice(gt, "param", Params, ""); err != nil {
		return nil, err
	}
	if s.Grid.Outer, err = d.outerParam(gt, s.Grid.Param); err != nil {
		return nil, err
	}

	dt, ok, err := d.sub(root, "data")
	if err != nil {
		return nil, err
	}
	if !ok {
		return nil, d.missing("data", "a [data] table with source and its keys")
	}
	if err := d.data(dt, s, &f); err != nil {
		return nil, err
	}
	if err := d.models(root, s, &f); err != nil {
		return nil, err
	}
	if err := d.grid(gt, s); err != nil {
		return nil, err
	}
	if err := d.seeds(root, s); err != nil {
		return nil, err
	}
	if err := d.labels(s); err != nil {
		return nil, err
	}
	if err := d.tables(root, s); err != nil {
		return nil, err
	}
	return s, nil
}

func (d *decoder) data(t table, s *Spec, f *facts) error {
	var all []string
	for _, k := range slices.Concat(commonData, genData, csvData, curveData, teacherData) {
		if !contains(all, k) {
			all = append(all, k)
		}
	}
	if err := d.known(t, all); err != nil {
		return err
	}
	src, err := d.choice(t, "source", sources, "")
	if err != nil {
		return err
	}
	D := &s.Data
	D.Source = src
	own := map[string][]string{SourceLinearGaussian: genData, SourceCSV: csvData,
		SourceCurve: curveData, SourceTeacher: teacherData}[src]
	if err := d.belong(t, append(append([]string{}, commonData...), own...), fmt.Sprintf("source %q", src)); err != nil {
		return err
	}

	n, ok, err := d.integer(t, "n_train", 1, maxInt, "an integer ≥ 1")
	if err != nil {
		return err
	}
	f.nTrain = ok
	switch {
	case ok && s.Grid.Sets(ParamNTrain):
		return d.errf(t.key("n_train"), "the %s is n_train, which sets the training sizes (accepted: leave n_train out of [data])", knobName(s.Grid, ParamNTrain))
	case !ok && !s.Grid.Sets(ParamNTrain):
		return d.missing(t.key("n_train"), "an integer ≥ 1, the training-set size")
	}
	D.NTrain = int(n)

	switch src {
	case SourceLinearGaussian:
		return d.generator(t, D)
	case SourceCurve:
		return d.curve(t, D)
	case SourceTeacher:
		return d.teacher(t, D)
	}
	return d.csv(t, D, f)
}

func (d *decoder) generator(t table, D *Data) error {
	n, ok, err := d.integer(t, "n_test", 1, maxInt, "an integer ≥ 1, the test inputs drawn")
	if err != nil {
		return err
	}
	D.NTest = 1000
	if ok {
		D.NTest = int(n)
	}
	dim, ok, err := d.integer(t, "dim", 1, maxInt, "an integer ≥ 1")
	if err != nil {
		return err
	}
	if !ok {
		return d.missing(t.key("dim"), "an integer ≥ 1, the input dimension")
	}
	D.Dim = int(dim)
	if D.Truth, err = d.choice(t, "truth", truths, TruthFixed); err != nil {
		return err
	}
	if err := d.spectrum(t, D); err != nil {
		return err
	}
	if err := d.signal(t, D); err != nil {
		return err
	}
	return d.noise(t, D)
}

func positive(x float64) bool    { return x > 0 }
func nonNegative(x float64) bool { return x >= 0 }
func anyNumber(float64) bool     { return true }

// kindTable reads a sub-table with a kind key and checks its keys.
func (d *decoder) kindTable(t table, k string, kinds []string, keys map[string][]string, def string) (table, string, bool, error) {
	st, ok, err := d.sub(t, k)
	if err != nil {
		return st, "", ok, err
	}
	var all []string
	for _, kind := range kinds {
		for _, key := range keys[kind] {
			if !contains(all, key) {
				all = append(all, key)
			}
		}
	}
	if err := d.known(st, all); err != nil {
		return st, "", ok, err
	}
	kind, err := d.choice(st, "kind", kinds, def)
	if err != nil {
		return st, "", ok, err
	}
	if err := d.belong(st, keys[kind], fmt.Sprintf("%s kind %q", k, kind)); err != nil {
		return st, "", ok, err
	}
	return st, kind, ok, nil
}

func (d *decoder) spectrum(t table, D *Data) error {
	st, kind, _, err := d.kindTable(t, "spectrum", spectra, spectrumKeys, SpectrumIsotropic)
	if err != nil {
		return err
	}
	S := &D.Spectrum
	S.Kind = kind
	var ok bool
	switch kind {
	case SpectrumPowerLaw:
		if S.Exponent, ok, err = d.float(st, "exponent", positive, "a number > 0"); err != nil {
			return err
		} else if !ok {
			return d.missing(st.key("exponent"), "a number > 0, Σ_jj = j^-exponent")
		}
	case SpectrumSpiked:
		if D.Dim < 2 {
			return d.errf(st.key("kind"), "a spiked spectrum needs dim ≥ 2, dim is %d (accepted: isotropic, power-law or list for dim 1)", D.Dim)
		}
		sp, ok, err := d.integer(st, "spikes", 1, int64(D.Dim-1), fmt.Sprintf("an integer in 1..dim-1 = 1..%d", D.Dim-1))
		if err != nil {
			return err
		} else if !ok {
			return d.missing(st.key("spikes"), fmt.Sprintf("an integer in 1..%d, the number of high-variance coordinates", D.Dim-1))
		}
		S.Spikes = int(sp)
		for _, k := range []string{"high", "low"} {
			v, ok, err := d.float(st, k, positive, "a number > 0")
			if err != nil {
				return err
			} else if !ok {
				return d.missing(st.key(k), "a number > 0, a variance")
			}
			if k == "high" {
				S.High = v
			} else {
				S.Low = v
			}
		}
	case SpectrumList:
		vals, ok, err := d.floats(st, "values", positive, "variances > 0")
		if err != nil {
			return err
		} else if !ok {
			return d.missing(st.key("values"), fmt.Sprintf("%d variances > 0, one per coordinate", D.Dim))
		}
		if len(vals) != D.Dim {
			return d.errf(st.key("values"), "has %d values (accepted: exactly dim = %d)", len(vals), D.Dim)
		}
		S.Values = vals
	}
	return nil
}

func (d *decoder) signal(t table, D *Data) error {
	st, kind, _, err := d.kindTable(t, "signal", signals, signalKeys, SignalSphere)
	if err != nil {
		return err
	}
	G := &D.Signal
	G.Kind = kind
	if kind == SignalSphere || kind == SignalTop {
		norm, ok, err := d.float(st, "norm", nonNegative, "a number ≥ 0")
		if err != nil {
			return err
		}
		G.Norm = 1
		if ok {
			G.Norm = norm
		}
	}
	switch kind {
	case SignalTop:
		top, ok, err := d.integer(st, "top", 1, int64(D.Dim), fmt.Sprintf("an integer in 1..dim = 1..%d", D.Dim))
		if err != nil {
			return err
		} else if !ok {
			return d.missing(st.key("top"), fmt.Sprintf("an integer in 1..%d, the number of non-zero coefficients", D.Dim))
		}
		G.Top = int(top)
	case SignalList:
		vals, ok, err := d.floats(st, "values", anyNumber, "the coefficients")
		if err != nil {
			return err
		} else if !ok {
			return d.missing(st.key("values"), fmt.Sprintf("%d numbers, the coefficients β", D.Dim))
		}
		if len(vals) != D.Dim {
			return d.errf(st.key("values"), "has %d values (accepted: exactly dim = %d)", len(vals), D.Dim)
		}
		G.Values = vals
	}
	return nil
}

func (d *decoder) noise(t table, D *Data) error {
	if !t.has("noise") {
		return d.missing(t.key("noise"), `a table such as noise = { kind = "gaussian", sd = 0.5 }`)
	}
	st, kind, _, err := d.kindTable(t, "noise", noises, noiseKeys, NoiseGaussian)
	if err != nil {
		return err
	}
	N := &D.Noise
	N.Kind = kind
	sd, ok, err := d.float(st, "sd", nonNegative, "a number ≥ 0")
	if err != nil {
		return err
	} else if !ok {
		return d.missing(st.key("sd"), "a number ≥ 0, the noise standard deviation (0 for no noise)")
	}
	N.SD = sd
	if kind == NoiseStudentT {
		df, ok, err := d.float(st, "df", func(x float64) bool { return x > 2 }, "a number > 2, so that the variance is finite")
		if err != nil {
			return err
		} else if !ok {
			return d.missing(st.key("df"), "a number > 2, the degrees of freedom")
		}
		N.DF = df
	}
	return nil
}

func (d *decoder) csv(t table, D *Data, f *facts) error {
	var ok bool
	var err error
	if D.File, ok, err = d.str(t, "file"); err != nil {
		return err
	} else if !ok || D.File == "" {
		return d.missing(t.key("file"), "the CSV path, relative to the spec file")
	}
	if D.Target, ok, err = d.str(t, "target"); err != nil {
		return err
	} else if !ok || D.Target == "" {
		return d.missing(t.key("target"), "the name of the response column")
	}
	if D.Features, _, err = d.strs(t, "features"); err != nil {
		return err
	}
	seen := map[string]bool{}
	for _, c := range D.Features {
		switch {
		case c == D.Target:
			return d.errf(t.key("features"), "lists the target %q (accepted: columns other than the target)", c)
		case seen[c]:
			return d.errf(t.key("features"), "lists %q twice (accepted: each column once)", c)
		}
		seen[c] = true
	}
	D.Dim = len(D.Features)

	n, ok, err := d.integer(t, "n_test", 1, maxInt, "an integer ≥ 1, the held-out rows")
	if err != nil {
		return err
	}
	f.nTest = ok
	D.NTest = int(n)
	frac, ok, err := d.float(t, "test_fraction", func(x float64) bool { return x > 0 && x < 1 }, "a number in (0, 1)")
	if err != nil {
		return err
	}
	f.testFraction = ok
	switch {
	case f.nTest && f.testFraction:
		return d.errf(t.key("test_fraction"), "given together with n_test (accepted: one of n_test or test_fraction)")
	case ok:
		D.TestFraction = frac
	case !f.nTest:
		D.TestFraction = 0.25
	}
	D.Sampling, err = d.choice(t, "sampling", samplings, SamplingSubsample)
	return err
}

// modelTables returns the [[model]] tables, also when written as an inline
// array model = [{ … }, …].
func (d *decoder) modelTables(root table) ([]table, error) {
	v, ok := root.m["model"]
	if !ok {
		return nil, d.missing("model", "one or more [[model]] tables, each with a family")
	}
	var ms []map[string]any
	switch x := v.(type) {
	case []map[string]any:
		ms = x
	case []any:
		for _, e := range x {
			m, isMap := e.(map[string]any)
			if !isMap {
				return nil, d.errf("model", "has an element of type %s (accepted: [[model]] tables)", typeName(e))
			}
			ms = append(ms, m)
		}
	case map[string]any:
		return nil, d.errf("model", "is a single [model] table (accepted: [[model]], one per model, double brackets)")
	default:
		return nil, d.mismatch("model", v, "[[model]] tables")
	}
	if len(ms) == 0 {
		return nil, d.missing("model", "one or more [[model]] tables")
	}
	out := make([]table, len(ms))
	for i, m := range ms {
		out[i] = table{path: "model[" + strconv.Itoa(i+1) + "]", m: m}
	}
	return out, nil
}

func (d *decoder) models(root table, s *Spec, f *facts) error {
	ts, err := d.modelTables(root)
	if err != nil {
		return err
	}
	s.Models = make([]Model, len(ts))
	f.lambda = make([]bool, len(ts))
	param := s.Grid.Param
	for i, t := range ts {
		M := &s.Models[i]
		// A key no family takes is a typo: list the keys of this table's
		// family (if it names one) as the known ones. A key of another
		// family is named as such.
		known := []string{"family", "label"}
		if f, isStr := t.m["family"].(string); isStr && Families[f].Knobs != nil {
			known = Families[f].keys()
		}
		for _, k := range d.keysIn(t) {
			if !anyFamilyTakes(k) {
				return d.errf(t.key(k), "unknown key (known: %s)", strings.Join(known, ", "))
			}
		}
		if M.Family, err = d.choice(t, "family", FamilyNames, ""); err != nil {
			return err
		}
		fam := Families[M.Family]
		if err := d.belong(t, fam.keys(), fmt.Sprintf("family %q", M.Family)); err != nil {
			return err
		}
		if !HasKnob(M.Family, param) {
			return d.errf(t.key("family"), "%q has no knob %s, the grid param (accepted: a family whose knobs include %s; %q takes %s)",
				M.Family, param, param, M.Family, strings.Join(fam.Knobs, ", "))
		}
		if o := s.Grid.Outer; o != nil && o.Param != ParamNTrain && !fam.hasNum(o.Param) {
			own := "the family has no parameter of its own"
			if k := fam.numKeys(); k != nil {
				own = "or one of the family's parameters: " + quoteList(k)
			}
			return d.errf(t.key("family"), "%q has no parameter %s for the outer grid param to fix at each of its values (accepted: outer param %q, %s; or %s as the inner grid param)",
				M.Family, o.Param, ParamNTrain, own, o.Param)
		}
		label, ok, err := d.str(t, "label")
		if err != nil {
			return err
		}
		if ok && strings.TrimSpace(label) == "" {
			return d.errf(t.key("label"), "is blank (accepted: a non-empty name, or leave label out for the default)")
		}
		M.Label = label
		if M.Intercept, _, err = d.boolean(t, "intercept"); err != nil {
			return err
		}
		for _, n := range fam.Nums {
			x, ok, err := d.float(t, n.Key, n.OK, n.Accepted)
			if err != nil {
				return err
			}
			if ok && n.Integer && x != math.Trunc(x) {
				return d.errf(t.key(n.Key), "got %s (accepted: %s)", fmtFloat(x), n.Accepted)
			}
			if n.Key == "lambda" {
				f.lambda[i] = ok
			}
			knob := s.Grid.Sets(n.Key) // the grid param or the outer one
			switch {
			case ok && knob:
				return d.errf(t.key(n.Key), "the %s is %s, which sets it (accepted: leave %s out of [[model]])", knobName(s.Grid, n.Key), n.Key, n.Key)
			case knob:
				continue
			case !ok && !n.HasDefault:
				return d.missing(t.key(n.Key), n.Accepted)
			case !ok:
				x = n.Default
			}
			if n.Key == "lambda" {
				M.Lambda = x
				continue
			}
			if M.Params == nil {
				M.Params = map[string]float64{}
			}
			M.Params[n.Key] = x
		}
		for _, c := range fam.Choices {
			v, err := d.choice(t, c.Key, c.Values, c.Default)
			if err != nil {
				return err
			}
			if M.Options == nil {
				M.Options = map[string]string{}
			}
			M.Options[c.Key] = v
		}
		if M.Family == FamilyPolynomial && M.Params["high"] <= M.Params["low"] {
			return d.errf(t.key("high"), "got %s ≤ low = %s (accepted: high > low)", fmtFloat(M.Params["high"]), fmtFloat(M.Params["low"]))
		}
		if M.Family == FamilyPolynomial && s.Data.Dim > 1 {
			return d.errf(t.key("family"), "polynomial regression takes one input, the data have dim = %d (accepted: a source with one input: curve, dim = 1, or one csv feature column)", s.Data.Dim)
		}
	}
	return nil
}

// DefaultLabel is the label a model gets when none is written: the family,
// its choices ("relu"), then "key=value" for each numeric parameter that is
// not a grid param (params: the grid param and the outer one, if any) and
// differs from its default ("λ=0.1" for a penalty),
// then "(intercept)" when an intercept is fitted.
func DefaultLabel(m Model, params ...string) string {
	l := m.Family
	nums, choices := m.written(params...)
	for _, c := range choices {
		l += " " + m.Options[c.Key]
	}
	for _, n := range nums {
		if n.HasDefault && m.Param(n.Key) == n.Default {
			continue
		}
		sym := n.Key
		if sym == "lambda" {
			sym = "λ"
		}
		l += " " + sym + "=" + fmtFloat(m.Param(n.Key))
	}
	if m.Intercept {
		l += " (intercept)"
	}
	return l
}

// knobName says which axis of g has param: "grid param" or "outer grid param".
func knobName(g Grid, param string) string {
	if g.Param == param {
		return "grid param"
	}
	return "outer grid param"
}

func (d *decoder) labels(s *Spec) error {
	used := map[string]int{}
	for i := range s.Models {
		M := &s.Models[i]
		key := "model[" + strconv.Itoa(i+1) + "]"
		if M.Label == "" {
			M.Label = DefaultLabel(*M, s.Grid.knobs()...)
		} else {
			key += ".label"
		}
		if j, dup := used[M.Label]; dup {
			return d.errf(key, "label %q is already used by model[%d] (accepted: labels unique within the spec; set label)", M.Label, j+1)
		}
		used[M.Label] = i
	}
	return nil
}

func (d *decoder) seeds(root table, s *Spec) error {
	t, ok, err := d.sub(root, "seeds")
	if err != nil {
		return err
	}
	if !ok {
		return d.missing("seeds", "a [seeds] table with count")
	}
	if err := d.known(t, seedKeys); err != nil {
		return err
	}
	n, ok, err := d.integer(t, "count", 2, maxInt, "an integer ≥ 2; a variance needs two seeds")
	if err != nil {
		return err
	} else if !ok {
		return d.missing(t.key("count"), "an integer ≥ 2, the number of seeds")
	}
	s.Seeds.Count = int(n)
	start, ok, err := d.integer(t, "start", 0, maxInt, "an integer ≥ 0")
	if err != nil {
		return err
	}
	s.Seeds.Start = 1
	if ok {
		s.Seeds.Start = uint64(start)
	}
	truth, _, err := d.integer(t, "truth", 0, maxInt, "an integer ≥ 0")
	if err != nil {
		return err
	}
	s.Seeds.Truth = uint64(truth)
	models, ok, err := d.integer(t, "models", 1, maxInt, "an integer ≥ 1, model seeds per data seed")
	if err != nil {
		return err
	}
	s.Seeds.Models = 1
	if ok {
		s.Seeds.Models = int(models)
	}
	return nil
}

// tables reads the optional [tables] presentation settings.
func (d *decoder) tables(root table, s *Spec) error {
	t, _, err := d.sub(root, "tables")
	if err != nil {
		return err
	}
	if err := d.known(t, tablesKeys); err != nil {
		return err
	}
	s.Tables.SEStyle, err = d.choice(t, "se_style", SEStyles, SEParentheses)
	return err
}
