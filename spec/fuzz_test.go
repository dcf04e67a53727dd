package spec

import (
	"errors"
	"reflect"
	"testing"
)

// FuzzParse checks that Parse never panics, that every error is an *Error
// whose Error() works, and that every accepted spec survives the canonical
// round trip.
func FuzzParse(f *testing.F) {
	for _, src := range roundTripSpecs {
		f.Add([]byte(src))
	}
	f.Add([]byte(hashBase))
	f.Add([]byte(pieces{data: csvOK}.src()))
	f.Add([]byte(pieces{data: curveOK + "inputs = { kind = \"gaussian\", mean = -0.5 }\ncorrupt = 0.1\n", grid: oneFeat}.src()))
	f.Add([]byte(pieces{data: teacherOK + "inputs = { kind = \"sphere\" }\n"}.src()))
	f.Add([]byte("name = \"t\"\n[data]\nn_train = = 3\n"))
	f.Add([]byte("model = [{ family = 1 }, 3]\n[grid]\nparam = 'lambda'\n"))
	f.Add([]byte("\"\r\n")) // made ErrorWithPosition of BurntSushi/toml v1.6.0 panic
	f.Fuzz(func(t *testing.T, src []byte) {
		s, err := Parse("f.toml", src)
		if err != nil {
			var e *Error
			if !errors.As(err, &e) {
				t.Fatalf("Parse() error %T %v, want *spec.Error", err, err)
			}
			if e.Error() == "" {
				t.Fatalf("Error() is empty")
			}
			return
		}
		c := s.Canonical()
		back, err := Parse("f.toml", []byte(c))
		if err != nil {
			t.Fatalf("Parse(Canonical()) error %v\n%s", err, c)
		}
		if !reflect.DeepEqual(back, s) {
			t.Fatalf("Parse(Canonical()) = %+v, want %+v", back, s)
		}
		// reflect.DeepEqual takes -0 == 0; the hashes print the values, so
		// they must agree as well (a result folder is found by its hash).
		if back.Hash() != s.Hash() || back.DataKey() != s.DataKey() {
			t.Fatalf("Parse(Canonical()) hashes differently:\n%s\nwant\n%s", back.HashInputs(), s.HashInputs())
		}
	})
}
