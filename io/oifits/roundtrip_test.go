package oifits

import (
	"bytes"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"testing"

	"vcz/io/fitsfile/fitstest"
)

// clearHDU zeroes the HDU numbers, which Decode sets and Encode ignores.
func clearHDU(f *File) {
	for i := range f.Arrays {
		f.Arrays[i].HDU = 0
	}
	for i := range f.Wavelengths {
		f.Wavelengths[i].HDU = 0
	}
	for i := range f.Vis2 {
		f.Vis2[i].HDU = 0
	}
	for i := range f.T3 {
		f.T3[i].HDU = 0
	}
	for i := range f.Vis {
		f.Vis[i].HDU = 0
	}
	for i := range f.Flux {
		f.Flux[i].HDU = 0
	}
}

// equalNaN compares like reflect.DeepEqual but treats NaN as equal to NaN,
// by replacing every NaN in copies with a sentinel first.
func equalNaN(a, b *File) bool {
	var ba, bb bytes.Buffer
	// Compare through the encoded form of the float bits: DeepEqual on
	// values where NaNs are replaced by a fixed sentinel.
	fa, fb := sanitize(a), sanitize(b)
	_ = ba
	_ = bb
	return reflect.DeepEqual(fa, fb)
}

const nanSentinel = -1.2345678e300

func sanitize(f *File) *File {
	g := *f
	fix := func(s []float64) []float64 {
		out := append([]float64(nil), s...)
		for i, v := range out {
			if math.IsNaN(v) {
				out[i] = nanSentinel
			}
		}
		return out
	}
	g.Vis2 = append([]Vis2(nil), f.Vis2...)
	for i := range g.Vis2 {
		g.Vis2[i].Rows = append([]Vis2Row(nil), g.Vis2[i].Rows...)
		for j := range g.Vis2[i].Rows {
			r := &g.Vis2[i].Rows[j]
			r.Data, r.Err = fix(r.Data), fix(r.Err)
		}
	}
	g.T3 = append([]T3(nil), f.T3...)
	for i := range g.T3 {
		g.T3[i].Rows = append([]T3Row(nil), g.T3[i].Rows...)
		for j := range g.T3[i].Rows {
			r := &g.T3[i].Rows[j]
			r.Amp, r.AmpErr, r.Phi, r.PhiErr = fix(r.Amp), fix(r.AmpErr), fix(r.Phi), fix(r.PhiErr)
		}
	}
	g.Vis = append([]Vis(nil), f.Vis...)
	for i := range g.Vis {
		g.Vis[i].Rows = append([]VisRow(nil), g.Vis[i].Rows...)
		for j := range g.Vis[i].Rows {
			r := &g.Vis[i].Rows[j]
			r.Amp, r.AmpErr, r.Phi, r.PhiErr = fix(r.Amp), fix(r.AmpErr), fix(r.Phi), fix(r.PhiErr)
		}
	}
	g.Flux = append([]Flux(nil), f.Flux...)
	for i := range g.Flux {
		g.Flux[i].Rows = append([]FluxRow(nil), g.Flux[i].Rows...)
		for j := range g.Flux[i].Rows {
			r := &g.Flux[i].Rows[j]
			r.Data, r.Err = fix(r.Data), fix(r.Err)
		}
	}
	return &g
}

func encodeSample(t testing.TB) []byte {
	var buf bytes.Buffer
	if err := Encode(&buf, sampleFile()); err != nil {
		t.Fatal(err)
	}
	return buf.Bytes()
}

func TestRoundTrip(t *testing.T) {
	want := sampleFile()
	data := encodeSample(t)
	got, err := Decode(bytes.NewReader(data), "sample.oifits")
	if err != nil {
		t.Fatal(err)
	}
	// Tables come back in the order Encode writes them, HDU 2 onwards.
	if got.Vis2[0].HDU != 6 || got.Flux[0].HDU != 10 || got.Wavelengths[1].HDU != 5 {
		t.Errorf("HDU numbers: vis2 %d flux %d wave %d", got.Vis2[0].HDU, got.Flux[0].HDU, got.Wavelengths[1].HDU)
	}
	clearHDU(got)
	if !equalNaN(got, want) {
		t.Errorf("round trip differs:\n got %+v\nwant %+v", got, want)
	}
	// Encoding again gives the same bytes: the writer is deterministic
	// once DATE is given.
	var again bytes.Buffer
	if err := Encode(&again, got); err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(again.Bytes(), data) {
		t.Error("second encoding differs from the first")
	}
}

func TestWriteFileFitsverify(t *testing.T) {
	path := filepath.Join(t.TempDir(), "sample.oifits")
	if err := WriteFile(path, sampleFile()); err != nil {
		t.Fatal(err)
	}
	fitstest.Verify(t, path)
	f, err := ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if f.Name != "sample.oifits" || len(f.Vis2) != 2 {
		t.Errorf("ReadFile: name %q, %d OI_VIS2", f.Name, len(f.Vis2))
	}
	// A file with only defaults in the primary header is also clean.
	g := sampleFile()
	g.Primary = Primary{}
	g.Vis2[0].DateObs = ""
	path2 := filepath.Join(t.TempDir(), "defaults.oifits")
	if err := WriteFile(path2, g); err != nil {
		t.Fatal(err)
	}
	fitstest.Verify(t, path2)
	h, err := ReadFile(path2)
	if err != nil {
		t.Fatal(err)
	}
	// MJD 60999.25 is 2025-11-20 (MJD 0 = 1858-11-17, Pence et al. 2010, sect. 9.4.1).
	if h.Vis2[0].DateObs != "2025-11-20" || h.Primary.Content != "OIFITS2" || h.Primary.Object != "MULTI" || h.Primary.Instrume != "MULTI" || h.Primary.Telescop != "KESTREL" {
		t.Errorf("defaults: DATE-OBS %q primary %+v", h.Vis2[0].DateObs, h.Primary)
	}
	if _, err := os.Stat(path2); err != nil {
		t.Fatal(err)
	}
}
