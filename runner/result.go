package runner

import (
	"encoding/json"
	"math"
	"strconv"
)

// Schema names the version of the result.json layout. Bump it on any change
// a reader could notice.
const Schema = "riskgrid.result/2"

// Result is the artifact of one run: everything needed to re-render its
// tables without refitting. It holds nothing that varies between two runs of
// the same spec on the same build (timings live in Timing), so result.json is
// byte-identical for any -j.
type Result struct {
	Schema   string `json:"schema"`
	Engine   string `json:"engine"`   // engine version salt (spec.Engine)
	Go       string `json:"go"`       // runtime.Version() of the build
	Platform string `json:"platform"` // GOOS/GOARCH
	Name     string `json:"name"`
	About    string `json:"about,omitempty"`
	Hash     string `json:"hash"`      // spec hash, hex SHA-256
	SpecTOML string `json:"spec_toml"` // the resolved spec, canonical TOML
	Param    string `json:"param"`     // grid knob (the inner one of a two-axis grid)
	// OuterParam is the outer knob of a two-axis grid, "" for one axis.
	OuterParam string `json:"outer_param,omitempty"`
	Seeds      int    `json:"seeds"`   // seeds requested
	NTrain     int    `json:"n_train"` // training-set size (largest, for an n_train axis)

	// RiskBasis says how Risk was measured: RiskExact or RiskTestSet.
	RiskBasis string `json:"risk_basis"`
	// SplitBasis says how bias² and variance were measured: SplitExact,
	// SplitTestInputs or SplitLumped (bias² includes the noise).
	SplitBasis string `json:"split_basis"`
	// TestPoints is the number of test inputs the test-set quantities use
	// (0 when everything is exact).
	TestPoints int `json:"test_points"`
	// TruthPerSeed is true when β is redrawn for every seed; bias² is then
	// measured against each seed's own truth.
	TruthPerSeed bool `json:"truth_per_seed"`
	// ModelSeeds is the number of model seeds per data seed ([seeds]
	// models) of the families with randomness of their own.
	ModelSeeds int `json:"model_seeds"`

	Models []ModelResult `json:"models"`

	// Created is when the run that computed the numbers started (RFC 3339,
	// UTC: Timing.Created), for the provenance line of the tables. It is not
	// written to result.json, which must not vary between runs; a reader of
	// a result folder sets it from timing.json. "" when unknown.
	Created string `json:"-"`
}

// Risk and split bases.
const (
	RiskExact       = "exact"       // R(b) = (b−β)ᵀΣ(b−β) + b0² + σ², no sampling error over x
	RiskQuadrature  = "quadrature"  // Σ_j w_j (f − f*)²(x_j) + σ² over a quadrature rule of the input law
	RiskMonteCarlo  = "monte-carlo" // the same over m independent test inputs, w_j = 1/m: Monte Carlo SE reported
	RiskTestSet     = "test-set"    // mean squared error on the held-out test set
	SplitExact      = "exact"       // over the input distribution, from coefficients
	SplitTestInputs = "test-inputs" // over the fixed test inputs against f*
	SplitLumped     = "lumped"      // truth unknown: bias² column holds bias² + noise
)

// ModelResult is one model's curve over the grid. A two-axis result holds
// one curve per outer value and model: the outer values in order, within
// each the models in spec order, each curve the one a one-axis run of that
// slice (spec.At) gives.
type ModelResult struct {
	Label  string `json:"label"`
	Family string `json:"family"`
	// Outer is the outer knob's value of this curve; nil for one axis.
	Outer  *float64 `json:"outer,omitempty"`
	Points []Point  `json:"points"`
}

