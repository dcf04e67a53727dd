package data

import "gonum.org/v1/gonum/mat"

// Problem is what a source holds fixed across seeds.
type Problem struct {
	// Dim is the number of features available.
	Dim int
	// Names are the feature names (csv), nil for a generator.
	Names []string
	// Sigma is the diagonal of the input covariance Σ (inputs have mean 0),
	// nil when unknown (csv).
	Sigma []float64
	// NoiseVar is Var ε, NaN when unknown (csv).
	NoiseVar float64
	// Beta is the fixed truth, nil when it is redrawn per seed or unknown.
	Beta []float64
	// TestX holds the fixed test inputs, m × Dim.
	TestX *mat.Dense
	// TestY holds, per test input, f*(x) for a generator with fixed truth
	// (nil when the truth is per seed), or the observed response (csv).
	TestY []float64
	// TruthKnown is true when TestY (or Beta) is the noiseless truth.
	TruthKnown bool
	// TestW holds a weight per test input, summing to 1 (quadrature
	// weights); nil means 1/m each.
	TestW []float64
	// TestBasis says what the test inputs stand for, and so how a risk
	// measured on them is labelled: TestQuadrature (nodes of a quadrature
	// rule of the input law: exact up to the rule's error), TestMonteCarlo
	// (m independent draws of the input law: the risk carries a Monte
	// Carlo error, reported) or TestHeldOut (rows of a data file, with
	// observed responses).
	TestBasis string
}

// Test bases (Problem.TestBasis).
const (
	TestQuadrature = "quadrature"
	TestMonteCarlo = "monte-carlo"
	TestHeldOut    = "held-out"
)

// Sample is one seed's training sample.
type Sample struct {
	X    *mat.Dense // NTrain × Dim
	Y    []float64  // NTrain
	Beta []float64  // the truth this sample was drawn under (generator), nil for csv
}

// Source makes the data of one spec.
type Source interface {
	// Problem returns what is fixed across seeds.
	Problem() *Problem
	// Draw returns the training sample of one seed. Draws of different
	// seeds are independent; the same seed always gives the same sample.
	// The first k rows of a draw are the draw of size k (nested samples).
	// Draw is safe for concurrent use.
	Draw(seed uint64) (*Sample, error)
}
