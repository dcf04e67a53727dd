package reports

import (
	"math"

	"riskgrid/runner"
)

// The Results below are invented for the golden files and the round-trip
// test: a minimum-norm fit and a ridge fit over the number of features p with
// n = 50 training points, noise σ² = 1. The numbers have the shape of a
// double-descent curve (a spike with a heavy tail at p = n) but come from no
// run; they exercise layout and rounding only.

func est(mean, se float64) runner.Estimate {
	return runner.Estimate{Mean: runner.Num(mean), SE: runner.Num(se)}
}

// pt builds a point whose Sum is bias² + variance + noise of its arguments.
func pt(value float64, seeds int, risk, riskSE, train, trainSE, b2, b2SE, v, vSE, df, dfSE, norm, normSE float64) runner.Point {
	return runner.Point{
		Value:         value,
		Seeds:         seeds,
		Risk:          est(risk, riskSE),
		TrainRisk:     est(train, trainSE),
		Gap:           est(risk-train, riskSE),
		Bias2:         est(b2, b2SE),
		Variance:      est(v, vSE),
		VarianceData:  est(v, vSE),
		VarianceModel: est(0, 0),
		RiskMCSE:      runner.NaN,
		Theory:        runner.NaN,
		CondMedian:    runner.Num(df * 3.7),
		Noise:         est(1, 0),
		Sum:           runner.Num(b2 + v + 1),
		DF:            est(df, dfSE),
		Norm:          est(norm, normSE),
		RiskQ1:        runner.Num(risk * 0.9),
		RiskMedian:    runner.Num(risk * 0.97),
		RiskQ3:        runner.Num(risk * 1.08),
		Interpolating: 0,
	}
}

// synthetic is the exact-basis Result: two models, five grid points each;
// min-norm at p = 50 is heavy-tailed and interpolates, ridge at p = 200 has
// one failed cell, and a few quantities are NaN.
func synthetic() *runner.Result {
	mn := []runner.Point{
		pt(10, 20, 1.8123456, 0.0412345, 0.8012345, 0.0301234, 0.7712345, 0.0390123, 0.0412345, 0.0021234, 10, 0, 1.5123456, 0.0123456),
		pt(40, 20, 5.31234567, 0.912345, 0.2012345, 0.0190123, 0.2212345, 0.0510123, 4.1012345, 0.8812345, 40, 0, 3.9123456, 0.312345),
		pt(50, 20, 2.6123456e4, 2.1012345e4, 3.1e-29, 4.2e-30, 0.1912345, 0.0612345, 2.6122e4, 2.1e4, 50, 0, 412.12345, 201.12345),
		pt(60, 20, 9.8123456, 1.912345, 0, 0, 0.2312345, 0.0412345, 8.5812345, 1.8812345, 50, 0, 4.8123456, 0.412345),
		pt(200, 20, 1.9123456, 0.0312345, 0, 0, 0.8012345, 0.0190123, 0.1112345, 0.0091234, 50, 0, 0.9912345, 0.0091234),
	}
	mn[2].HeavyTail = true
	mn[2].Interpolating = 1
	mn[2].RiskQ1, mn[2].RiskMedian, mn[2].RiskQ3 = 81.2345, 212.345, 1890.12345
	mn[3].Interpolating = 1
	mn[4].Interpolating = 1
	mn[3].TrainRisk.SE = runner.NaN // all seeds interpolate exactly: SE undefined

	rd := []runner.Point{
		pt(10, 20, 1.7912345, 0.0401234, 0.8212345, 0.0291234, 0.7612345, 0.0381234, 0.0301234, 0.0019123, 9.1234567, 0.0312345, 1.4123456, 0.0112345),
		pt(40, 20, 1.9412345, 0.0512345, 0.4012345, 0.0212345, 0.6812345, 0.0401234, 0.2612345, 0.0201234, 28.123456, 0.212345, 1.6123456, 0.0212345),
		pt(50, 20, 2.0112345, 0.0601234, 0.3312345, 0.0201234, 0.6712345, 0.0412345, 0.3412345, 0.0291234, 31.212345, 0.231234, 1.6612345, 0.0231234),
		pt(60, 20, 1.9812345, 0.0541234, 0.3012345, 0.0191234, 0.6912345, 0.0401234, 0.2912345, 0.0231234, 32.512345, 0.241234, 1.6412345, 0.0221234),
		pt(200, 19, 1.8712345, 0.0321234, 0.4412345, 0.0231234, 0.7912345, 0.0291234, 0.0812345, 0.0071234, 30.012345, 0.301234, 1.2112345, math.NaN()),
	}
	rd[4].Errors = []runner.CellError{{Seed: 7, Msg: "cholesky: matrix not positive definite"}}
	rd[4].DF.Mean = runner.NaN

	return &runner.Result{
		Schema:     runner.Schema,
		Engine:     "e1",
		Go:         "go1.26.8",
		Platform:   "linux/amd64",
		Name:       "double-descent-demo",
		About:      "min-norm least squares against ridge across p at n = 50",
		Hash:       "3f9a0c1de27b48a6c5f0e1d2b3a4958677a8b9c0d1e2f3a4b5c6d7e8f9a0b1c2",
		SpecTOML:   "name = \"double-descent-demo\"\n\n[seeds]\ncount = 20\nstart = 101\ntruth = 0\n",
		Created:    "2025-06-30T14:05:09Z",
		Param:      "p",
		Seeds:      20,
		NTrain:     50,
		RiskBasis:  runner.RiskExact,
		SplitBasis: runner.SplitExact,
		Models: []runner.ModelResult{
			{Label: "min-norm", Family: "ols", Points: mn},
			{Label: "ridge λ=0.1", Family: "ridge", Points: rd},
		},
	}
}

// lumpedResult is synthetic() measured on a held-out test set of a data file
// with unknown truth: risk on 500 test points, the bias² column holding
// bias² + noise, noise NaN; no spec text or run date.
func lumpedResult() *runner.Result {
	r := synthetic()
	r.Name = "double-descent-file"
	r.About = ""
	r.RiskBasis = runner.RiskTestSet
	r.SplitBasis = runner.SplitLumped
	r.TestPoints = 500
	// A Result read without its timing.json or spec: the provenance says
	// "date unknown" and counts the seeds without their range.
	r.SpecTOML = ""
	r.Created = ""
	for i := range r.Models {
		for j := range r.Models[i].Points {
			p := &r.Models[i].Points[j]
			p.Bias2.Mean += p.Noise.Mean
			p.Noise = runner.Estimate{Mean: runner.NaN, SE: runner.NaN}
		}
	}
	return r
}
