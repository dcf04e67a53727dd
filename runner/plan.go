package runner

import "riskgrid/spec"

// Plan is the size of a run, known before it starts.
type Plan struct {
	Cells int // (models × their model seeds) × grid values × data seeds
	Paths int // (models × their model seeds) × data seeds: one path fit covers every grid value
	Seeds int
	// PeakBytes estimates the peak of live heap data: per worker one
	// training draw, the factorizations of a path, the Gram matrices the
	// models of a seed share and the seed's cache entry; once, the fixed
	// test inputs and the reduction's mean deviation per grid point. With
	// Go's default GOGC=100 the process's resident size runs up to about
	// twice this.
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
	if s.Data.Source == spec.SourceCSV {
		coefs = int64(g) * int64(s.Data.NTest)
	}
	perWorker := 8 * (n*d + n + // the draw
		3*n*k + 2*n*n + // QR of the leading block, Gram and its factor
		grams*n*n + // the Gram matrices shared by the models
		d*(k+1) + // a transposed QR past the threshold
		2*int64(m)*coefs) // the entry, written and encoded
	once := 8 * (int64(s.Data.NTest)*d + int64(m*g)*(d+1) + int64(m*g*S)*6)
	fits := 0 // path fits per data seed: one per model seed
	for _, md := range s.Models {
		if spec.Randomized(md.Family) {
			fits += max(s.Seeds.Models, 1)
		} else {
			fits++
		}
	}
	return Plan{
		Cells:     fits * g * S,
		Paths:     fits * S,
		Seeds:     S,
		PeakBytes: int64(workers)*perWorker + once,
	}
}
