package workflow

import (
	"fmt"
	"math"
	"path/filepath"
	"testing"

	"vcz/io/oifits"
	"vcz/recon"
	"vcz/recon/model"
	"vcz/recon/simulate"
	"vcz/runspec"
)

// Three nights observed with different hour angles and channels choose different grids on
// their own; CommonGrid gives all three the finest pixel and a friendly number of pixels that
// covers the widest field.
func TestCommonGridCoversEveryEpoch(t *testing.T) {
	dir := t.TempDir()
	var epochs []*Epoch
	type own struct {
		n        int
		pix, fov float64
	}
	var owns []own
	for k, c := range []struct {
		ha     []float64
		lo, hi int
	}{{[]float64{-1.5, 0, 1.5}, 0, 2}, {[]float64{0, 0.5}, 6, 8}, {[]float64{-3, -2, -1}, 3, 5}} {
		p, _ := simulate.Demo()
		p.MJD = 61203 + float64(k)
		p.HourAngles = c.ha
		p.Wavelengths, p.Bandwidths = p.Wavelengths[c.lo:c.hi], p.Bandwidths[c.lo:c.hi]
		m, err := model.ParseCompact("gauss:fwhm=2.5;point:x=1.2,y=0.6,flux=0.3")
		if err != nil {
			t.Fatal(err)
		}
		f, _, err := simulate.Run(p, simulate.ModelSky{Model: m})
		if err != nil {
			t.Fatal(err)
		}
		path := filepath.Join(dir, fmt.Sprintf("night%d.oifits", k))
		if err := oifits.WriteFile(path, f); err != nil {
			t.Fatal(err)
		}
		e := &Epoch{Name: fmt.Sprint(k), Files: []string{path}}
		_, d, err := ReadData(e.Files, e.Spec.Selection())
		if err != nil {
			t.Fatal(err)
		}
		ch, err := recon.ChooseGrid(d, recon.GridOptions{})
		if err != nil {
			t.Fatal(err)
		}
		owns = append(owns, own{ch.N, ch.Pixel, float64(ch.N) * ch.Pixel})
		epochs = append(epochs, e)
	}
	if owns[0] == owns[1] && owns[1] == owns[2] {
		t.Fatalf("the nights choose the same grid on their own (%+v): the test shows nothing", owns[0])
	}
	if err := CommonGrid(epochs); err != nil {
		t.Fatal(err)
	}
	n, pix := epochs[0].Spec.Grid, epochs[0].Spec.Pixel
	for _, e := range epochs {
		if e.Spec.Grid != n || e.Spec.Pixel != pix || e.Spec.FOV != 0 {
			t.Errorf("epoch %s: %d pixels of %g rad (fov %g), epoch 0 has %d of %g", e.Name, e.Spec.Grid, e.Spec.Pixel, e.Spec.FOV, n, pix)
		}
	}
	if !recon.Friendly(n) || n > 256 {
		t.Errorf("common grid %d pixels: want even, factors 2, 3, 5, at most 256", n)
	}
	for k, o := range owns {
		if pix > o.pix*(1+1e-12) && n < 256 {
			t.Errorf("night %d: own pixel %g rad is finer than the common %g", k, o.pix, pix)
		}
		if float64(n)*pix < o.fov*(1-1e-12) {
			t.Errorf("night %d: own field %g rad is wider than the common %g", k, o.fov, float64(n)*pix)
		}
	}
	t.Logf("own grids %+v; common %d pixels of %.4g mas", owns, n, pix/recon.Mas)
	// The options' -n is kept.
	for _, e := range epochs {
		e.Spec = runspec.Spec{Grid: 48}
	}
	if err := CommonGrid(epochs); err != nil || epochs[2].Spec.Grid != 48 || math.Abs(epochs[2].Spec.Pixel-epochs[0].Spec.Pixel) != 0 {
		t.Errorf("with -n 48: %v, grids %d and %d", err, epochs[0].Spec.Grid, epochs[2].Spec.Grid)
	}
}
