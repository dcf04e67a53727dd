package spec

// Spec is one experiment: a data distribution (or data file), the model
// families to fit, the capacity grid and the seeds. A Spec returned by Load is
// resolved: every default is filled in and the grid is expanded to its sorted
// list of values, so two specs that mean the same thing compare equal and hash
// equal.
type Spec struct {
	// Name names the study; it labels the output folder. Required: 1 to
	// 100 letters, digits, '.', '_' or '-', starting with a letter or digit.
	Name string `toml:"name"`
	// About is free text shown in reports. Default "".
	About string `toml:"about"`

	Data   Data    `toml:"data"`
	Models []Model `toml:"model"`
	Grid   Grid    `toml:"grid"`
	Seeds  Seeds   `toml:"seeds"`
	// Tables sets how the tables are printed. It changes no number, so it
	// enters neither Hash nor the cache keys (see hash.go).
	Tables Tables `toml:"tables"`

	// Path is the file the spec was read from ("" when built in code).
	Path string `toml:"-"`
	// DataHash is the hex SHA-256 of the data file's bytes for a csv
	// source, "" for a generator. It enters Hash.
	DataHash string `toml:"-"`
}

// Data sources.
const (
	SourceLinearGaussian = "linear-gaussian"
	SourceCSV            = "csv"
	SourceCurve          = "curve"   // one input, a non-linear truth f* (Shape)
	SourceTeacher        = "teacher" // d inputs, a non-linear teacher f* (Teacher)
)

// Data describes where training and test samples come from.
type Data struct {
	// Source is SourceLinearGaussian, SourceCSV, SourceCurve or
	// SourceTeacher. Required.
	Source string `toml:"source"`
	// NTrain is the training-set size drawn for each seed. Required, > 0.
	// When the grid param or the outer grid param is "n_train" it is not
	// written and is set to the largest value of that axis.
	NTrain int `toml:"n_train"`
	// NTest is the number of fixed test inputs (generator) or the size of the
	// held-out test set (csv, exclusive with TestFraction; see TestSize).
	// Generator default 1000, ≥ 1; csv ≥ 1 when given, else 0; curve: the
	// number of quadrature nodes, default 2048, ≥ 2; teacher: Monte Carlo
	// test inputs, default 10000, ≥ 2.
	NTest int `toml:"n_test"`

	// Generator keys (linear-gaussian).

	// Dim is the input dimension d. Required for the generator and the
	// teacher; 1 for a curve (not written).
	Dim int `toml:"dim"`
	// Spectrum sets the diagonal covariance Σ. Default isotropic.
	Spectrum Spectrum `toml:"spectrum"`
	// Signal sets the true coefficient vector β. Default sphere, norm 1.
	Signal Signal `toml:"signal"`
	// Noise sets the additive noise ε. Required, with sd; kind default
	// gaussian; sd 0 is allowed.
	Noise Noise `toml:"noise"`
	// Truth is TruthFixed (default: β drawn once and held) or TruthPerSeed
	// (β redrawn for every seed: risk averaged over the prior).
	Truth string `toml:"truth"`

	// File keys (csv).

	// File is the CSV path, relative to the spec file. Required for csv.
	File string `toml:"file"`
	// Target is the name of the response column. Required for csv.
	Target string `toml:"target"`
	// Features lists the feature columns in order. Default: every column
	// but the target, in file order.
	Features []string `toml:"features"`
	// TestFraction is the share of rows held out as the test set, in (0,1).
	// Exclusive with NTest; default 0.25 when neither is given.
	TestFraction float64 `toml:"test_fraction"`
	// Sampling is SamplingSubsample (default: n_train rows without
	// replacement per seed) or SamplingBootstrap (with replacement).
	Sampling string `toml:"sampling"`

	// Non-linear truth keys (curve, teacher); Noise is shared with the
	// generator.

	// Inputs is the law of the inputs. curve: InputsUniform (default, on
	// [-1, 1]) or InputsGaussian (default mean 0, sd 1); teacher:
	// InputsGaussian (default, N(0, I_d)) or InputsSphere.
	Inputs Inputs `toml:"inputs"`
	// Shape is the truth f* of a curve. Required for curve.
	Shape Shape `toml:"shape"`
	// Teacher is the truth f* of a teacher. Required for teacher.
	Teacher Teacher `toml:"teacher"`
	// Corrupt is the fraction q in [0, 1) of training targets replaced by
	// the clean target of an independent input (a random label; the test
	// risk stays against the clean truth). Default 0.
	Corrupt float64 `toml:"corrupt"`
}

// Input laws.
const (
	InputsUniform  = "uniform"  // curve: x uniform on [Low, High]
	InputsGaussian = "gaussian" // curve: x ~ N(Mean, SD²); teacher: x ~ N(0, I_d)
	InputsSphere   = "sphere"   // teacher: x uniform on the sphere of radius √d
)

