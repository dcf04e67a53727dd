package runner

import (
	"context"
	"testing"

	"riskgrid/spec"
)

// TestGeneratorNTestZeroIsASpecError: a linear-gaussian spec with n_test = 0
// was accepted by spec.Parse (and so by riskgrid check) but refused by the
// source when the run started, an error without a line that made run exit
// 1. A setting the run cannot use must be refused by Parse, with the file,
// line and key.
func TestGeneratorNTestZeroIsASpecError(t *testing.T) {
	src := `name = "n-test"
[data]
source = "linear-gaussian"
n_train = 10
n_test = 0
dim = 4
noise = { sd = 0.5 }
[[model]]
family = "least-squares"
[grid]
param = "features"
values = [2, 4]
[seeds]
count = 3
`
	s, err := spec.Parse("x.toml", []byte(src))
	if err == nil {
		if _, err := Run(context.Background(), s, Options{Workers: 1}); err != nil {
			t.Fatalf("spec.Parse accepted n_test = 0, Run refused it: %v", err)
		}
		return
	}
	e, ok := err.(*spec.Error)
	if !ok || e.Line != 5 || e.Key != "data.n_test" {
		t.Errorf("spec.Parse error %v, want one at x.toml:5 data.n_test", err)
	}
}
