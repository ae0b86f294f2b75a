package oifits

import (
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"vcz/io/fitsfile"
	"vcz/io/safefile"
)

// ReadFile reads and validates the OIFITS file at path. Errors are *Error
// values whose File is path as given; File.Name is its base name.
func ReadFile(path string) (*File, error) {
	name := filepath.Base(path)
	data, err := safefile.ReadFile(path)
	if err != nil {
		var pe *os.PathError
		if errors.As(err, &pe) {
			err = pe.Err
		}
		return nil, &Error{File: path, Err: err}
	}
	f, err := decode(data, name)
	if err != nil {
		// Messages name the file as the user gave it: data.oifits of two folders differ.
		var oe *Error
		if errors.As(err, &oe) {
			oe.File = path
		}
		return nil, err
	}
	sum := sha256.Sum256(data)
	f.Path, f.SHA256 = path, hex.EncodeToString(sum[:])
	return f, nil
}

// Decode reads and validates an OIFITS file from r; name (usually the base
// name of the file) is used in error messages and stored in File.Name.
// The whole input is read into memory first: OIFITS files are small, and
// this lets every declared size be checked against the real length.
func Decode(r io.Reader, name string) (*File, error) {
	data, err := io.ReadAll(r)
	if err != nil {
		return nil, &Error{File: name, Err: err}
	}
	return decode(data, name)
}

// Extension names of the tables Decode reads.
const (
	extTarget     = "OI_TARGET"
	extArray      = "OI_ARRAY"
	extWavelength = "OI_WAVELENGTH"
	extVis2       = "OI_VIS2"
	extT3         = "OI_T3"
	extVis        = "OI_VIS"
	extFlux       = "OI_FLUX"
)

type decoder struct {
	name  string
	f     *File
	waves map[string]*Wavelength
	// versions maps EXTNAME and an explicit EXTVER to the first HDU that
	// has them; revns maps each OI_REVN seen to the first HDU with it.
	versions map[string]int
	revns    map[int]int
}

func decode(data []byte, name string) (*File, error) {
	ff, err := fitsfile.Parse(data)
	if err != nil {
		var fe *fitsfile.FormatError
		if errors.As(err, &fe) {
			return nil, &Error{File: name, HDU: fe.HDU, ExtName: fe.ExtName, Err: errors.New(fe.Msg)}
		}
		return nil, &Error{File: name, Err: err}
	}
	d := &decoder{name: name, f: &File{Name: name}}
	d.readPrimary(ff.HDUs[0])
	// Pass 1: the tables others refer to; pass 2: the data tables, which
	// need NWAVE from OI_WAVELENGTH to check their vector columns.
	for pass := 1; pass <= 2; pass++ {
		for _, h := range ff.HDUs[1:] {
			ext := h.ExtName()
			var err error
			switch {
			case pass == 1 && h.Kind == fitsfile.BinTable && ext == extTarget:
				err = d.readTarget(h)
			case pass == 1 && h.Kind == fitsfile.BinTable && ext == extArray:
				err = d.readArray(h)
			case pass == 1 && h.Kind == fitsfile.BinTable && ext == extWavelength:
				err = d.readWavelength(h)
			case pass == 2 && h.Kind == fitsfile.BinTable && ext == extVis2:
				err = d.readVis2(h)
			case pass == 2 && h.Kind == fitsfile.BinTable && ext == extT3:
				err = d.readT3(h)
			case pass == 2 && h.Kind == fitsfile.BinTable && ext == extVis:
				err = d.readVis(h)
			case pass == 2 && h.Kind == fitsfile.BinTable && ext == extFlux:
				err = d.readFlux(h)
			case pass == 2 && !known(h):
				what := ext
				if what == "" {
					what = "extension without EXTNAME"
				}
				d.f.Skipped = append(d.f.Skipped, fmt.Sprintf("HDU %d: %s skipped (not read by vcz)", h.Index, what))
			}
			if err != nil {
				return nil, err
			}
		}
		if pass == 1 {
			if err := d.checkReferenceTables(); err != nil {
				return nil, err
			}
		}
	}
	if len(d.f.Vis2)+len(d.f.T3)+len(d.f.Vis)+len(d.f.Flux) == 0 {
		return nil, &Error{File: name, Err: errors.New("no data tables: the file has no OI_VIS2, OI_T3, OI_VIS or OI_FLUX table")}
	}
	if err := validate(d.f); err != nil {
		return nil, err
	}
	d.f.Warnings = append(d.f.Warnings, implausible(d.f)...)
	return d.f, nil
}

func known(h *fitsfile.HDU) bool {
	if h.Kind != fitsfile.BinTable {
		return false
	}
	switch h.ExtName() {
	case extTarget, extArray, extWavelength, extVis2, extT3, extVis, extFlux:
		return true
	}
	return false
}

