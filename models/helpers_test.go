package models

import (
	"encoding/csv"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"testing"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
)

// loadCSV reads a numeric CSV with a header from ../testdata into a matrix
// of all its columns.
func loadCSV(t testing.TB, name string) (header []string, data *mat.Dense) {
	t.Helper()
	f, err := os.Open(filepath.Join("..", "testdata", name))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatalf("read %s: %v", name, err)
	}
	header = recs[0]
	data = mat.NewDense(len(recs)-1, len(header), nil)
	for i, rec := range recs[1:] {
		for j, s := range rec {
			v, err := strconv.ParseFloat(s, 64)
			if err != nil {
				t.Fatalf("%s:%d: column %s: %v", name, i+2, header[j], err)
			}
			data.Set(i, j, v)
		}
	}
	return header, data
}

// column returns column j of a as a new slice.
func column(a *mat.Dense, j int) []float64 {
	return mat.Col(nil, j, a)
}

// sub returns a copy of the columns [j0, j1) of a.
func sub(a *mat.Dense, j0, j1 int) *mat.Dense {
	r, _ := a.Dims()
	return mat.DenseCopyOf(a.Slice(0, r, j0, j1))
}

// gaussian returns an n×p matrix and an n-vector of standard normals from
// a seeded stream (y = Xβ + noise for a β of norm 1 on the first 5
// coordinates, so that fits have both signal and residual).
func gaussian(seed uint64, n, p int) (*mat.Dense, []float64) {
	rng := rand.New(rand.NewPCG(seed, 0x5eed))
	x := mat.NewDense(n, p, nil)
	raw := x.RawMatrix().Data
	for i := range raw {
		raw[i] = rng.NormFloat64()
	}
	y := make([]float64, n)
	for i := range y {
		for j := range min(5, p) {
			y[i] += x.At(i, j) / math.Sqrt(5)
		}
		y[i] += 0.5 * rng.NormFloat64()
	}
	return x, y
}

// relDist returns ‖a − b‖₂/‖b‖₂ (‖a − b‖₂ when b = 0).
func relDist(a, b []float64) float64 {
	diff := make([]float64, len(a))
	floats.SubTo(diff, a, b)
	nb := floats.Norm(b, 2)
	if nb == 0 {
		return floats.Norm(diff, 2)
	}
	return floats.Norm(diff, 2) / nb
}

// pinvFit is the independent reference route: gonum's mat.SVD
// pseudoinverse solve of the (explicitly centred, with intercept) least
// squares problem, min-norm with the numpy cutoff max(n,p)·eps·σ_max.
// It returns the slopes, the intercept and the 2-norm condition number of
// the (centred) design restricted to its numerical rank, s_1/s_r with s_r
// the smallest singular value above the cutoff. (Centring n rows leaves
// rank n−1, so with an intercept and p ≥ n the smallest singular value is
// a rounding residue near 1e-15·s_1; dividing by it would give κ ≈ 1e16 and
// make every tolerance built from κ vacuous.)
func pinvFit(t testing.TB, x *mat.Dense, y []float64, intercept bool) (b []float64, b0, cond float64) {
	t.Helper()
	n, p := x.Dims()
	xc := mat.DenseCopyOf(x)
	yc := append([]float64(nil), y...)
	var xbar []float64
	var ybar float64
	if intercept {
		xbar = make([]float64, p)
		for j := range p {
			col := column(x, j)
			xbar[j] = floats.Sum(col) / float64(n)
			for i := range n {
				xc.Set(i, j, x.At(i, j)-xbar[j])
			}
		}
		ybar = floats.Sum(y) / float64(n)
		for i := range yc {
			yc[i] -= ybar
		}
	}
	var svd mat.SVD
	if !svd.Factorize(xc, mat.SVDThin) {
		t.Fatal("reference SVD did not converge")
	}
	s := svd.Values(nil)
	var u, v mat.Dense
	svd.UTo(&u)
	svd.VTo(&v)
	tol := float64(max(n, p)) * eps * s[0]
	var uty mat.VecDense
	uty.MulVec(u.T(), mat.NewVecDense(n, yc))
	rank := 0
	for j := range s {
		if s[j] > tol {
			uty.SetVec(j, uty.AtVec(j)/s[j])
			rank = j + 1
		} else {
			uty.SetVec(j, 0)
		}
	}
	if rank == 0 {
		t.Fatal("reference design has numerical rank 0")
	}
	var bv mat.VecDense
	bv.MulVec(&v, &uty)
	b = bv.RawVector().Data
	if intercept {
		b0 = ybar - floats.Dot(xbar, b)
	}
	return b, b0, s[0] / s[rank-1]
}
