package fitsfile

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"vcz/io/fitsfile/fitstest"
)

// longText is a value of 250 characters with quotes (doubled when written),
// runs of blanks and an ampersand inside, the hard cases of the long-string
// convention.
var longText = strings.Repeat("it's a long text & more  ", 10)

// TestLongStringCards checks the layout of a long string against the
// long-string convention of the FITS standard 4.0 (Chen et al. 2018, sect.
// 4.2.1.2; recalled from memory): the first piece on the keyword's card,
// the others on CONTINUE cards with blanks in columns 9-10 and the quote in
// column 11, every piece but the last ending in '&' before its closing
// quote, every record 80 columns; and that Parse joins the pieces back.
func TestLongStringCards(t *testing.T) {
	got, err := encodeCards(nil, Card{Key: "WARN1", Value: LongString(longText), Comment: "a comment"})
	if err != nil {
		t.Fatal(err)
	}
	if len(got)%cardSize != 0 || len(got)/cardSize < 4 {
		t.Fatalf("%d bytes: not several whole cards", len(got))
	}
	n := len(got) / cardSize
	for i := 0; i < n; i++ {
		rec := string(got[i*cardSize : (i+1)*cardSize])
		prefix := "WARN1   = '"
		if i > 0 {
			prefix = "CONTINUE  '"
		}
		if !strings.HasPrefix(rec, prefix) {
			t.Errorf("card %d %q does not start with %q", i+1, rec, prefix)
		}
		body := strings.TrimRight(rec, " ")
		if i < n-1 && !strings.HasSuffix(body, "&'") {
			t.Errorf("card %d %q does not end in &'", i+1, rec)
		}
		if i == n-1 && !strings.HasSuffix(body, "' / a comment") {
			t.Errorf("last card %q lacks the comment", rec)
		}
		// Quotes inside the value come in pairs: an odd run would end the string early.
		inner := strings.TrimSuffix(strings.TrimSuffix(body[len(prefix):], " / a comment"), "'")
		for _, run := range strings.FieldsFunc(inner, func(r rune) bool { return r != '\'' }) {
			if len(run)%2 != 0 {
				t.Errorf("card %d %q splits a doubled quote", i+1, rec)
			}
		}
	}
	f, err := Parse(headerWith(got))
	if err != nil {
		t.Fatal(err)
	}
	v, ok, err := f.HDUs[0].Header.String("WARN1")
	if !ok || err != nil || v != strings.TrimRight(longText, " ") {
		t.Fatalf("read back %q, %v, %v; want %q", v, ok, err, longText)
	}
	if c, _ := f.HDUs[0].Header.Lookup("WARN1"); c.Comment != "a comment" {
		t.Errorf("comment %q", c.Comment)
	}
	if f.HDUs[0].Header.Has(continueKey) {
		t.Error("a CONTINUE card was left in the header")
	}
}

// headerWith returns a primary header of no data holding the given encoded cards.
func headerWith(cards []byte) []byte {
	var b []byte
	b = appendPadded(b, "SIMPLE  =                    T")
	b = appendPadded(b, "BITPIX  =                    8")
	b = appendPadded(b, "NAXIS   =                    0")
	b = append(b, cards...)
	b = appendPadded(b, "END")
	for len(b)%BlockSize != 0 {
		b = append(b, ' ')
	}
	return b
}

// Every cut of a value with a quote near the end of a piece reads back intact, and a
// value that fits one card is written exactly as a string.
func TestLongStringCuts(t *testing.T) {
	for n := 60; n <= 140; n++ {
		for _, q := range []int{n - 1, n / 2, 65, 66, 67} {
			b := []byte(strings.Repeat("x", n))
			if q >= 0 && q < n {
				b[q] = '\''
			}
			text := string(b)
			enc, err := encodeCards(nil, Card{Key: "K", Value: LongString(text)})
			if err != nil {
				t.Fatal(err)
			}
			f, err := Parse(headerWith(enc))
			if err != nil {
				t.Fatalf("n=%d quote at %d: %v", n, q, err)
			}
			if v, _, _ := f.HDUs[0].Header.String("K"); v != text {
				t.Fatalf("n=%d quote at %d: read %q", n, q, v)
			}
		}
	}
	short, _ := encodeCards(nil, Card{Key: "K", Value: LongString("it's short"), Comment: "c"})
	plain, _ := encodeCards(nil, Card{Key: "K", Value: "it's short", Comment: "c"})
	if !bytes.Equal(short, plain) {
		t.Errorf("short LongString %q differs from the string card %q", short, plain)
	}
	if _, err := encodeCards(nil, Card{Key: "K", Value: LongString(strings.Repeat("é", 40))}); err == nil {
		t.Error("non-ASCII long string: no error")
	}
}

