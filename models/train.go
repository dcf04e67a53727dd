package models

import (
	"gonum.org/v1/gonum/mat"

	"riskgrid/data"
)

// Train is one training sample, X (n×d) and y (length n), as every model of
// a seed sees it. It caches what the models fitted to it can share, so
// that least squares and ridge on the same draw do not repeat it:
//
//   - the sample with the intercept eliminated (see design), per intercept
//     setting, for the features knob;
//   - the Gram matrices X_p X_pᵀ of the features path past p = n (an m×m
//     matrix per grid value: 8·m² bytes each);
//   - the squared Euclidean distances among the training rows, for kernel
//     ridge and k-NN (8·n² bytes).
//
// The cache lives as long as the Train; a Train is not safe for concurrent
// use (the runner gives each seed its own).
type Train struct {
	X *mat.Dense
	Y []float64
	// Test holds the inputs at which a fit that is not linear in the input
	// columns reports its predictions (Fit.Pred): m × d, the same columns
	// as X. Nil when the runner needs no predictions.
	Test *mat.Dense

	// seed identifies the model's own randomness (see Rand).
	key             string
	seed, modelSeed uint64

	designs map[designKey]*design
	dists   *distances // squared distances, shared by kernel ridge and k-NN
}

type designKey struct {
	n, p      int
	intercept bool
}

// NewTrain wraps a training sample. It panics if len(y) is not the number
// of rows of x.
func NewTrain(x *mat.Dense, y []float64) *Train {
	checkShape(x, y)
	return &Train{X: x, Y: y}
}

// SetSeeds sets what a randomized family's streams derive from: the data
// key, the data seed and the model seed (see Rand).
func (t *Train) SetSeeds(key string, seed, modelSeed uint64) {
	t.key, t.seed, t.modelSeed = key, seed, modelSeed
}

// Rand returns the stream of a randomized family's own randomness (random
// weights, initialisation, minibatch order): derived from the data key, the
// data seed, the model seed and tag (the family's name and what the stream
// is for), so two families or two uses never share draws, and a fit does
// not depend on the worker that ran it.
func (t *Train) Rand(tag string) *data.Stream {
	// The data key is fixed-length hex, so key + tag is unambiguous.
	return data.NewStream(t.key+" model "+tag, t.seed, t.modelSeed)
}

// design returns the first n rows and p columns with the intercept
// eliminated. With share it is kept for the next model (the features path,
// where every model reduces the same full sample); otherwise it is built
// afresh (the n_train path, where keeping one per grid value would cost a
// copy of the sample each).
func (t *Train) design(n, p int, intercept, share bool) (*design, error) {
	k := designKey{n, p, intercept}
	if d, ok := t.designs[k]; ok {
		return d, nil
	}
	d, err := reduce(t.X, t.Y, n, p, intercept)
	if err != nil || !share {
		return d, err
	}
	if t.designs == nil {
		t.designs = map[designKey]*design{}
	}
	d.grams = map[int][]float64{}
	t.designs[k] = d
	return d, nil
}
