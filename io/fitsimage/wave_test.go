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
			path, back := writeVerifyRead(t, im)
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

// TestTimeAxis writes cubes whose planes are epochs, evenly and unevenly spaced in MJD, and
// checks them with fitsverify and with astropy.wcs: the world coordinate of each plane along
// axis 3 is its MJD (FITS standard 4.0 sect. 9: CTYPE3 TIME or TIME-TAB in days from
// MJDREF = 0).
func TestTimeAxis(t *testing.T) {
	for _, tc := range []struct {
		name  string
		mjd   []float64
		ctype string
	}{
		{"linear", []float64{61203.5, 61204.5, 61205.5}, "TIME"},
		{"tabulated", []float64{61203.71, 61204.68, 61206.7, 61209.66}, "TIME-TAB"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			im := testImage(6, 4, len(tc.mjd))
			im.Time = tc.mjd
			path, back := writeVerifyRead(t, im)
			if len(back.Time) != len(tc.mjd) || back.Wave != nil {
				t.Fatalf("read back %d times, %d wavelengths", len(back.Time), len(back.Wave))
			}
			for k, x := range back.Time {
				if math.Abs(x-tc.mjd[k]) > 1e-9 {
					t.Errorf("read back: plane %d at MJD %.9f, wrote %.9f", k+1, x, tc.mjd[k])
				}
			}
			var got struct {
				Wave  []float64 // the world coordinate of axis 3, whatever it is
				Unit  string
				Ctype string
			}
			if err := json.Unmarshal(fitstest.RunPython(t, "../../testdata/fitsimage/astropy_wave.py", path), &got); err != nil {
				t.Fatal(err)
			}
			if got.Ctype != tc.ctype || got.Unit != "d" || len(got.Wave) != len(tc.mjd) {
				t.Fatalf("astropy: CTYPE3 %q, unit %q, %d planes", got.Ctype, got.Unit, len(got.Wave))
			}
			for k, x := range got.Wave {
				if math.Abs(x-tc.mjd[k]) > 1e-6 {
					t.Errorf("astropy: plane %d at MJD %.6f, wrote %.6f", k+1, x, tc.mjd[k])
				}
			}
		})
	}
}

// writeVerifyRead writes im to a temporary file, checks it with fitsverify and reads it
// back.
func writeVerifyRead(t *testing.T, im *Image) (string, *Image) {
	t.Helper()
	path := filepath.Join(t.TempDir(), "cube.fits")
	if err := WriteFile(path, im); err != nil {
		t.Fatal(err)
	}
	fitstest.Verify(t, path)
	back, err := ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return path, back
}