func (d *decoder) readPrimary(h *fitsfile.HDU) {
	p := &d.f.Primary
	get := func(key string) string {
		s, _, _ := h.Header.String(key)
		return strings.TrimSpace(s)
	}
	p.Origin, p.Date, p.DateObs, p.Content = get("ORIGIN"), get("DATE"), get("DATE-OBS"), get("CONTENT")
	p.Telescop, p.Instrume, p.Observer, p.Object = get("TELESCOP"), get("INSTRUME"), get("OBSERVER"), get("OBJECT")
	p.InsMode, p.Referenc, p.ProgID, p.ProcSoft, p.ObsTech = get("INSMODE"), get("REFERENC"), get("PROG_ID"), get("PROCSOFT"), get("OBSTECH")
	p.History = h.Header.Commentary("HISTORY")
	p.Comments = h.Header.Commentary("COMMENT")
}

// checkReferenceTables checks what pass 1 found.
func (d *decoder) checkReferenceTables() error {
	if len(d.f.Targets) == 0 {
		return &Error{File: d.name, Err: errors.New("no OI_TARGET table; every OIFITS file needs one")}
	}
	return nil
}

// table is the context for reading one binary table.
type table struct {
	d    *decoder
	h    *fitsfile.HDU
	t    *fitsfile.Table
	ext  string
	revn int
}

func (t *table) errf(row int, col, format string, args ...any) *Error {
	return &Error{File: t.d.name, HDU: t.h.Index, ExtName: t.ext, Row: row, Column: col, Err: fmt.Errorf(format, args...)}
}

// open prepares h for reading: it decodes the column definitions, checks
// that every column is named, and checks OI_REVN against the revisions
// this reader knows for the table (revn lists them).
func (d *decoder) open(h *fitsfile.HDU, revn ...int) (*table, error) {
	t := &table{d: d, h: h, ext: h.ExtName()}
	tab, err := h.Table()
	if err != nil {
		var fe *fitsfile.FormatError
		if errors.As(err, &fe) {
			return nil, &Error{File: d.name, HDU: h.Index, ExtName: t.ext, Err: errors.New(fe.Msg)}
		}
		return nil, &Error{File: d.name, HDU: h.Index, ExtName: t.ext, Err: err}
	}
	t.t = tab
	for _, c := range tab.Columns {
		if c.Name == "" {
			return nil, t.errf(0, "", "TTYPE%d is missing; every OIFITS column must be named", c.Index)
		}
		if c.Dim != nil {
			// The product is formed with a bound so huge axes cannot overflow.
			p := 1
			for _, n := range c.Dim {
				if n != 0 && p > c.Repeat/n {
					p = c.Repeat + 1
					break
				}
				p *= n
			}
			if p != c.Repeat {
				return nil, t.errf(0, c.Name, "TDIM%d of %s does not hold the %d elements of TFORM%d = '%s'", c.Index, c.Name, c.Repeat, c.Index, c.Format)
			}
		}
	}
	n, ok, err := h.Header.Int("OI_REVN")
	switch {
	case err != nil:
		return nil, t.errf(0, "", "%v", err)
	case !ok:
		return nil, t.errf(0, "", "mandatory keyword OI_REVN is missing")
	}
	for _, r := range revn {
		if n == r {
			t.revn = n
			d.noteVersions(h, t.ext, n)
			return t, nil
		}
	}
	want := fmt.Sprint(revn[0])
	if len(revn) == 2 {
		want = fmt.Sprintf("%d or %d", revn[0], revn[1])
	}
	return nil, t.errf(0, "", "unknown OI_REVN = %d; this reader knows revision %s of %s", n, want, t.ext)
}

// noteVersions warns of a table whose EXTNAME and EXTVER repeat an earlier
// table's (the FITS standard, Pence et al. 2010, sect. 7.1.1, has EXTNAME
// and EXTVER identify an extension; a table appended twice would be read
// twice), and of a file that mixes OI_REVN 1 and 2 in the tables that have
// revision 2 in OIFITS v2 (Duvert, Young & Hummel 2017, sect. 4: every
// such table of a v2 file has OI_REVN = 2; OI_FLUX has only revision 1).
func (d *decoder) noteVersions(h *fitsfile.HDU, ext string, revn int) {
	if v, ok, err := h.Header.Int("EXTVER"); ok && err == nil {
		if d.versions == nil {
			d.versions = map[string]int{}
		}
		key := fmt.Sprintf("%s %d", ext, v)
		if first, dup := d.versions[key]; dup {
			d.f.Warnings = append(d.f.Warnings, fmt.Sprintf("HDU %d: %s has EXTVER %d like HDU %d; if it is the same table appended twice, its data are counted twice", h.Index, ext, v, first))
		} else {
			d.versions[key] = h.Index
		}
	}
	if ext == extFlux {
		return
	}
	if d.revns == nil {
		d.revns = map[int]int{}
	}
	if _, seen := d.revns[revn]; seen {
		return
	}
	d.revns[revn] = h.Index
	if other, mixed := d.revns[3-revn]; mixed {
		d.f.Warnings = append(d.f.Warnings, fmt.Sprintf("HDU %d: %s has OI_REVN = %d but HDU %d has %d; one file should hold tables of one OIFITS revision", h.Index, ext, revn, other, 3-revn))
	}
}

