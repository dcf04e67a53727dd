package models

import (
	"fmt"
	"math"
)

// distances holds the squared Euclidean distances among the N training
// rows of a sample (N×N, both triangles, zero diagonal). The kernel ridge
// and k-NN fits of a seed share them through the Train, and every grid
// value (a bandwidth, k, the first n rows) reads them: the distances among
// the first n rows are the leading n×n block. The distances from the test
// inputs (Train.Test, often thousands of rows) are not kept: they are
// computed one test row at a time (testDists), so memory stays O(N²)
// rather than O(M·N).
//
// Each entry is Σ_j (a_j − b_j)², summed in column order — not the
// expansion ‖a‖² + ‖b‖² − 2aᵀb, which loses the digits of near neighbours
// to cancellation. Equal rows are at distance exactly 0, and the same pair
// always gets the same bits, so ties between neighbours are exact.
type distances struct {
	n     int
	train []float64 // n×n
	m     int       // test rows (0 without Train.Test)
}

// sqDists returns the squared distances of t, computing them on first use.
// It returns ErrNotFinite for a NaN or infinite input, test input or target
// (a target is checked here too, since every user of the distances fits y).
// It panics if Train.Test has other columns than X.
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
		for i := range m {
			for j, v := range z.Data[i*z.Stride : i*z.Stride+d] {
				if math.IsNaN(v) || math.IsInf(v, 0) {
					return nil, fmt.Errorf("%w: test input [%d][%d] = %v", ErrNotFinite, i, j, v)
				}
			}
		}
		ds.m = m
	}
	t.dists = ds
	return ds, nil
}

// testDists fills dst (length N) with the squared distances from test row j
// to every training row, summed as in distances.
func (t *Train) testDists(j int, dst []float64) []float64 {
	x, z := t.X.RawMatrix(), t.Test.RawMatrix()
	d := x.Cols
	a := z.Data[j*z.Stride : j*z.Stride+d]
	for k := range dst {
		dst[k] = sqDist(a, x.Data[k*x.Stride:k*x.Stride+d])
	}
	return dst
}

// sqDist returns Σ_j (a_j − b_j)².
func sqDist(a, b []float64) float64 {
	b = b[:len(a)]
	var s float64
	for j, v := range a {
		e := v - b[j]
		s += e * e
	}
	return s
}