// Point is one grid value: estimates over the seeds that succeeded.
type Point struct {
	Value float64 `json:"value"` // the knob's value
	Seeds int     `json:"seeds"` // seeds that produced a fit

	Risk Estimate `json:"risk"` // true (exact) or test risk
	// RiskMCSE is the Monte Carlo standard error of Risk from the finite
	// test sample (risk basis monte-carlo), apart from Risk.SE, which is
	// over seeds; null on other bases.
	RiskMCSE Num `json:"risk_mc_se"`
	// Theory is the exact expected true risk E R from a published formula
	// where one applies to this model, data and grid value (see theory.go);
	// null elsewhere.
	Theory    Num      `json:"theory"`
	TrainRisk Estimate `json:"train_risk"` // (1/n)‖y − ŷ‖² on the training sample
	Gap       Estimate `json:"gap"`        // Risk − TrainRisk, paired per seed
	Bias2     Estimate `json:"bias2"`      // unbiased: ‖ē‖² − V̂/S (may be < 0)
	Variance  Estimate `json:"variance"`   // total: VarianceData + VarianceModel
	// VarianceData is Var_data(E_model f), the part due to the training
	// sample; VarianceModel is E_data[Var_model f], the part due to the
	// model's own randomness (exactly 0 for a family without any). Both
	// unbiased for the nested design (one-way random effects).
	VarianceData  Estimate `json:"variance_data"`
	VarianceModel Estimate `json:"variance_model"`
	Noise         Estimate `json:"noise"` // σ², exact (SE 0); NaN when lumped
	Sum           Num      `json:"sum"`   // Bias2 + Variance + Noise
	Norm          Estimate `json:"norm"`  // ‖b‖₂
	DF            Estimate `json:"df"`    // effective degrees of freedom tr(H)

	// Quantiles of Risk over seeds (the mean has no finite expectation at
	// the interpolation threshold).
	RiskQ1     Num `json:"risk_q1"`
	RiskMedian Num `json:"risk_median"`
	RiskQ3     Num `json:"risk_q3"`
	// CondMedian is the median over fits of the condition number (estimate)
	// of the system each fit solved (models.Fit.Cond); null when the family
	// reports none.
	CondMedian Num `json:"cond_median"`
	// HeavyTail flags a point whose mean risk is carried by a few seeds.
	HeavyTail bool `json:"heavy_tail"`
	// Interpolating is the share of seeds whose training risk is below
	// the interpolation tolerance.
	Interpolating Num `json:"interpolating"`

	Errors []CellError `json:"errors,omitempty"`
}

// UnmarshalJSON reads a Point; a number missing from the file (written
// before the field existed) reads as undefined (NaN), not as 0.
func (p *Point) UnmarshalJSON(b []byte) error {
	type plain Point // without this method
	nan := Estimate{NaN, NaN}
	q := plain{Theory: NaN, RiskMCSE: NaN, CondMedian: NaN, VarianceData: nan, VarianceModel: nan}
	if err := json.Unmarshal(b, &q); err != nil {
		return err
	}
	*p = Point(q)
	return nil
}

// Estimate is a mean over seeds with its standard error.
type Estimate struct {
	Mean Num `json:"mean"`
	SE   Num `json:"se"`
}

// CellError records one failed fit.
type CellError struct {
	Seed      uint64 `json:"seed"`
	ModelSeed int    `json:"model_seed,omitempty"` // 0 for the first (or only) model seed
	Msg       string `json:"msg"`
}

// Num is a float64 that encodes NaN and ±Inf as JSON null (JSON has no
// such numbers) and otherwise in the shortest form that reads back exactly.
type Num float64

// NaN is the Num used for a quantity that is undefined or unknown.
var NaN = Num(math.NaN())

// IsNaN reports whether n is NaN or infinite (both encode as null).
func (n Num) IsNaN() bool { return math.IsNaN(float64(n)) || math.IsInf(float64(n), 0) }

// MarshalJSON implements json.Marshaler.
func (n Num) MarshalJSON() ([]byte, error) {
	if n.IsNaN() {
		return []byte("null"), nil
	}
	return strconv.AppendFloat(nil, float64(n), 'g', -1, 64), nil
}

// UnmarshalJSON implements json.Unmarshaler.
func (n *Num) UnmarshalJSON(b []byte) error {
	if string(b) == "null" {
		*n = NaN
		return nil
	}
	var f float64
	if err := json.Unmarshal(b, &f); err != nil {
		return err
	}
	*n = Num(f)
	return nil
}

// Timing is kept apart from Result (timing.json) so that results compare
// byte for byte.
type Timing struct {
	Created  string  `json:"created"` // RFC 3339, UTC
	Workers  int     `json:"workers"`
	Computed int     `json:"cells_computed"`
	Cached   int     `json:"cells_cached"`
	Seconds  float64 `json:"wall_seconds"`
}
