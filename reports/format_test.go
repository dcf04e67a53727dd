package reports

import (
	"math"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"riskgrid/runner"
)

// TestMeasure checks the rounding rule of measure: the SE to two
// significant digits and the mean to the same decimal place. The rule is
// common practice for reporting measurements; the reference is the Guide to
// the expression of uncertainty in measurement (JCGM 100:2008), §7.2.6.
func TestMeasure(t *testing.T) {
	nan := math.NaN()
	tests := []struct {
		name     string
		mean, se float64
		wantM    string
		wantS    string
	}{
		// GUM (JCGM 100:2008) §7.2.2 reports m_S = 100,021 47 g with
		// u_c = 0,35 mg (from memory): five decimals, SE to two digits.
		{"GUM 7.2.2 mass standard", 100.02147, 0.00035, "100.02147", "0.00035"},
		// The remaining cases are worked by hand under the rule.
		{"SE second digit at 1e-3", 1.23456, 0.0123, "1.235", "0.012"},
		{"SE rounds up to a new digit", 0.5, 0.0996, "0.50", "0.10"},
		{"SE above ten rounds the mean to tens", 12345.6, 123, "12350", "120"},
		{"SE exactly a power of ten", 2.71828, 0.01, "2.718", "0.010"},
		{"negative mean (bias² may be < 0)", -0.01234, 0.0051, "-0.0123", "0.0051"},
		{"negative zero after rounding", -0.0004, 0.01, "0.000", "0.010"},
		{"SE larger than the mean", 0.3, 2.4, "0.3", "2.4"},
		{"SE zero: 4 significant digits", math.Pi, 0, "3.142", "0"},
		{"SE NaN: 4 significant digits", 2.0 / 3, nan, "0.6667", "–"},
		{"SE zero, large mean rounds to tens", 12345.6, 0, "12350", "0"},
		{"SE zero, exact integer", 50, 0, "50.00", "0"},
		{"mean NaN", nan, 0.1, "–", "–"},
		{"mean +Inf", math.Inf(1), 0.1, "–", "–"},
		{"mean zero, SE zero", 0, 0, "0", "0"},
		{"tiny: train risk of an interpolating fit", 3.1e-29, 4.2e-30, "3.10e-29", "4.2e-30"},
		{"large: risk at the interpolation threshold", 2.6123e7, 3.14e6, "2.61e+07", "3.1e+06"},
		{"tiny with a carry into a new digit", 9.996e-5, 1.0e-6, "1.000e-04", "1.0e-06"},
		{"tiny mean below the SE's resolution", 3e-9, 2e-5, "0", "2.0e-05"},
		{"tiny mean rounding up to one unit", 7e-7, 1e-5, "1e-06", "1.0e-05"},
		{"SE zero, large mean in e-notation", 1234567.8, 0, "1.235e+06", "0"},
		{"SE NaN, tiny mean in e-notation", -0.000123456, nan, "-1.235e-04", "–"},
		{"SE at rounding level: 7 digits", 3.72271349795205175, 3.6e-16, "3.722713", "3.6e-16"},
		{"negative SE is read as its magnitude", 1.23456, -0.0123, "1.235", "0.012"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			m, s := measure(runner.Num(tt.mean), runner.Num(tt.se))
			if m != tt.wantM || s != tt.wantS {
				t.Errorf("measure(%v, %v) = %q, %q, want %q, %q", tt.mean, tt.se, m, s, tt.wantM, tt.wantS)
			}
		})
	}
}

