package data

import (
	"fmt"
	"strings"
)

// Error is a data-dependent failure of a data file, positioned where it
// was found. It prints as
//
//	FILE:ROW: column "NAME": MSG
//
// leaving out ":ROW" when Row is 0 (the file as a whole is at fault) and
// `column "NAME": ` when Column is "".
type Error struct {
	File   string // the data file, as named by the spec (joined to its folder)
	Row    int    // 1-based line number in the file; 0 for the whole file
	Column string // column name; "" when no single column is at fault
	Msg    string // what is wrong and what would be accepted
}

func (e *Error) Error() string {
	var b strings.Builder
	b.WriteString(e.File)
	if e.Row > 0 {
		fmt.Fprintf(&b, ":%d", e.Row)
	}
	b.WriteString(": ")
	if e.Column != "" {
		fmt.Fprintf(&b, "column %q: ", e.Column)
	}
	b.WriteString(e.Msg)
	return b.String()
}

// SpecError is a [data] setting of a spec that New cannot use, for a Spec
// that did not come through spec.Load (which checks these with line
// numbers) or a setting only the data package can judge. It prints as
//
//	PATH: [data] KEY: MSG
//
// leaving out "PATH: " when the spec was built in code.
type SpecError struct {
	Path string // the spec file, "" when built in code
	Key  string // the key under [data], e.g. "dim" or "spectrum.kind"
	Msg  string // what is wrong and what would be accepted
}

func (e *SpecError) Error() string {
	if e.Path == "" {
		return fmt.Sprintf("[data] %s: %s", e.Key, e.Msg)
	}
	return fmt.Sprintf("%s: [data] %s: %s", e.Path, e.Key, e.Msg)
}
