package fitsfile

import (
	"encoding/binary"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
)

// Writer writes a FITS file HDU by HDU. The first HDU written is the
// primary HDU; later ones are extensions. Writer does not buffer beyond one
// header or one table row, so wrap w in a bufio.Writer for speed (package
// io/safefile does).
type Writer struct {
	w    io.Writer
	nhdu int
	err  error
	// Checksum makes WriteImage add DATASUM and CHECKSUM to each image HDU, by the FITS
	// checksum convention (checksum.go), after the extra cards.
	Checksum bool
}

// NewWriter returns a Writer that writes to w.
func NewWriter(w io.Writer) *Writer { return &Writer{w: w} }

// HDUs returns the number of HDUs written so far.
func (w *Writer) HDUs() int { return w.nhdu }

func (w *Writer) write(b []byte) error {
	if w.err != nil {
		return w.err
	}
	_, w.err = w.w.Write(b)
	return w.err
}

// writeHeader writes the mandatory cards, then extra, then END, padded
// with spaces to a multiple of 2880 bytes.
//
// Before the first long string that needs CONTINUE cards it adds the
// keyword LONGSTRN = 'OGIP 1.0', which HEASARC's long-string convention
// recommends and fitsverify asks for, unless the header has it already.
func (w *Writer) writeHeader(mandatory, extra []Card) error {
	buf, err := encodeHeader(mandatory, extra)
	if err != nil {
		return err
	}
	return w.write(buf)
}

// encodeHeader encodes the cards of writeHeader.
func encodeHeader(mandatory, extra []Card) ([]byte, error) {
	buf := make([]byte, 0, BlockSize)
	var err error
	announced := false
	for _, c := range extra {
		announced = announced || c.Key == longStringKey
	}
	for _, list := range [][]Card{mandatory, extra} {
		for _, c := range list {
			if s, ok := c.Value.(LongString); ok && !announced && len(s)+strings.Count(string(s), "'") > maxStringPiece {
				buf, _ = encodeCards(buf, Card{Key: longStringKey, Value: "OGIP 1.0", Comment: "long strings continue on CONTINUE cards"})
				announced = true
			}
			if buf, err = encodeCards(buf, c); err != nil {
				return nil, err
			}
		}
	}
	buf = appendPadded(buf, "END")
	for len(buf)%BlockSize != 0 {
		buf = append(buf, ' ')
	}
	return buf, nil
}

// reserved lists the keywords the Writer sets itself; extra cards with
// these keys are rejected so a caller cannot contradict the structure.
func reserved(key string) bool {
	switch key {
	case "SIMPLE", "XTENSION", "BITPIX", "NAXIS", "EXTEND", "PCOUNT", "GCOUNT", "TFIELDS", "END":
		return true
	}
	for _, p := range []string{"NAXIS", "TFORM", "TTYPE", "TUNIT", "TDIM", "TBCOL", "TSCAL", "TZERO", "TNULL"} {
		if strings.HasPrefix(key, p) && len(key) > len(p) {
			if _, err := strconv.Atoi(key[len(p):]); err == nil {
				return true
			}
		}
	}
	return false
}

func checkExtra(extra []Card) error {
	for _, c := range extra {
		if reserved(c.Key) {
			return fmt.Errorf("fitsfile: keyword %s is set by the writer and cannot be given as an extra card", c.Key)
		}
	}
	return nil
}

