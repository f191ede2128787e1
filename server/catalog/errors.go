package catalog

import (
	"fmt"
	"strings"
)

// Error is a problem found while loading a catalog. It names the file, the
// line (0 when unknown), where in the catalog the problem sits and what is
// wrong, e.g.
//
//	catalog.toml:42: substance "water" curve "melting" branch "ice-III": t_min 260 must be < t_max 256
type Error struct {
	File  string // file name as given to Parse or Load
	Line  int    // 1-based line, 0 when unknown
	Where string // e.g. `substance "water" curve "melting"`; "" at the top level
	Field string // the offending field relative to Where, e.g. "t_min" or "params.a"; may be ""
	Err   error  // what is wrong
}

// Error formats the error as one line: "file:line: where: what".
func (e *Error) Error() string {
	var b strings.Builder
	b.WriteString(e.File)
	if e.Line > 0 {
		fmt.Fprintf(&b, ":%d", e.Line)
	}
	b.WriteString(": ")
	if e.Where != "" {
		b.WriteString(e.Where)
		b.WriteString(": ")
	}
	b.WriteString(e.Err.Error())
	return b.String()
}

// Unwrap returns the underlying error, so callers can test it with
// errors.Is and errors.As (e.g. for thermo.ErrUnknownFamily).
func (e *Error) Unwrap() error { return e.Err }
