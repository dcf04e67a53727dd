package spec

import "testing"

// A log-spaced penalty grid is rounded to 6 significant digits, endpoints
// exact: 10^(−5 + k/4) for k = 0..4 (values worked by hand).
func TestExpandRoundsPenaltyGrid(t *testing.T) {
	got := Expand(ParamLambda, 1e-5, 1e-4, 5, SpacingLog, nil)
	want := []float64{1e-5, 1.77828e-5, 3.16228e-5, 5.62341e-5, 1e-4}
	if len(got) != len(want) {
		t.Fatalf("Expand = %v, want %v", got, want)
	}
	for i := range want {
		if got[i] != want[i] {
			t.Errorf("Expand[%d] = %v, want %v", i, got[i], want[i])
		}
	}
}
