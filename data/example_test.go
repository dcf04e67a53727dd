package data_test

import (
	"fmt"
	"path/filepath"

	"riskgrid/data"
	"riskgrid/spec"
)

// A linear-gaussian source: 3 inputs with a power-law spectrum, a fixed
// truth of norm 1 and Gaussian noise of sd 0.5.
func ExampleNew() {
	s := &spec.Spec{
		Name: "example",
		Data: spec.Data{
			Source:   spec.SourceLinearGaussian,
			NTrain:   4,
			NTest:    10,
			Dim:      3,
			Spectrum: spec.Spectrum{Kind: spec.SpectrumPowerLaw, Exponent: 1},
			Signal:   spec.Signal{Kind: spec.SignalSphere, Norm: 1},
			Noise:    spec.Noise{Kind: spec.NoiseGaussian, SD: 0.5},
			Truth:    spec.TruthFixed,
		},
	}
	src, err := data.New(s, "example-key")
	if err != nil {
		fmt.Println(err)
		return
	}
	p := src.Problem()
	fmt.Printf("Σ = %.4f, Var ε = %g\n", p.Sigma, p.NoiseVar)
	smp, _ := src.Draw(1)
	r, c := smp.X.Dims()
	fmt.Printf("sample %d×%d, %d responses\n", r, c, len(smp.Y))
	// Output:
	// Σ = [1.0000 0.5000 0.3333], Var ε = 0.25
	// sample 4×3, 4 responses
}

// A csv source: y is the response, 5 rows are held out.
func ExampleNew_csv() {
	s := &spec.Spec{
		Name: "example",
		Path: filepath.Join("testdata", "example.toml"),
		Data: spec.Data{
			Source: spec.SourceCSV,
			File:   "good.csv",
			Target: "y",
			NTrain: 10,
			NTest:  5,
		},
	}
	src, err := data.New(s, "example-key")
	if err != nil {
		fmt.Println(err)
		return
	}
	p := src.Problem()
	m, _ := p.TestX.Dims()
	fmt.Println(p.Names, m, "test rows")

	s.Data.Target = "yield"
	_, err = data.New(s, "example-key")
	fmt.Println(err)
	// Output:
	// [x1 x2 x3] 5 test rows
	// testdata/good.csv:1: column "yield": target column not in the header (columns: x1, x2, y, x3)
}

// Streams are named by a key and coordinates; the same name gives the same
// numbers on every platform and Go version.
func ExampleNewStream() {
	st := data.NewStream("my-key", 1, 2)
	var rolls []int
	for range 8 {
		rolls = append(rolls, 1+st.Intn(6))
	}
	fmt.Println(rolls)
	p := []int{0, 1, 2, 3, 4, 5, 6, 7, 8, 9}
	st.PartialShuffle(p, 3)
	fmt.Println(p[:3])
	// Output:
	// [3 5 3 6 6 1 3 2]
	// [1 4 2]
}
