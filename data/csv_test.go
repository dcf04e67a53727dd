package data

import (
	"errors"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"

	"riskgrid/spec"
)

// csvSpec returns a csv spec literal whose file lives in testdata/.
func csvSpec(file string, nTrain int, edit func(*spec.Data)) *spec.Spec {
	s := &spec.Spec{
		Name: "csv-test",
		Path: filepath.Join("testdata", "spec.toml"), // the spec file need not exist
		Data: spec.Data{
			Source: spec.SourceCSV,
			File:   file,
			Target: "y",
			NTrain: nTrain,
			NTest:  5,
		},
		Seeds: spec.Seeds{Count: 2, Start: 1},
	}
	if edit != nil {
		edit(&s.Data)
	}
	return s
}

func TestErrorFormat(t *testing.T) {
	tests := []struct {
		err  *Error
		want string
	}{
		{&Error{File: "d.csv", Row: 4, Column: "x2", Msg: "bad"}, `d.csv:4: column "x2": bad`},
		{&Error{File: "d.csv", Row: 4, Msg: "bad"}, `d.csv:4: bad`},
		{&Error{File: "d.csv", Msg: "bad"}, `d.csv: bad`},
	}
	for _, tc := range tests {
		if got := tc.err.Error(); got != tc.want {
			t.Errorf("Error() = %q, want %q", got, tc.want)
		}
	}
	if got, want := (&SpecError{Path: "s.toml", Key: "dim", Msg: "m"}).Error(), "s.toml: [data] dim: m"; got != want {
		t.Errorf("SpecError.Error() = %q, want %q", got, want)
	}
	if got, want := (&SpecError{Key: "dim", Msg: "m"}).Error(), "[data] dim: m"; got != want {
		t.Errorf("SpecError.Error() = %q, want %q", got, want)
	}
}

// TestCSVErrors: every faulty fixture must be rejected with the line
// (1-based, as an editor shows it) and column where the fault is.
func TestCSVErrors(t *testing.T) {
	tests := []struct {
		name     string
		file     string
		edit     func(*spec.Data)
		nTrain   int
		row      int
		column   string
		contains string
	}{
		{"missing target", "good.csv", func(d *spec.Data) { d.Target = "z" }, 5, 1, "z", "columns: x1, x2, y, x3"},
		{"missing feature", "good.csv", func(d *spec.Data) { d.Features = []string{"x1", "x9"} }, 5, 1, "x9", "not in the header"},
		{"target as feature", "good.csv", func(d *spec.Data) { d.Features = []string{"x1", "y"} }, 5, 1, "y", "target"},
		{"feature twice", "good.csv", func(d *spec.Data) { d.Features = []string{"x1", "x1"} }, 5, 1, "x1", "twice"},
		{"empty file", "empty.csv", nil, 1, 0, "", "empty file"},
		{"header only", "header_only.csv", nil, 1, 1, "", "no data rows"},
		{"non-numeric", "nonnumeric.csv", nil, 1, 4, "x2", `"abc"`},
		{"NaN", "nan.csv", nil, 1, 3, "y", "not a finite number"},
		{"Inf", "inf.csv", nil, 1, 6, "x1", "not a finite number"},
		{"overflow", "overflow.csv", nil, 1, 3, "x1", "not a finite number"},
		{"empty cell", "empty_cell.csv", nil, 1, 3, "x2", "empty cell"},
		{"ragged", "ragged.csv", nil, 1, 4, "", "2 fields, want 3"},
		{"duplicate header", "duplicate.csv", nil, 1, 1, "x1", "duplicate"},
		{"bad quote", "bad_quote.csv", nil, 1, 3, "", "quote"},
		{"line after multi-line cell", "multiline.csv", func(d *spec.Data) { d.Features = []string{"x1"} }, 1, 4, "x1", `"x"`},
		{"n_train above pool", "good.csv", nil, 16, 0, "", "only 15 of the 20 rows"},
		{"n_test takes all", "good.csv", func(d *spec.Data) { d.NTest = 20 }, 1, 0, "", "leaves none"},
		{"bootstrap above pool", "good.csv", func(d *spec.Data) { d.Sampling = spec.SamplingBootstrap }, 16, 0, "", "only 15"},
	}
	for _, tc := range tests {
		s := csvSpec(tc.file, tc.nTrain, tc.edit)
		if tc.file == "empty.csv" || tc.file == "header_only.csv" {
			s.Data.NTest = 0
		}
		_, err := New(s, "k")
		var de *Error
		if !errors.As(err, &de) {
			t.Errorf("%s: New error = %v, want a *data.Error", tc.name, err)
			continue
		}
		wantFile := filepath.Join("testdata", tc.file)
		if de.File != wantFile || de.Row != tc.row || de.Column != tc.column || !strings.Contains(de.Msg, tc.contains) {
			t.Errorf("%s: error = %q (file %q row %d column %q), want file %q row %d column %q containing %q",
				tc.name, err, de.File, de.Row, de.Column, wantFile, tc.row, tc.column, tc.contains)
		}
	}
}