// An '&' at the end of a string not followed by CONTINUE is part of the value, and a
// CONTINUE card after a value without '&' is kept as a card of its own.
func TestLongStringReaderEdges(t *testing.T) {
	var cards []byte
	cards = appendPadded(cards, "A       = 'ends with &'")
	cards = appendPadded(cards, "B       = 'plain'")
	cards = appendPadded(cards, "CONTINUE  'stray'")
	f, err := Parse(headerWith(cards))
	if err != nil {
		t.Fatal(err)
	}
	h := f.HDUs[0].Header
	if v, _, _ := h.String("A"); v != "ends with &" {
		t.Errorf("A = %q", v)
	}
	if v, _, _ := h.String("B"); v != "plain" {
		t.Errorf("B = %q", v)
	}
	if !h.Has(continueKey) {
		t.Error("the stray CONTINUE card was dropped")
	}
	var bad []byte
	bad = appendPadded(bad, "A       = 'open &'")
	bad = appendPadded(bad, "CONTINUE  'no closing quote")
	if _, err := Parse(headerWith(bad)); err == nil || !strings.Contains(err.Error(), "closing quote") {
		t.Errorf("unclosed CONTINUE string: %v", err)
	}
}

// TestLongStringIndependentReaders writes long strings, checks the file with fitsverify
// (0 warnings, 0 errors) and reads the values back with astropy.io.fits, which joins
// CONTINUE cards itself.
func TestLongStringIndependentReaders(t *testing.T) {
	vals := map[string]string{
		"WARN1": longText,
		"WARN2": "chi2r = 3.1 is 3.4 times its expected value 0.911: the image does not fit the data; try a lower -weight, another -reg, a larger -fov, or check the error bars",
		"SHORT": "fits on one card",
		// The last piece leaves no room for the comment, which gets a card of its own.
		"WARN3": strings.Repeat("y", 127),
	}
	var buf bytes.Buffer
	var cards []Card
	for _, k := range []string{"SHORT", "WARN1", "WARN2", "WARN3"} {
		cards = append(cards, Card{Key: k, Value: LongString(vals[k]), Comment: "test value"})
	}
	if err := NewWriter(&buf).WriteImage([]int{2, 2}, []float64{1, 2, 3, 4}, cards); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(t.TempDir(), "long.fits")
	if err := os.WriteFile(path, buf.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	fitstest.Verify(t, path)
	var got map[string]any
	if err := json.Unmarshal(fitstest.RunPython(t, "testdata/dump_header.py", path), &got); err != nil {
		t.Fatal(err)
	}
	for k, want := range vals {
		if got[k] != strings.TrimRight(want, " ") {
			t.Errorf("astropy %s = %q, want %q", k, got[k], want)
		}
	}
	// LONGSTRN once, after the short string and before the first continued one.
	if got["LONGSTRN"] != "OGIP 1.0" || bytes.Count(buf.Bytes(), []byte("LONGSTRN=")) != 1 ||
		bytes.Index(buf.Bytes(), []byte("LONGSTRN=")) > bytes.Index(buf.Bytes(), []byte("WARN1   =")) ||
		bytes.Index(buf.Bytes(), []byte("LONGSTRN=")) < bytes.Index(buf.Bytes(), []byte("SHORT   =")) {
		t.Errorf("LONGSTRN = %v, not once before the first long string", got["LONGSTRN"])
	}
	f, err := Parse(buf.Bytes())
	if err != nil {
		t.Fatal(err)
	}
	for k, want := range vals {
		if c, _ := f.HDUs[0].Header.Lookup(k); c.Value != strings.TrimRight(want, " ") || c.Comment != "test value" {
			t.Errorf("Parse %s = %q / %q", k, c.Value, c.Comment)
		}
	}
}
