package oifits

import (
	"fmt"
	"strings"
)

// Error reports a problem in an OIFITS file, with as much position as is
// known. Every error returned by Decode and ReadFile is an *Error.
type Error struct {
	File    string // base name of the file
	HDU     int    // 1-based HDU number (primary = 1); 0 = whole file
	ExtName string // EXTNAME of the HDU, "" when unknown
	Row     int    // 1-based table row; 0 = no particular row
	Column  string // TTYPE of the column, "" when none
	Err     error
}

// Error formats the error on one line, e.g.
//
//	night2.oifits: OI_VIS2 (HDU 4) row 17: VIS2ERR is -0.01; errors must be positive
//
// A table not read from a file (HDU 0) is named by its EXTNAME alone.
// The column name is added as "column NAME: " unless the message already
// contains it.
func (e *Error) Error() string {
	var b strings.Builder
	b.WriteString(e.File)
	switch {
	case e.HDU > 0 && e.ExtName != "":
		fmt.Fprintf(&b, ": %s (HDU %d)", e.ExtName, e.HDU)
	case e.HDU > 0:
		fmt.Fprintf(&b, ": HDU %d", e.HDU)
	case e.ExtName != "":
		fmt.Fprintf(&b, ": %s", e.ExtName)
	}
	if e.Row > 0 {
		fmt.Fprintf(&b, " row %d", e.Row)
	}
	msg := "unknown error"
	if e.Err != nil {
		msg = e.Err.Error()
	}
	if e.Column != "" && !strings.Contains(msg, e.Column) {
		msg = "column " + e.Column + ": " + msg
	}
	b.WriteString(": ")
	b.WriteString(msg)
	return b.String()
}

// Unwrap returns the underlying error.
func (e *Error) Unwrap() error { return e.Err }
