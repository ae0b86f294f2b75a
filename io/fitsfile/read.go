package fitsfile

import (
	"bytes"
	"fmt"
	"math"
	"math/big"
	"strings"
)

// Kind classifies an HDU.
type Kind int

const (
	Primary    Kind = iota // the primary HDU
	Image                  // XTENSION = 'IMAGE'
	BinTable               // XTENSION = 'BINTABLE'
	ASCIITable             // XTENSION = 'TABLE'
	OtherExt               // any other conforming extension
)

// HDU is one header and data unit of a parsed file. Data refers to the
// bytes of the file passed to Parse; it is not copied.
type HDU struct {
	Index  int  // 1-based position in the file; the primary HDU is 1
	Kind   Kind // classification from SIMPLE / XTENSION
	Header Header
	Bitpix int   // BITPIX
	Axes   []int // NAXIS1 ... NAXISn
	PCount int   // PCOUNT (0 for the primary HDU)
	GCount int   // GCOUNT (1 for the primary HDU)
	Offset int64 // byte offset of the header in the file
	Data   []byte
}

// ExtName returns the EXTNAME keyword of the HDU, or "" when it has none.
func (h *HDU) ExtName() string { return h.Header.ExtName() }

// FormatError reports a violation of the FITS standard, or a file too
// short for what its headers declare.
type FormatError struct {
	HDU     int    // 1-based HDU number, 0 when the problem concerns the whole file
	ExtName string // EXTNAME of the HDU when known
	Msg     string
}

func (e *FormatError) Error() string {
	switch {
	case e.HDU == 0:
		return e.Msg
	case e.ExtName != "":
		return fmt.Sprintf("%s (HDU %d): %s", e.ExtName, e.HDU, e.Msg)
	}
	return fmt.Sprintf("HDU %d: %s", e.HDU, e.Msg)
}

// File is a parsed FITS file.
type File struct {
	HDUs []*HDU
	// Trailing counts the bytes after the last HDU that do not begin
	// another extension. The standard allows such special records
	// (Pence et al. 2010, sect. 3.5); they are ignored.
	Trailing int64
}

// Parse scans data as a FITS file. It walks every header, checks the
// mandatory keywords and the declared data size of each HDU against the
// length of data, and returns the HDUs with their headers decoded. Only
// memory proportional to the number of header cards is allocated.
//
// The last HDU may lack the zero padding of its final 2880-byte block;
// any earlier truncation is an error.
func Parse(data []byte) (*File, error) {
	if len(data) == 0 {
		return nil, &FormatError{Msg: "empty file (0 bytes); not a FITS file"}
	}
	if !bytes.HasPrefix(data, []byte("SIMPLE  =")) {
		return nil, &FormatError{Msg: "not a FITS file: it does not begin with the keyword SIMPLE"}
	}
	f := &File{}
	pos := int64(0)
	size := int64(len(data))
	for pos < size {
		index := len(f.HDUs) + 1
		if index > 1 && !bytes.HasPrefix(data[pos:], []byte("XTENSION=")) {
			f.Trailing = size - pos
			break
		}
		h, next, err := parseHDU(data, pos, index)
		if err != nil {
			return nil, err
		}
		f.HDUs = append(f.HDUs, h)
		pos = next
	}
	return f, nil
}

