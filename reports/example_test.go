package reports_test

import (
	"log"
	"os"

	"riskgrid/reports"
	"riskgrid/runner"
)

// exampleResult is typed in with invented numbers; a Result is normally
// read from a run's result.json.
func exampleResult() *runner.Result {
	est := func(m, se runner.Num) runner.Estimate { return runner.Estimate{Mean: m, SE: se} }
	r := &runner.Result{
		Name:       "ridge-path",
		Hash:       "0123456789abcdef0123456789abcdef0123456789abcdef0123456789abcdef",
		Engine:     "e1",
		SpecTOML:   "name = \"ridge-path\"\n[seeds]\ncount = 10\nstart = 1\n",
		Created:    "2025-06-30T14:05:09Z",
		Param:      "lambda",
		Seeds:      10,
		RiskBasis:  runner.RiskExact,
		SplitBasis: runner.SplitExact,
		Models: []runner.ModelResult{{
			Label:  "ridge",
			Family: "ridge",
			Points: []runner.Point{
				{
					Value: 0.001, Seeds: 10,
					Risk: est(14.2871, 9.3127), TrainRisk: est(0.0123, 0.0041), Gap: est(14.2748, 9.3101),
					Bias2: est(0.2213, 0.0512), Variance: est(13.066, 9.2), Noise: est(1, 0), Sum: 14.2873,
					VarianceData: est(13.066, 9.2), VarianceModel: est(0, 0), RiskMCSE: runner.NaN, Theory: runner.NaN,
					DF: est(49.62, 0.031), Norm: est(6.1234, 2.01), Interpolating: 0, CondMedian: 2.1e6,
					RiskQ1: 2.31, RiskMedian: 3.0412, RiskQ3: 4.87, HeavyTail: true,
				},
				{
					Value: 0.1, Seeds: 10,
					Risk: est(1.61234, 0.02345), TrainRisk: est(0.70123, 0.01987), Gap: est(0.91111, 0.02789),
					Bias2: est(0.40321, 0.01234), Variance: est(0.20987, 0.00876), Noise: est(1, 0), Sum: 1.61308,
					VarianceData: est(0.20987, 0.00876), VarianceModel: est(0, 0), RiskMCSE: runner.NaN, Theory: runner.NaN,
					DF: est(21.345, 0.123), Norm: est(1.2345, runner.NaN), Interpolating: 0, CondMedian: 31.5,
					RiskQ1: 1.55, RiskMedian: 1.6011, RiskQ3: 1.67,
				},
			},
		}},
	}
	return r
}

// The layout: means rounded at their SE's second significant digit, a
// heavy-tailed point flagged "!", NaN as "–".
func ExampleTerminal() {
	if err := reports.Terminal(os.Stdout, exampleResult()); err != nil {
		log.Fatal(err)
	}
	// Output:
	// ridge-path
	//
	// ridge [ridge]: grid lambda, 10 seeds; true risk (exact); bias²/variance exact over the input distribution
	// +--------+-------+-------+--------+--------+--------+------------------+-------+-------+-------+----------+--------+-------+-------+--------+-------+--------+---------+------+
	// | lambda |  risk |  ± se | median |  train |   ± se | gap (risk−train) |  ± se | bias² |  ± se | variance |   ± se | noise |   sum |     df |   ‖b‖ | interp |       κ | flag |
	// +--------+-------+-------+--------+--------+--------+------------------+-------+-------+-------+----------+--------+-------+-------+--------+-------+--------+---------+------+
	// |  0.001 |  14.3 |   9.3 |   3.04 | 0.0123 | 0.0041 |             14.3 |   9.3 | 0.221 | 0.051 |     13.1 |    9.2 | 1.000 |  14.3 | 49.620 |   6.1 |      0 | 2.1e+06 | !    |
	// |    0.1 | 1.612 | 0.023 |  1.601 |  0.701 |  0.020 |            0.911 | 0.028 | 0.403 | 0.012 |   0.2099 | 0.0088 | 1.000 | 1.613 |  21.34 | 1.234 |      0 |      32 |      |
	// +--------+-------+-------+--------+--------+--------+------------------+-------+-------+-------+----------+--------+-------+-------+--------+-------+--------+---------+------+
	// ! mean carried by a few seeds; read the median
	//
	// spec ridge-path, hash 0123456789ab, engine e1, seeds 1–10, run 2025-06-30 14:05 UTC
}

func ExampleMarkdown() {
	if err := reports.Markdown(os.Stdout, exampleResult()); err != nil {
		log.Fatal(err)
	}
	// Output:
	// ### ridge
	//
	// Family `ridge`, grid `lambda`, 10 seeds; true risk (exact); bias²/variance exact over the input distribution.
	//
	// | lambda |  risk |  ± se | median |  train |   ± se | gap (risk−train) |  ± se | bias² |  ± se | variance |   ± se | noise |   sum |     df |   ‖b‖ | interp |       κ | flag |
	// |-------:|------:|------:|-------:|-------:|-------:|-----------------:|------:|------:|------:|---------:|-------:|------:|------:|-------:|------:|-------:|--------:|:-----|
	// |  0.001 |  14.3 |   9.3 |   3.04 | 0.0123 | 0.0041 |             14.3 |   9.3 | 0.221 | 0.051 |     13.1 |    9.2 | 1.000 |  14.3 | 49.620 |   6.1 |      0 | 2.1e+06 | !    |
	// |    0.1 | 1.612 | 0.023 |  1.601 |  0.701 |  0.020 |            0.911 | 0.028 | 0.403 | 0.012 |   0.2099 | 0.0088 | 1.000 | 1.613 |  21.34 | 1.234 |      0 |      32 |      |
	//
	// - ! mean carried by a few seeds; read the median
	//
	// Spec `ridge-path`, hash `0123456789ab`, engine `e1`, seeds 1–10, run 2025-06-30 14:05 UTC; true risk (exact).
}

func ExampleCSV() {
	if err := reports.CSV(os.Stdout, exampleResult()); err != nil {
		log.Fatal(err)
	}
	// Output:
	// model,family,param,value,seeds,model_seeds,risk,risk_se,risk_mc_se,risk_q1,risk_median,risk_q3,theory,train_risk,train_risk_se,gap,gap_se,bias2,bias2_se,variance,variance_se,variance_data,variance_data_se,variance_model,variance_model_se,noise,noise_se,sum,df,df_se,norm,norm_se,interpolating,cond_median,heavy_tail,errors,risk_basis,split_basis,spec_hash,spec_name,engine,seed_first,seed_last,run_started
	// ridge,ridge,lambda,0.001,10,1,14.2871,9.3127,,2.31,3.0412,4.87,,0.0123,0.0041,14.2748,9.3101,0.2213,0.0512,13.066,9.2,13.066,9.2,0,0,1,0,14.2873,49.62,0.031,6.1234,2.01,0,2.1e+06,true,0,exact,exact,0123456789abcdef0123456789abcdef0123456789abcdef0123456789abcdef,ridge-path,e1,1,10,2025-06-30T14:05:09Z
	// ridge,ridge,lambda,0.1,10,1,1.61234,0.02345,,1.55,1.6011,1.67,,0.70123,0.01987,0.91111,0.02789,0.40321,0.01234,0.20987,0.00876,0.20987,0.00876,0,0,1,0,1.61308,21.345,0.123,1.2345,,0,31.5,false,0,exact,exact,0123456789abcdef0123456789abcdef0123456789abcdef0123456789abcdef,ridge-path,e1,1,10,2025-06-30T14:05:09Z
}