// keyword reads a string keyword; required ones must be present and
// non-empty.
func (t *table) keyword(key string, required bool) (string, error) {
	s, ok, err := t.h.Header.String(key)
	if err != nil {
		return "", t.errf(0, "", "%v", err)
	}
	s = strings.TrimSpace(s)
	if required && (!ok || s == "") {
		return "", t.errf(0, "", "mandatory keyword %s is missing", key)
	}
	return s, nil
}

func (t *table) floatKeyword(key string, required bool) (float64, error) {
	v, ok, err := t.h.Header.Float(key)
	if err != nil {
		return 0, t.errf(0, "", "%v", err)
	}
	if required && !ok {
		return 0, t.errf(0, "", "mandatory keyword %s is missing", key)
	}
	return v, nil
}

type colKind int

const (
	kindFloat  colKind = iota // E or D (the standard fixes real-valued columns as D or E)
	kindInt                   // B, I, J or K
	kindString                // A
	kindBool                  // L
)

// anyRepeat accepts any repeat count in column.
const anyRepeat = -1

// column finds a column and checks its type and, unless repeat is
// anyRepeat, its repeat count. A missing optional column gives nil.
func (t *table) column(name string, kind colKind, repeat int, required bool) (*fitsfile.Column, error) {
	c := t.t.Column(name)
	if c == nil {
		if required {
			return nil, t.errf(0, name, "mandatory column %s is missing", name)
		}
		return nil, nil
	}
	var ok bool
	var want string
	switch kind {
	case kindFloat:
		ok, want = c.Type == 'D' || c.Type == 'E', "a real number (TFORM D or E)"
	case kindInt:
		ok, want = strings.IndexByte("BIJK", c.Type) >= 0 && c.Scale == 1 && c.Zero == float64(int(c.Zero)), "an integer (TFORM I or J)"
	case kindString:
		ok, want = c.Type == 'A', "a character string (TFORM nA)"
	case kindBool:
		ok, want = c.Type == 'L', "logical (TFORM L)"
	}
	if !ok {
		return nil, t.errf(0, name, "column %s has TFORM '%s'; must be %s", name, c.Format, want)
	}
	if repeat != anyRepeat && c.Repeat != repeat {
		return nil, t.errf(0, name, "column %s holds %s per row (TFORM '%s'); expected %d", name, values(c.Repeat), c.Format, repeat)
	}
	return c, nil
}

// vector finds a column of NWAVE elements, naming the wavelength table in
// the error.
func (t *table) vector(name string, kind colKind, w *Wavelength, required bool) (*fitsfile.Column, error) {
	c, err := t.column(name, kind, anyRepeat, required)
	if err != nil || c == nil {
		return c, err
	}
	if c.Repeat != len(w.EffWave) {
		return nil, t.errf(0, name, "column %s holds %s per row (TFORM '%s') but OI_WAVELENGTH '%s' (HDU %d) has NWAVE = %d",
			name, values(c.Repeat), c.Format, w.InsName, w.HDU, len(w.EffWave))
	}
	return c, nil
}

// Readers of one field; the column types were checked by column, so the
// accessors cannot fail, but any error is still reported with its place.
func (t *table) floats(dst []float64, c *fitsfile.Column, row int) error {
	if c == nil {
		return nil
	}
	return t.fieldErr(t.t.Float64s(dst, c, row), c, row)
}

// fieldErr places err, of reading column c in row, in the table; nil stays nil.
func (t *table) fieldErr(err error, c *fitsfile.Column, row int) error {
	if err != nil {
		return t.errf(row+1, c.Name, "%v", err)
	}
	return nil
}

func (t *table) float(c *fitsfile.Column, row int) (float64, error) {
	var v [1]float64
	if c == nil {
		return 0, nil
	}
	err := t.floats(v[:], c, row)
	return v[0], err
}

func (t *table) ints(dst []int, c *fitsfile.Column, row int) error {
	if c == nil {
		return nil
	}
	return t.fieldErr(t.t.Ints(dst, c, row), c, row)
}

func (t *table) int(c *fitsfile.Column, row int) (int, error) {
	var v [1]int
	if c == nil {
		return 0, nil
	}
	if c.Repeat != 1 {
		return 0, t.errf(0, c.Name, "column %s holds %s per row; expected 1", c.Name, values(c.Repeat))
	}
	err := t.ints(v[:], c, row)
	return v[0], err
}

func (t *table) str(c *fitsfile.Column, row int) (string, error) {
	if c == nil {
		return "", nil
	}
	s, err := t.t.String(c, row)
	if err != nil {
		return "", t.errf(row+1, c.Name, "%v", err)
	}
	return strings.TrimSpace(s), nil
}

func (t *table) bools(dst []bool, c *fitsfile.Column, row int) error {
	if err := t.t.Bools(dst, c, row); err != nil {
		return t.errf(row+1, c.Name, "%v", err)
	}
	return nil
}

// values formats a count of values.
func values(n int) string {
	if n == 1 {
		return "1 value"
	}
	return fmt.Sprintf("%d values", n)
}

// firstErr returns the first non-nil error.
func firstErr(errs ...error) error {
	for _, e := range errs {
		if e != nil {
			return e
		}
	}
	return nil
}