func parseHDU(data []byte, pos int64, index int) (*HDU, int64, error) {
	size := int64(len(data))
	h := &HDU{Index: index, Offset: pos}
	ferr := func(format string, args ...any) error {
		return &FormatError{HDU: index, ExtName: h.Header.ExtName(), Msg: fmt.Sprintf(format, args...)}
	}
	// Read header blocks until the END card.
	end := false
	open := false // the last card's string value ends in '&'
	p := pos
	for !end {
		if size-p < BlockSize {
			if p == pos {
				return nil, 0, ferr("truncated file: header block ends after %d of %d bytes", size-p, BlockSize)
			}
			return nil, 0, ferr("truncated file: header has no END card before the end of the file")
		}
		block := data[p : p+BlockSize]
		p += BlockSize
		for i := 0; i < BlockSize; i += cardSize {
			rec := block[i : i+cardSize]
			if string(rec[:8]) == "END     " {
				end = true
				break
			}
			for _, c := range rec {
				if c < 0x20 || c > 0x7e {
					return nil, 0, ferr("header card %d holds the non-ASCII byte 0x%02x", len(h.Header.Cards)+1, c)
				}
			}
			if open {
				// A string ending in '&' continues on a CONTINUE card (LongString).
				piece, com, ok, err := continuation(rec)
				if err != nil {
					return nil, 0, ferr("header card %d: %v", len(h.Header.Cards)+1, err)
				}
				if ok {
					prev := &h.Header.Cards[len(h.Header.Cards)-1]
					s := prev.Value.(string)
					prev.Value = s[:len(s)-1] + piece
					if com != "" {
						prev.Comment = strings.TrimSpace(prev.Comment + " " + com)
					}
					open = strings.HasSuffix(piece, "&")
					continue
				}
			}
			c, err := parseCard(rec)
			if err != nil {
				return nil, 0, ferr("%v", err)
			}
			h.Header.Cards = append(h.Header.Cards, c)
			s, isString := c.Value.(string)
			open = isString && strings.HasSuffix(s, "&")
		}
	}
	dataStart := p
	if err := h.checkMandatory(); err != nil {
		return nil, 0, ferr("%v", err)
	}
	// Data size |BITPIX|/8 * GCOUNT * (PCOUNT + NAXIS1*...*NAXISn), computed
	// with saturation at the file size so no overflow can hide a huge value.
	remain := size - dataStart
	limit := remain + 1
	n := int64(0)
	if len(h.Axes) > 0 {
		n = 1
		for _, a := range h.Axes {
			n = mulSat(n, int64(a), limit)
		}
	}
	groups := false
	if h.Kind == Primary && len(h.Axes) > 0 && h.Axes[0] == 0 {
		if g, ok, _ := h.Header.Bool("GROUPS"); ok && g {
			groups = true
			n = 1
			for _, a := range h.Axes[1:] {
				n = mulSat(n, int64(a), limit)
			}
		}
	}
	if h.Kind != Primary || groups {
		n = addSat(n, int64(h.PCount), limit)
		n = mulSat(n, int64(h.GCount), limit)
	}
	nbytes := mulSat(n, int64(abs(h.Bitpix)/8), limit)
	if nbytes > remain {
		if h.Kind == BinTable {
			return nil, 0, ferr("truncated file: NAXIS1 = %d, NAXIS2 = %d and PCOUNT = %d declare %s bytes of data, but only %d bytes are left in the file",
				h.Axes[0], h.Axes[1], h.PCount, h.declaredSize(groups), remain)
		}
		return nil, 0, ferr("truncated file: the header declares %s bytes of data, but only %d bytes are left in the file", h.declaredSize(groups), remain)
	}
	h.Data = data[dataStart : dataStart+nbytes]
	next := dataStart + (nbytes+BlockSize-1)/BlockSize*BlockSize
	if next > size {
		next = size
	}
	return h, next, nil
}

// declaredSize computes the data size of the header exactly, without
// overflow, for error messages.
func (h *HDU) declaredSize(groups bool) string {
	n := new(big.Int)
	if len(h.Axes) > 0 {
		n.SetInt64(1)
		axes := h.Axes
		if groups {
			axes = axes[1:]
		}
		for _, a := range axes {
			n.Mul(n, big.NewInt(int64(a)))
		}
	}
	if h.Kind != Primary || groups {
		n.Add(n, big.NewInt(int64(h.PCount)))
		n.Mul(n, big.NewInt(int64(h.GCount)))
	}
	n.Mul(n, big.NewInt(int64(abs(h.Bitpix)/8)))
	return n.String()
}

