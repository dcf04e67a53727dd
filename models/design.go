package models

import (
	"fmt"
	"math"
	"sort"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"

	"riskgrid/spec"
)

// eps is the float64 machine epsilon 2^-52 (numpy's finfo(float).eps).
const eps = 0x1p-52

// condMax bounds the condition number of a matrix factored by Cholesky
// (a Gram matrix X_p X_pᵀ, a penalised normal matrix XᵀX + nλI or its dual
// XXᵀ + nλI). A backward-stable Cholesky solve has relative forward error
// about κ·eps (Matrix Computations, 4th ed., Johns Hopkins University
// Press, 2013, §4.2; a textbook bound), so κ ≤ 1e5 keeps it near 1e5·2.2e-16 ≈ 2e-11, two
// orders of magnitude inside the 1e-9 the reference checks demand. The
// measured errors of the Gram route in NUMERICS.md follow κ·eps (p = 201,
// κ(G) ≈ 6e5: 1e-10; p = 210, κ(G) ≈ 7e3: 3e-13). Above the bound the
// stable routes (QR of X_pᵀ, SVD) are used, whose error grows with κ(X),
// the square root. The estimate compared with it is LAPACK's 1-norm
// estimator (dlacn2, as in dpocon), within a factor of the dimension of the 2-norm value.
const condMax = 1e5

// rankTol returns the singular-value cutoff below which a direction is
// treated as null: max(m, p)·eps·σ_max. Common practice: the default of
// numpy.linalg.lstsq/pinv (rcond = eps·max(M, N)) and of MATLAB's rank
// and pinv.
func rankTol(m, p int, smax float64) float64 {
	return float64(max(m, p)) * eps * smax
}

// design is a training problem with the intercept eliminated: minimise
// ‖y − A b‖² (plus n·λ‖b‖² for ridge) over b, A m×p row-major.
//
// With an intercept, a Householder reflection H with H·1 = −√n·e1 is
// applied to the rows of [X y]; its first row carries the intercept
// equation −√n·ȳ = −√n·(b0 + x̄ᵀb), the other n−1 rows are free of b0, so
// dropping the first row leaves the intercept-free problem (m = n−1) and
// b0 = ȳ − x̄ᵀb afterwards. Row i ≥ 2 of H·a is a_i − c with
//
//	c = (Σa + √n·a_1)/(n + √n) = ā + (a_1 − ā)/(1 + √n).
//
// The reflection is orthogonal, so the residual sum of squares of the
// reduced problem equals that of the full fit at the optimal intercept.
type design struct {
	n int       // training rows used: the n of (1/n)‖·‖² and of n·λ
	m int       // rows of a: n, or n−1 with an intercept
	p int       // columns of a (its stride)
	a []float64 // m×p, row-major
	y []float64 // length m

	intercept bool
	xbar      []float64 // column means (intercept only)
	ybar      float64

	// grams keeps the upper triangle of G_p = A_p A_pᵀ by p, for the next
	// model fitted to the same Train; nil when the design is not shared.
	grams map[int][]float64
}

// reduce builds the design from the first n rows and first p columns of x.
func reduce(x *mat.Dense, y []float64, n, p int, intercept bool) (*design, error) {
	raw := x.RawMatrix()
	for i := range n {
		row := raw.Data[i*raw.Stride : i*raw.Stride+p]
		for j, v := range row {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, fmt.Errorf("%w: x[%d][%d] = %v", ErrNotFinite, i, j, v)
			}
		}
		if v := y[i]; math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("%w: y[%d] = %v", ErrNotFinite, i, v)
		}
	}
	d := &design{n: n, p: p, intercept: intercept}
	if !intercept {
		d.m = n
		d.a = make([]float64, n*p)
		for i := range n {
			copy(d.a[i*p:(i+1)*p], raw.Data[i*raw.Stride:i*raw.Stride+p])
		}
		d.y = append([]float64(nil), y[:n]...)
		return d, nil
	}
	d.m = n - 1
	// Column means by two passes (the second adds the mean residual),
	// which keeps the mean accurate when |ā| ≫ spread.
	mean := make([]float64, p+1)
	for i := range n {
		floats.Add(mean[:p], raw.Data[i*raw.Stride:i*raw.Stride+p])
		mean[p] += y[i]
	}
	floats.Scale(1/float64(n), mean)
	corr := make([]float64, p+1)
	for i := range n {
		row := raw.Data[i*raw.Stride : i*raw.Stride+p]
		for j, v := range row {
			corr[j] += v - mean[j]
		}
		corr[p] += y[i] - mean[p]
	}
	floats.AddScaled(mean, 1/float64(n), corr)
	// Shifts c of the reflection, column by column.
	s := 1 / (1 + math.Sqrt(float64(n)))
	c := make([]float64, p+1)
	for j := range p {
		c[j] = mean[j] + (raw.Data[j]-mean[j])*s
	}
	c[p] = mean[p] + (y[0]-mean[p])*s
	d.a = make([]float64, d.m*p)
	d.y = make([]float64, d.m)
	for i := 1; i < n; i++ {
		dst := d.a[(i-1)*p : i*p]
		floats.SubTo(dst, raw.Data[i*raw.Stride:i*raw.Stride+p], c[:p])
		d.y[i-1] = y[i] - c[p]
	}
	d.xbar = mean[:p]
	d.ybar = mean[p]
	return d, nil
}

