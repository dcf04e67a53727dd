package data

import (
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"

	"gonum.org/v1/gonum/mat"

	"riskgrid/spec"
)

// table is a parsed data file: the response and the chosen features of
// every data row, in file order.
type table struct {
	names []string  // feature names, in the order of the columns of x
	x     []float64 // rows × len(names), row-major
	y     []float64 // rows
}

// parseCSV reads a comma-separated file with a header row. The response
// is column target; the features are the named columns in that order, or
// every other column in file order when features is empty. Only those
// columns need be numeric. file names the file in errors.
func parseCSV(file string, b []byte, target string, features []string) (*table, error) {
	b = bytes.TrimPrefix(b, []byte("\ufeff"))
	r := csv.NewReader(bytes.NewReader(b))
	r.FieldsPerRecord = -1 // ragged rows are reported below, with their line
	fail := func(row int, col, format string, args ...any) error {
		return &Error{File: file, Row: row, Column: col, Msg: fmt.Sprintf(format, args...)}
	}
	readErr := func(err error) error {
		var pe *csv.ParseError
		if errors.As(err, &pe) {
			return fail(pe.Line, "", "%v", pe.Err)
		}
		return fail(0, "", "%v", err)
	}

	header, err := r.Read()
	if err == io.EOF {
		return nil, fail(0, "", "empty file (want a header row of column names, then data rows)")
	}
	if err != nil {
		return nil, readErr(err)
	}
	headerLine, _ := r.FieldPos(0)
	col := make(map[string]int, len(header))
	for j, h := range header {
		h = strings.TrimSpace(h)
		header[j] = h
		if h == "" {
			return nil, fail(headerLine, "", "column %d has an empty name", j+1)
		}
		if k, ok := col[h]; ok {
			return nil, fail(headerLine, h, "duplicate column name (columns %d and %d)", k+1, j+1)
		}
		col[h] = j
	}
	header = append([]string(nil), header...)
	known := strings.Join(header, ", ")
	ti, ok := col[target]
	if !ok {
		return nil, fail(headerLine, target, "target column not in the header (columns: %s)", known)
	}
	var fi []int
	if len(features) == 0 {
		for j, h := range header {
			if j != ti {
				fi = append(fi, j)
				features = append(features, h)
			}
		}
		if len(fi) == 0 {
			return nil, fail(headerLine, "", "no feature columns besides the target %q", target)
		}
	} else {
		seen := map[string]bool{}
		for _, f := range features {
			j, ok := col[f]
			if !ok {
				return nil, fail(headerLine, f, "feature column not in the header (columns: %s)", known)
			}
			if j == ti {
				return nil, fail(headerLine, f, "the target column cannot also be a feature")
			}
			if seen[f] {
				return nil, fail(headerLine, f, "feature listed twice")
			}
			seen[f] = true
			fi = append(fi, j)
		}
	}

	t := &table{names: append([]string(nil), features...)}
	parse := func(rec []string, j int) (float64, error) {
		line, _ := r.FieldPos(j)
		cell := strings.TrimSpace(rec[j])
		if cell == "" {
			return 0, fail(line, header[j], "empty cell (missing values are not accepted; want a number)")
		}
		v, err := strconv.ParseFloat(cell, 64)
		if err != nil && !errors.Is(err, strconv.ErrRange) {
			return 0, fail(line, header[j], "cannot read %q as a number", cell)
		}
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return 0, fail(line, header[j], "%q is not a finite number", cell)
		}
		return v, nil
	}
	for {
		rec, err := r.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, readErr(err)
		}
		if len(rec) != len(header) {
			line, _ := r.FieldPos(0)
			return nil, fail(line, "", "%d fields, want %d as in the header", len(rec), len(header))
		}
		v, err := parse(rec, ti)
		if err != nil {
			return nil, err
		}
		t.y = append(t.y, v)
		for _, j := range fi {
			v, err := parse(rec, j)
			if err != nil {
				return nil, err
			}
			t.x = append(t.x, v)
		}
	}
	if len(t.y) == 0 {
		return nil, fail(headerLine, "", "header but no data rows")
	}
	return t, nil
}

// csvSource serves the rows of a data file: a held-out test set fixed by
// seeds.truth and, per seed, n_train rows of the remaining pool.
type csvSource struct {
	key       string
	t         *table
	pool      []int // table rows available for training, in split order
	n         int   // n_train
	bootstrap bool
	prob      *Problem
}

var _ Source = (*csvSource)(nil)

