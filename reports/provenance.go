package reports

import (
	"fmt"
	"strconv"
	"time"

	"github.com/BurntSushi/toml"

	"riskgrid/runner"
)

// provenance is what every table says about where its numbers come from:
// the spec, its hash, the engine, the seeds and when the run started. A
// reader who has the spec can check the hash with `riskgrid check` and rerun
// it; the date tells two runs of the same spec apart.
type provenance struct {
	name   string
	hash   string // first 12 hex digits of the spec hash
	engine string
	// seeds reads "seeds 1–20" when the first seed is known from the
	// resolved spec, "20 seeds" otherwise.
	seeds string
	// first, last are the seed range, "" when the first seed is unknown.
	first, last string
	// date is Result.Created as "2006-01-02 15:04 UTC", "date unknown"
	// when the Result does not carry it.
	date string
}

func provenanceOf(r *runner.Result) provenance {
	p := provenance{
		name:   r.Name,
		hash:   shortHash(r.Hash),
		engine: r.Engine,
		seeds:  fmt.Sprintf("%d seeds", r.Seeds),
		date:   runDate(r.Created),
	}
	if start, ok := seedStart(r.SpecTOML); ok && r.Seeds > 0 {
		p.first = strconv.FormatUint(start, 10)
		p.last = strconv.FormatUint(start+uint64(r.Seeds)-1, 10)
		p.seeds = "seeds " + p.first + "–" + p.last
	}
	return p
}

// text is the plain-text provenance line (terminal footer).
func (p provenance) text() string {
	return fmt.Sprintf("spec %s, hash %s, engine %s, %s, %s", p.name, p.hash, p.engine, p.seeds, p.date)
}

// runDate formats an RFC 3339 time as "2006-01-02 15:04 UTC"; a value that
// does not parse is shown as given, and "" as "date unknown".
func runDate(created string) string {
	if created == "" {
		return "date unknown"
	}
	t, err := time.Parse(time.RFC3339, created)
	if err != nil {
		return "run " + created
	}
	return "run " + t.UTC().Format("2006-01-02 15:04") + " UTC"
}

// recorded holds the keys the tables read from the resolved spec in
// result.json (spec_toml). Only these keys are decoded, so a spec_toml
// written by another version of the schema still yields them.
type recorded struct {
	Seeds struct {
		Start *int64 `toml:"start"`
	} `toml:"seeds"`
	Tables struct {
		SEStyle string `toml:"se_style"`
	} `toml:"tables"`
}

// readRecorded decodes specTOML; ok is false when it is empty or does not
// decode.
func readRecorded(specTOML string) (v recorded, ok bool) {
	if specTOML == "" {
		return v, false
	}
	_, err := toml.Decode(specTOML, &v)
	return v, err == nil
}

// seedStart reads seeds.start from the resolved spec; ok is false when it
// is absent or does not decode.
func seedStart(specTOML string) (start uint64, ok bool) {
	v, ok := readRecorded(specTOML)
	if !ok || v.Seeds.Start == nil || *v.Seeds.Start < 0 {
		return 0, false
	}
	return uint64(*v.Seeds.Start), true
}
