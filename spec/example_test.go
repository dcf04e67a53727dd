package spec_test

import (
	"fmt"

	"riskgrid/spec"
)

func ExampleParse() {
	src := `
name = "ridgeless-isotropic"

[data]
source = "linear-gaussian"
n_train = 200
dim = 1000
noise = { sd = 0.5 }

[[model]]
family = "least-squares"

[[model]]
family = "ridge"
lambda = 0.1

[grid]
param = "features"
from = 50
to = 1000
points = 4
include = [200]

[seeds]
count = 100
`
	s, err := spec.Parse("specs/ridgeless.toml", []byte(src))
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(s.Data.NTest, s.Data.Spectrum.Kind, s.Data.Signal.Kind, s.Data.Signal.Norm)
	fmt.Println(s.Models[0].Label, "|", s.Models[1].Label)
	fmt.Println(s.Grid.Values, s.Seeds.Start)

	_, err = spec.Parse("specs/ridgeless.toml", []byte(`name = "x"
[data]
source = "linear-gaussian"
n_train = 200
dim = 1000
noise = { sd = 0.5 }
[[model]]
family = "least-squares"
lambda = 0.1
[grid]
param = "features"
values = [10]
[seeds]
count = 2
`))
	fmt.Println(err)
	// Output:
	// 1000 isotropic sphere 1
	// least-squares | ridge λ=0.1
	// [50 200 367 683 1000] 1
	// specs/ridgeless.toml:9: model[1].lambda: not a key of family "least-squares" (keys for it: family, label, intercept)
}

func ExampleLoad() {
	s, err := spec.Load("testdata/greenhouse.toml")
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(s.DataPath(), s.Data.Features, s.Data.Dim)
	// Output:
	// testdata/greenhouse.csv [temp humidity light] 3
}
