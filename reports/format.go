package reports

import (
	"math"
	"strconv"
	"strings"

	"riskgrid/runner"
)

// Magnitudes outside [eLow, eHigh) are printed in e-notation, so that a
// train risk of 1e-29 at interpolation or a risk of 3e+07 at the threshold
// stays readable in a narrow column.
const (
	eLow  = 1e-3
	eHigh = 1e6
)

// blank is what a table cell shows for a NaN or infinite quantity.
const blank = "–"

// measure formats a mean and its standard error for a table, rounding both
// to the same decimal place: the place of the SE's second significant digit,
//
//	se' = se rounded to 2 significant digits,  place q = 10^(e(se') − 1),
//	mean' = mean rounded to a multiple of q,
//
// where e(x) is the decimal exponent of x. Thus 1.23456 ± 0.0123 prints as
// "1.235", "0.012". When se is 0, NaN or infinite the mean carries 4
// significant digits and the SE prints as "0" or blank. A NaN or infinite
// mean prints as blank with a blank SE. Magnitudes (the larger of |mean|
// and se) below 1e-3 or from 1e6 up print in e-notation, the mean with as
// many digits as reach q.
//
// Reference: Evaluation of measurement data — Guide to the expression of
// uncertainty in measurement (JCGM 100:2008), §7.2.6: quote the standard
// uncertainty with at most two significant digits and round the estimate
// to match. Quoting to two digits is common practice in reporting
// measurements (from memory).
func measure(mean, se runner.Num) (m, s string) {
	if mean.IsNaN() {
		return blank, blank
	}
	x := float64(mean)
	if se.IsNaN() || se == 0 {
		m = sig4(x)
		if se.IsNaN() {
			return m, blank
		}
		return m, "0"
	}
	u := math.Abs(float64(se)) // an SE is non-negative; tolerate a stray sign
	if u < maxSig*math.Abs(x) {
		// The SE is below what a table needs (every seed gave nearly the
		// same value: a training set that is the whole pool, a fit that
		// interpolates): 7 significant digits, the SE in e-notation.
		return sigN(x, 7), strconv.FormatFloat(u, 'e', 1, 64)
	}
	eu := exponent(u, 1) // exponent of the SE after rounding to 2 digits
	q := eu - 1          // decimal place of its second digit
	scale := math.Max(math.Abs(x), u)
	if scale < eLow || scale >= eHigh {
		s = strconv.FormatFloat(u, 'e', 1, 64)
		if x == 0 {
			return "0", s
		}
		e0 := exponent(x, 16) // exact exponent: 17 digits round-trip a float64
		p := e0 - q           // digits after the point that reach place q
		if p < 0 {
			// |mean| < 10^q: at the SE's resolution it is 0 or ±10^q.
			r := math.Round(x / math.Pow10(q))
			if r == 0 {
				return "0", s
			}
			return strconv.FormatFloat(r*math.Pow10(q), 'e', 0, 64), s
		}
		m = strconv.FormatFloat(x, 'e', p, 64)
		if exponent(x, p) > e0 {
			// Rounding carried into a new leading digit (9.996e-05 at place
			// 1e-06 is 1.00e-04): the result is ±10^(e0+1), and one more
			// digit keeps its last one at q.
			m = strconv.FormatFloat(math.Copysign(math.Pow10(e0+1), x), 'e', p+1, 64)
		}
		return dropNegZero(m), s
	}
	return fixedAt(x, q), fixedAt(u, q)
}

// meanAt formats a mean alone at the resolution its SE supports (see measure).
func meanAt(mean, se runner.Num) string {
	m, _ := measure(mean, se)
	return m
}

// maxSig caps the digits of a mean: when its SE is below maxSig·|mean| it
// prints with 7 significant digits, not with the 17 its SE would allow —
// such digits say more about rounding than about the risk. The CSV and
// result.json keep full precision.
const maxSig = 1e-7

// sig4 formats x with 4 significant digits, in e-notation outside
// [eLow, eHigh).
func sig4(x float64) string { return sigN(x, 4) }

// sigN formats x with n significant digits, in e-notation outside
// [eLow, eHigh).
func sigN(x float64, n int) string {
	if x == 0 {
		return "0"
	}
	if a := math.Abs(x); a < eLow || a >= eHigh {
		return strconv.FormatFloat(x, 'e', n-1, 64)
	}
	return fixedAt(x, exponent(x, n-1)-(n-1))
}

// fixedAt formats x in fixed notation rounded to a multiple of 10^q.
func fixedAt(x float64, q int) string {
	if q < 0 {
		return dropNegZero(strconv.FormatFloat(x, 'f', -q, 64))
	}
	p := math.Pow10(q)
	return dropNegZero(strconv.FormatFloat(math.Round(x/p)*p, 'f', 0, 64))
}

// exponent returns the decimal exponent of x after rounding it to prec+1
// significant digits (0.0996 to 2 digits is 0.10, exponent −1). It reads the
// exponent from strconv's correctly rounded output rather than from
// floor(log10 x), which is off by one near powers of ten.
func exponent(x float64, prec int) int {
	s := strconv.FormatFloat(x, 'e', prec, 64)
	i := strings.LastIndexByte(s, 'e')
	e, err := strconv.Atoi(s[i+1:])
	if err != nil {
		panic("reports: exponent of " + s)
	}
	return e
}

// dropNegZero turns "-0.00" (a small negative value rounded to zero) into
// "0.00": the sign of a zero carries no information in a table.
func dropNegZero(s string) string {
	if !strings.HasPrefix(s, "-") {
		return s
	}
	mant, _, _ := strings.Cut(s[1:], "e")
	if strings.Trim(mant, "0.") == "" {
		return s[1:]
	}
	return s
}

// knob formats a grid value exactly as given (shortest round-trip form).
func knob(v float64) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return blank
	}
	return strconv.FormatFloat(v, 'g', -1, 64)
}
