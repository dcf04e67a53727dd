package spec

import (
	"math"
	"slices"
)

// Model families beyond the linear ones. Each is described by a Schema in
// Families: its knobs, its numeric parameters and its choices. The decoder,
// the canonical form, the hashes and the default labels all read the
// schema, so a family is added here and in models/ only.
const (
	FamilyRandomFeatures = "random-features"    // min-norm or ridge fit on N random features
	FamilyPolynomial     = "polynomial"         // one input, orthogonal polynomial basis
	FamilyKernelRidge    = "kernel-ridge"       // Gaussian or Laplace kernel, penalty ≥ 0
	FamilyNeighbours     = "nearest-neighbours" // k-NN average
	FamilyGradient       = "gradient-descent"   // least squares by gradient descent from zero
	FamilyTwoLayer       = "two-layer-net"      // ReLU network trained by gradient descent
)

// More grid params (knobs). ParamFeatures is also the number N of random
// features of random-features.
const (
	ParamDegree     = "degree"     // polynomial degree
	ParamBandwidth  = "bandwidth"  // kernel bandwidth
	ParamNeighbours = "neighbours" // k of k-NN
	ParamSteps      = "steps"      // gradient steps
	ParamWidth      = "width"      // hidden units of a two-layer network
)

// Num describes one numeric parameter of a family. A parameter that is also
// a knob of the family is not written in [[model]] when it is the grid
// param; otherwise it is required unless it has a default.
type Num struct {
	Key      string
	Integer  bool
	OK       func(float64) bool
	Accepted string  // what OK accepts, for error messages
	Default  float64 // used when absent, if HasDefault
	// HasDefault makes the parameter optional.
	HasDefault bool
}

// Choice describes a string parameter with a fixed set of values.
type Choice struct {
	Key     string
	Values  []string
	Default string // "" makes it required
}

// Schema describes a model family for the decoder.
type Schema struct {
	// Knobs are the grid params the family accepts.
	Knobs []string
	// Nums and Choices are its parameters; "lambda" is kept in
	// Model.Lambda, every other numeric parameter in Model.Params, choices
	// in Model.Options.
	Nums    []Num
	Choices []Choice
	// Intercept says whether the family takes the intercept key.
	Intercept bool
	// Linear says whether fits are linear in the input columns (they set
	// models.Fit.Coef): the runner then evaluates them itself, exactly when
	// the input law is known. Other fits report predictions at the test
	// inputs.
	Linear bool
	// Randomized says whether a fit uses randomness of its own (random
	// features, initialisation, minibatch order), seeded by the model
	// seeds ([seeds] models).
	Randomized bool
}

func positiveInt(x float64) bool { return x >= 1 && x <= 1<<31 && x == math.Trunc(x) }
func nonNegInt(x float64) bool   { return x >= 0 && x <= 1<<31 && x == math.Trunc(x) }

var (
	penalty    = Num{Key: "lambda", OK: nonNegative, Accepted: "a number ≥ 0 (0: minimum-norm)", HasDefault: true}
	stepSize   = Num{Key: "step_size", OK: nonNegative, Accepted: "a number ≥ 0 (0: 1/L, L the largest eigenvalue of the loss's Hessian at the sample)", HasDefault: true}
	lineKnobs  = []string{ParamFeatures, ParamNTrain}
	ridgeKnobs = []string{ParamFeatures, ParamLambda, ParamNTrain}
)

