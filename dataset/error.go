package dataset

import (
	"fmt"
	"strings"
)

// Error reports a problem that FromFiles found in the data, with as much position as is
// known. Every error FromFiles returns is an *Error.
//
// Its text names the position the way io/oifits does for the same table, so that a user sees
// one form whether the decoder or the data set model found the problem:
//
//	night2.oifits: OI_VIS2 (HDU 4) row 17: VIS2ERR is -0.01; errors must be positive
//
// The underlying error's text names the column (Column) itself; an error about the whole
// selection (a target that no file has) has no position and is its text alone.
type Error struct {
	File    string // name of the file (oifits.File.Name), "" when the error concerns no file
	HDU     int    // 1-based HDU number of the table (primary = 1)
	ExtName string // EXTNAME of the table, "" when the error concerns no table
	Row     int    // 1-based table row; 0 = no particular row
	Column  string // TTYPE of the column or name of the keyword, "" when none
	Err     error
}

// Error formats the error on one line: file, table with its HDU, row, then the underlying
// error's text.
func (e *Error) Error() string {
	msg := "unknown error"
	if e.Err != nil {
		msg = e.Err.Error()
	}
	if e.File == "" && e.ExtName == "" {
		return msg
	}
	var b strings.Builder
	b.WriteString(e.File)
	if e.ExtName != "" {
		fmt.Fprintf(&b, ": %s (HDU %d)", e.ExtName, e.HDU)
	}
	if e.Row > 0 {
		fmt.Fprintf(&b, " row %d", e.Row)
	}
	b.WriteString(": ")
	b.WriteString(msg)
	return b.String()
}

// Unwrap returns the underlying error.
func (e *Error) Unwrap() error { return e.Err }
