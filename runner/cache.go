package runner

import (
	"bytes"
	"crypto/sha256"
	"encoding/gob"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
)

// cacheMagic heads every cache file and enters every entry key; bump the
// version on any change of the layout of entry or cell, so old files become
// misses rather than misreads, and when cells computed by an older build
// must not be trusted although their spec still means the same samples
// (spec.Engine also salts the random streams, so bumping it redraws every
// sample). Version 2: least squares now applies its shared QR by unblocked
// Householder routines, as gonum v0.17.0's blocked ones lost accuracy on
// designs with structured zeros (see models/leastsquares.go). Version 3:
// entries of version 2 may hold least-squares cells of the other risk basis
// (predictions under an exact key, or coefficients under a test-input one),
// written before the basis entered the entry key (TestCacheKeepsRiskBasisApart).
const cacheMagic = "riskgrid-cache/3\n"

// entry holds every cell computed for one seed of one data distribution,
// across models, knobs and grid values. Cells are keyed by cellKey.
type entry struct {
	Cells map[string]*cell
	// Beta is the seed's own truth when the truth is redrawn per seed.
	Beta []float64
}

// cell is one fit (model × grid value × seed) reduced to what the
// aggregation needs.
type cell struct {
	TrainRisk float64
	Risk      float64 // exact true risk, or test-set risk
	Norm      float64
	DF        float64
	Cond      float64
	Interp    bool      // training risk below the interpolation tolerance
	Coef      []float64 // exact split basis: the fitted coefficients
	Intercept float64
	Pred      []float64 // test-input basis: predictions at the test inputs
	Method    string
	Err       string // a failed fit; the other fields are then unset
}

// store is a content-addressed folder of entries, fanned out by the first
// byte of the key: dir/ab/abcdef….
type store struct {
	dir string
}

func (st *store) path(key string) string {
	return filepath.Join(st.dir, key[:2], key)
}

// get returns the entry under key. A missing, unreadable, truncated or
// corrupted file is a miss (ok false), never an error: it is recomputed.
// A file that exists but fails its checks is reported through bad.
func (st *store) get(key string) (e *entry, ok bool, bad error) {
	b, err := os.ReadFile(st.path(key))
	if err != nil {
		if errors.Is(err, fs.ErrNotExist) {
			return nil, false, nil
		}
		return nil, false, err
	}
	e, err = decodeEntry(b)
	if err != nil {
		return nil, false, fmt.Errorf("cache entry %s: %w", st.path(key), err)
	}
	return e, true, nil
}

// put stores e under key atomically.
func (st *store) put(key string, e *entry) error {
	b, err := encodeEntry(e)
	if err != nil {
		return err
	}
	return WriteFile(st.path(key), b)
}

var errCorrupt = errors.New("corrupted (checksum mismatch or truncated)")

func encodeEntry(e *entry) ([]byte, error) {
	var payload bytes.Buffer
	if err := gob.NewEncoder(&payload).Encode(e); err != nil {
		return nil, err
	}
	sum := sha256.Sum256(payload.Bytes())
	var out bytes.Buffer
	out.Grow(len(cacheMagic) + len(sum) + payload.Len())
	out.WriteString(cacheMagic)
	out.Write(sum[:])
	out.Write(payload.Bytes())
	return out.Bytes(), nil
}

func decodeEntry(b []byte) (*entry, error) {
	if !bytes.HasPrefix(b, []byte(cacheMagic)) {
		return nil, errors.New("not a riskgrid cache file of this version")
	}
	b = b[len(cacheMagic):]
	if len(b) < sha256.Size {
		return nil, errCorrupt
	}
	want, payload := b[:sha256.Size], b[sha256.Size:]
	if got := sha256.Sum256(payload); !bytes.Equal(got[:], want) {
		return nil, errCorrupt
	}
	var e entry
	if err := gob.NewDecoder(bytes.NewReader(payload)).Decode(&e); err != nil {
		return nil, fmt.Errorf("%w: %v", errCorrupt, err)
	}
	if e.Cells == nil {
		e.Cells = map[string]*cell{}
	}
	return &e, nil
}
