package spec

import (
	"fmt"
	"math"
	"sort"
	"strings"
	"time"
)

// decoder walks the generic TOML tree (map[string]any) with the line map of
// locate, so that every complaint can name its line.
type decoder struct {
	file   string
	lines  map[string]int
	gridT  table // the [grid] table, for checks made later in Load
	outerT table // the [grid.outer] table, idem
}

// table is one TOML table with its dotted path.
type table struct {
	path string
	m    map[string]any
}

func (t table) key(k string) string { return join(t.path, k) }

func (t table) has(k string) bool { _, ok := t.m[k]; return ok }

// line returns the line of path, else of its nearest recorded parent, else 0.
func (d *decoder) line(path string) int {
	for path != "" {
		if l, ok := d.lines[path]; ok {
			return l
		}
		i := strings.LastIndexAny(path, ".[")
		if i < 0 {
			break
		}
		path = path[:i]
	}
	return 0
}

// errf returns an *Error at the line of key.
func (d *decoder) errf(key, format string, args ...any) *Error {
	return &Error{File: d.file, Line: d.line(key), Key: key, Msg: fmt.Sprintf(format, args...)}
}

// missing reports a required key that is absent, at the line of its table.
func (d *decoder) missing(key, accepted string) *Error {
	return d.errf(key, "required key is missing (accepted: %s)", accepted)
}

// keysIn returns the keys of t in file order (then by name), so the first
// complaint is the first in the file.
func (d *decoder) keysIn(t table) []string {
	ks := make([]string, 0, len(t.m))
	for k := range t.m {
		ks = append(ks, k)
	}
	sort.Slice(ks, func(i, j int) bool {
		li, lj := d.line(t.key(ks[i])), d.line(t.key(ks[j]))
		if li != lj {
			return li < lj
		}
		return ks[i] < ks[j]
	})
	return ks
}

// known rejects keys of t outside known.
func (d *decoder) known(t table, known []string) error {
	for _, k := range d.keysIn(t) {
		if !contains(known, k) {
			return d.errf(t.key(k), "unknown key (known: %s)", strings.Join(known, ", "))
		}
	}
	return nil
}

// belong rejects keys of t that are known in general but not for the chosen
// kind; what names the choice, e.g. `spectrum kind "isotropic"`.
func (d *decoder) belong(t table, allowed []string, what string) error {
	for _, k := range d.keysIn(t) {
		if !contains(allowed, k) {
			return d.errf(t.key(k), "not a key of %s (keys for it: %s)", what, strings.Join(allowed, ", "))
		}
	}
	return nil
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

// typeName names the TOML type of a decoded value.
func typeName(v any) string {
	switch v.(type) {
	case string:
		return "string"
	case int64:
		return "integer"
	case float64:
		return "float"
	case bool:
		return "boolean"
	case []any:
		return "array"
	case []map[string]any:
		return "array of tables"
	case map[string]any:
		return "table"
	case time.Time:
		return "datetime"
	default:
		return "date/time"
	}
}

func (d *decoder) mismatch(key string, v any, want string) *Error {
	return d.errf(key, "has type %s (accepted: %s)", typeName(v), want)
}

// str reads an optional string.
func (d *decoder) str(t table, k string) (string, bool, error) {
	v, ok := t.m[k]
	if !ok {
		return "", false, nil
	}
	s, isStr := v.(string)
	if !isStr {
		return "", true, d.mismatch(t.key(k), v, "a string")
	}
	return s, true, nil
}

// choice reads an optional string that must be one of accepted; def is used
// when the key is absent ("" makes it required).
func (d *decoder) choice(t table, k string, accepted []string, def string) (string, error) {
	s, ok, err := d.str(t, k)
	if err != nil {
		return "", err
	}
	if !ok {
		if def == "" {
			return "", d.missing(t.key(k), quoteList(accepted))
		}
		return def, nil
	}
	if !contains(accepted, s) {
		return "", d.errf(t.key(k), "unknown %s %q (accepted: %s)", k, s, quoteList(accepted))
	}
	return s, nil
}

func quoteList(list []string) string {
	q := make([]string, len(list))
	for i, s := range list {
		q[i] = fmt.Sprintf("%q", s)
	}
	return strings.Join(q, ", ")
}

// integer reads an optional integer in [lo, hi].
func (d *decoder) integer(t table, k string, lo, hi int64, accepted string) (int64, bool, error) {
	v, ok := t.m[k]
	if !ok {
		return 0, false, nil
	}
	n, isInt := v.(int64)
	if !isInt {
		return 0, true, d.mismatch(t.key(k), v, accepted)
	}
	if n < lo || n > hi {
		return 0, true, d.errf(t.key(k), "got %d (accepted: %s)", n, accepted)
	}
	return n, true, nil
}

// number converts a TOML integer or float to a finite float64.
func number(v any) (float64, bool) {
	switch x := v.(type) {
	case int64:
		return float64(x), true
	case float64:
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return 0, false
		}
		if x == 0 {
			x = 0 // drop the sign of -0 so equal specs print and hash equal
		}
		return x, true
	}
	return 0, false
}