// WriteImage writes an image HDU with BITPIX = -64 (IEEE double). axes are
// NAXIS1, NAXIS2, ...; data has prod(axes) values with the first axis
// varying fastest. With no axes it writes a header-only HDU (NAXIS = 0),
// which is how a primary HDU in front of tables is written. The first HDU
// written also gets EXTEND = T. extra cards follow the mandatory ones.
func (w *Writer) WriteImage(axes []int, data []float64, extra []Card) error {
	if w.err != nil {
		return w.err
	}
	if err := checkExtra(extra); err != nil {
		return err
	}
	n := 1
	for _, a := range axes {
		if a < 0 {
			return fmt.Errorf("fitsfile: negative axis length %d", a)
		}
		n *= a
	}
	if len(axes) == 0 {
		n = 0
	}
	if len(data) != n {
		return fmt.Errorf("fitsfile: image data has %d values, axes %v need %d", len(data), axes, n)
	}
	var m []Card
	if w.nhdu == 0 {
		m = append(m, Card{Key: "SIMPLE", Value: true, Comment: "file conforms to the FITS standard"})
	} else {
		m = append(m, Card{Key: "XTENSION", Value: "IMAGE", Comment: "image extension"})
	}
	m = append(m, Card{Key: "BITPIX", Value: -64, Comment: "IEEE double precision"},
		Card{Key: "NAXIS", Value: len(axes), Comment: "number of axes"})
	for i, a := range axes {
		m = append(m, Card{Key: "NAXIS" + strconv.Itoa(i+1), Value: a, Comment: "length of axis " + strconv.Itoa(i+1)})
	}
	if w.nhdu == 0 {
		m = append(m, Card{Key: "EXTEND", Value: true, Comment: "extensions may follow"})
	} else {
		m = append(m, Card{Key: "PCOUNT", Value: 0, Comment: "no extra parameters"},
			Card{Key: "GCOUNT", Value: 1, Comment: "one group"})
	}
	if w.Checksum {
		for _, c := range extra {
			if c.Key == "CHECKSUM" || c.Key == "DATASUM" {
				return fmt.Errorf("fitsfile: keyword %s is set by the writer when it writes checksums", c.Key)
			}
		}
		dsum := sumFloat64s(data)
		extra = append(append([]Card(nil), extra...),
			Card{Key: "CHECKSUM", Value: zeroChecksum, Comment: "HDU checksum (FITS checksum convention)"},
			Card{Key: "DATASUM", Value: strconv.FormatUint(uint64(dsum), 10), Comment: "data unit checksum"})
		hdr, err := encodeHeader(m, extra)
		if err != nil {
			return err
		}
		at := strings.Index(string(hdr), "CHECKSUM= '"+zeroChecksum+"'")
		if at < 0 || at%80 != 0 {
			return fmt.Errorf("fitsfile: CHECKSUM card not found in the header written")
		}
		// The card in the fixed format, its comment's slash in column 32, as readers
		// that verify the sum by rewriting this card with sixteen zeros lay it out
		// (astropy does).
		copy(hdr[at:at+80], fmt.Sprintf("%-80s", "CHECKSUM= '"+zeroChecksum+"'   / HDU checksum (FITS checksum convention)"))
		copy(hdr[at+11:], encodeChecksum(onesAdd(sumBytes(0, hdr), dsum)))
		if err := w.write(hdr); err != nil {
			return err
		}
	} else if err := w.writeHeader(m, extra); err != nil {
		return err
	}
	w.nhdu++
	buf := make([]byte, 0, BlockSize)
	for _, v := range data {
		buf = binary.BigEndian.AppendUint64(buf, math.Float64bits(v))
		if len(buf) == cap(buf) {
			if err := w.write(buf); err != nil {
				return err
			}
			buf = buf[:0]
		}
	}
	return w.finishData(buf, int64(n)*8)
}

// zeroChecksum is the CHECKSUM value while the HDU's sum is taken.
const zeroChecksum = "0000000000000000"

// finishData writes buf and the zero padding that completes the data unit
// of total bytes.
func (w *Writer) finishData(buf []byte, total int64) error {
	if pad := (BlockSize - total%BlockSize) % BlockSize; pad > 0 {
		buf = append(buf, make([]byte, pad)...)
	}
	if len(buf) > 0 {
		return w.write(buf)
	}
	return w.err
}

