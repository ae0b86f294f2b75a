package fitsfile

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Column describes one field of a binary table (Pence et al. 2010, sect.
// 7.3).
type Column struct {
	Index  int    // 1-based field number n of TTYPEn, TFORMn
	Name   string // TTYPEn, trimmed; "" when the keyword is absent
	Format string // TFORMn as written
	Type   byte   // data type letter: L X B I J K A E D C M P Q
	Repeat int    // repeat count r of rT (characters for A, bits for X)
	Width  int    // bytes per row
	Offset int    // byte offset of the field within a row
	Unit   string // TUNITn, "" when absent
	Dim    []int  // TDIMn axes, nil when absent
	Scale  float64
	Zero   float64
}

// Table is a binary table extension ready for reading.
type Table struct {
	HDU     *HDU
	Rows    int // NAXIS2
	RowLen  int // NAXIS1
	Columns []Column
}

// Table decodes the column definitions of a BINTABLE HDU. It checks that
// every TFORMn is present and valid and that the field widths add up to
// NAXIS1.
func (h *HDU) Table() (*Table, error) {
	ferr := func(format string, args ...any) error {
		return &FormatError{HDU: h.Index, ExtName: h.ExtName(), Msg: fmt.Sprintf(format, args...)}
	}
	if h.Kind != BinTable {
		return nil, ferr("not a binary table")
	}
	nf, _, _ := h.Header.Int("TFIELDS")
	t := &Table{HDU: h, RowLen: h.Axes[0], Rows: h.Axes[1]}
	// TFIELDS <= 999 was checked by Parse, so this allocation is bounded.
	t.Columns = make([]Column, nf)
	off := 0
	for i := range t.Columns {
		c := &t.Columns[i]
		c.Index = i + 1
		key := func(base string) string { return base + strconv.Itoa(i+1) }
		form, ok, err := h.Header.String(key("TFORM"))
		if err != nil {
			return nil, ferr("%v", err)
		}
		if !ok {
			return nil, ferr("mandatory keyword %s is missing", key("TFORM"))
		}
		c.Format = form
		if err := c.parseForm(); err != nil {
			return nil, ferr("%s = '%s': %v", key("TFORM"), form, err)
		}
		if name, _, err := h.Header.String(key("TTYPE")); err != nil {
			return nil, ferr("%v", err)
		} else {
			c.Name = strings.TrimSpace(name)
		}
		if u, _, err := h.Header.String(key("TUNIT")); err != nil {
			return nil, ferr("%v", err)
		} else {
			c.Unit = strings.TrimSpace(u)
		}
		c.Scale, c.Zero = 1, 0
		if v, ok, err := h.Header.Float(key("TSCAL")); err != nil {
			return nil, ferr("%v", err)
		} else if ok {
			c.Scale = v
		}
		if v, ok, err := h.Header.Float(key("TZERO")); err != nil {
			return nil, ferr("%v", err)
		} else if ok {
			c.Zero = v
		}
		if d, ok, err := h.Header.String(key("TDIM")); err != nil {
			return nil, ferr("%v", err)
		} else if ok {
			dims, err := parseDim(d)
			if err != nil {
				return nil, ferr("%s = '%s': %v", key("TDIM"), d, err)
			}
			c.Dim = dims
		}
		c.Offset = off
		if c.Width > t.RowLen-off {
			return nil, ferr("columns are wider than NAXIS1 = %d bytes (at %s = '%s')", t.RowLen, key("TFORM"), form)
		}
		off += c.Width
	}
	if off != t.RowLen {
		return nil, ferr("columns add up to %d bytes but NAXIS1 = %d", off, t.RowLen)
	}
	return t, nil
}

// parseForm decodes TFORM "rTa" (Pence et al. 2010, table 18).
func (c *Column) parseForm() error {
	s := strings.TrimSpace(c.Format)
	i := 0
	for i < len(s) && s[i] >= '0' && s[i] <= '9' {
		i++
	}
	c.Repeat = 1
	if i > 0 {
		r, err := strconv.Atoi(s[:i])
		if err != nil || r > 1<<28 {
			return fmt.Errorf("repeat count out of range")
		}
		c.Repeat = r
	}
	if i >= len(s) {
		return fmt.Errorf("no data type letter")
	}
	c.Type = s[i]
	var w int
	switch c.Type {
	case 'L', 'B', 'A':
		w = 1
	case 'I':
		w = 2
	case 'J', 'E':
		w = 4
	case 'K', 'D', 'C':
		w = 8
	case 'M':
		w = 16
	case 'P':
		w = 8
	case 'Q':
		w = 16
	case 'X':
		c.Width = (c.Repeat + 7) / 8
		return nil
	default:
		return fmt.Errorf("unknown data type %q", c.Type)
	}
	if c.Type == 'P' || c.Type == 'Q' {
		c.Width = min(c.Repeat, 1) * w
		return nil
	}
	c.Width = c.Repeat * w
	return nil
}

func parseDim(s string) ([]int, error) {
	s = strings.TrimSpace(s)
	if !strings.HasPrefix(s, "(") || !strings.HasSuffix(s, ")") {
		return nil, fmt.Errorf("must look like (n1,n2,...)")
	}
	parts := strings.Split(s[1:len(s)-1], ",")
	if len(parts) > 999 {
		return nil, fmt.Errorf("too many axes")
	}
	dims := make([]int, len(parts))
	for i, p := range parts {
		n, err := strconv.Atoi(strings.TrimSpace(p))
		if err != nil || n < 0 {
			return nil, fmt.Errorf("axis %d is not a non-negative integer", i+1)
		}
		dims[i] = n
	}
	return dims, nil
}

// Column returns the column whose TTYPE equals name, compared without
// regard to case as the standard recommends (Pence et al. 2010, sect.
// 7.2.2), or nil.
func (t *Table) Column(name string) *Column {
	for i := range t.Columns {
		if strings.EqualFold(t.Columns[i].Name, name) {
			return &t.Columns[i]
		}
	}
	return nil
}

func (t *Table) field(c *Column, row int) []byte {
	if row < 0 || row >= t.Rows {
		panic(fmt.Sprintf("fitsfile: row %d out of range [0,%d)", row, t.Rows))
	}
	start := row*t.RowLen + c.Offset
	return t.HDU.Data[start : start+c.Width]
}

func (t *Table) typeErr(c *Column, want string) error {
	return &FormatError{HDU: t.HDU.Index, ExtName: t.HDU.ExtName(),
		Msg: fmt.Sprintf("column %s has TFORM '%s'; expected %s", c.Name, c.Format, want)}
}

// Float64s decodes the numeric field c of row (0-based) into dst, which
// must have length c.Repeat, applying TSCALn and TZEROn. Types B, I, J, K,
// E and D are accepted.
func (t *Table) Float64s(dst []float64, c *Column, row int) error {
	if len(dst) != c.Repeat {
		panic(fmt.Sprintf("fitsfile: Float64s: len(dst) = %d, column repeat = %d", len(dst), c.Repeat))
	}
	b := t.field(c, row)
	var bitpix int
	switch c.Type {
	case 'B':
		bitpix = 8
	case 'I':
		bitpix = 16
	case 'J':
		bitpix = 32
	case 'K':
		bitpix = 64
	case 'E':
		bitpix = -32
	case 'D':
		bitpix = -64
	default:
		return t.typeErr(c, "a numeric type (B, I, J, K, E or D)")
	}
	w := abs(bitpix) / 8
	for i := range dst {
		dst[i] = decodeNumber(b[i*w:], bitpix)*c.Scale + c.Zero
	}
	return nil
}

// Ints decodes the integer field c of row into dst (length c.Repeat).
// Types B, I, J and K are accepted; an integer TZEROn is added, and any
// other TSCALn/TZEROn is an error.
func (t *Table) Ints(dst []int, c *Column, row int) error {
	if len(dst) != c.Repeat {
		panic(fmt.Sprintf("fitsfile: Ints: len(dst) = %d, column repeat = %d", len(dst), c.Repeat))
	}
	if c.Scale != 1 || c.Zero != math.Trunc(c.Zero) || math.Abs(c.Zero) > 1<<62 {
		return t.typeErr(c, "an unscaled integer column")
	}
	zero := int(c.Zero)
	b := t.field(c, row)
	for i := range dst {
		switch c.Type {
		case 'B':
			dst[i] = int(b[i])
		case 'I':
			dst[i] = int(int16(be16(b[2*i:])))
		case 'J':
			dst[i] = int(int32(be32(b[4*i:])))
		case 'K':
			dst[i] = int(int64(be64(b[8*i:])))
		default:
			return t.typeErr(c, "an integer type (B, I, J or K)")
		}
		dst[i] += zero
	}
	return nil
}

// Bools decodes the logical field c of row into dst (length c.Repeat).
// A value is true only for the byte 'T'; 'F' and the undefined value 0 are
// false (Pence et al. 2010, sect. 7.3.3.1).
func (t *Table) Bools(dst []bool, c *Column, row int) error {
	if len(dst) != c.Repeat {
		panic(fmt.Sprintf("fitsfile: Bools: len(dst) = %d, column repeat = %d", len(dst), c.Repeat))
	}
	if c.Type != 'L' {
		return t.typeErr(c, "type L")
	}
	b := t.field(c, row)
	for i := range dst {
		dst[i] = b[i] == 'T'
	}
	return nil
}

// String decodes the character field c of row. The value ends at the first
// NUL byte, and trailing spaces are removed (Pence et al. 2010, sect.
// 7.3.3.1).
func (t *Table) String(c *Column, row int) (string, error) {
	if c.Type != 'A' {
		return "", t.typeErr(c, "type A")
	}
	b := t.field(c, row)
	if i := indexByte(b, 0); i >= 0 {
		b = b[:i]
	}
	return strings.TrimRight(string(b), " "), nil
}

func indexByte(b []byte, c byte) int {
	for i, x := range b {
		if x == c {
			return i
		}
	}
	return -1
}
