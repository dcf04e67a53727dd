package reports

import (
	"bytes"
	"encoding/json"
	"math"
	"strings"
	"testing"

	"riskgrid/runner"
)

// clone deep-copies a Result through JSON (the round trip is exact: Num
// prints the shortest form that reads back to the same float64).
func clone(t *testing.T, r *runner.Result) *runner.Result {
	t.Helper()
	b, err := json.Marshal(r)
	if err != nil {
		t.Fatal(err)
	}
	var c runner.Result
	if err := json.Unmarshal(b, &c); err != nil {
		t.Fatal(err)
	}
	return &c
}

func TestAgreeIdentical(t *testing.T) {
	r := synthetic()
	a := Agree(r, clone(t, r), nil, nil, nil, DefaultWithin)
	if !a.OK() {
		t.Fatalf("identical results disagree: moved %v, shape %v", a.Moved, a.Shape)
	}
	for _, s := range a.Spreads {
		if s.MaxAbs != 0 || s.MaxRel != 0 {
			t.Errorf("%s: largest difference %g (relative %g) between identical results", s.Metric, s.MaxAbs, s.MaxRel)
		}
	}
	// Bit for bit also holds.
	if a := Agree(r, clone(t, r), nil, nil, nil, 0); !a.OK() {
		t.Errorf("identical results disagree at -within 0: %v", a.Moved)
	}
}

// TestAgreeTolerance plants relative changes just above and below the
// tolerance in one number and checks which are caught, the reported
// relative difference, and where.
func TestAgreeTolerance(t *testing.T) {
	for _, tc := range []struct {
		name   string
		factor float64
		moved  bool
	}{
		{"far below", 1 + 1e-12, false},
		{"just below", 1 + 0.9e-9, false},
		{"just above", 1 + 1.1e-9, true},
		{"far above", 1 + 1e-6, true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			stored := synthetic()
			fresh := clone(t, stored)
			p := &fresh.Models[1].Points[2] // ridge at p = 50, risk 2.0112345
			p.Risk.Mean *= runner.Num(tc.factor)
			a := Agree(stored, fresh, nil, nil, nil, DefaultWithin)
			if a.OK() == tc.moved {
				t.Fatalf("risk × %v: OK() = %v, want %v", tc.factor, a.OK(), !tc.moved)
			}
			s := spreadOf(t, a, "risk")
			// rel = |a(f−1)| / max(|a|, |af|) = (f−1)/f, up to the rounding
			// of a·f (eps/(f−1) relative: 2e-4 at f − 1 = 1e-12).
			want := (tc.factor - 1) / tc.factor
			if math.Abs(s.MaxRel-want) > 1e-3*want {
				t.Errorf("largest relative Δ = %g, want %g", s.MaxRel, want)
			}
			if s.RelAt.Model != "ridge λ=0.1" || s.RelAt.Value != 50 {
				t.Errorf("largest relative Δ at %+v, want ridge λ=0.1 at 50", s.RelAt)
			}
			if tc.moved && (len(a.Moved) != 1 || a.Moved[0].Metric != "risk") {
				t.Errorf("moved = %+v, want the one risk", a.Moved)
			}
		})
	}
}

// TestAgreeScale: a training risk of 1e-29 (rounding at interpolation)
// that doubles is read against the point's mean risk, not against itself.
func TestAgreeScale(t *testing.T) {
	stored := synthetic()
	fresh := clone(t, stored)
	p := &fresh.Models[0].Points[2] // min-norm at p = 50: train 3.1e-29, risk 2.6e4
	p.TrainRisk.Mean *= 2
	if a := Agree(stored, fresh, nil, nil, nil, DefaultWithin); !a.OK() {
		t.Errorf("a doubled training risk of 3e-29 beside a risk of 2.6e4 counts as moved: %+v", a.Moved)
	}
	// The same relative change of the norm is caught: its scale is itself.
	fresh = clone(t, stored)
	fresh.Models[0].Points[2].Norm.Mean *= 1 + 1e-8
	if a := Agree(stored, fresh, nil, nil, nil, DefaultWithin); a.OK() || a.Moved[0].Metric != "norm" {
		t.Errorf("norm × (1+1e-8) not caught: %+v", a.Moved)
	}
}

func TestAllowance(t *testing.T) {
	for _, tc := range []struct {
		within, kappa, want float64
	}{
		{1e-9, 1, 1e-9},
		{1e-9, math.NaN(), 1e-9},
		{1e-9, 1e8, CondSlack * 1e8 * 0x1p-52},
		{1e-9, math.Inf(1), math.Inf(1)},
		{0, 1e8, 0},
	} {
		if got := Allowance(tc.within, tc.kappa); got != tc.want {
			t.Errorf("Allowance(%g, %g) = %g, want %g", tc.within, tc.kappa, got, tc.want)
		}
	}
}

