package runner

import (
	"encoding/json"
	"errors"
	"fmt"
	"slices"
)

// SumsSchema names the version of the sums.json layout.
const SumsSchema = "riskgrid.sums/2"

// Sums holds, per grid point, the mergeable sufficient statistics a Result
// is reduced from: per-seed values of the scalar metrics and, for the
// split, the sum of the deviations e_s = f_s − f* and of their squared
// norms. Two Sums of the same spec over disjoint seeds (shards, or a run
// and its extension) merge by concatenating the per-seed lists and adding
// the sums; the point estimates follow from the merged sums (see
// PointSums.Split). The jackknife standard errors of bias² and variance
// need one more pass over the per-seed deviations, which the cache holds:
// a run over the union of seeds recomputes them without refitting.
type Sums struct {
	Schema     string      `json:"schema"`
	Hash       string      `json:"hash"`        // spec hash of the run that wrote it
	DataKey    string      `json:"data_key"`    // shards must share it
	SplitBasis string      `json:"split_basis"` // as Result.SplitBasis
	Param      string      `json:"param"`
	OuterParam string      `json:"outer_param,omitempty"` // as Result.OuterParam
	Weights    []float64   `json:"weights"`               // w_j of ⟨u, v⟩ = Σ w_j u_j v_j
	ModelSeeds int         `json:"model_seeds"`           // M, fits per seed of the randomized families
	Models     []ModelSums `json:"models"`
}

// ModelSums is one model's sums over the grid; a two-axis run has one per
// outer value and model, as Result has curves.
type ModelSums struct {
	Label string `json:"label"`
	Key   string `json:"model_key"`
	// Outer is the outer value and DataKey the data key of the slice, on a
	// two-axis grid only (each slice has its own data key when n_train is
	// the outer knob).
	Outer   *float64    `json:"outer,omitempty"`
	DataKey string      `json:"data_key,omitempty"`
	Points  []PointSums `json:"points"`
}

// PointSums is one grid point: the lists are per seed, in seed order.
type PointSums struct {
	Value     float64   `json:"value"`
	Seeds     []uint64  `json:"seeds"` // seeds that produced a fit
	Risk      []float64 `json:"risk"`
	TrainRisk []float64 `json:"train_risk"`
	Norm      []float64 `json:"norm"`
	DF        Floats    `json:"df"`            // NaN (null) for a family with no df
	Interp    int       `json:"interpolating"` // fits that interpolate (S·M of them for a randomized family under model seeds)
	// SumDev is Σ_s e_s (coefficient space with the intercept last, or the
	// test inputs); SumSqDev is Σ_s ⟨e_s, e_s⟩.
	SumDev   []float64 `json:"sum_dev"`
	SumSqDev float64   `json:"sum_sq_dev"`
	// SumSqDevInput is Σ_s e_sj² per test input (test-input bases only):
	// the per-input variance profile.
	SumSqDevInput []float64 `json:"sum_sq_dev_per_input,omitempty"`
	// ModelVar is, per seed, the within-seed variance over model seeds
	// Σ_m ⟨e_sm − ê_s, e_sm − ê_s⟩/(M−1) (families with randomness of
	// their own and M > 1 only). With model seeds, the per-seed lists hold
	// means over the seed's M fits, SumDev sums the per-seed means ê_s and
	// SumSqDev sums mean_m ⟨e_sm, e_sm⟩.
	ModelVar []float64 `json:"model_var,omitempty"`
}