// cols returns the first p columns of a as a general matrix view.
func (d *design) cols(p int) blas64.General {
	return blas64.General{Rows: d.m, Cols: p, Stride: d.p, Data: d.a}
}

// rss returns ‖y − A_p b‖², using r (length m) as scratch.
func (d *design) rss(b, r []float64) float64 {
	copy(r, d.y)
	blas64.Gemv(blas.NoTrans, -1, d.cols(len(b)), blas64.Vector{N: len(b), Inc: 1, Data: b},
		1, blas64.Vector{N: d.m, Inc: 1, Data: r})
	nrm := blas64.Nrm2(blas64.Vector{N: d.m, Inc: 1, Data: r})
	return nrm * nrm
}

// finish fills f from the coefficient vector b (length p ≤ d.p), the
// residual sum of squares of the reduced problem, the effective degrees of
// freedom of the slopes, a condition number and the method, and checks that
// the result is finite.
func (d *design) finish(f *Fit, b []float64, rss, df, cond float64, method string) {
	f.Coef = b
	f.Method = method
	f.Cond = cond
	f.Norm = blas64.Nrm2(blas64.Vector{N: len(b), Inc: 1, Data: b})
	f.TrainRisk = rss / float64(d.n)
	f.DF = df
	if d.intercept {
		f.Intercept = d.ybar - floats.Dot(d.xbar[:len(b)], b)
		f.DF++
	}
	if math.IsNaN(f.Norm) || math.IsInf(f.Norm, 0) || math.IsNaN(f.TrainRisk) ||
		math.IsInf(f.TrainRisk, 0) || math.IsNaN(f.Intercept) || math.IsInf(f.Intercept, 0) {
		*f = Fit{Method: method, Cond: cond, Err: fmt.Errorf("%w: %s gave a non-finite fit (condition %g)", ErrNumerical, method, cond)}
	}
}

// empty fills f for a problem with no rows left (one training row with an
// intercept): b = 0, the intercept interpolates the point.
func (d *design) empty(f *Fit, p int) {
	d.finish(f, make([]float64, p), 0, 0, math.NaN(), "none")
}

// counts validates integer grid values (features or n_train) against
// [1, hi] and returns them as ints, 0 marking a value whose fit already
// carries an error, together with the largest valid value.
func counts(fits []Fit, knob string, values []float64, hi int, what string) (ints []int, top int) {
	ints = make([]int, len(values))
	for i, v := range values {
		if v != math.Trunc(v) || v < 1 || v > float64(hi) {
			fits[i].Err = fmt.Errorf("%w: %s = %v (accepted: an integer from 1 to %d, the %s of x)",
				ErrValue, knob, v, hi, what)
			continue
		}
		ints[i] = int(v)
		top = max(top, ints[i])
	}
	return ints, top
}

// ascending returns the indices of the nonzero entries of ps in ascending
// order of value (stable, so equal values keep their order).
func ascending(ps []int) []int {
	idx := make([]int, 0, len(ps))
	for i, p := range ps {
		if p > 0 {
			idx = append(idx, i)
		}
	}
	sort.SliceStable(idx, func(a, b int) bool { return ps[idx[a]] < ps[idx[b]] })
	return idx
}

// failAll sets err on every fit that has no error yet.
// nestedColumns fits the features knob: one design of the first p_max
// columns, shared through t with the next model, serves the whole path.
func nestedColumns(t *Train, fits []Fit, values []float64, intercept bool, fit func(d *design, ps []int, fits []Fit)) {
	rows, cols := checkShape(t.X, t.Y)
	ps, top := counts(fits, spec.ParamFeatures, values, cols, "columns")
	if top == 0 {
		return
	}
	d, err := t.design(rows, top, intercept, true)
	if err != nil {
		failAll(fits, err)
		return
	}
	fit(d, ps, fits)
}

// eachRows fits every value of the n_train knob on its own design: the
// first n rows, all columns, one path of a single p = all columns.
func eachRows(t *Train, fits []Fit, values []float64, intercept bool, fit func(d *design, ps []int, fits []Fit)) {
	rows, cols := checkShape(t.X, t.Y)
	ns, _ := counts(fits, spec.ParamNTrain, values, rows, "rows")
	for i, n := range ns {
		if n == 0 {
			continue
		}
		d, err := t.design(n, cols, intercept, false)
		if err != nil {
			fits[i].Err = err
			continue
		}
		fit(d, []int{cols}, fits[i:i+1])
	}
}

func failAll(fits []Fit, err error) {
	for i := range fits {
		if fits[i].Err == nil {
			fits[i].Err = err
		}
	}
}

// checkShape panics on a programmer error: y must match the rows of x.
func checkShape(x *mat.Dense, y []float64) (rows, cols int) {
	rows, cols = x.Dims()
	if len(y) != rows {
		panic(fmt.Sprintf("models: len(y) = %d, x has %d rows", len(y), rows))
	}
	return rows, cols
}

// grow returns buf resliced to length n, reallocating only when too short.
func grow(buf *[]float64, n int) []float64 {
	if cap(*buf) < n {
		*buf = make([]float64, n)
	}
	*buf = (*buf)[:n]
	return *buf
}

func growInt(buf *[]int, n int) []int {
	if cap(*buf) < n {
		*buf = make([]int, n)
	}
	*buf = (*buf)[:n]
	return *buf
}