// TestAgreeConditioning: a change of 1e-8 relative is moved at a
// well-conditioned point and accepted at one with κ = 1e7 (allowance
// 100·1e7·2.2e-16 = 2.2e-7), which is listed as widened.
func TestAgreeConditioning(t *testing.T) {
	stored := synthetic()
	fresh := clone(t, stored)
	fresh.Models[0].Points[2].Risk.Mean *= 1 + 1e-8
	kappa := [][]float64{{3, 3, 1e7, 3, 3}, {2, 2, 2, 2, 2}}
	a := Agree(stored, fresh, nil, nil, kappa, DefaultWithin)
	if !a.OK() {
		t.Errorf("1e-8 at κ = 1e7 counts as moved: %+v", a.Moved)
	}
	if len(a.Widened) != 1 || a.Widened[0].Value != 50 || a.Widened[0].Kappa != 1e7 {
		t.Errorf("widened = %+v, want the point at 50 with κ 1e7", a.Widened)
	}
	kappa[0][2] = 3
	if a := Agree(stored, fresh, nil, nil, kappa, DefaultWithin); a.OK() {
		t.Errorf("1e-8 at κ = 3 accepted")
	}
}

func TestAgreeShape(t *testing.T) {
	stored := synthetic()
	fresh := clone(t, stored)
	fresh.Models[1].Points = fresh.Models[1].Points[:4]
	fresh.Models[0].Points[0].Seeds = 19
	fresh.Models[0].Points[1].HeavyTail = true
	fresh.Models[0].Points[3].Interpolating = 0.95
	fresh.Models[0].Points[4].Risk.Mean = runner.NaN
	a := Agree(stored, fresh, nil, nil, nil, DefaultWithin)
	if a.OK() {
		t.Fatal("structural changes accepted")
	}
	text := strings.Join(a.Shape, "\n")
	for _, want := range []string{"ridge λ=0.1, p = 200: stored, not recomputed", "20 seeds fitted in the stored result, 19",
		"heavy-tail flag false stored, true"} {
		if !strings.Contains(text, want) {
			t.Errorf("shape notes lack %q:\n%s", want, text)
		}
	}
	if s := spreadOf(t, a, "interpolating"); s.Moved != 1 || math.Abs(s.MaxAbs-0.05) > 1e-15 {
		t.Errorf("interpolating share 1 → 0.95: moved %d, largest |Δ| %v", s.Moved, s.MaxAbs)
	}
	if s := spreadOf(t, a, "risk"); !math.IsInf(s.MaxRel, 1) || s.RelAt.Value != 200 {
		t.Errorf("a NaN risk against a number: largest relative Δ %g at %+v, want +Inf at 200", s.MaxRel, s.RelAt)
	}
}

func TestAgreePerSeed(t *testing.T) {
	stored := synthetic()
	sums := func() *runner.Sums {
		s := &runner.Sums{}
		for _, m := range stored.Models {
			ms := runner.ModelSums{Label: m.Label}
			for _, p := range m.Points {
				ms.Points = append(ms.Points, runner.PointSums{Value: p.Value, Seeds: []uint64{1, 2, 3},
					Risk: []float64{1, 2, 3}, TrainRisk: []float64{0.5, 0.5, 0.5}, Norm: []float64{1, 1, 1}, DF: []float64{3, 3, 3}})
			}
			s.Models = append(s.Models, ms)
		}
		return s
	}
	ss, fs := sums(), sums()
	fs.Models[1].Points[3].Risk[1] = 2.001
	a := Agree(stored, clone(t, stored), ss, fs, nil, DefaultWithin)
	if a.OK() || len(a.Moved) != 1 {
		t.Fatalf("a per-seed change not caught once: %+v", a.Moved)
	}
	m := a.Moved[0]
	if m.Metric != "risk per seed" || !m.HasSeed || m.Seed != 2 || m.Value != 60 || m.Model != "ridge λ=0.1" {
		t.Errorf("moved %+v, want risk per seed of ridge at 60, seed 2", m)
	}
	var buf bytes.Buffer
	if err := WriteAgreement(&buf, a, 10); err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"risk per seed", "ridge λ=0.1, p = 60, seed 2", "DISAGREES: 1 number moved"} {
		if !strings.Contains(buf.String(), want) {
			t.Errorf("report lacks %q:\n%s", want, buf.String())
		}
	}
}

func spreadOf(t *testing.T, a *Agreement, metric string) Spread {
	t.Helper()
	for _, s := range a.Spreads {
		if s.Metric == metric {
			return s
		}
	}
	t.Fatalf("no spread for %q", metric)
	return Spread{}
}
