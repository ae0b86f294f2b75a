package fitsfile

import (
	"bytes"
	"encoding/json"
	"errors"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"vcz/io/fitsfile/fitstest"
)

// Expected records follow the fixed format of Pence et al. 2010, sect.
// 4.2: value indicator in columns 9-10, logical/numeric values
// right-justified to column 30, strings from column 11 with at least 8
// characters between the quotes, quotes inside strings doubled.
func TestEncodeCard(t *testing.T) {
	tests := []struct {
		card Card
		want string
	}{
		{Card{Key: "SIMPLE", Value: true}, "SIMPLE  =                    T"},
		{Card{Key: "NAXIS", Value: 2, Comment: "axes"}, "NAXIS   =                    2 / axes"},
		{Card{Key: "CDELT1", Value: -1.5e-7}, "CDELT1  =             -1.5E-07"},
		{Card{Key: "CRVAL1", Value: 10.0}, "CRVAL1  =                 10.0"},
		{Card{Key: "EQUINOX", Value: 2000.0}, "EQUINOX =               2000.0"},
		{Card{Key: "ORIGIN", Value: "ab"}, "ORIGIN  = 'ab      '"},
		{Card{Key: "OBJECT", Value: "it's"}, "OBJECT  = 'it''s   '"},
		{Card{Key: "HISTORY", Comment: "step one"}, "HISTORY step one"},
		{Card{Key: "DATE-OBS", Value: "2026-01-02"}, "DATE-OBS= '2026-01-02'"},
		// A comment too long for the card is cut after a whole word, or left out when
		// not even its first word fits (the standard, sect. 4.1.2.3, leaves the comment's
		// text free; whole words are common practice, no source).
		{Card{Key: "DSHA1", Value: strings.Repeat("4390d4fd", 8), Comment: "SHA-256 of data file 1"}, "DSHA1   = '" + strings.Repeat("4390d4fd", 8) + "'"},
		{Card{Key: "RUNSPEC", Value: `["reg=mem","prior=gauss:4mas","start=disc:4mas"]`, Comment: "run options (JSON), for vcz image -rerun"},
			`RUNSPEC = '["reg=mem","prior=gauss:4mas","start=disc:4mas"]' / run options`},
		{Card{Key: "CDELT1", Value: -3.2917272462833325e-08, Comment: "[deg] pixel size; negative: east to the left"},
			"CDELT1  = -3.2917272462833325E-08 / [deg] pixel size; negative: east to the left"},
	}
	for _, tt := range tests {
		got, err := encodeCards(nil, tt.card)
		if err != nil {
			t.Errorf("%v: %v", tt.card, err)
			continue
		}
		want := tt.want + strings.Repeat(" ", 80-len(tt.want))
		if string(got) != want {
			t.Errorf("%v:\n got %q\nwant %q", tt.card, got, want)
		}
	}
	for _, bad := range []Card{
		{Key: "lower", Value: 1},
		{Key: "TOOLONGKEY", Value: 1},
		{Key: "X", Value: math.NaN()},
		{Key: "X", Value: strings.Repeat("a", 69)},
		{Key: "X", Value: "tab\there"},
		{Key: "X", Value: []int{1}},
	} {
		if _, err := encodeCards(nil, bad); err == nil {
			t.Errorf("%v: no error", bad)
		}
	}
	// Long commentary text continues on further cards (Pence et al. 2010,
	// sect. 4.4.2.4: HISTORY text in columns 9-80).
	long := strings.Repeat("x", 100)
	got, err := encodeCards(nil, Card{Key: "HISTORY", Comment: long})
	if err != nil || len(got) != 160 || !strings.HasPrefix(string(got[80:]), "HISTORY "+strings.Repeat("x", 28)) {
		t.Errorf("long HISTORY: %q, %v", got, err)
	}
}

