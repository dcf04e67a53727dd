package reports

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"riskgrid/runner"
	"riskgrid/spec"
)

// heavyNote explains the "!" flag.
const heavyNote = "mean carried by a few seeds; read the median"

// header returns the column names of a model table, in our own words.
// Under the lumped split the bias² column holds bias² + noise and the noise
// column is blank. A randomized family fitted with several model seeds gets
// the variance's two parts (data: Var_data E_model f; model: E_data
// Var_model f). interp is the share of fits whose training risk is below
// the interpolation tolerance, κ the median condition number of the system
// the fits solved.
func header(r *runner.Result, m *runner.ModelResult) []string {
	b2 := "bias²"
	if r.SplitBasis == runner.SplitLumped {
		b2 = "bias²+noise"
	}
	h := []string{
		r.Param,
		"risk", "± se", "median",
		"train", "± se",
		"gap (risk−train)", "± se",
		b2, "± se",
		"variance", "± se",
	}
	if modelSplit(r, m) {
		h = append(h, "var (data)", "± se", "var (model)", "± se")
	}
	return append(h,
		"noise", "sum",
		"df", "‖b‖", "interp", "κ",
		"flag",
	)
}

// modelSplit reports whether m's table shows the variance's data and model
// parts: a family with randomness of its own, fitted with model seeds.
func modelSplit(r *runner.Result, m *runner.ModelResult) bool {
	return r.ModelSeeds > 1 && spec.Randomized(m.Family)
}

// row formats one grid point. Every mean is rounded at its own SE's second
// significant digit (see measure), the median at that of medianSE, and the
// sum, which is read against the risk, at the risk's.
func row(r *runner.Result, m *runner.ModelResult, p *runner.Point) []string {
	risk, riskSE := measure(p.Risk.Mean, p.Risk.SE)
	train, trainSE := measure(p.TrainRisk.Mean, p.TrainRisk.SE)
	gap, gapSE := measure(p.Gap.Mean, p.Gap.SE)
	b2, b2SE := measure(p.Bias2.Mean, p.Bias2.SE)
	v, vSE := measure(p.Variance.Mean, p.Variance.SE)
	noise := meanAt(p.Noise.Mean, p.Noise.SE)
	if r.SplitBasis == runner.SplitLumped {
		noise = ""
	}
	c := []string{
		knob(p.Value),
		risk, riskSE, medianText(p),
		train, trainSE,
		gap, gapSE,
		b2, b2SE,
		v, vSE,
	}
	if modelSplit(r, m) {
		vd, vdSE := measure(p.VarianceData.Mean, p.VarianceData.SE)
		vm, vmSE := measure(p.VarianceModel.Mean, p.VarianceModel.SE)
		c = append(c, vd, vdSE, vm, vmSE)
	}
	return append(c,
		noise, meanAt(p.Sum, p.Risk.SE),
		meanAt(p.DF.Mean, p.DF.SE), meanAt(p.Norm.Mean, p.Norm.SE),
		digits2(p.Interpolating), digits2(p.CondMedian),
		flags(p),
	)
}

// digits2 prints a diagnostic to two significant digits ("" when
// undefined): a share of fits, or a condition number, where more digits
// would be noise.
func digits2(x runner.Num) string {
	if x.IsNaN() {
		return ""
	}
	return strconv.FormatFloat(float64(x), 'g', 2, 64)
}

// medianText prints the median risk at the resolution medianSE supports,
// but never coarser than two significant digits: at a heavy-tailed point
// the quartiles can spread over decades, their SE exceed the median itself,
// and rounding at it would print the number the reader is told to read as
// 0.
func medianText(p *runner.Point) string {
	se := medianSE(p)
	if m := math.Abs(float64(p.RiskMedian)); !se.IsNaN() && float64(se) > m {
		se = runner.Num(m)
	}
	return meanAt(p.RiskMedian, se)
}

// medianSE is a rough standard error of the median risk, used only to
// choose how many digits the median gets:
//
//	se(median) ≈ √(π/2) · σ̂ / √S,  σ̂ = IQR / 1.349,
//
// the large-sample SE of a sample median under normality with σ estimated
// from the interquartile range, which the few large seeds of a heavy-tailed
// point do not inflate (the mean's SE would round the median away).
// It is NaN, so the median gets 4 significant digits, when the quartiles are
// missing or fewer than two seeds succeeded.
//
// Reference: asymptotic variance of the sample median, 1/(4 f(m)² n), a
// textbook result (e.g. Asymptotic Statistics, Cambridge University Press,
// 1998, Corollary 21.5; from memory); IQR = 1.349 σ for a normal law.
func medianSE(p *runner.Point) runner.Num {
	iqr := p.RiskQ3 - p.RiskQ1
	if iqr.IsNaN() || p.Seeds < 2 {
		return runner.NaN
	}
	return runner.Num(math.Sqrt(math.Pi/2) * math.Abs(float64(iqr)) / 1.349 / math.Sqrt(float64(p.Seeds)))
}

// flags marks a heavy-tailed point with "!" and a point with failed cells
// with their count.
func flags(p *runner.Point) string {
	var f []string
	if p.HeavyTail {
		f = append(f, "!")
	}
	if n := len(p.Errors); n > 0 {
		f = append(f, fmt.Sprintf("%d failed", n))
	}
	return strings.Join(f, " ")
}

// notes returns the footnotes under a model's table: the heavy-tail legend
// if any point is flagged, then one line per failed cell. code wraps an
// error message (identity for the terminal, a code span for Markdown).
func notes(r *runner.Result, m *runner.ModelResult, code func(string) string) []string {
	var heavy bool
	var fails []string
	for i := range m.Points {
		p := &m.Points[i]
		heavy = heavy || p.HeavyTail
		for _, e := range p.Errors {
			fails = append(fails, fmt.Sprintf("failed: %s = %s, seed %d: %s",
				r.Param, knob(p.Value), e.Seed, code(e.Msg)))
		}
	}
	var out []string
	if heavy {
		out = append(out, "! "+heavyNote)
	}
	return append(out, fails...)
}
