package runner

import "riskgrid/spec"

// Plan is the size of a run, known before it starts.
type Plan struct {
	Cells int // (models × their model seeds) × grid values × data seeds
	Paths int // (models × their model seeds) × data seeds: one path fit covers every grid value
	Seeds int
	// PeakBytes estimates the peak of live heap data: per worker one
	// training draw, the factorizations of a path, the Gram matrices the
	// models of a seed share, the largest working set of a family (see
	// familyBytes) and the seed's cache entry; once, the fixed test inputs
	// and the reduction's mean deviation per grid point. With Go's default
	// GOGC=100 the process's resident size runs up to about twice this.
	PeakBytes int64
}

// Size sizes the run of s with the given number of workers.
// A two-axis spec is run one slice at a time: its cells add up, its peak is
// the largest slice's.
func Size(s *spec.Spec, workers int) Plan {
	if o := s.Grid.Outer; o != nil {
		p := Plan{Seeds: s.Seeds.Count}
		for _, v := range o.Values {
			q := Size(s.At(v), workers)
			p.Cells += q.Cells
			p.Paths += q.Paths
			p.PeakBytes = max(p.PeakBytes, q.PeakBytes)
		}
		return p
	}
	if workers <= 0 {
		workers = 1
	}
	m, g, S := len(s.Models), len(s.Grid.Values), s.Seeds.Count
	fits := 0 // path fits per data seed: one per model seed
	for _, md := range s.Models {
		if spec.Randomized(md.Family) {
			fits += max(s.Seeds.Models, 1)
		} else {
			fits++
		}
	}
	n, d := int64(s.Data.NTrain), int64(s.Data.Dim)
	k := min(n, d)
	var coefs int64 // coefficients stored per seed entry
	var grams int64 // Gram matrices kept for the models of a seed
	for _, v := range s.Grid.Values {
		if s.Grid.Param == spec.ParamFeatures {
			coefs += int64(v)
			if int64(v) >= n {
				grams++
			}
		} else {
			coefs += d
		}
	}
	exact := s.Data.Source == spec.SourceLinearGaussian
	var work int64 // the largest family-specific working set of a path
	for _, md := range s.Models {
		exact = exact && spec.Linear(md.Family)
		work = max(work, familyBytes(s, md))
	}
	if !exact {
		// Every cell keeps its predictions at the test inputs.
		coefs = int64(g) * int64(s.Data.NTest)
	}
	perWorker := 8*(n*d+n+ // the draw
		3*n*k+2*n*n+ // QR of the leading block, Gram and its factor
		grams*n*n+ // the Gram matrices shared by the models
		d*(k+1)+ // a transposed QR past the threshold
		2*int64(fits)*coefs) + // the entry, written and encoded
		work
	dev := d + 1 // the reduction's deviation per grid point
	if !exact {
		dev = 2 * int64(s.Data.NTest) // and the per-input sums of squares
	}
	once := 8 * (int64(s.Data.NTest)*d + int64(m*g)*dev + int64(m*g*S)*6)
	return Plan{
		Cells:     fits * g * S,
		Paths:     fits * S,
		Seeds:     S,
		PeakBytes: int64(workers)*perWorker + once,
	}
}

// familyBytes estimates the working set of one path fit of a family beyond
// the draw and the least-squares factorizations counted in Size, from the
// largest value of each size knob: the derived design of random features
// and polynomials (training rows and a block of 256 test rows, and its
// factorization), the n×n kernel, distance and eigenvector matrices of
// kernel ridge, the SVD of gradient descent, and the weights, activations
// and their gradients of a network.
func familyBytes(s *spec.Spec, m spec.Model) int64 {
	n, d := int64(s.Data.NTrain), int64(s.Data.Dim)
	top := func(key string) int64 {
		if s.Grid.Param == key {
			return int64(s.Grid.Values[len(s.Grid.Values)-1])
		}
		return int64(m.Param(key))
	}
	switch m.Family {
	case spec.FamilyRandomFeatures:
		N := top("features")
		return 8 * ((2*n+256)*N + n*min(n, N))
	case spec.FamilyPolynomial:
		D := top("degree") + 1
		return 8 * ((2*n+256)*D + n*min(n, D))
	case spec.FamilyKernelRidge:
		return 8 * 5 * n * n
	case spec.FamilyNeighbours:
		return 8 * 2 * n
	case spec.FamilyGradient:
		return 8 * (n*d + 2*d*min(n, d))
	case spec.FamilyTwoLayer:
		W := top("width")
		return 8 * (W*(d+2)*3 + 4*n*W + 256*W)
	}
	return 0
}