// ColumnSpec describes one column of a table to write. Data holds the
// values of all rows, row after row:
//
//	'L'            []bool    rows*Repeat values, written as 'T' / 'F'
//	'B','I','J','K' []int    rows*Repeat values (range-checked)
//	'E','D'        []float64 rows*Repeat values
//	'A'            []string  rows values of at most Repeat bytes, space padded
type ColumnSpec struct {
	Name    string // TTYPEn
	Type    byte
	Repeat  int    // elements per row (characters for 'A'); 0 means 1
	Unit    string // TUNITn, omitted when ""
	Dim     []int  // TDIMn, omitted when nil
	Comment string // comment of the TTYPEn card
	Data    any
}

func (c *ColumnSpec) repeat() int {
	if c.Repeat == 0 {
		return 1
	}
	return c.Repeat
}

func (c *ColumnSpec) width() int {
	switch c.Type {
	case 'L', 'B', 'A':
		return c.repeat()
	case 'I':
		return 2 * c.repeat()
	case 'J', 'E':
		return 4 * c.repeat()
	case 'K', 'D':
		return 8 * c.repeat()
	}
	return -1
}

// WriteTable writes a binary table extension with the given EXTNAME, rows
// and columns. extra cards follow EXTNAME and the column definitions.
func (w *Writer) WriteTable(extName string, rows int, cols []ColumnSpec, extra []Card) error {
	if w.err != nil {
		return w.err
	}
	if w.nhdu == 0 {
		return fmt.Errorf("fitsfile: a table cannot be the primary HDU; write an empty image first")
	}
	if err := checkExtra(extra); err != nil {
		return err
	}
	if len(cols) > 999 {
		return fmt.Errorf("fitsfile: %d columns; at most 999", len(cols))
	}
	rowLen := 0
	for i := range cols {
		c := &cols[i]
		if c.width() < 0 {
			return fmt.Errorf("fitsfile: column %s: unsupported type %q", c.Name, c.Type)
		}
		if err := checkColumnData(c, rows); err != nil {
			return err
		}
		rowLen += c.width()
	}
	m := []Card{
		{Key: "XTENSION", Value: "BINTABLE", Comment: "binary table extension"},
		{Key: "BITPIX", Value: 8, Comment: "8-bit bytes"},
		{Key: "NAXIS", Value: 2, Comment: "two-dimensional table"},
		{Key: "NAXIS1", Value: rowLen, Comment: "bytes per row"},
		{Key: "NAXIS2", Value: rows, Comment: "number of rows"},
		{Key: "PCOUNT", Value: 0, Comment: "no heap"},
		{Key: "GCOUNT", Value: 1, Comment: "one group"},
		{Key: "TFIELDS", Value: len(cols), Comment: "number of columns"},
	}
	for i, c := range cols {
		n := strconv.Itoa(i + 1)
		m = append(m, Card{Key: "TTYPE" + n, Value: c.Name, Comment: c.Comment},
			Card{Key: "TFORM" + n, Value: strconv.Itoa(c.repeat()) + string(c.Type)})
		if c.Unit != "" {
			m = append(m, Card{Key: "TUNIT" + n, Value: c.Unit})
		}
		if c.Dim != nil {
			parts := make([]string, len(c.Dim))
			for j, d := range c.Dim {
				parts[j] = strconv.Itoa(d)
			}
			m = append(m, Card{Key: "TDIM" + n, Value: "(" + strings.Join(parts, ",") + ")"})
		}
	}
	m = append(m, Card{Key: "EXTNAME", Value: extName, Comment: "name of this table"})
	if err := w.writeHeader(m, extra); err != nil {
		return err
	}
	w.nhdu++
	buf := make([]byte, 0, max(rowLen, BlockSize))
	for r := 0; r < rows; r++ {
		for i := range cols {
			buf = appendField(buf, &cols[i], r)
		}
		if len(buf) >= BlockSize {
			if err := w.write(buf); err != nil {
				return err
			}
			buf = buf[:0]
		}
	}
	return w.finishData(buf, int64(rows)*int64(rowLen))
}

