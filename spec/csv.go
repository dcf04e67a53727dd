package spec

import (
	"bytes"
	"crypto/sha256"
	"encoding/csv"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
)

// DataPath returns the path of the data file: Data.File when absolute, else
// Data.File relative to the directory of the spec file (to the working
// directory when Path is ""). It returns "" for a generator.
func (s *Spec) DataPath() string {
	if s.Data.File == "" {
		return ""
	}
	if filepath.IsAbs(s.Data.File) || s.Path == "" {
		return filepath.Clean(s.Data.File)
	}
	return filepath.Join(filepath.Dir(s.Path), s.Data.File)
}

// TestSize is the number of held-out rows of a csv source with rows data
// rows:
//
//	NTest                        when NTest > 0
//	round(TestFraction · rows)   otherwise, at least 1
//
// The other rows form the training pool that n_train rows are drawn from.
func (d *Data) TestSize(rows int) int {
	if d.NTest > 0 {
		return d.NTest
	}
	return max(1, int(math.Round(d.TestFraction*float64(rows))))
}

var utf8BOM = []byte{0xEF, 0xBB, 0xBF}

// checkCSV reads the data file of a csv spec: hash, header, row count.
func (d *decoder) checkCSV(s *Spec) error {
	D := &s.Data
	path := s.DataPath()
	raw, err := os.ReadFile(path)
	if err != nil {
		return &Error{File: d.file, Line: d.line("data.file"), Key: "data.file",
			Msg: fmt.Sprintf("cannot read data file %q (accepted: a readable CSV file, path relative to the spec file): %v", D.File, err), Err: err}
	}
	sum := sha256.Sum256(raw)
	s.DataHash = hex.EncodeToString(sum[:])

	r := csv.NewReader(bytes.NewReader(bytes.TrimPrefix(raw, utf8BOM)))
	r.ReuseRecord = true
	header, err := r.Read()
	if errors.Is(err, io.EOF) {
		return d.errf("data.file", "data file %s is empty (accepted: a CSV file whose first line names the columns)", path)
	}
	if err != nil {
		return csvError(path, err)
	}
	header = append([]string(nil), header...)
	seen := map[string]bool{}
	for _, c := range header {
		if seen[c] {
			return d.errf("data.file", "column %q appears twice in the header of %s (accepted: distinct column names)", c, path)
		}
		seen[c] = true
	}
	columns := quoteList(header)
	if !seen[D.Target] {
		return d.errf("data.target", "column %q is not in the header of %s (accepted: %s)", D.Target, path, columns)
	}
	for _, c := range D.Features {
		if !seen[c] {
			return d.errf("data.features", "column %q is not in the header of %s (accepted: %s)", c, path, columns)
		}
	}
	if len(D.Features) == 0 {
		for _, c := range header {
			if c != D.Target {
				D.Features = append(D.Features, c)
			}
		}
	}
	if len(D.Features) == 0 {
		return d.errf("data.file", "%s has only the target column (accepted: a file with at least one feature column)", path)
	}
	D.Dim = len(D.Features)
	if err := d.checkGridRange(d.gridT, s); err != nil {
		return err
	}
	if D.Dim > 1 && slices.ContainsFunc(s.Models, func(m Model) bool { return m.Family == FamilyPolynomial }) {
		return d.errf("data.features", "%s gives %d feature columns, and polynomial regression takes one input (accepted: features = [one column])", path, D.Dim)
	}

	rows := 0
	for {
		_, err := r.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return csvError(path, err)
		}
		rows++
	}
	test := D.TestSize(rows)
	if test >= rows {
		key := "data.n_test"
		if D.NTest == 0 {
			key = "data.test_fraction"
		}
		return d.errf(key, "holds out %d of the %d rows of %s, leaving none to train on (accepted: a test set smaller than the file)", test, rows, path)
	}
	pool := rows - test
	if D.Sampling == SamplingSubsample && D.NTrain > pool {
		key := "data.n_train"
		switch {
		case s.Grid.Param == ParamNTrain:
			key = gridKey(d.gridT, float64(D.NTrain))
		case s.Grid.Sets(ParamNTrain):
			key = gridKey(d.outerT, float64(D.NTrain))
		}
		return d.errf(key, "n_train = %d exceeds the %d training rows of %s (%d rows, %d held out) (accepted: n_train ≤ %d, or sampling = %q)",
			D.NTrain, pool, path, rows, test, pool, SamplingBootstrap)
	}
	return nil
}

func csvError(path string, err error) *Error {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		return &Error{File: path, Line: pe.Line, Msg: fmt.Sprintf("malformed CSV: %v (accepted: RFC 4180 rows with as many fields as the header)", pe.Err), Err: err}
	}
	return &Error{File: path, Msg: "cannot read CSV: " + err.Error(), Err: err}
}
