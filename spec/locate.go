package spec

import (
	"strconv"
	"strings"
)

// locate maps every key path of a TOML document to the line where it is
// first written. MetaData of BurntSushi/toml carries no positions, so the
// source is scanned here: [table] and [[array]] headers set the current
// table, dotted keys and inline tables ({ … }, also inside arrays) extend the
// path. Paths are dotted; the n-th table of an array of tables is written
// name[n], counting from 1, as in Error.Key.
//
// The scan assumes the text has already been accepted by the TOML parser; on
// anything else it still terminates, it only may miss keys.
func locate(src string) map[string]int {
	sc := &scanner{s: src, line: 1, out: map[string]int{}, arrays: map[string]int{}}
	sc.document()
	return sc.out
}

type scanner struct {
	s      string
	i      int
	line   int
	out    map[string]int
	arrays map[string]int // array-of-tables path -> count so far
}

func (sc *scanner) eof() bool { return sc.i >= len(sc.s) }

func (sc *scanner) peek() byte {
	if sc.eof() {
		return 0
	}
	return sc.s[sc.i]
}

func (sc *scanner) next() {
	if sc.eof() {
		return
	}
	if sc.s[sc.i] == '\n' {
		sc.line++
	}
	sc.i++
}

func (sc *scanner) record(path string, line int) {
	if _, ok := sc.out[path]; !ok {
		sc.out[path] = line
	}
}

func (sc *scanner) skipSpace() {
	for c := sc.peek(); c == ' ' || c == '\t'; c = sc.peek() {
		sc.next()
	}
}

// skipBlank skips spaces, newlines and comments (inside arrays and tables).
func (sc *scanner) skipBlank() {
	for !sc.eof() {
		switch sc.peek() {
		case ' ', '\t', '\r', '\n':
			sc.next()
		case '#':
			sc.skipLine()
		default:
			return
		}
	}
}

func (sc *scanner) skipLine() {
	for !sc.eof() && sc.peek() != '\n' {
		sc.next()
	}
}

func (sc *scanner) document() {
	current := ""
	for !sc.eof() {
		start := sc.i
		sc.skipBlank()
		if sc.eof() {
			return
		}
		if sc.peek() == '[' {
			current = sc.header()
		} else {
			sc.keyval(current)
		}
		sc.skipSpace()
		if sc.peek() == '#' {
			sc.skipLine()
		}
		if sc.i == start {
			sc.next() // never stall on unexpected input
		}
	}
}

// header reads [a.b] or [[a.b]] and returns the table path it opens.
func (sc *scanner) header() string {
	line := sc.line
	sc.next()
	array := sc.peek() == '['
	if array {
		sc.next()
	}
	keys := sc.key()
	path := ""
	for n, k := range keys {
		path = join(path, k)
		last := n == len(keys)-1
		if last && array {
			sc.record(path, line)
			sc.arrays[path]++
			path += "[" + strconv.Itoa(sc.arrays[path]) + "]"
		} else if c := sc.arrays[path]; c > 0 {
			path += "[" + strconv.Itoa(c) + "]"
		}
		sc.record(path, line)
	}
	for !sc.eof() && sc.peek() != ']' && sc.peek() != '\n' {
		sc.next()
	}
	for sc.peek() == ']' {
		sc.next()
	}
	return path
}

// keyval reads key = value under prefix.
func (sc *scanner) keyval(prefix string) {
	line := sc.line
	keys := sc.key()
	if len(keys) == 0 {
		sc.skipLine()
		return
	}
	path := prefix
	for _, k := range keys {
		path = join(path, k)
		sc.record(path, line)
	}
	sc.skipSpace()
	if sc.peek() != '=' {
		sc.skipLine()
		return
	}
	sc.next()
	sc.skipSpace()
	sc.value(path)
}

// key reads a possibly dotted, possibly quoted key.
func (sc *scanner) key() []string {
	var keys []string
	for {
		sc.skipSpace()
		switch c := sc.peek(); {
		case c == '"':
			raw := sc.basicString()
			if u, err := strconv.Unquote(`"` + raw + `"`); err == nil {
				raw = u
			}
			keys = append(keys, raw)
		case c == '\'':
			keys = append(keys, sc.literalString())
		case isBare(c):
			start := sc.i
			for isBare(sc.peek()) {
				sc.next()
			}
			keys = append(keys, sc.s[start:sc.i])
		default:
			return keys
		}
		sc.skipSpace()
		if sc.peek() != '.' {
			return keys
		}
		sc.next()
	}
}

func isBare(c byte) bool {
	return c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= '0' && c <= '9' || c == '_' || c == '-'
}

// basicString reads "…" and returns the raw text between the quotes.
func (sc *scanner) basicString() string {
	sc.next()
	start := sc.i
	for !sc.eof() && sc.peek() != '"' && sc.peek() != '\n' {
		if sc.peek() == '\\' {
			sc.next()
		}
		sc.next()
	}
	end := sc.i
	if sc.peek() == '"' {
		sc.next()
	}
	return sc.s[start:min(end, len(sc.s))]
}

// literalString reads '…' and returns its text.
func (sc *scanner) literalString() string {
	sc.next()
	start := sc.i
	for !sc.eof() && sc.peek() != '\'' && sc.peek() != '\n' {
		sc.next()
	}
	end := sc.i
	if sc.peek() == '\'' {
		sc.next()
	}
	return sc.s[start:end]
}

// multiline skips a """…""" or ”'…”' string; the opening quotes are at sc.i.
func (sc *scanner) multiline(q byte) {
	sc.i += 3
	delim := strings.Repeat(string(q), 3)
	for !sc.eof() {
		if q == '"' && sc.peek() == '\\' {
			sc.next()
			sc.next()
			continue
		}
		if strings.HasPrefix(sc.s[sc.i:], delim) {
			sc.i += 3
			for k := 0; k < 2 && sc.peek() == q; k++ { // up to two quotes may end the content
				sc.next()
			}
			return
		}
		sc.next()
	}
}

// value skips one value; inline tables record their keys under path, and an
// inline table that is the n-th element of an array is recorded as path[n].
func (sc *scanner) value(path string) {
	switch c := sc.peek(); c {
	case '"', '\'':
		if strings.HasPrefix(sc.s[sc.i:], strings.Repeat(string(c), 3)) {
			sc.multiline(c)
		} else if c == '"' {
			sc.basicString()
		} else {
			sc.literalString()
		}
	case '{':
		sc.next()
		for !sc.eof() {
			start := sc.i
			sc.skipBlank()
			if sc.peek() == '}' {
				sc.next()
				return
			}
			if sc.peek() == ',' {
				sc.next()
				continue
			}
			sc.keyval(path)
			if sc.i == start {
				sc.next()
			}
		}
	case '[':
		sc.next()
		n := 0
		for !sc.eof() {
			start := sc.i
			sc.skipBlank()
			switch sc.peek() {
			case ']':
				sc.next()
				return
			case ',':
				sc.next()
				continue
			case '{':
				n++
				elem := path + "[" + strconv.Itoa(n) + "]"
				sc.record(elem, sc.line)
				sc.value(elem)
			default:
				sc.value(path)
			}
			if sc.i == start {
				sc.next()
			}
		}
	default:
		for !sc.eof() && !strings.ContainsRune(",]}\n#", rune(sc.peek())) {
			sc.next()
		}
	}
}

func join(prefix, k string) string {
	if prefix == "" {
		return k
	}
	return prefix + "." + k
}
