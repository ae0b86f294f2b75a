package simulate

import (
	"math"
	"path/filepath"
	"testing"

	"vcz/io/fitsfile/fitstest"
	"vcz/io/fitsimage"
)

// TestWriteModelImage: the written model image passes fitsverify, reads
// back with its grid, target position and unit flux, and as a Sky gives
// the same noiseless data as the rasterised model it came from.
func TestWriteModelImage(t *testing.T) {
	p, m := Demo()
	p = noiseless(p)
	n, pix := DefaultImageGrid(p, m)
	path := filepath.Join(t.TempDir(), "truth.fits")
	if err := WriteModelImage(path, m, n, pix, p); err != nil {
		t.Fatal(err)
	}
	fitstest.Verify(t, path)
	im, err := fitsimage.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if im.NX != n || im.NY != n || math.Abs(im.Pixel-pix) > 1e-12*pix || !im.HasRADec || math.Abs(im.RA-p.RA) > 1e-9 || math.Abs(im.Dec-p.Dec) > 1e-9 {
		t.Fatalf("read back %d×%d pixel %g RA %g Dec %g", im.NX, im.NY, im.Pixel, im.RA, im.Dec)
	}
	var s float64
	for _, v := range im.Data {
		s += v
	}
	if math.Abs(s-1) > 1e-12 {
		t.Errorf("pixels sum to %g", s)
	}
	sky, other, err := LoadSky(path)
	if err != nil || other != nil {
		t.Fatalf("LoadSky: %v", err)
	}
	fa, _, err := Run(p, sky)
	if err != nil {
		t.Fatal(err)
	}
	fb, _, err := Run(p, ImageSky{NX: n, NY: n, Pixel: pix, Data: m.Image(n, n, pix)})
	if err != nil {
		t.Fatal(err)
	}
	for i, r := range fa.Vis2[0].Rows {
		for c := range r.Data {
			if d := math.Abs(r.Data[c] - fb.Vis2[0].Rows[i].Data[c]); d > 1e-9 {
				t.Fatalf("V² from the file differs by %g", d)
			}
		}
	}
	if _, mm, err := LoadSky("ud:diameter=2"); err != nil || mm == nil {
		t.Errorf("LoadSky(inline model): %v", err)
	}
}