func TestCSVSpecErrors(t *testing.T) {
	tests := []struct {
		name string
		edit func(*spec.Data)
		key  string
	}{
		{"no file", func(d *spec.Data) { d.File = "" }, "file"},
		{"no target", func(d *spec.Data) { d.Target = "" }, "target"},
		{"n_train", func(d *spec.Data) { d.NTrain = 0 }, "n_train"},
		{"both test sizes", func(d *spec.Data) { d.TestFraction = 0.2 }, "test_fraction"},
		{"fraction 1", func(d *spec.Data) { d.NTest = 0; d.TestFraction = 1 }, "test_fraction"},
		{"sampling", func(d *spec.Data) { d.Sampling = "jackknife" }, "sampling"},
	}
	for _, tc := range tests {
		_, err := New(csvSpec("good.csv", 5, tc.edit), "k")
		var se *SpecError
		if !errors.As(err, &se) || se.Key != tc.key {
			t.Errorf("%s: New error = %v, want a *SpecError for key %q", tc.name, err, tc.key)
		}
	}
	_, err := New(csvSpec("no-such-file.csv", 5, nil), "k")
	if !errors.Is(err, os.ErrNotExist) {
		t.Errorf("missing file: New error = %v, want one wrapping os.ErrNotExist", err)
	}
}

// rowIDs returns the y values (which identify rows of good.csv).
func rowIDs(y []float64) []int {
	ids := make([]int, len(y))
	for i, v := range y {
		ids[i] = int(v)
	}
	return ids
}

func TestCSVSplit(t *testing.T) {
	tests := []struct {
		name  string
		edit  func(*spec.Data)
		nTest int // n_test, or max(1, round(fraction · 20)) as in spec.Data.TestSize
	}{
		{"n_test", nil, 5},
		{"fraction 0.3", func(d *spec.Data) { d.NTest = 0; d.TestFraction = 0.3 }, 6},
		{"fraction 0.23 rounds up", func(d *spec.Data) { d.NTest = 0; d.TestFraction = 0.23 }, 5}, // 4.6
		{"default 0.25", func(d *spec.Data) { d.NTest = 0 }, 5},
		{"at least one row", func(d *spec.Data) { d.NTest = 0; d.TestFraction = 0.01 }, 1}, // round(0.2) = 0
	}
	for _, tc := range tests {
		src := mustNew(t, csvSpec("good.csv", 8, tc.edit), "split")
		p := src.Problem()
		if m, c := p.TestX.Dims(); m != tc.nTest || c != 3 || len(p.TestY) != tc.nTest {
			t.Errorf("%s: test set %d×%d with %d responses, want %d×3", tc.name, m, c, len(p.TestY), tc.nTest)
		}
		test := rowIDs(p.TestY)
		for seed := uint64(1); seed <= 20; seed++ {
			for _, id := range rowIDs(mustDraw(t, src, seed).Y) {
				if slices.Contains(test, id) {
					t.Fatalf("%s: seed %d draws row y=%d of the test set %v", tc.name, seed, id, test)
				}
			}
		}
	}
}

func TestCSVRows(t *testing.T) {
	src := mustNew(t, csvSpec("good.csv", 15, func(d *spec.Data) { d.Features = []string{"x3", "x1"} }), "rows")
	p := src.Problem()
	if !slices.Equal(p.Names, []string{"x3", "x1"}) || p.Dim != 2 {
		t.Errorf("Names = %v, Dim = %d, want [x3 x1], 2", p.Names, p.Dim)
	}
	if p.Sigma != nil || p.Beta != nil || !math.IsNaN(p.NoiseVar) || p.TruthKnown {
		t.Errorf("csv Problem: Sigma %v, Beta %v, NoiseVar %v, TruthKnown %v; want nil, nil, NaN, false",
			p.Sigma, p.Beta, p.NoiseVar, p.TruthKnown)
	}
	// Every row keeps its values: x3 = −i, x1 = i for y = 100 + i.
	checkRows := func(what string, X *mat.Dense, y []float64) {
		for r, v := range y {
			i := v - 100
			if X.At(r, 0) != -i || X.At(r, 1) != i {
				t.Errorf("%s row %d: (x3, x1) = (%v, %v) for y = %v, want (%v, %v)", what, r, X.At(r, 0), X.At(r, 1), v, -i, i)
			}
		}
	}
	checkRows("test", p.TestX, p.TestY)
	smp := mustDraw(t, src, 1)
	checkRows("draw", smp.X, smp.Y)
	if smp.Beta != nil {
		t.Errorf("csv Sample.Beta = %v, want nil", smp.Beta)
	}
	// n_train = pool size: the draw is the whole pool, each row once,
	// and together with the test set it covers the file.
	all := append(rowIDs(p.TestY), rowIDs(smp.Y)...)
	slices.Sort(all)
	for i, id := range all {
		if id != 101+i {
			t.Fatalf("test set ∪ draw = %v, want 101…120 once each", all)
		}
	}

	// Default features: every column but the target, in file order.
	def := mustNew(t, csvSpec("good.csv", 3, nil), "rows").Problem()
	if !slices.Equal(def.Names, []string{"x1", "x2", "x3"}) {
		t.Errorf("default Names = %v, want [x1 x2 x3]", def.Names)
	}
	// Unused columns need not be numeric; a BOM is not part of a name.
	if p := mustNew(t, csvSpec("with_id.csv", 3, func(d *spec.Data) { d.Features = []string{"x1"} }), "id").Problem(); p.Dim != 1 {
		t.Errorf("with_id.csv: Dim = %d, want 1", p.Dim)
	}
	if p := mustNew(t, csvSpec("bom.csv", 2, func(d *spec.Data) { d.NTest = 1 }), "bom").Problem(); !slices.Equal(p.Names, []string{"x1"}) {
		t.Errorf("bom.csv: Names = %q, want [x1]", p.Names)
	}
}