// float reads an optional finite number accepted by ok.
func (d *decoder) float(t table, k string, ok func(float64) bool, accepted string) (float64, bool, error) {
	v, present := t.m[k]
	if !present {
		return 0, false, nil
	}
	x, isNum := number(v)
	if !isNum {
		if _, isFloat := v.(float64); isFloat {
			return 0, true, d.errf(t.key(k), "got %v (accepted: a finite number, %s)", v, accepted)
		}
		return 0, true, d.mismatch(t.key(k), v, accepted)
	}
	if !ok(x) {
		return 0, true, d.errf(t.key(k), "got %s (accepted: %s)", fmtFloat(x), accepted)
	}
	return x, true, nil
}

// floats reads an optional non-empty array of finite numbers accepted by ok.
func (d *decoder) floats(t table, k string, ok func(float64) bool, accepted string) ([]float64, bool, error) {
	v, present := t.m[k]
	if !present {
		return nil, false, nil
	}
	arr, isArr := v.([]any)
	if !isArr {
		return nil, true, d.mismatch(t.key(k), v, "an array of numbers: "+accepted)
	}
	if len(arr) == 0 {
		return nil, true, d.errf(t.key(k), "empty array (accepted: one or more numbers, %s)", accepted)
	}
	out := make([]float64, len(arr))
	for i, e := range arr {
		x, isNum := number(e)
		if !isNum {
			return nil, true, d.errf(t.key(k), "element %d is %s %v (accepted: finite numbers, %s)", i+1, typeName(e), e, accepted)
		}
		if !ok(x) {
			return nil, true, d.errf(t.key(k), "element %d is %s (accepted: %s)", i+1, fmtFloat(x), accepted)
		}
		out[i] = x
	}
	return out, true, nil
}

// strs reads an optional non-empty array of strings.
func (d *decoder) strs(t table, k string) ([]string, bool, error) {
	v, present := t.m[k]
	if !present {
		return nil, false, nil
	}
	arr, isArr := v.([]any)
	if !isArr {
		return nil, true, d.mismatch(t.key(k), v, "an array of strings")
	}
	if len(arr) == 0 {
		return nil, true, d.errf(t.key(k), "empty array (accepted: one or more column names)")
	}
	out := make([]string, len(arr))
	for i, e := range arr {
		s, isStr := e.(string)
		if !isStr {
			return nil, true, d.errf(t.key(k), "element %d has type %s (accepted: strings)", i+1, typeName(e))
		}
		out[i] = s
	}
	return out, true, nil
}

// boolean reads an optional boolean.
func (d *decoder) boolean(t table, k string) (bool, bool, error) {
	v, ok := t.m[k]
	if !ok {
		return false, false, nil
	}
	b, isBool := v.(bool)
	if !isBool {
		return false, true, d.mismatch(t.key(k), v, "true or false")
	}
	return b, true, nil
}

// sub reads an optional sub-table (a [header] or an inline { … }).
func (d *decoder) sub(t table, k string) (table, bool, error) {
	v, ok := t.m[k]
	if !ok {
		return table{path: t.key(k), m: map[string]any{}}, false, nil
	}
	m, isMap := v.(map[string]any)
	if !isMap {
		return table{}, true, d.mismatch(t.key(k), v, fmt.Sprintf("a table, [%s] or %s = { … }", t.key(k), k))
	}
	return table{path: t.key(k), m: m}, true, nil
}
