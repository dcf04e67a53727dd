package reports

import (
	"fmt"
	"slices"

	"riskgrid/runner"
)

// Two-axis results (Result.OuterParam set) hold one curve per outer value
// and model, each marked with its outer value (ModelResult.Outer). The
// tables render each curve as its own block, headed with the outer value;
// the CSV gets the outer knob and value as two columns.

// checkOuter checks that every curve of a two-axis result carries an outer
// value and no curve of a one-axis result does.
func checkOuter(r *runner.Result) error {
	for i := range r.Models {
		m := &r.Models[i]
		switch {
		case r.OuterParam != "" && m.Outer == nil:
			return fmt.Errorf("%w: models[%d] (%s) has no outer value, but outer_param is %q", ErrResult, i, m.Label, r.OuterParam)
		case r.OuterParam == "" && m.Outer != nil:
			return fmt.Errorf("%w: models[%d] (%s) has outer value %v, but there is no outer_param", ErrResult, i, m.Label, *m.Outer)
		}
	}
	return nil
}

// atOuter is ", n_train = 50" for a curve of a two-axis result, "" for a
// one-axis result.
func atOuter(r *runner.Result, m *runner.ModelResult) string {
	if m.Outer == nil {
		return ""
	}
	return fmt.Sprintf(", %s = %s", r.OuterParam, knob(*m.Outer))
}

// outerValue is the curve's outer value in full precision, "" if none.
func outerValue(m *runner.ModelResult) string {
	if m.Outer == nil {
		return ""
	}
	return full(*m.Outer)
}

// withOuter inserts the outer knob and value after the "value" column of a
// CSV header or row of a two-axis result, and returns one-axis rows as they
// are, so their layout does not change.
func withOuter(r *runner.Result, row []string, param, value string) []string {
	if r.OuterParam == "" {
		return row
	}
	i := slices.Index(csvHeader, "value") + 1
	return slices.Insert(slices.Clone(row), i, param, value)
}

// curveName names a curve of r: its label, with ", n_train = 50" on a
// two-axis grid, where a label has one curve per outer value.
func curveName(r *runner.Result, m *runner.ModelResult) string {
	return m.Label + atOuter(r, m)
}

// sumsCurveName is curveName for the curves of a Sums.
func sumsCurveName(s *runner.Sums, m *runner.ModelSums) string {
	if m.Outer == nil {
		return m.Label
	}
	return fmt.Sprintf("%s, %s = %s", m.Label, s.OuterParam, knob(*m.Outer))
}