func TestParseCard(t *testing.T) {
	pad := func(s string) []byte { return []byte(s + strings.Repeat(" ", 80-len(s))) }
	tests := []struct {
		rec  string
		want Card
	}{
		{"NAXIS   =                    2 / axes", Card{Key: "NAXIS", Value: 2, Comment: "axes"}},
		{"SIMPLE  =                    T", Card{Key: "SIMPLE", Value: true}},
		{"EXTEND  = F", Card{Key: "EXTEND", Value: false}},
		{"CDELT1  =            -1.5D-07", Card{Key: "CDELT1", Value: -1.5e-7}},
		{"OBJECT  = 'it''s   ' / quoted", Card{Key: "OBJECT", Value: "it's", Comment: "quoted"}},
		{"ORIGIN  = 'a / b'", Card{Key: "ORIGIN", Value: "a / b"}},
		{"HISTORY   indented text", Card{Key: "HISTORY", Comment: "  indented text"}},
		{"NAXIS   = '2'", Card{Key: "NAXIS", Value: "2"}},
		{"X       = (1.0, 2.0)", Card{Key: "X", Value: RawValue("(1.0, 2.0)")}},
		{"X       = NaN", Card{Key: "X", Value: RawValue("NaN")}},
	}
	for _, tt := range tests {
		got, err := parseCard(pad(tt.rec))
		if err != nil || !reflect.DeepEqual(got, tt.want) {
			t.Errorf("%q: got %#v, %v; want %#v", tt.rec, got, err, tt.want)
		}
	}
	if _, err := parseCard(pad("X       = 'open")); err == nil {
		t.Error("unterminated string: no error")
	}
}

// sampleTable writes a primary HDU and a table with one column of each
// supported type, scalar and vector.
func sampleTable(t testing.TB) ([]byte, []ColumnSpec) {
	cols := []ColumnSpec{
		{Name: "NAME", Type: 'A', Repeat: 16, Data: []string{"alpha", "it's", ""}},
		{Name: "XYZ", Type: 'D', Repeat: 3, Unit: "m", Data: []float64{1, -2.5, 3e10, 4, 5, 6, math.Inf(1), math.NaN(), 1e-300}},
		{Name: "FLAG", Type: 'L', Repeat: 2, Data: []bool{true, false, false, true, false, false}},
		{Name: "STA", Type: 'I', Repeat: 2, Data: []int{1, -2, 32767, -32768, 0, 5}},
		{Name: "ID", Type: 'J', Data: []int{1, -2147483648, 2147483647}},
		{Name: "BIG", Type: 'K', Data: []int{1 << 40, -1, 0}},
		{Name: "BYTE", Type: 'B', Data: []int{0, 255, 7}},
		{Name: "WAVE", Type: 'E', Repeat: 4, Dim: []int{2, 2}, Unit: "m", Data: []float64{1.5e-6, 2e-6, 0.25, -1, 0, 0, 0, 0, 1, 2, 3, 4}},
		{Name: "S", Type: 'D', Data: []float64{0.1, 0.2, 0.3}},
	}
	var buf bytes.Buffer
	w := NewWriter(&buf)
	if err := w.WriteImage(nil, nil, []Card{{Key: "ORIGIN", Value: "test"}, {Key: "HISTORY", Comment: "made by a test"}}); err != nil {
		t.Fatal(err)
	}
	if err := w.WriteTable("SAMPLE", 3, cols, []Card{{Key: "FOO", Value: 1.5e-7, Comment: "a real"}}); err != nil {
		t.Fatal(err)
	}
	return buf.Bytes(), cols
}

func readColumn(t *testing.T, tab *Table, c *Column) any {
	t.Helper()
	switch c.Type {
	case 'A':
		var out []string
		for r := 0; r < tab.Rows; r++ {
			s, err := tab.String(c, r)
			if err != nil {
				t.Fatal(err)
			}
			out = append(out, s)
		}
		return out
	case 'L':
		out := make([]bool, tab.Rows*c.Repeat)
		for r := 0; r < tab.Rows; r++ {
			if err := tab.Bools(out[r*c.Repeat:(r+1)*c.Repeat], c, r); err != nil {
				t.Fatal(err)
			}
		}
		return out
	case 'B', 'I', 'J', 'K':
		out := make([]int, tab.Rows*c.Repeat)
		for r := 0; r < tab.Rows; r++ {
			if err := tab.Ints(out[r*c.Repeat:(r+1)*c.Repeat], c, r); err != nil {
				t.Fatal(err)
			}
		}
		return out
	}
	out := make([]float64, tab.Rows*c.Repeat)
	for r := 0; r < tab.Rows; r++ {
		if err := tab.Float64s(out[r*c.Repeat:(r+1)*c.Repeat], c, r); err != nil {
			t.Fatal(err)
		}
	}
	return out
}

// sameFloats compares with NaN equal to NaN; E columns are compared after
// rounding the expectation to float32.
func sameFloats(got, want []float64, single bool) bool {
	if len(got) != len(want) {
		return false
	}
	for i := range got {
		w := want[i]
		if single {
			w = float64(float32(w))
		}
		if !(got[i] == w || math.IsNaN(got[i]) && math.IsNaN(w)) {
			return false
		}
	}
	return true
}