func newCSV(s *spec.Spec, key string) (*csvSource, error) {
	dd := &s.Data
	bad := func(k, format string, args ...any) error {
		return &SpecError{Path: s.Path, Key: k, Msg: fmt.Sprintf(format, args...)}
	}
	if dd.File == "" {
		return nil, bad("file", "missing: a csv source needs the path of its data file")
	}
	if dd.Target == "" {
		return nil, bad("target", "missing: name the response column")
	}
	if dd.NTrain <= 0 {
		return nil, bad("n_train", "n_train = %d, want an integer > 0", dd.NTrain)
	}
	if dd.NTest < 0 {
		return nil, bad("n_test", "n_test = %d, want an integer > 0", dd.NTest)
	}
	if dd.NTest > 0 && dd.TestFraction != 0 {
		return nil, bad("test_fraction", "give n_test or test_fraction, not both")
	}
	frac := dd.TestFraction
	if frac == 0 {
		frac = 0.25
	}
	if !(frac > 0 && frac < 1) {
		return nil, bad("test_fraction", "test_fraction = %v, want a number in (0, 1)", dd.TestFraction)
	}
	var bootstrap bool
	switch dd.Sampling {
	case "", spec.SamplingSubsample:
	case spec.SamplingBootstrap:
		bootstrap = true
	default:
		return nil, bad("sampling", "unknown sampling %q (known: %s, %s)", dd.Sampling, spec.SamplingSubsample, spec.SamplingBootstrap)
	}

	path := s.DataPath()
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("read data file: %w", err)
	}
	t, err := parseCSV(path, b, dd.Target, dd.Features)
	if err != nil {
		return nil, err
	}
	rows := len(t.y)
	sized := *dd
	sized.TestFraction = frac
	m := sized.TestSize(rows) // n_test, or max(1, round(fraction · rows))
	whole := func(format string, args ...any) error {
		return &Error{File: path, Msg: fmt.Sprintf(format, args...)}
	}
	if m >= rows {
		return nil, whole("n_test = %d leaves none of the %d rows for training", m, rows)
	}
	if dd.NTrain > rows-m {
		return nil, whole("n_train = %d, but only %d of the %d rows are left after holding out %d test rows",
			dd.NTrain, rows-m, rows, m)
	}

	// The split: one shuffle of all rows by (key, tagSplit, seeds.truth).
	perm := make([]int, rows)
	for i := range perm {
		perm[i] = i
	}
	NewStream(key, tagSplit, s.Seeds.Truth).PartialShuffle(perm, rows)
	p := len(t.names)
	testX := mat.NewDense(m, p, nil)
	testY := make([]float64, m)
	for i, r := range perm[:m] {
		testX.SetRow(i, t.x[r*p:(r+1)*p])
		testY[i] = t.y[r]
	}
	src := &csvSource{
		key:       key,
		t:         t,
		pool:      perm[m:],
		n:         dd.NTrain,
		bootstrap: bootstrap,
		prob: &Problem{
			Dim:       p,
			Names:     append([]string(nil), t.names...),
			NoiseVar:  math.NaN(),
			TestX:     testX,
			TestY:     testY,
			TestBasis: TestHeldOut,
		},
	}
	return src, nil
}

// Problem returns the held-out test set and the feature names. The
// caller must not modify it.
func (c *csvSource) Problem() *Problem { return c.prob }

// Draw returns n_train rows of the pool, chosen by the stream
// (key, tagSample, seed): by default without replacement, the prefix of a
// partial Fisher–Yates shuffle of the pool (so draws are nested); with
// bootstrap sampling, n_train iid uniform picks from the pool.
func (c *csvSource) Draw(seed uint64) (*Sample, error) {
	st := NewStream(c.key, tagSample, seed)
	idx := c.rows(st)
	p := len(c.t.names)
	X := mat.NewDense(c.n, p, nil)
	y := make([]float64, c.n)
	for i, r := range idx {
		X.SetRow(i, c.t.x[r*p:(r+1)*p])
		y[i] = c.t.y[r]
	}
	return &Sample{X: X, Y: y}, nil
}

// rows returns the table rows of one draw.
func (c *csvSource) rows(st *Stream) []int {
	if c.bootstrap {
		idx := make([]int, c.n)
		for i := range idx {
			idx[i] = c.pool[st.Intn(len(c.pool))]
		}
		return idx
	}
	idx := append([]int(nil), c.pool...)
	st.PartialShuffle(idx, c.n)
	return idx[:c.n]
}
