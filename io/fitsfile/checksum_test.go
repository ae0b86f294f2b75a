package fitsfile

import (
	"bytes"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"vcz/io/fitsfile/fitstest"
)

// TestChecksum writes images with checksums and checks them three ways: the ones'
// complement sum of every HDU is −0, as the FITS checksum convention defines (Seaman, Pence
// & Rots 2002, sect. 3), and DATASUM is the sum of the data unit; fitsverify (HEASARC), which
// verifies both keywords, reports nothing; astropy.io.fits, opening with checksum=True,
// recomputes both and does not warn.
func TestChecksum(t *testing.T) {
	var buf bytes.Buffer
	w := NewWriter(&buf)
	w.Checksum = true
	data := make([]float64, 7*5)
	for i := range data {
		data[i] = math.Sin(float64(i)) * 1e3
	}
	data[3] = math.NaN()
	if err := w.WriteImage([]int{7, 5}, data, []Card{{Key: "OBJECT", Value: "Orrin-A"}, {Key: "NOTE", Value: LongString(strings.Repeat("long ", 30))}}); err != nil {
		t.Fatal(err)
	}
	if err := w.WriteImage([]int{3, 2, 2}, []float64{1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12}, nil); err != nil {
		t.Fatal(err)
	}
	f, err := Parse(buf.Bytes())
	if err != nil {
		t.Fatal(err)
	}
	raw := buf.Bytes()
	for i, h := range f.HDUs {
		end := int64(len(raw))
		if i+1 < len(f.HDUs) {
			end = f.HDUs[i+1].Offset
		}
		if s := sumBytes(0, raw[h.Offset:end]); s != 0xffffffff {
			t.Errorf("HDU %d: sum %#x, want 0xffffffff (−0)", i+1, s)
		}
		c, ok := h.Header.Lookup("DATASUM")
		hdrEnd := h.Offset + int64(len(headerBytes(t, raw[h.Offset:end])))
		if want := strconv.FormatUint(uint64(sumBytes(0, raw[hdrEnd:end])), 10); !ok || c.Value != want {
			t.Errorf("HDU %d: DATASUM %v, want %s", i+1, c.Value, want)
		}
	}
	path := filepath.Join(t.TempDir(), "sums.fits")
	if err := os.WriteFile(path, raw, 0o644); err != nil {
		t.Fatal(err)
	}
	fitstest.Verify(t, path)
	out := string(fitstest.RunPython(t, "testdata/checksum.py", path))
	if strings.Count(out, "\n") != 2 {
		t.Errorf("astropy: %q", out)
	}
	// A changed pixel breaks the sum: fitsverify must say so.
	raw[len(raw)-2880+5] ^= 1
	if err := os.WriteFile(path, raw, 0o644); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(strings.ToLower(verifyOutput(t, path)), "checksum") {
		t.Error("fitsverify did not notice a changed byte")
	}
}

// headerBytes returns the header blocks at the start of hdu.
func headerBytes(t *testing.T, hdu []byte) []byte {
	t.Helper()
	for p := 0; p+80 <= len(hdu); p += 80 {
		if strings.TrimRight(string(hdu[p:p+8]), " ") == "END" {
			n := (p/BlockSize + 1) * BlockSize
			return hdu[:n]
		}
	}
	t.Fatal("no END card")
	return nil
}

// verifyOutput runs fitsverify and returns what it printed, whatever it found (Verify,
// run before on the same machine, has checked that the tool is there).
func verifyOutput(t *testing.T, path string) string {
	t.Helper()
	out, _ := exec.Command("fitsverify", path).CombinedOutput()
	return string(out)
}

// TestHistoryWordBreak checks that a long HISTORY text continues on further HISTORY cards
// broken between words (each card holds 72 characters of text after its keyword, FITS
// standard 4.0 sect. 4.4.2.4), and that a word longer than a card is cut where it must be.
func TestHistoryWordBreak(t *testing.T) {
	text := "weight path: weight=2500 chi2r=1.5 R=2 iter=78 stalled, and a longer note about why the run stopped there"
	buf, err := encodeCards(nil, Card{Key: "HISTORY", Comment: text})
	if err != nil {
		t.Fatal(err)
	}
	var parts []string
	for p := 0; p < len(buf); p += 80 {
		card := string(buf[p : p+80])
		if card[:8] != "HISTORY " {
			t.Fatalf("card %q", card)
		}
		parts = append(parts, strings.TrimRight(card[8:], " "))
	}
	if len(parts) != 2 || strings.Join(parts, " ") != text || strings.HasSuffix(parts[0], " ") {
		t.Errorf("cards %q", parts)
	}
	long := strings.Repeat("x", 100)
	buf, _ = encodeCards(nil, Card{Key: "HISTORY", Comment: long})
	if len(buf) != 160 || string(buf[8:80]) != strings.Repeat("x", 72) || strings.TrimRight(string(buf[88:160]), " ") != strings.Repeat("x", 28) {
		t.Errorf("unbroken word: %q", buf)
	}
}