func TestWriteParseRoundTrip(t *testing.T) {
	data, cols := sampleTable(t)
	if len(data)%BlockSize != 0 {
		t.Fatalf("file length %d is not a multiple of %d", len(data), BlockSize)
	}
	f, err := Parse(data)
	if err != nil {
		t.Fatal(err)
	}
	if len(f.HDUs) != 2 || f.HDUs[1].ExtName() != "SAMPLE" || f.HDUs[1].Kind != BinTable {
		t.Fatalf("HDUs: %+v", f.HDUs)
	}
	if h := f.HDUs[0].Header.Commentary("HISTORY"); !reflect.DeepEqual(h, []string{"made by a test"}) {
		t.Errorf("HISTORY = %q", h)
	}
	if v, _, _ := f.HDUs[1].Header.Float("FOO"); v != 1.5e-7 {
		t.Errorf("FOO = %v", v)
	}
	tab, err := f.HDUs[1].Table()
	if err != nil {
		t.Fatal(err)
	}
	for _, spec := range cols {
		c := tab.Column(strings.ToLower(spec.Name))
		if c == nil {
			t.Fatalf("column %s missing", spec.Name)
		}
		if c.Unit != spec.Unit || !reflect.DeepEqual(c.Dim, spec.Dim) {
			t.Errorf("%s: unit %q dim %v", spec.Name, c.Unit, c.Dim)
		}
		got := readColumn(t, tab, c)
		if fw, ok := spec.Data.([]float64); ok {
			if !sameFloats(got.([]float64), fw, spec.Type == 'E') {
				t.Errorf("%s = %v, want %v", spec.Name, got, fw)
			}
		} else if !reflect.DeepEqual(got, spec.Data) {
			t.Errorf("%s = %v, want %v", spec.Name, got, spec.Data)
		}
	}
	if err := tab.Bools(make([]bool, 1), tab.Column("ID"), 0); err == nil {
		t.Error("Bools on a J column: no error")
	}
}

// TestIndependentReaders checks the written file with fitsverify (0
// warnings, 0 errors) and reads it back with astropy.io.fits.
func TestIndependentReaders(t *testing.T) {
	data, cols := sampleTable(t)
	path := filepath.Join(t.TempDir(), "sample.fits")
	if err := os.WriteFile(path, data, 0o644); err != nil {
		t.Fatal(err)
	}
	fitstest.Verify(t, path)
	out := fitstest.RunPython(t, "testdata/dump_tables.py", path)
	var got map[string]map[string]json.RawMessage
	if err := json.Unmarshal(bytes.ReplaceAll(bytes.ReplaceAll(out, []byte("NaN"), []byte("null")), []byte("Infinity"), []byte("1e999")), &got); err != nil {
		// Infinity cannot be decoded by encoding/json; compare the finite columns only.
		t.Logf("decoding astropy output: %v", err)
	}
	tab := got["SAMPLE"]
	if tab == nil {
		t.Fatalf("astropy output has no SAMPLE table: %s", out)
	}
	for _, spec := range cols {
		raw := tab[spec.Name]
		switch d := spec.Data.(type) {
		case []string:
			var s []string
			if err := json.Unmarshal(raw, &s); err != nil || !reflect.DeepEqual(s, d) {
				t.Errorf("astropy %s = %s, want %q", spec.Name, raw, d)
			}
		case []bool, []int:
			var v any
			if err := json.Unmarshal(raw, &v); err != nil {
				t.Fatal(err)
			}
			if flat := flatten(v); !reflect.DeepEqual(flat, flatten(toAny(d))) {
				t.Errorf("astropy %s = %v, want %v", spec.Name, flat, d)
			}
		case []float64:
			if spec.Name == "XYZ" {
				continue // holds Inf and NaN, which JSON cannot carry
			}
			var v any
			if err := json.Unmarshal(raw, &v); err != nil {
				t.Fatal(err)
			}
			flat := flatten(v)
			if len(flat) != len(d) {
				t.Fatalf("astropy %s has %d values, want %d", spec.Name, len(flat), len(d))
			}
			for i, x := range flat {
				w := d[i]
				if spec.Type == 'E' {
					w = float64(float32(w))
				}
				if x.(float64) != w {
					t.Errorf("astropy %s[%d] = %v, want %v", spec.Name, i, x, w)
				}
			}
		}
	}
}

func toAny(v any) any {
	b, _ := json.Marshal(v)
	var out any
	json.Unmarshal(b, &out)
	return out
}

func flatten(v any) []any {
	s, ok := v.([]any)
	if !ok {
		return []any{v}
	}
	var out []any
	for _, x := range s {
		out = append(out, flatten(x)...)
	}
	return out
}

