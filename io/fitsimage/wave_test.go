package fitsimage

import (
	"encoding/json"
	"math"
	"path/filepath"
	"slices"
	"testing"

	"vcz/io/fitsfile/fitstest"
)

// TestSpectralAxis writes cubes with evenly and unevenly spaced wavelengths and checks
// them with fitsverify (0 warnings, 0 errors), with astropy.wcs (the world coordinate of
// each plane along axis 3, FITS WCS Paper III, Greisen et al. 2006, A&A 446, 747: linear
// WAVE in m, and WAVE-TAB through the table the header names), and by reading them back.
func TestSpectralAxis(t *testing.T) {
	for _, tc := range []struct {
		name  string
		wave  []float64
		ctype string
	}{
		{"linear", []float64{1.6e-6, 1.7e-6, 1.8e-6, 1.9e-6}, "WAVE"},
		{"tabulated", []float64{1.51e-6, 1.6e-6, 1.82e-6, 2.3e-6}, "WAVE-TAB"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			im := testImage(6, 4, len(tc.wave))
			im.Wave = tc.wave
			path := filepath.Join(t.TempDir(), "cube.fits")
			if err := WriteFile(path, im); err != nil {
				t.Fatal(err)
			}
			fitstest.Verify(t, path)
			back, err := ReadFile(path)
			if err != nil {
				t.Fatal(err)
			}
			for k, w := range back.Wave {
				if math.Abs(w-tc.wave[k]) > 1e-12*tc.wave[k] {
					t.Errorf("read back: plane %d at %g m, wrote %g m", k+1, w, tc.wave[k])
				}
			}
			if len(back.Wave) != len(tc.wave) || !slices.Equal(back.Data, im.Data) {
				t.Errorf("read back %d wavelengths and %d values", len(back.Wave), len(back.Data))
			}
			var got struct {
				Wave  []float64
				Unit  string
				Ctype string
			}
			if err := json.Unmarshal(fitstest.RunPython(t, "../../testdata/fitsimage/astropy_wave.py", path), &got); err != nil {
				t.Fatal(err)
			}
			if got.Ctype != tc.ctype || got.Unit != "m" || len(got.Wave) != len(tc.wave) {
				t.Fatalf("astropy: CTYPE3 %q, unit %q, %d planes", got.Ctype, got.Unit, len(got.Wave))
			}
			for k, w := range got.Wave {
				if math.Abs(w-tc.wave[k]) > 1e-9*tc.wave[k] {
					t.Errorf("astropy: plane %d at %g m, wrote %g m", k+1, w, tc.wave[k])
				}
			}
		})
	}
	bad := testImage(6, 4, 3)
	bad.Wave = []float64{2e-6, 1.9e-6, 2.1e-6}
	if err := WriteFile(filepath.Join(t.TempDir(), "bad.fits"), bad); err == nil {
		t.Error("decreasing wavelengths written without error")
	}
}