// TestMedianSE checks the rough SE of the median against the normal law:
// with the standard normal quartiles ±0.6744898 (standard normal table,
// any statistics textbook) σ̂ is 1 up to the rounding of 1.349, so the SE is
// √(π/2)/√S, the large-sample SE of a normal sample median (textbook
// result). The tolerance 1e-4 covers 2·0.6744898/1.349 = 0.99998.
func TestMedianSE(t *testing.T) {
	tests := []struct {
		name  string
		q1    float64
		q3    float64
		seeds int
		want  float64
		tol   float64
	}{
		{"standard normal, S = 100", -0.6744898, 0.6744898, 100, math.Sqrt(math.Pi/2) / 10, 1e-4},
		{"normal σ = 3, S = 25", -3 * 0.6744898, 3 * 0.6744898, 25, 3 * math.Sqrt(math.Pi/2) / 5, 1e-4},
		{"one seed: undefined", -1, 1, 1, math.NaN(), 0},
		{"missing quartile: undefined", math.NaN(), 1, 20, math.NaN(), 0},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			p := runner.Point{RiskQ1: runner.Num(tt.q1), RiskQ3: runner.Num(tt.q3), Seeds: tt.seeds}
			got := float64(medianSE(&p))
			if math.IsNaN(tt.want) {
				if !math.IsNaN(got) {
					t.Errorf("medianSE(%v) = %v, want NaN", p, got)
				}
				return
			}
			if !scalar.EqualWithinAbsOrRel(got, tt.want, 0, tt.tol) {
				t.Errorf("medianSE(%v) = %v, want %v (tol %g)", p, got, tt.want, tt.tol)
			}
		})
	}
}

// FuzzMeasure checks properties of measure on arbitrary input: no panic, no
// "NaN" or "Inf" text, and when both numbers are finite and the SE is
// positive, the printed mean lies within half a unit of the SE's second
// significant digit of the true mean and shows no digit below it, and the
// printed SE, rounded to two significant digits, lies within 5% of the SE.
func FuzzMeasure(f *testing.F) {
	for _, c := range [][2]float64{{1.23456, 0.0123}, {100.02147, 0.00035}, {3.1e-29, 4.2e-30}, {2.6e7, 3.1e6}, {-0.0004, 0.01}, {9.996e-5, 1e-6}, {0, 0}} {
		f.Add(c[0], c[1])
	}
	f.Fuzz(func(t *testing.T, mean, se float64) {
		m, s := measure(runner.Num(mean), runner.Num(se))
		for _, out := range []string{m, s} {
			if strings.Contains(out, "NaN") || strings.Contains(out, "Inf") {
				t.Fatalf("measure(%v, %v) = %q, %q: prints a non-number", mean, se, m, s)
			}
		}
		u := math.Abs(se)
		if math.IsNaN(mean) || math.IsInf(mean, 0) || math.IsNaN(se) || math.IsInf(se, 0) || u == 0 ||
			u < 1e-300 || u > 1e300 || math.Abs(mean) > 1e300 {
			return
		}
		gm, err := strconv.ParseFloat(m, 64)
		if err != nil {
			t.Fatalf("measure(%v, %v) mean %q does not parse: %v", mean, se, m, err)
		}
		gs, err := strconv.ParseFloat(s, 64)
		if err != nil {
			t.Fatalf("measure(%v, %v) SE %q does not parse: %v", mean, se, s, err)
		}
		if u < maxSig*math.Abs(mean) {
			// Capped at 7 significant digits.
			if !scalar.EqualWithinRel(gm, mean, 5e-7) {
				t.Errorf("measure(%v, %v) mean = %q, want 7 significant digits", mean, se, m)
			}
			return
		}
		q := math.Pow10(exponent(u, 1) - 1)
		// Half a unit at place q, plus a relative 1e-12 for the decimal
		// rounding of values far larger than q.
		if d := math.Abs(gm - mean); d > q/2*(1+1e-9)+1e-12*math.Abs(mean) {
			t.Errorf("measure(%v, %v) mean = %q, off by %g > q/2 = %g", mean, se, m, d, q/2)
		}
		// No digit finer than q: the printed mean is a whole number of q's
		// (checked below 1e9 q, where k carries at most ~1e-7 of rounding error).
		if k := gm / q; math.Abs(k) < 1e9 && math.Abs(k-math.Round(k)) > 1e-4 {
			t.Errorf("measure(%v, %v) mean = %q has digits below q = %g", mean, se, m, q)
		}
		if !scalar.EqualWithinRel(gs, u, 0.05) {
			t.Errorf("measure(%v, %v) SE = %q, want %v (tol %g)", mean, se, s, u, 0.05)
		}
	})
}
