package reports

import (
	"bytes"
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"strconv"

	"riskgrid/runner"
)

// csvHeader names the columns of CSV, in order.
var csvHeader = []string{
	"model", "family", "param", "value", "seeds", "model_seeds",
	"risk", "risk_se", "risk_mc_se", "risk_q1", "risk_median", "risk_q3", "theory",
	"train_risk", "train_risk_se", "gap", "gap_se",
	"bias2", "bias2_se", "variance", "variance_se",
	"variance_data", "variance_data_se", "variance_model", "variance_model_se", "noise", "noise_se",
	"sum", "df", "df_se", "norm", "norm_se",
	"interpolating", "cond_median", "heavy_tail", "errors",
	"risk_basis", "split_basis", "spec_hash",
	"spec_name", "engine", "seed_first", "seed_last", "run_started",
}

// CSV writes r as one tidy table (RFC 4180, encoding/csv): a header row,
// then one row per model × grid point with the columns of csvHeader; a
// two-axis result has one row per model × outer value × grid point, with
// outer_param and outer_value after value (see withOuter).
// Numbers are in full precision (the shortest form that reads back to the
// same float64); NaN and ±Inf are empty cells. errors is the number of
// failed cells, heavy_tail is true or false, risk_basis and split_basis are
// the Result's own codes. Under the lumped split bias2 holds bias² + noise,
// as in the Result.
//
// The provenance goes in columns, repeated on every row, rather than in
// comment lines, which CSV does not have and pandas or R would have to be
// told to skip: spec_hash (the full hash), spec_name, engine, seed_first and
// seed_last (the seeds requested; empty when the Result does not say where
// they start) and run_started (Result.Created, RFC 3339 UTC; empty when
// unknown). A file stays one row per model × grid value, and rows of
// several runs can be stacked and still told apart.
//
// The whole output is formatted before the first byte is written, so an
// inconsistent Result (ErrResult) writes nothing.
func CSV(w io.Writer, r *runner.Result) error {
	if err := check(r); err != nil {
		return err
	}
	var buf bytes.Buffer
	cw := csv.NewWriter(&buf)
	if err := cw.Write(withOuter(r, csvHeader, "outer_param", "outer_value")); err != nil {
		return fmt.Errorf("reports: csv header: %w", err)
	}
	pv := provenanceOf(r)
	for i := range r.Models {
		m := &r.Models[i]
		for j := range m.Points {
			if err := cw.Write(withOuter(r, csvRow(r, pv, m, &m.Points[j]), r.OuterParam, outerValue(m))); err != nil {
				return fmt.Errorf("reports: csv row %s %s=%s: %w", m.Label, r.Param, knob(m.Points[j].Value), err)
			}
		}
	}
	cw.Flush()
	if err := cw.Error(); err != nil {
		return fmt.Errorf("reports: csv: %w", err)
	}
	if _, err := w.Write(buf.Bytes()); err != nil {
		return fmt.Errorf("reports: write csv: %w", err)
	}
	return nil
}

func csvRow(r *runner.Result, pv provenance, m *runner.ModelResult, p *runner.Point) []string {
	return []string{
		m.Label, m.Family, r.Param, full(p.Value), strconv.Itoa(p.Seeds), strconv.Itoa(modelSeeds(r, m)),
		full(p.Risk.Mean), full(p.Risk.SE), full(p.RiskMCSE), full(p.RiskQ1), full(p.RiskMedian), full(p.RiskQ3), full(p.Theory),
		full(p.TrainRisk.Mean), full(p.TrainRisk.SE), full(p.Gap.Mean), full(p.Gap.SE),
		full(p.Bias2.Mean), full(p.Bias2.SE), full(p.Variance.Mean), full(p.Variance.SE),
		full(p.VarianceData.Mean), full(p.VarianceData.SE), full(p.VarianceModel.Mean), full(p.VarianceModel.SE),
		full(p.Noise.Mean), full(p.Noise.SE),
		full(p.Sum), full(p.DF.Mean), full(p.DF.SE), full(p.Norm.Mean), full(p.Norm.SE),
		full(p.Interpolating), full(p.CondMedian), strconv.FormatBool(p.HeavyTail), strconv.Itoa(len(p.Errors)),
		r.RiskBasis, r.SplitBasis, r.Hash,
		r.Name, r.Engine, pv.first, pv.last, r.Created,
	}
}

// modelSeeds is the number of fits per data seed behind m's points.
func modelSeeds(r *runner.Result, m *runner.ModelResult) int {
	if modelSplit(r, m) {
		return r.ModelSeeds
	}
	return 1
}

// full formats x in the shortest form that parses back to the same float64,
// and NaN or ±Inf as the empty string.
func full[F ~float64](x F) string {
	f := float64(x)
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return ""
	}
	return strconv.FormatFloat(f, 'g', -1, 64)
}
