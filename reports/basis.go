package reports

import (
	"fmt"

	"riskgrid/runner"
)

// check validates what the renderers read from r before anything is
// written, so a bad Result yields an error and no partial output.
// A nil r is a programmer error and panics.
func check(r *runner.Result) error {
	if r == nil {
		panic("reports: nil Result")
	}
	if err := checkOuter(r); err != nil {
		return err
	}
	switch r.RiskBasis {
	case runner.RiskExact:
	case runner.RiskTestSet, runner.RiskQuadrature, runner.RiskMonteCarlo:
		if r.TestPoints <= 0 {
			return fmt.Errorf("%w: risk_basis %q needs test_points > 0, have %d", ErrResult, r.RiskBasis, r.TestPoints)
		}
	default:
		return fmt.Errorf("%w: risk_basis %q (known: %q, %q, %q, %q)", ErrResult, r.RiskBasis,
			runner.RiskExact, runner.RiskQuadrature, runner.RiskMonteCarlo, runner.RiskTestSet)
	}
	switch r.SplitBasis {
	case runner.SplitExact, runner.SplitLumped:
	case runner.SplitTestInputs:
		if r.TestPoints <= 0 {
			return fmt.Errorf("%w: split_basis %q needs test_points > 0, have %d", ErrResult, r.SplitBasis, r.TestPoints)
		}
	default:
		return fmt.Errorf("%w: split_basis %q (known: %q, %q, %q)", ErrResult, r.SplitBasis,
			runner.SplitExact, runner.SplitTestInputs, runner.SplitLumped)
	}
	return nil
}

// riskText says in words how the risk column was measured.
func riskText(r *runner.Result) string {
	switch r.RiskBasis {
	case runner.RiskTestSet:
		return fmt.Sprintf("test risk (held-out test set, %d points)", r.TestPoints)
	case runner.RiskQuadrature:
		return fmt.Sprintf("true risk (quadrature rule, %d nodes)", r.TestPoints)
	case runner.RiskMonteCarlo:
		return fmt.Sprintf("true risk (Monte Carlo over %d test inputs; its sampling SE is risk_mc_se in result.json)", r.TestPoints)
	}
	return "true risk (exact)"
}

// splitText says in words how bias² and variance were measured.
func splitText(r *runner.Result) string {
	var s string
	switch r.SplitBasis {
	case runner.SplitTestInputs:
		s = fmt.Sprintf("bias²/variance on %d fixed test inputs", r.TestPoints)
	case runner.SplitLumped:
		return "truth unknown: bias² column is bias² + noise"
	default:
		s = "bias²/variance exact over the input distribution"
	}
	if r.TruthPerSeed {
		s += ", each seed against its own β"
	}
	return s
}

// heading is the line above a model's table.
func heading(r *runner.Result, m *runner.ModelResult) string {
	return fmt.Sprintf("%s [%s]%s: grid %s, %d seeds; %s; %s",
		m.Label, m.Family, atOuter(r, m), r.Param, r.Seeds, riskText(r), splitText(r))
}

// shortHash is the first 12 hex digits of the spec hash.
func shortHash(h string) string {
	if len(h) > 12 {
		return h[:12]
	}
	return h
}
