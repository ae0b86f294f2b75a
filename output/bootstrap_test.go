package output

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"vcz/io/fitsfile/fitstest"
	"vcz/io/fitsimage"
)

// TestWriteBootstrap writes the maps of a bootstrap beside a fixed result and reads them back:
// the world coordinates and the provenance are those of the image (the same cards in the same
// order, then the bootstrap's), the values come back, and fitsverify (HEASARC's FITS
// checker) finds nothing to report.
func TestWriteBootstrap(t *testing.T) {
	r := fixedRun(t)
	dir := t.TempDir()
	out := filepath.Join(dir, "rec.fits")
	o := Outputs{NoPlots: true}
	if _, err := o.Write(out, r); err != nil {
		t.Fatal(err)
	}
	n := r.Result.Grid.N
	m := BootstrapMaps{Mean: make([]float64, n*n), Std: make([]float64, n*n), Significance: make([]float64, n*n),
		Replicates: 20, Good: 19, NotConverged: 2, Seed: 3, Unit: "exposure", Units: 12, Aligned: true}
	for i := range m.Mean {
		m.Mean[i] = r.Result.Image[i]
		m.Std[i] = 0.1*r.Result.Image[i] + 1e-6
		m.Significance[i] = m.Mean[i] / m.Std[i]
	}
	p, err := o.WriteBootstrap(out, r, m)
	if err != nil {
		t.Fatal(err)
	}
	if p.PNG != filepath.Join(dir, "rec-boot.png") {
		t.Errorf("PNG %q", p.PNG)
	}
	if _, err := os.Stat(p.PNG); err != nil {
		t.Error(err)
	}
	main, err := fitsimage.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range []struct {
		path string
		data []float64
	}{{p.Mean, m.Mean}, {p.Std, m.Std}, {p.Significance, m.Significance}} {
		im, err := fitsimage.ReadFile(f.path)
		if err != nil {
			t.Fatal(err)
		}
		if im.NX != n || im.NY != n || im.Pixel != main.Pixel || im.RA != main.RA || im.Dec != main.Dec || im.HasRADec != main.HasRADec {
			t.Errorf("%s: grid or coordinates differ from the image's", f.path)
		}
		for i, v := range f.data {
			if im.Data[i] != v {
				t.Fatalf("%s: pixel %d is %g, want %g", f.path, i, im.Data[i], v)
			}
		}
		// The image's cards (BUNIT and the normalisation comment aside) come first, in order.
		j := 0
		for _, c := range main.Cards {
			if c.Key == "BUNIT" || c.Key == "COMMENT" {
				continue
			}
			for j < len(im.Cards) && im.Cards[j] != c {
				j++
			}
			if j == len(im.Cards) {
				t.Errorf("%s: card %s = %v of the image is missing or out of order", f.path, c.Key, c.Value)
				break
			}
		}
		found := false
		for _, c := range im.Cards {
			if c.Key == "BOOTK" {
				found = c.Value == 20
			}
		}
		if !found {
			t.Errorf("%s: no BOOTK = 20 card", f.path)
		}
		// The significance map says from how many replicates its standard deviation comes,
		// and so that mean/std follows Student's t with one degree of freedom fewer.
		var text []string
		for _, c := range im.Cards {
			if v, ok := c.Value.(string); ok && c.Key == "COMMENT" {
				text = append(text, v)
			}
		}
		all := strings.Join(text, " ")
		said := strings.Contains(all, "std estimated from 19 replicates") && strings.Contains(all, "Student's t with 18 degrees of freedom")
		if said != (f.path == p.Significance) {
			t.Errorf("%s: comment on the replicates behind the standard deviation: %v", f.path, said)
		}
		fitstest.Verify(t, f.path)
	}
	// The preview's subtitle names the contour levels as mean/σ and the replicates of σ.
	if s := bootstrapSubtitle(m); !strings.Contains(s, "mean/σ 3 (white), 5 (red)") || !strings.Contains(s, "σ estimated from 19 replicates") {
		t.Errorf("subtitle %q", s)
	}
}