func TestCSVDraws(t *testing.T) {
	small := mustNew(t, csvSpec("good.csv", 4, nil), "draws")
	big := mustNew(t, csvSpec("good.csv", 12, nil), "draws")
	boot4 := mustNew(t, csvSpec("good.csv", 4, func(d *spec.Data) { d.Sampling = spec.SamplingBootstrap }), "draws")
	boot15 := mustNew(t, csvSpec("good.csv", 15, func(d *spec.Data) { d.Sampling = spec.SamplingBootstrap }), "draws")
	if !floats.Equal(small.Problem().TestY, big.Problem().TestY) {
		t.Errorf("the test set depends on n_train")
	}
	for seed := uint64(1); seed <= 10; seed++ {
		a, b := mustDraw(t, small, seed), mustDraw(t, big, seed)
		if !floats.Equal(a.Y, b.Y[:4]) || !rowsEqual(a.X, b.X, 4) {
			t.Errorf("seed %d: draw of 4 %v is not the start of the draw of 12 %v", seed, a.Y, b.Y)
		}
		ids := rowIDs(b.Y)
		slices.Sort(ids)
		if len(slices.Compact(ids)) != 12 {
			t.Errorf("seed %d: subsample repeats a row: %v", seed, b.Y)
		}
		c, d := mustDraw(t, boot4, seed), mustDraw(t, boot15, seed)
		if !floats.Equal(c.Y, d.Y[:4]) {
			t.Errorf("seed %d: bootstrap draw of 4 %v is not the start of the draw of 15 %v", seed, c.Y, d.Y)
		}
		// 15 iid picks from 15 rows are all distinct with probability
		// 15!/15¹⁵ ≈ 3e-6 (counting), so a repeat is expected every seed.
		ids = rowIDs(d.Y)
		slices.Sort(ids)
		if len(slices.Compact(ids)) == 15 {
			t.Errorf("seed %d: bootstrap draw of 15 has no repeated row: %v", seed, d.Y)
		}
		for _, id := range rowIDs(d.Y) {
			if slices.Contains(rowIDs(boot15.Problem().TestY), id) {
				t.Errorf("seed %d: bootstrap draws test row y=%d", seed, id)
			}
		}
	}
	// Determinism, and seeds.truth moves the split.
	again := mustNew(t, csvSpec("good.csv", 12, nil), "draws")
	if !floats.Equal(mustDraw(t, again, 3).Y, mustDraw(t, big, 3).Y) {
		t.Errorf("two sources of the same spec and key drew different rows for seed 3")
	}
	if floats.Equal(mustDraw(t, big, 3).Y, mustDraw(t, big, 4).Y) {
		t.Errorf("seeds 3 and 4 drew the same rows")
	}
	moved := csvSpec("good.csv", 12, nil)
	moved.Seeds.Truth = 1
	if floats.Equal(mustNew(t, moved, "draws").Problem().TestY, big.Problem().TestY) {
		t.Errorf("seeds.truth did not move the test split")
	}
}

// FuzzParseCSV: any input is either a table of finite numbers of the right
// shape or an *Error whose message formats without panicking.
func FuzzParseCSV(f *testing.F) {
	for _, name := range []string{"good.csv", "nonnumeric.csv", "ragged.csv", "bad_quote.csv", "multiline.csv", "bom.csv"} {
		b, err := os.ReadFile(filepath.Join("testdata", name))
		if err != nil {
			f.Fatal(err)
		}
		f.Add(b)
	}
	f.Fuzz(func(t *testing.T, b []byte) {
		tab, err := parseCSV("fuzz.csv", b, "y", nil)
		if err != nil {
			var de *Error
			if !errors.As(err, &de) {
				t.Fatalf("parseCSV error %v is not a *data.Error", err)
			}
			if !strings.HasPrefix(err.Error(), "fuzz.csv") {
				t.Fatalf("error %q does not name the file", err)
			}
			return
		}
		if len(tab.y) == 0 || len(tab.x) != len(tab.y)*len(tab.names) {
			t.Fatalf("table of %d rows, %d features, %d cells", len(tab.y), len(tab.names), len(tab.x))
		}
		for _, v := range append(tab.x, tab.y...) {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				t.Fatalf("table holds %v", v)
			}
		}
	})
}