// Split returns bias² and the total variance from the sums (see split and
// nestedSplit), with M = ModelSeeds fits per seed:
//
//	ē = SumDev/S,  σ̂_m² = mean_s ModelVar_s (0 without model seeds),
//	V̂_b = (SumSqDev − S⟨ē, ē⟩ − S(1 − 1/M)σ̂_m²)/(S−1),
//	bias² = ⟨ē, ē⟩ − V̂_b/S,  variance = V̂_b + (1 − 1/M)σ̂_m².
//
// The one-pass form loses relative accuracy about ⟨ē,ē⟩/V̂ times eps to
// cancellation; Run uses the two-pass form.
func (p *PointSums) Split(w []float64, modelSeeds int) (bias2, variance float64) {
	s := float64(len(p.Seeds))
	var b0 float64
	for j, v := range p.SumDev {
		m := v / s
		b0 += w[j] * m * m
	}
	var within float64 // (1 − 1/M) σ̂_m²
	if len(p.ModelVar) > 0 && modelSeeds > 1 {
		sm, _ := MeanSE(p.ModelVar)
		within = (1 - 1/float64(modelSeeds)) * sm
	}
	vb := (p.SumSqDev - s*b0 - s*within) / (s - 1)
	return b0 - vb/s, vb + within
}

// ErrMerge reports Sums that cannot be merged.
var ErrMerge = errors.New("runner: sums do not merge")

// Merge adds the seeds of b to a. Both must come from the same data key,
// models and grid, with disjoint seeds.
func (a *Sums) Merge(b *Sums) error {
	if a.Schema != b.Schema || a.DataKey != b.DataKey || a.SplitBasis != b.SplitBasis || a.ModelSeeds != b.ModelSeeds ||
		a.Param != b.Param || a.OuterParam != b.OuterParam || !slices.Equal(a.Weights, b.Weights) || len(a.Models) != len(b.Models) {
		return fmt.Errorf("%w: different data, split or knob", ErrMerge)
	}
	for i := range a.Models {
		ma, mb := &a.Models[i], &b.Models[i]
		if ma.Key != mb.Key || ma.DataKey != mb.DataKey || !sameOuter(ma.Outer, mb.Outer) || len(ma.Points) != len(mb.Points) {
			return fmt.Errorf("%w: model %q differs", ErrMerge, ma.Label)
		}
		for j := range ma.Points {
			pa, pb := &ma.Points[j], &mb.Points[j]
			if pa.Value != pb.Value {
				return fmt.Errorf("%w: grid value %v ≠ %v", ErrMerge, pa.Value, pb.Value)
			}
			for _, s := range pb.Seeds {
				if slices.Contains(pa.Seeds, s) {
					return fmt.Errorf("%w: seed %d in both", ErrMerge, s)
				}
			}
		}
	}
	for i := range a.Models {
		for j := range a.Models[i].Points {
			pa, pb := &a.Models[i].Points[j], &b.Models[i].Points[j]
			pa.Seeds = append(pa.Seeds, pb.Seeds...)
			pa.Risk = append(pa.Risk, pb.Risk...)
			pa.TrainRisk = append(pa.TrainRisk, pb.TrainRisk...)
			pa.Norm = append(pa.Norm, pb.Norm...)
			pa.DF = append(pa.DF, pb.DF...)
			pa.ModelVar = append(pa.ModelVar, pb.ModelVar...)
			pa.Interp += pb.Interp
			for k, v := range pb.SumDev {
				pa.SumDev[k] += v
			}
			pa.SumSqDev += pb.SumSqDev
			for k, v := range pb.SumSqDevInput {
				pa.SumSqDevInput[k] += v
			}
		}
	}
	return nil
}

// Floats is a per-seed list that may hold NaN — the df of a family that is
// not a linear smoother (a network) — encoded like Num: NaN and ±Inf as
// JSON null, which encoding/json refuses to write for a []float64.
type Floats []float64

// MarshalJSON implements json.Marshaler.
func (f Floats) MarshalJSON() ([]byte, error) {
	if f == nil {
		return []byte("null"), nil
	}
	n := make([]Num, len(f))
	for i, v := range f {
		n[i] = Num(v)
	}
	return json.Marshal(n)
}

// UnmarshalJSON implements json.Unmarshaler.
func (f *Floats) UnmarshalJSON(b []byte) error {
	var n []Num
	if err := json.Unmarshal(b, &n); err != nil {
		return err
	}
	if n == nil {
		*f = nil
		return nil
	}
	*f = make(Floats, len(n))
	for i, v := range n {
		(*f)[i] = float64(v)
	}
	return nil
}