// checkMandatory checks the required keywords of the header (Pence et al.
// 2010, sect. 4.4.1 and 7) and fills Kind, Bitpix, Axes, PCount and GCount.
func (h *HDU) checkMandatory() error {
	hd := &h.Header
	if len(hd.Cards) == 0 {
		return fmt.Errorf("empty header")
	}
	first := hd.Cards[0]
	if h.Index == 1 {
		if first.Key != "SIMPLE" {
			return fmt.Errorf("first keyword is %s; must be SIMPLE", first.Key)
		}
		if v, ok := first.Value.(bool); !ok || !v {
			return fmt.Errorf("SIMPLE is %s; must be T", valueText(first.Value))
		}
		h.Kind = Primary
	} else {
		if first.Key != "XTENSION" {
			return fmt.Errorf("first keyword is %s; must be XTENSION", first.Key)
		}
		x, ok := first.Value.(string)
		if !ok {
			return fmt.Errorf("XTENSION is %s; must be a string", typeName(first.Value))
		}
		switch x {
		case "IMAGE":
			h.Kind = Image
		case "BINTABLE":
			h.Kind = BinTable
		case "TABLE":
			h.Kind = ASCIITable
		default:
			h.Kind = OtherExt
		}
	}
	need := func(key string) (int, error) {
		n, ok, err := hd.Int(key)
		if err != nil {
			return 0, err
		}
		if !ok {
			return 0, fmt.Errorf("mandatory keyword %s is missing", key)
		}
		return n, nil
	}
	var err error
	if h.Bitpix, err = need("BITPIX"); err != nil {
		return err
	}
	switch h.Bitpix {
	case 8, 16, 32, 64, -32, -64:
	default:
		return fmt.Errorf("BITPIX is %d; must be 8, 16, 32, 64, -32 or -64", h.Bitpix)
	}
	naxis, err := need("NAXIS")
	if err != nil {
		return err
	}
	if naxis < 0 || naxis > 999 {
		return fmt.Errorf("NAXIS is %d; must be between 0 and 999", naxis)
	}
	h.Axes = make([]int, naxis)
	for i := range h.Axes {
		key := fmt.Sprintf("NAXIS%d", i+1)
		if h.Axes[i], err = need(key); err != nil {
			return err
		}
		if h.Axes[i] < 0 {
			return fmt.Errorf("%s is %d; must not be negative", key, h.Axes[i])
		}
	}
	h.GCount = 1
	if h.Kind != Primary {
		if h.PCount, err = need("PCOUNT"); err != nil {
			return err
		}
		if h.GCount, err = need("GCOUNT"); err != nil {
			return err
		}
		if h.PCount < 0 {
			return fmt.Errorf("PCOUNT is %d; must not be negative", h.PCount)
		}
		if h.GCount < 0 {
			return fmt.Errorf("GCOUNT is %d; must not be negative", h.GCount)
		}
	} else if g, ok, _ := hd.Bool("GROUPS"); ok && g {
		if p, ok, err := hd.Int("PCOUNT"); err != nil {
			return err
		} else if ok {
			h.PCount = max(p, 0)
		}
		if g, ok, err := hd.Int("GCOUNT"); err != nil {
			return err
		} else if ok {
			h.GCount = max(g, 0)
		}
	}
	switch h.Kind {
	case BinTable:
		if h.Bitpix != 8 || naxis != 2 || h.GCount != 1 {
			return fmt.Errorf("a binary table needs BITPIX = 8, NAXIS = 2 and GCOUNT = 1 (has %d, %d, %d)", h.Bitpix, naxis, h.GCount)
		}
		tf, err := need("TFIELDS")
		if err != nil {
			return err
		}
		if tf < 0 || tf > 999 {
			return fmt.Errorf("TFIELDS is %d; must be between 0 and 999", tf)
		}
	case Image:
		if h.PCount != 0 || h.GCount != 1 {
			return fmt.Errorf("an image extension needs PCOUNT = 0 and GCOUNT = 1 (has %d, %d)", h.PCount, h.GCount)
		}
	}
	return nil
}

// mulSat returns a*b for non-negative a and b, or limit when the product
// reaches limit (including on overflow).
func mulSat(a, b, limit int64) int64 {
	if a == 0 || b == 0 {
		return 0
	}
	if a >= limit || b >= limit || a > limit/b {
		return limit
	}
	return min(a*b, limit)
}

func addSat(a, b, limit int64) int64 {
	if a >= limit || b >= limit || a+b >= limit {
		return limit
	}
	return a + b
}

func abs(n int) int {
	if n < 0 {
		return -n
	}
	return n
}

// Float64Image returns the pixel values of an image HDU as float64, with
// BSCALE and BZERO applied (Pence et al. 2010, sect. 4.4.2.5). Pixel order
// is that of the file: the first axis varies fastest.
func (h *HDU) Float64Image() ([]float64, error) {
	if h.Kind != Primary && h.Kind != Image {
		return nil, &FormatError{HDU: h.Index, ExtName: h.ExtName(), Msg: "not an image HDU"}
	}
	bscale, zero := 1.0, 0.0
	var err error
	if v, ok, e := h.Header.Float("BSCALE"); e != nil {
		err = e
	} else if ok {
		bscale = v
	}
	if v, ok, e := h.Header.Float("BZERO"); e != nil {
		err = e
	} else if ok {
		zero = v
	}
	if err != nil {
		return nil, &FormatError{HDU: h.Index, ExtName: h.ExtName(), Msg: err.Error()}
	}
	w := abs(h.Bitpix) / 8
	n := len(h.Data) / w
	out := make([]float64, n)
	for i := range out {
		out[i] = decodeNumber(h.Data[i*w:], h.Bitpix)*bscale + zero
	}
	return out, nil
}

// decodeNumber reads one big-endian value of the given BITPIX.
func decodeNumber(b []byte, bitpix int) float64 {
	switch bitpix {
	case 8:
		return float64(b[0])
	case 16:
		return float64(int16(be16(b)))
	case 32:
		return float64(int32(be32(b)))
	case 64:
		return float64(int64(be64(b)))
	case -32:
		return float64(math.Float32frombits(be32(b)))
	case -64:
		return math.Float64frombits(be64(b))
	}
	panic("fitsfile: bad BITPIX")
}

func be16(b []byte) uint16 { return uint16(b[0])<<8 | uint16(b[1]) }
func be32(b []byte) uint32 {
	return uint32(b[0])<<24 | uint32(b[1])<<16 | uint32(b[2])<<8 | uint32(b[3])
}
func be64(b []byte) uint64 { return uint64(be32(b))<<32 | uint64(be32(b[4:])) }