// checkColumnData checks the Go type, length and value ranges of a column.
func checkColumnData(c *ColumnSpec, rows int) error {
	n := rows * c.repeat()
	bad := func(format string, args ...any) error {
		return fmt.Errorf("fitsfile: column %s: %s", c.Name, fmt.Sprintf(format, args...))
	}
	if c.Dim != nil {
		p := 1
		for _, d := range c.Dim {
			p *= d
		}
		if p != c.repeat() {
			return bad("TDIM %v does not hold %d elements", c.Dim, c.repeat())
		}
	}
	switch c.Type {
	case 'L':
		v, ok := c.Data.([]bool)
		if !ok || len(v) != n {
			return bad("type L needs []bool of length %d", n)
		}
	case 'E', 'D':
		v, ok := c.Data.([]float64)
		if !ok || len(v) != n {
			return bad("type %c needs []float64 of length %d", c.Type, n)
		}
		if c.Type == 'E' {
			for _, x := range v {
				if !math.IsInf(x, 0) && math.Abs(x) > math.MaxFloat32 {
					return bad("value %g overflows a 32-bit float", x)
				}
			}
		}
	case 'B', 'I', 'J', 'K':
		v, ok := c.Data.([]int)
		if !ok || len(v) != n {
			return bad("type %c needs []int of length %d", c.Type, n)
		}
		lo, hi := int64(math.MinInt64), int64(math.MaxInt64)
		switch c.Type {
		case 'B':
			lo, hi = 0, 255
		case 'I':
			lo, hi = math.MinInt16, math.MaxInt16
		case 'J':
			lo, hi = math.MinInt32, math.MaxInt32
		}
		for _, x := range v {
			if int64(x) < lo || int64(x) > hi {
				return bad("value %d does not fit type %c", x, c.Type)
			}
		}
	case 'A':
		v, ok := c.Data.([]string)
		if !ok || len(v) != rows {
			return bad("type A needs []string of length %d", rows)
		}
		for _, s := range v {
			if len(s) > c.repeat() {
				return bad("value %q is longer than %d characters", s, c.repeat())
			}
			if err := checkText(s); err != nil {
				return bad("value %q %v", s, err)
			}
		}
	}
	return nil
}

func appendField(buf []byte, c *ColumnSpec, row int) []byte {
	r := c.repeat()
	switch c.Type {
	case 'L':
		for _, b := range c.Data.([]bool)[row*r : (row+1)*r] {
			if b {
				buf = append(buf, 'T')
			} else {
				buf = append(buf, 'F')
			}
		}
	case 'D':
		for _, x := range c.Data.([]float64)[row*r : (row+1)*r] {
			buf = binary.BigEndian.AppendUint64(buf, math.Float64bits(x))
		}
	case 'E':
		for _, x := range c.Data.([]float64)[row*r : (row+1)*r] {
			buf = binary.BigEndian.AppendUint32(buf, math.Float32bits(float32(x)))
		}
	case 'B':
		for _, x := range c.Data.([]int)[row*r : (row+1)*r] {
			buf = append(buf, byte(x))
		}
	case 'I':
		for _, x := range c.Data.([]int)[row*r : (row+1)*r] {
			buf = binary.BigEndian.AppendUint16(buf, uint16(int16(x)))
		}
	case 'J':
		for _, x := range c.Data.([]int)[row*r : (row+1)*r] {
			buf = binary.BigEndian.AppendUint32(buf, uint32(int32(x)))
		}
	case 'K':
		for _, x := range c.Data.([]int)[row*r : (row+1)*r] {
			buf = binary.BigEndian.AppendUint64(buf, uint64(int64(x)))
		}
	case 'A':
		s := c.Data.([]string)[row]
		buf = append(buf, s...)
		for i := len(s); i < r; i++ {
			buf = append(buf, ' ')
		}
	}
	return buf
}