// Inputs is the law of the inputs of a curve or a teacher.
type Inputs struct {
	Kind string  `toml:"kind"`
	Low  float64 `toml:"low"`  // uniform, default -1
	High float64 `toml:"high"` // uniform, > Low, default 1
	Mean float64 `toml:"mean"` // curve gaussian, default 0
	SD   float64 `toml:"sd"`   // curve gaussian, > 0, default 1
}

// Shape kinds: the truth f* of a curve.
const (
	ShapeSine       = "sine"       // Amplitude·sin(2π·Frequency·x + Phase)
	ShapeStep       = "step"       // Left for x < At, Right for x ≥ At
	ShapePolynomial = "polynomial" // Σ_k Coefficients[k]·x^k
	ShapeFourier    = "fourier"    // Σ_k Cos[k]·cos(2π·Frequencies[k]·x) + Sin[k]·sin(2π·Frequencies[k]·x)
)

// Shape is the truth f* of a curve; which fields apply depends on Kind.
type Shape struct {
	Kind         string    `toml:"kind"`
	Amplitude    float64   `toml:"amplitude"`    // sine, default 1
	Frequency    float64   `toml:"frequency"`    // sine, cycles per unit of x, required
	Phase        float64   `toml:"phase"`        // sine, radians, default 0
	At           float64   `toml:"at"`           // step, required
	Left         float64   `toml:"left"`         // step, required
	Right        float64   `toml:"right"`        // step, required
	Coefficients []float64 `toml:"coefficients"` // polynomial, c_0 first, required
	Frequencies  []float64 `toml:"frequencies"`  // fourier, required
	Cos          []float64 `toml:"cos"`          // fourier, default zeros, len(Frequencies)
	Sin          []float64 `toml:"sin"`          // fourier, default zeros, len(Frequencies)
}

// Teacher kinds.
const (
	TeacherSingleIndex = "single-index" // g(wᵀx), w a random unit vector
	TeacherTwoLayer    = "two-layer"    // Σ_k a_k relu(w_kᵀx), random weights
)

// Links g of a single-index teacher.
const (
	LinkReLU = "relu" // max(0, z)
	LinkTanh = "tanh" // tanh z
	LinkHe2  = "he2"  // z² − 1, the probabilists' Hermite polynomial of degree 2
	LinkHe3  = "he3"  // z³ − 3z, degree 3
)

// Teacher is the truth f* of a teacher; its weights are drawn once from
// seeds.truth.
type Teacher struct {
	Kind  string `toml:"kind"`
	Link  string `toml:"link"`  // single-index, required
	Width int    `toml:"width"` // two-layer, ≥ 1, required
}

// Truth modes.
const (
	TruthFixed   = "fixed"
	TruthPerSeed = "per-seed"
)

// Sampling modes for a file source.
const (
	SamplingSubsample = "subsample"
	SamplingBootstrap = "bootstrap"
)

// Spectrum kinds.
const (
	SpectrumIsotropic = "isotropic" // Σ = I
	SpectrumPowerLaw  = "power-law" // Σ_jj = j^-Exponent, j = 1..d
	SpectrumSpiked    = "spiked"    // Σ_jj = High for j ≤ Spikes, Low after
	SpectrumList      = "list"      // Σ_jj = Values[j-1], len(Values) = d
)

// Spectrum is the diagonal of the input covariance Σ.
type Spectrum struct {
	Kind     string    `toml:"kind"`
	Exponent float64   `toml:"exponent"` // power-law, > 0
	Spikes   int       `toml:"spikes"`   // spiked, 1 ≤ Spikes < d
	High     float64   `toml:"high"`     // spiked, > 0
	Low      float64   `toml:"low"`      // spiked, > 0
	Values   []float64 `toml:"values"`   // list, each > 0
}

// Signal kinds.
const (
	SignalSphere = "sphere" // β uniform on the sphere of radius Norm in R^d
	SignalTop    = "top"    // β uniform on the sphere of radius Norm in the first Top coordinates, 0 after
	SignalList   = "list"   // β = Values (len d)
)

// Signal is the true coefficient vector β.
type Signal struct {
	Kind   string    `toml:"kind"`
	Norm   float64   `toml:"norm"`   // sphere, top: Euclidean norm ‖β‖, default 1
	Top    int       `toml:"top"`    // top: 1 ≤ Top ≤ d
	Values []float64 `toml:"values"` // list
}

// Noise kinds.
const (
	NoiseGaussian = "gaussian"  // ε ~ N(0, SD²)
	NoiseStudentT = "student-t" // ε = SD · t_DF / sqrt(DF/(DF-2)), so Var ε = SD²
)