// header builds a header block from card texts, END-terminated and padded.
func header(cards ...string) []byte {
	var b []byte
	for _, c := range append(cards, "END") {
		b = appendPadded(b, c)
	}
	for len(b)%BlockSize != 0 {
		b = append(b, ' ')
	}
	return b
}

func TestParseErrors(t *testing.T) {
	good, _ := sampleTable(t)
	prim := header("SIMPLE  =                    T", "BITPIX  =                    8", "NAXIS   =                    0", "EXTEND  =                    T")
	table := func(cards ...string) []byte {
		base := []string{"XTENSION= 'BINTABLE'", "BITPIX  =                    8", "NAXIS   =                    2"}
		return append(append([]byte{}, prim...), header(append(base, cards...)...)...)
	}
	tests := []struct {
		name string
		data []byte
		want string
	}{
		{"empty", nil, "empty file (0 bytes); not a FITS file"},
		{"not FITS", []byte("hello world, this is text\n"), "not a FITS file: it does not begin with the keyword SIMPLE"},
		{"short header", good[:100], "HDU 1: truncated file: header block ends after 100 of 2880 bytes"},
		{"cut in table data", good[:len(good)-2880], "SAMPLE (HDU 2): truncated file: NAXIS1 = 83, NAXIS2 = 3 and PCOUNT = 0 declare 249 bytes of data, but only 0 bytes are left in the file"},
		{"string NAXIS", header("SIMPLE  =                    T", "BITPIX  =                    8", "NAXIS   = '2'"), "HDU 1: NAXIS is a string ('2'); must be an integer"},
		{"missing BITPIX", header("SIMPLE  =                    T", "NAXIS   =                    0"), "HDU 1: mandatory keyword BITPIX is missing"},
		{"bad BITPIX", header("SIMPLE  =                    T", "BITPIX  =                   12", "NAXIS   =                    0"), "HDU 1: BITPIX is 12; must be 8, 16, 32, 64, -32 or -64"},
		{"SIMPLE F", header("SIMPLE  =                    F", "BITPIX  =                    8", "NAXIS   =                    0"), "HDU 1: SIMPLE is F; must be T"},
		{"huge NAXIS2", table("NAXIS1  =                   10", "NAXIS2  =            999999999", "PCOUNT  =                    0", "GCOUNT  =                    1", "TFIELDS =                    1", "TFORM1  = '10A'"),
			"HDU 2: truncated file: NAXIS1 = 10, NAXIS2 = 999999999 and PCOUNT = 0 declare 9999999990 bytes of data, but only 0 bytes are left in the file"},
		{"overflowing axes", table("NAXIS1  =  9223372036854775807", "NAXIS2  =  9223372036854775807", "PCOUNT  =                    0", "GCOUNT  =                    1", "TFIELDS =                    1", "TFORM1  = '10A'"),
			"HDU 2: truncated file: NAXIS1 = 9223372036854775807, NAXIS2 = 9223372036854775807 and PCOUNT = 0 declare 85070591730234615847396907784232501249 bytes of data, but only 0 bytes are left in the file"},
		{"no PCOUNT", table("NAXIS1  =                    0", "NAXIS2  =                    0", "GCOUNT  =                    1", "TFIELDS =                    0"), "HDU 2: mandatory keyword PCOUNT is missing"},
		{"no TFIELDS", table("NAXIS1  =                    0", "NAXIS2  =                    0", "PCOUNT  =                    0", "GCOUNT  =                    1"), "HDU 2: mandatory keyword TFIELDS is missing"},
		{"missing XTENSION header end", append(append([]byte{}, prim...), []byte("XTENSION= 'BINTABLE'")...), "HDU 2: truncated file: header block ends after 20 of 2880 bytes"},
		{"non-ASCII", header("SIMPLE  =                    T", "BITPIX  =                    8", "NAXIS   =                    0", "COMMENT \x01"), "HDU 1: header card 4 holds the non-ASCII byte 0x01"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := Parse(tt.data)
			var fe *FormatError
			if !errors.As(err, &fe) {
				t.Fatalf("err = %v (%T), want a *FormatError", err, err)
			}
			if err.Error() != tt.want {
				t.Errorf("err = %q\nwant  %q", err, tt.want)
			}
		})
	}
	// A header with no END card before the end of the file.
	noEnd := append([]byte{}, prim[:80*4]...)
	for len(noEnd) < 2*BlockSize {
		noEnd = appendPadded(noEnd, "COMMENT filler")
	}
	if _, err := Parse(noEnd); err == nil || !strings.Contains(err.Error(), "no END card") {
		t.Errorf("no END: err = %v", err)
	}
}

