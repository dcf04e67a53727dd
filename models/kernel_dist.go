package models

import (
	"fmt"
	"math"
)

// distances holds the squared Euclidean distances of one training sample:
// among its N rows (N×N, both triangles, zero diagonal) and from each of
// the M rows of Train.Test to them (M×N; nil without test inputs). The
// kernel ridge and k-NN fits of a seed share them through the Train, and
// every grid value (a bandwidth, k, the first n rows) reads them: the
// distances among the first n rows are the leading n×n block.
//
// Each entry is Σ_j (a_j − b_j)², summed in column order — not the
// expansion ‖a‖² + ‖b‖² − 2aᵀb, which loses the digits of near neighbours
// to cancellation. Equal rows are at distance exactly 0, and the same pair
// always gets the same bits, so ties between neighbours are exact.
type distances struct {
	n, m  int
	train []float64 // n×n
	test  []float64 // m×n, nil when m = 0
}

// sqDists returns the squared distances of t, computing them on first use.
// It returns ErrNotFinite for a NaN or infinite input or target (a target
// is checked here too, since every user of the distances fits y).
func (t *Train) sqDists() (*distances, error) {
	if t.dists != nil {
		return t.dists, nil
	}
	n, d := checkShape(t.X, t.Y)
	x := t.X.RawMatrix()
	for i := range n {
		for j, v := range x.Data[i*x.Stride : i*x.Stride+d] {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, fmt.Errorf("%w: x[%d][%d] = %v", ErrNotFinite, i, j, v)
			}
		}
		if v := t.Y[i]; math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("%w: y[%d] = %v", ErrNotFinite, i, v)
		}
	}
	ds := &distances{n: n, train: make([]float64, n*n)}
	for i := range n {
		a := x.Data[i*x.Stride : i*x.Stride+d]
		for k := i + 1; k < n; k++ {
			s := sqDist(a, x.Data[k*x.Stride:k*x.Stride+d])
			ds.train[i*n+k] = s
			ds.train[k*n+i] = s
		}
	}
	if t.Test != nil {
		m, dt := t.Test.Dims()
		if dt != d {
			panic(fmt.Sprintf("models: Test has %d columns, X has %d", dt, d))
		}
		z := t.Test.RawMatrix()
		ds.m = m
		ds.test = make([]float64, m*n)
		for i := range m {
			a := z.Data[i*z.Stride : i*z.Stride+d]
			for j, v := range a {
				if math.IsNaN(v) || math.IsInf(v, 0) {
					return nil, fmt.Errorf("%w: test input [%d][%d] = %v", ErrNotFinite, i, j, v)
				}
			}
			for k := range n {
				ds.test[i*n+k] = sqDist(a, x.Data[k*x.Stride:k*x.Stride+d])
			}
		}
	}
	t.dists = ds
	return ds, nil
}

// sqDist returns Σ_j (a_j − b_j)².
func sqDist(a, b []float64) float64 {
	var s float64
	for j, v := range a {
		e := v - b[j]
		s += e * e
	}
	return s
}