// Noise is the additive label noise of a generator.
type Noise struct {
	Kind string  `toml:"kind"`
	SD   float64 `toml:"sd"` // ≥ 0
	DF   float64 `toml:"df"` // student-t, > 2
}

// Model families.
const (
	FamilyLeastSquares = "least-squares"
	FamilyRidge        = "ridge"
)

// Model is one model family with its fixed parameters. Which keys a family
// accepts is listed in FamilyKeys.
type Model struct {
	Family string `toml:"family"`
	// Label names the model in tables. Default (DefaultLabel): the family,
	// with the penalty for ridge ("ridge λ=0.1"; just "ridge" on a lambda
	// grid) and " (intercept)" when Intercept is set. Labels are unique
	// within a spec.
	Label string `toml:"label"`
	// Lambda is the ridge penalty λ ≥ 0 of (1/n)‖y − Xb‖² + λ‖b‖².
	// Required for ridge unless the grid param or the outer grid param is
	// "lambda", in which case it must not be written and stays 0.
	Lambda float64 `toml:"lambda"`
	// Intercept adds an unpenalised intercept. Default false.
	Intercept bool `toml:"intercept"`
	// Params holds the family's other numeric parameters (see Families),
	// resolved: defaults filled in, the grid param left out.
	Params map[string]float64 `toml:"-"`
	// Options holds the family's string choices (see Families), resolved.
	Options map[string]string `toml:"-"`
}

// Grid params (knobs).
const (
	ParamFeatures = "features" // use the first p input coordinates
	ParamLambda   = "lambda"   // the ridge penalty
	ParamNTrain   = "n_train"  // the training-set size (nested samples)
)

// Grid is the capacity grid: one knob and its values, optionally crossed
// with a second, outer knob.
type Grid struct {
	// Param is the knob: one of Params; every model's family must accept
	// it (Schema.Knobs).
	Param string `toml:"param"`
	// Values lists the grid explicitly. Exclusive with From/To/Points.
	// After Load it holds the resolved, sorted, de-duplicated values, and
	// From, To, Points, Spacing and Include are cleared (see Expand), so a
	// range and the list it expands to resolve to the same Grid.
	Values []float64 `toml:"values"`
	// From, To, Points, Spacing give Points values from From to To,
	// Spacing "linear" (default) or "log"; integer knobs are rounded and
	// de-duplicated. Points is at most MaxPoints.
	From    float64 `toml:"from"`
	To      float64 `toml:"to"`
	Points  int     `toml:"points"`
	Spacing string  `toml:"spacing"`
	// Include adds values to a from/to grid (e.g. the threshold p = n).
	Include []float64 `toml:"include"`
	// Outer, when set ([grid.outer]), is a second axis with its own param
	// and values, written like this one: the grid is then Values × Outer.Values,
	// run as one one-axis grid per outer value (see At). The outer param
	// differs from Param and is n_train (it sets data.n_train of each slice
	// and is then not written in [data]) or a numeric parameter of every
	// model's family (lambda, degree, …: it sets that parameter, which is
	// then not written in [[model]]). Default nil: a one-axis grid.
	// Outer.Outer is always nil.
	Outer *Grid `toml:"outer"`
}

// Seeds sets the replications.
type Seeds struct {
	// Count is the number of seeds S ≥ 2 (unbiased variance needs two).
	Count int `toml:"count"`
	// Start is the first seed; seeds are Start, Start+1, …. Default 1.
	Start uint64 `toml:"start"`
	// Truth seeds the fixed truth β, the fixed test inputs and the csv
	// test split. Default 0. It is kept apart from Start and Count so
	// that adding seeds does not change the distribution.
	Truth uint64 `toml:"truth"`
	// Models is the number M ≥ 1 of model seeds per data seed, for
	// families with randomness of their own (Schema.Randomized): each data
	// seed's sample is fitted M times, and the variance is split into the
	// parts due to the sample and to the model's randomness. Default 1.
	// Families without randomness are fitted once per data seed.
	Models int `toml:"models"`
}

// Standard-error styles: how a table prints a mean with its standard error.
const (
	SEParentheses = "parentheses" // 1.234 (0.012)
	SEPlusMinus   = "plus-minus"  // 1.234 ± 0.012
)

// SEStyles lists the accepted se_style values, the default first.
var SEStyles = []string{SEParentheses, SEPlusMinus}

// Tables holds presentation settings of the tables: they decide how numbers
// are printed, never which numbers.
type Tables struct {
	// SEStyle is how table.tex prints a mean with its standard error:
	// SEParentheses (default) or SEPlusMinus. A flag of run and report
	// overrides it.
	SEStyle string `toml:"se_style"`
}