// Families lists every model family and its schema.
var Families = map[string]Schema{
	FamilyLeastSquares: {Knobs: lineKnobs, Intercept: true, Linear: true},
	FamilyRidge: {Knobs: ridgeKnobs, Intercept: true, Linear: true,
		Nums: []Num{{Key: "lambda", OK: nonNegative, Accepted: "a number ≥ 0, the ridge penalty"}}},
	FamilyRandomFeatures: {Knobs: ridgeKnobs, Randomized: true,
		Nums: []Num{
			{Key: "features", Integer: true, OK: positiveInt, Accepted: "an integer ≥ 1, the number N of random features"},
			penalty,
			{Key: "scale", OK: positive, Accepted: "a number > 0, the scale of the random weights (relu: (w, offset) ~ N(0, scale²/(d+1) I); fourier: w ~ N(0, I/scale²))", Default: 1, HasDefault: true},
		},
		Choices: []Choice{{Key: "activation", Values: []string{"relu", "fourier"}, Default: "relu"}}},
	FamilyPolynomial: {Knobs: []string{ParamDegree, ParamLambda, ParamNTrain},
		Nums: []Num{
			{Key: "degree", Integer: true, OK: nonNegInt, Accepted: "an integer ≥ 0"},
			penalty,
			{Key: "low", OK: anyNumber, Accepted: "a number, the left end of the input interval", Default: -1, HasDefault: true},
			{Key: "high", OK: anyNumber, Accepted: "a number > low, the right end of the input interval", Default: 1, HasDefault: true},
		},
		Choices: []Choice{{Key: "basis", Values: []string{"legendre", "chebyshev"}, Default: "legendre"}}},
	FamilyKernelRidge: {Knobs: []string{ParamBandwidth, ParamLambda, ParamNTrain},
		Nums: []Num{
			{Key: "bandwidth", OK: positive, Accepted: "a number > 0"},
			penalty,
		},
		Choices: []Choice{{Key: "kernel", Values: []string{"gaussian", "laplace"}, Default: "gaussian"}}},
	FamilyNeighbours: {Knobs: []string{ParamNeighbours, ParamNTrain},
		Nums: []Num{{Key: "neighbours", Integer: true, OK: positiveInt, Accepted: "an integer ≥ 1 (at most n_train)"}}},
	FamilyGradient: {Knobs: []string{ParamSteps, ParamFeatures, ParamNTrain}, Linear: true,
		Nums: []Num{
			{Key: "steps", Integer: true, OK: nonNegInt, Accepted: "an integer ≥ 0"},
			stepSize,
		}},
	FamilyTwoLayer: {Knobs: []string{ParamWidth, ParamSteps, ParamNTrain}, Randomized: true,
		Nums: []Num{
			{Key: "width", Integer: true, OK: positiveInt, Accepted: "an integer ≥ 1, the hidden units"},
			{Key: "steps", Integer: true, OK: nonNegInt, Accepted: "an integer ≥ 0"},
			{Key: "step_size", OK: positive, Accepted: "a number > 0", Default: 0.05, HasDefault: true},
			{Key: "init_scale", OK: positive, Accepted: "a number > 0, multiplies the default initialisation", Default: 1, HasDefault: true},
			{Key: "batch", Integer: true, OK: nonNegInt, Accepted: "an integer ≥ 0 (0: full batch)", HasDefault: true},
		}},
}

// FamilyNames lists the families in the order error messages give them.
var FamilyNames = []string{FamilyLeastSquares, FamilyRidge, FamilyRandomFeatures, FamilyPolynomial,
	FamilyKernelRidge, FamilyNeighbours, FamilyGradient, FamilyTwoLayer}

// Params lists every grid param in the order error messages give them.
var Params = []string{ParamFeatures, ParamLambda, ParamNTrain, ParamDegree, ParamBandwidth,
	ParamNeighbours, ParamSteps, ParamWidth}

// integerParam reports whether a grid param takes whole values.
func integerParam(param string) bool {
	switch param {
	case ParamFeatures, ParamNTrain, ParamDegree, ParamNeighbours, ParamSteps, ParamWidth:
		return true
	}
	return false
}

// gridValueCheck returns what a grid value of param must satisfy.
func gridValueCheck(param string) (func(float64) bool, string) {
	switch param {
	case ParamLambda:
		return nonNegative, "penalties ≥ 0"
	case ParamBandwidth:
		return positive, "bandwidths > 0"
	case ParamDegree, ParamSteps:
		return func(x float64) bool { return x >= 0 && x <= 1<<53 && x == math.Trunc(x) }, "whole numbers ≥ 0"
	}
	return func(x float64) bool { return x >= 1 && x <= 1<<53 && x == math.Trunc(x) }, "whole numbers ≥ 1"
}

// keys returns the keys a [[model]] table of the family may hold.
func (f Schema) keys() []string {
	k := []string{"family", "label"}
	for _, n := range f.Nums {
		k = append(k, n.Key)
	}
	for _, c := range f.Choices {
		k = append(k, c.Key)
	}
	if f.Intercept {
		k = append(k, "intercept")
	}
	return k
}

// anyFamilyTakes reports whether some family takes the key.
func anyFamilyTakes(key string) bool {
	for _, f := range Families {
		if slices.Contains(f.keys(), key) {
			return true
		}
	}
	return false
}

// HasKnob reports whether the family accepts the grid param.
func HasKnob(family, param string) bool { return slices.Contains(Families[family].Knobs, param) }

// Linear reports whether fits of the family are linear in the input columns.
func Linear(family string) bool { return Families[family].Linear }

// Randomized reports whether fits of the family use randomness of their own.
func Randomized(family string) bool { return Families[family].Randomized }

// Param returns a numeric parameter of m ("lambda" included).
func (m Model) Param(key string) float64 {
	if key == "lambda" {
		return m.Lambda
	}
	return m.Params[key]
}

// written returns the parameters of m that the spec holds (all but the
// grid params), in schema order, for the canonical form and the hashes.
func (m Model) written(params ...string) (nums []Num, choices []Choice) {
	f := Families[m.Family]
	for _, n := range f.Nums {
		if !slices.Contains(params, n.Key) {
			nums = append(nums, n)
		}
	}
	return nums, f.Choices
}