func TestTableErrors(t *testing.T) {
	prim := header("SIMPLE  =                    T", "BITPIX  =                    8", "NAXIS   =                    0")
	build := func(cards ...string) *HDU {
		base := []string{"XTENSION= 'BINTABLE'", "BITPIX  =                    8", "NAXIS   =                    2",
			"NAXIS1  =                    8", "NAXIS2  =                    1", "PCOUNT  =                    0", "GCOUNT  =                    1"}
		data := append(append([]byte{}, prim...), header(append(base, cards...)...)...)
		data = append(data, make([]byte, BlockSize)...)
		f, err := Parse(data)
		if err != nil {
			t.Fatal(err)
		}
		return f.HDUs[1]
	}
	tests := []struct {
		cards []string
		want  string
	}{
		{[]string{"TFIELDS =                    1"}, "HDU 2: mandatory keyword TFORM1 is missing"},
		{[]string{"TFIELDS =                    1", "TFORM1  = '4D'"}, "HDU 2: columns are wider than NAXIS1 = 8 bytes (at TFORM1 = '4D')"},
		{[]string{"TFIELDS =                    1", "TFORM1  = '1E'"}, "HDU 2: columns add up to 4 bytes but NAXIS1 = 8"},
		{[]string{"TFIELDS =                    1", "TFORM1  = '1Z'"}, "HDU 2: TFORM1 = '1Z': unknown data type 'Z'"},
		{[]string{"TFIELDS =                    1", "TFORM1  =                    8"}, "HDU 2: TFORM1 is an integer (8); must be a string"},
		{[]string{"TFIELDS =                    1", "TFORM1  = '1D'", "TDIM1   = '2,2'"}, "HDU 2: TDIM1 = '2,2': must look like (n1,n2,...)"},
	}
	for _, tt := range tests {
		_, err := build(tt.cards...).Table()
		if err == nil || err.Error() != tt.want {
			t.Errorf("%v: err = %v\nwant %q", tt.cards, err, tt.want)
		}
	}
	// A table with no TTYPE is legal FITS: the column has no name.
	tab, err := build("TFIELDS =                    1", "TFORM1  = '1D'").Table()
	if err != nil || tab.Columns[0].Name != "" {
		t.Errorf("no TTYPE: %v, %+v", err, tab)
	}
}

func TestImageRoundTrip(t *testing.T) {
	data := []float64{1, 2, 3, 4, 5, 6.5}
	var buf bytes.Buffer
	w := NewWriter(&buf)
	if err := w.WriteImage([]int{3, 2}, data, []Card{{Key: "BUNIT", Value: "Jy/pixel"}}); err != nil {
		t.Fatal(err)
	}
	if err := w.WriteImage([]int{2}, []float64{7, 8}, nil); err != nil {
		t.Fatal(err)
	}
	f, err := Parse(buf.Bytes())
	if err != nil {
		t.Fatal(err)
	}
	got, err := f.HDUs[0].Float64Image()
	if err != nil || !reflect.DeepEqual(got, data) {
		t.Errorf("image = %v, %v", got, err)
	}
	if f.HDUs[1].Kind != Image || !reflect.DeepEqual(f.HDUs[1].Axes, []int{2}) {
		t.Errorf("extension: %+v", f.HDUs[1])
	}
	path := filepath.Join(t.TempDir(), "img.fits")
	os.WriteFile(path, buf.Bytes(), 0o644)
	fitstest.Verify(t, path)
	if err := w.WriteImage([]int{2, 2}, data, nil); err == nil {
		t.Error("wrong data length: no error")
	}
	if err := NewWriter(&buf).WriteImage(nil, nil, []Card{{Key: "NAXIS1", Value: 3}}); err == nil {
		t.Error("reserved extra card: no error")
	}
}

func TestWriteTableErrors(t *testing.T) {
	for _, c := range []ColumnSpec{
		{Name: "A", Type: 'I', Data: []int{40000}},
		{Name: "A", Type: 'J', Data: []float64{1}},
		{Name: "A", Type: 'D', Data: []float64{1, 2}},
		{Name: "A", Type: 'A', Repeat: 2, Data: []string{"abc"}},
		{Name: "A", Type: 'E', Data: []float64{1e300}},
		{Name: "A", Type: 'D', Repeat: 2, Dim: []int{3}, Data: []float64{1, 2}},
		{Name: "A", Type: 'X', Data: []int{1}},
	} {
		var buf bytes.Buffer
		w := NewWriter(&buf)
		w.WriteImage(nil, nil, nil)
		if err := w.WriteTable("T", 1, []ColumnSpec{c}, nil); err == nil {
			t.Errorf("%+v: no error", c)
		}
	}
}
