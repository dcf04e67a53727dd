package spec

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"strconv"
	"strings"
)

// Engine is the engine version salt. It enters every hash; bump it when a
// change of the engine changes results, so that old cached results are not
// reused.
const Engine = "riskgrid-engine/1"

// Any new influence on the result must be added here: Hash, DataKey and
// ModelKey are SHA-256 sums of the line streams built in this file, one
//
//	fmt.Fprintf(h, "name %q\n", value)
//
// per input, values printed as strings (floats in strconv 'g' -1 form). The
// streams read resolved values only, never the TOML text, so specs that mean
// the same thing hash equal.

// stream collects the canonical lines of a hash.
type stream struct{ b strings.Builder }

func (w *stream) str(name, v string)         { fmt.Fprintf(&w.b, "%s %q\n", name, v) }
func (w *stream) int(name string, v int)     { w.str(name, strconv.Itoa(v)) }
func (w *stream) u64(name string, v uint64)  { w.str(name, strconv.FormatUint(v, 10)) }
func (w *stream) f64(name string, v float64) { w.str(name, fmtFloat(v)) }
func (w *stream) bool(name string, v bool)   { w.str(name, strconv.FormatBool(v)) }
func (w *stream) f64s(name string, v []float64) {
	w.int(name+".len", len(v))
	for _, x := range v {
		w.f64(name, x)
	}
}
func (w *stream) strs(name string, v []string) {
	w.int(name+".len", len(v))
	for _, x := range v {
		w.str(name, x)
	}
}

func (w *stream) sum() string {
	h := sha256.Sum256([]byte(w.b.String()))
	return hex.EncodeToString(h[:])
}

// Hash is the content address of the results of s: every resolved field
// (name, about and labels too, since they appear in the outputs), DataHash
// and Engine. It names the result folder. For a csv source it is meaningful
// after Load, which sets DataHash.
//
// [tables] is left out on purpose: it says how numbers are printed, not
// which numbers, so a colleague who prefers 1.234 ± 0.012 to 1.234 (0.012)
// reruns the same study under the same hash and result folder, and checks
// the hash against ours. It is likewise out of DataKey and ModelKey, so it
// never changes which cells are cached. The canonical form (spec_toml in
// result.json) does record it, so that `report` re-renders the same way.
func (s *Spec) Hash() string { return s.hashStream().sum() }

// HashInputs returns the line stream hashed by Hash, to explain a cache miss.
func (s *Spec) HashInputs() string { return s.hashStream().b.String() }

func (s *Spec) hashStream() *stream {
	w := &stream{}
	w.str("kind", "spec")
	w.str("engine", Engine)
	w.str("name", s.Name)
	w.str("about", s.About)
	s.dataLines(w, false)
	w.int("models", len(s.Models))
	for _, m := range s.Models {
		w.str("model.label", m.Label)
		modelLines(w, m, s.Grid.knobs()...)
	}
	w.str("grid.param", s.Grid.Param)
	w.f64s("grid.values", s.Grid.Values)
	if o := s.Grid.Outer; o != nil { // absent from one-axis streams: their hashes stay as they were
		w.str("grid.outer.param", o.Param)
		w.f64s("grid.outer.values", o.Values)
	}
	w.int("seeds.count", s.Seeds.Count)
	w.u64("seeds.start", s.Seeds.Start)
	w.u64("seeds.truth", s.Seeds.Truth)
	if s.Seeds.Models != 1 {
		w.int("seeds.models", s.Seeds.Models)
	}
	return w
}

// DataKey is the cache key of the data: what defines the data distribution
// and its random streams, i.e. the resolved [data] (n_train written "grid"
// when the grid param is n_train, since the draws are nested; "outer" when
// the outer param is, since each slice draws its own), DataHash,
// seeds.truth and Engine. Seed count and start, grid values and models do
// not enter, so adding seeds or grid values keeps it.
func (s *Spec) DataKey() string { return s.dataStream().sum() }

// DataKeyInputs returns the line stream hashed by DataKey.
func (s *Spec) DataKeyInputs() string { return s.dataStream().b.String() }

func (s *Spec) dataStream() *stream {
	w := &stream{}
	w.str("kind", "data")
	w.str("engine", Engine)
	s.dataLines(w, true)
	w.u64("seeds.truth", s.Seeds.Truth)
	return w
}

// dataLines writes the resolved [data] and the data file hash. The file
// name is left out: the content hash stands for it.
func (s *Spec) dataLines(w *stream, nested bool) {
	D := s.Data
	w.str("data.source", D.Source)
	switch {
	case nested && s.Grid.Param == ParamNTrain:
		w.str("data.n_train", "grid")
	case nested && s.Grid.Sets(ParamNTrain):
		w.str("data.n_train", "outer") // each slice (At) has its own
	default:
		w.int("data.n_train", D.NTrain)
	}
	w.int("data.n_test", D.NTest)
	w.int("data.dim", D.Dim)
	switch D.Source {
	case SourceCSV:
		w.str("data.sha256", s.DataHash)
		w.str("data.target", D.Target)
		w.strs("data.features", D.Features)
		w.f64("data.test_fraction", D.TestFraction)
		w.str("data.sampling", D.Sampling)
	case SourceCurve, SourceTeacher:
		D.nonlinearLines(w)
	default:
		w.str("data.truth", D.Truth)
		w.str("data.spectrum.kind", D.Spectrum.Kind)
		w.f64("data.spectrum.exponent", D.Spectrum.Exponent)
		w.int("data.spectrum.spikes", D.Spectrum.Spikes)
		w.f64("data.spectrum.high", D.Spectrum.High)
		w.f64("data.spectrum.low", D.Spectrum.Low)
		w.f64s("data.spectrum.values", D.Spectrum.Values)
		w.str("data.signal.kind", D.Signal.Kind)
		w.f64("data.signal.norm", D.Signal.Norm)
		w.int("data.signal.top", D.Signal.Top)
		w.f64s("data.signal.values", D.Signal.Values)
		w.str("data.noise.kind", D.Noise.Kind)
		w.f64("data.noise.sd", D.Noise.SD)
		w.f64("data.noise.df", D.Noise.DF)
	}
}

// ModelKey is the cache key of a model family's fit on one grid param:
// the family and the parameters that change the fit (lambda, unless it is
// the grid param; intercept) and Engine. The label does not enter.
func ModelKey(m Model, param string) string { return modelStream(m, param).sum() }

// ModelKeyInputs returns the line stream hashed by ModelKey.
func ModelKeyInputs(m Model, param string) string { return modelStream(m, param).b.String() }

func modelStream(m Model, param string) *stream {
	w := &stream{}
	w.str("kind", "model")
	w.str("engine", Engine)
	modelLines(w, m, param)
	return w
}

// modelLines writes the family and the parameters of m that are not one of
// the grid params.
func modelLines(w *stream, m Model, params ...string) {
	w.str("model.family", m.Family)
	nums, choices := m.written(params...)
	for _, n := range nums {
		w.f64("model."+n.Key, m.Param(n.Key))
	}
	for _, c := range choices {
		w.str("model."+c.Key, m.Options[c.Key])
	}
	w.bool("model.intercept", m.Intercept)
}
