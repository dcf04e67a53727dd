package spec

import (
	"errors"
	"fmt"
	"strings"

	"github.com/BurntSushi/toml"
)

// Error is the one error type of Load and Parse. It names the file, the line
// and the key at fault and says what would be accepted:
//
//	specs/x.toml:12: model[1].lamda: unknown key (known: family, label, lambda, intercept)
//
// Keys are written as dotted paths from the top of the spec; the n-th
// [[model]] table is model[n], counting from 1. Line is 0 when no line
// applies (a missing top-level key, an unreadable file); Key is "" when no
// key applies (a syntax error before any key, a malformed data file).
type Error struct {
	File string // spec file, or the data file for a malformed csv
	Line int    // 1-based line, 0 when none applies
	Key  string // dotted key path, "" when none applies
	Msg  string // what is wrong and what is accepted
	Err  error  // underlying error (I/O, csv), or nil
}

// Error prints FILE:LINE: KEY: MSG, leaving out the parts that are empty.
func (e *Error) Error() string {
	var b strings.Builder
	if e.File != "" {
		b.WriteString(e.File)
		if e.Line > 0 {
			fmt.Fprintf(&b, ":%d", e.Line)
		}
		b.WriteString(": ")
	} else if e.Line > 0 {
		fmt.Fprintf(&b, "line %d: ", e.Line)
	}
	if e.Key != "" {
		b.WriteString(e.Key)
		b.WriteString(": ")
	}
	b.WriteString(e.Msg)
	return b.String()
}

// Unwrap returns the underlying error, so errors.Is(err, fs.ErrNotExist)
// works on a missing file.
func (e *Error) Unwrap() error { return e.Err }

// syntaxError turns an error of toml.Decode into an *Error. A TOML syntax
// error keeps its line and gets the offending line with a caret as a second
// part of the message; a repeated key is explained as such.
func syntaxError(file string, err error) *Error {
	var pe toml.ParseError
	if !errors.As(err, &pe) {
		return &Error{File: file, Msg: "cannot decode TOML: " + err.Error(), Err: err}
	}
	e := &Error{File: file, Line: pe.Position.Line, Key: pe.LastKey, Err: err}
	if k, ok := duplicateKey(pe.Message); ok {
		e.Key = k
		e.Msg = "more than one value for this key (accepted: each key and each [table] once; use [[table]] for a list of tables)"
	} else {
		e.Msg = "TOML syntax: " + pe.Message
	}
	if ctx := caretContext(errorWithPosition(pe)); ctx != "" {
		e.Msg += "\n" + ctx
	}
	return e
}

// errorWithPosition calls pe.ErrorWithPosition, which panics on some inputs
// in BurntSushi/toml v1.6.0 (index -1 for an error on a "\r\n" line, found
// by FuzzParse); the context is then left out.
func errorWithPosition(pe toml.ParseError) (s string) {
	defer func() {
		if recover() != nil {
			s = ""
		}
	}()
	return pe.ErrorWithPosition()
}

// duplicateKey recognises BurntSushi/toml's "Key 'a.b' has already been
// defined." message and returns the key.
func duplicateKey(msg string) (string, bool) {
	const pre, post = "Key '", "' has already been defined"
	if !strings.HasPrefix(msg, pre) {
		return "", false
	}
	rest := msg[len(pre):]
	i := strings.Index(rest, post)
	if i < 0 {
		return "", false
	}
	return rest[:i], true
}

// caretContext keeps the "At line …" block of ErrorWithPosition (the source
// lines with a caret under the fault), dropping its first summary line,
// which repeats the message.
func caretContext(s string) string {
	i := strings.Index(s, "At line")
	if i < 0 {
		return ""
	}
	return strings.TrimRight(s[i:], "\n")
}
