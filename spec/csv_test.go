package spec

import (
	"errors"
	"io/fs"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"testing"
)

// writeSpec writes src as spec.toml in a fresh directory beside copies of
// the testdata CSV files, and returns its path.
func writeSpec(t *testing.T, src string) string {
	t.Helper()
	dir := t.TempDir()
	for _, f := range []string{"greenhouse.csv", "ragged.csv", "bom.csv"} {
		b, err := os.ReadFile(filepath.Join("testdata", f))
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(dir, f), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	p := filepath.Join(dir, "spec.toml")
	if err := os.WriteFile(p, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

func csvSpec(data, grid string) string {
	if grid == "" {
		grid = "[grid]\nparam = \"features\"\nvalues = [1, 2]\n"
	}
	return pieces{data: "[data]\nsource = \"csv\"\n" + data, grid: grid}.src()
}

func TestLoadCSV(t *testing.T) {
	s, err := Load(filepath.Join("testdata", "greenhouse.toml"))
	if err != nil {
		t.Fatalf("Load(greenhouse.toml) error %v", err)
	}
	if want := []string{"temp", "humidity", "light"}; !slices.Equal(s.Data.Features, want) {
		t.Errorf("Features = %v, want %v (every column but the target)", s.Data.Features, want)
	}
	if s.Data.Dim != 3 || s.Data.TestFraction != 0.25 || s.Data.Sampling != SamplingSubsample {
		t.Errorf("Data = %+v, want Dim 3, TestFraction 0.25, subsample", s.Data)
	}
	// Reference: GNU coreutils sha256sum testdata/greenhouse.csv.
	const want = "0f845047ce74eee71145d1dc5caf49bdcaf66180a0f9c0fce7f86d3c1802c863"
	if s.DataHash != want {
		t.Errorf("DataHash = %s, want %s", s.DataHash, want)
	}
	if got := s.DataPath(); got != filepath.Join("testdata", "greenhouse.csv") {
		t.Errorf("DataPath() = %q, want testdata/greenhouse.csv", got)
	}
	if !strings.Contains(s.DataKeyInputs(), want) || !strings.Contains(s.HashInputs(), want) {
		t.Errorf("the data hash does not enter DataKey and Hash")
	}

	// Canonical round trip through Load, in another directory.
	p := writeSpec(t, s.Canonical())
	back, err := Load(p)
	if err != nil {
		t.Fatalf("Load(Canonical()) error %v\n%s", err, s.Canonical())
	}
	back.Path = s.Path
	if !reflect.DeepEqual(back, s) {
		t.Errorf("Load(Canonical()) =\n%+v\nwant\n%+v", back, s)
	}
	if back.Hash() != s.Hash() {
		t.Errorf("Hash changes when the spec moves")
	}
}

func TestLoadCSVFeaturesAndBOM(t *testing.T) {
	s, err := Load(writeSpec(t, csvSpec("n_train = 1\nfile = \"bom.csv\"\ntarget = \"a\"\nsampling = \"bootstrap\"\n", "")))
	if err != nil {
		t.Fatalf("Load(bom.csv) error %v", err)
	}
	if !slices.Equal(s.Data.Features, []string{"b", "y"}) {
		t.Errorf("Features = %q, want [b y]: the byte-order mark must not stick to the first column", s.Data.Features)
	}
	s, err = Load(writeSpec(t, csvSpec("n_train = 5\nfile = \"greenhouse.csv\"\ntarget = \"yield\"\nfeatures = [\"light\", \"temp\"]\nn_test = 2\n", "")))
	if err != nil {
		t.Fatalf("Load(features) error %v", err)
	}
	if !slices.Equal(s.Data.Features, []string{"light", "temp"}) || s.Data.Dim != 2 {
		t.Errorf("Features = %v Dim %d, want [light temp] and 2", s.Data.Features, s.Data.Dim)
	}
}

func TestLoadErrors(t *testing.T) {
	gh := "file = \"greenhouse.csv\"\ntarget = \"yield\"\n"
	tests := []struct {
		name     string
		src      string
		csvFile  bool // the error names the data file, not the spec
		wantLine int  // for csvFile; spec errors use the #< marker
		key      string
		want     string
	}{
		{name: "missing file", src: csvSpec("n_train = 5\nfile = \"nope.csv\" #<\ntarget = \"y\"\n", ""), key: "data.file",
			want: `cannot read data file "nope.csv" (accepted: a readable CSV file, path relative to the spec file)`},
		{name: "target not in header", src: csvSpec("n_train = 5\nfile = \"greenhouse.csv\"\ntarget = \"yeild\" #<\n", ""), key: "data.target",
			want: `column "yeild" is not in the header of`},
		{name: "feature not in header", src: csvSpec("n_train = 5\n"+gh+"features = [\"temp\", \"wind\"] #<\n", ""), key: "data.features",
			want: `column "wind" is not in the header of`},
		{name: "features above columns", src: csvSpec("n_train = 5\n"+gh, "[grid]\nparam = \"features\"\nvalues = [1, 4] #<\n"), key: "grid.values",
			want: "4 features exceed the number of feature columns = 3 (accepted: whole numbers in 1..3)"},
		{name: "n_train above pool", src: csvSpec("n_train = 10 #<\n"+gh, ""), key: "data.n_train",
			want: `n_train = 10 exceeds the 9 training rows of`},
		{name: "n_train grid above pool", src: csvSpec(gh, "[grid]\nparam = \"n_train\"\nfrom = 2\nto = 11 #<\npoints = 4\n"), key: "grid.to",
			want: `sampling = "bootstrap"`},
		{name: "n_test takes all rows", src: csvSpec("n_train = 2\n"+gh+"n_test = 12 #<\nsampling = \"bootstrap\"\n", ""), key: "data.n_test",
			want: "holds out 12 of the 12 rows"},
		{name: "polynomial on two feature columns", src: pieces{data: "[data] #<\nsource = \"csv\"\nn_train = 5\n" + gh,
			model: "[[model]]\nfamily = \"polynomial\"\n", grid: "[grid]\nparam = \"degree\"\nvalues = [1, 2]\n"}.src(), key: "data.features",
			want: "gives 3 feature columns, and polynomial regression takes one input"},
		{name: "ragged csv", src: csvSpec("n_train = 1\nfile = \"ragged.csv\"\ntarget = \"y\"\n", ""), csvFile: true, wantLine: 3,
			want: "malformed CSV: wrong number of fields (accepted: RFC 4180 rows"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			p := writeSpec(t, tc.src)
			_, err := Load(p)
			var e *Error
			if !errors.As(err, &e) {
				t.Fatalf("Load() = %v, want a *spec.Error", err)
			}
			file, line := p, markedLine(tc.src)
			if tc.csvFile {
				file, line = filepath.Join(filepath.Dir(p), "ragged.csv"), tc.wantLine
			}
			if e.File != file || e.Line != line || e.Key != tc.key {
				t.Errorf("Load() error at %s:%d key %q, want %s:%d key %q\n%v", e.File, e.Line, e.Key, file, line, tc.key, err)
			}
			if !strings.Contains(e.Msg, tc.want) {
				t.Errorf("Load() message %q, want it to contain %q", e.Msg, tc.want)
			}
		})
	}
}

func TestLoadMissingSpec(t *testing.T) {
	_, err := Load(filepath.Join(t.TempDir(), "none.toml"))
	var e *Error
	if !errors.As(err, &e) || !errors.Is(err, fs.ErrNotExist) || e.Line != 0 {
		t.Errorf("Load(missing) = %v, want a line-less *spec.Error wrapping fs.ErrNotExist", err)
	}
}
