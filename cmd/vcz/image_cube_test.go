package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"vcz/io/fitsfile/fitstest"
	"vcz/io/fitsimage"
	"vcz/io/oifits"
	"vcz/output"
	"vcz/recon/model"
	"vcz/recon/simulate"
)

// TestImageCube runs `vcz image -channels 3` on simulated data of 6 channels and checks
// the outputs: a FITS cube of 3 planes that fitsverify passes, whose spectral axis astropy
// reads as the mean wavelengths of the channel groups (FITS WCS Paper III, Greisen et al.
// 2006, A&A 446, 747) and which carries each plane's χ²ᵣ; the montage, the CSV of the planes
// and the photocentre plot; no spectrum, since V² and closure phases are normalised. Bad
// groupings exit with status 2 and one line naming the option.
func TestImageCube(t *testing.T) {
	dir := t.TempDir()
	p, _ := simulate.Demo()
	p.HourAngles = []float64{-1.5, 0, 1.5}
	p.Wavelengths = p.Wavelengths[:6]
	p.Bandwidths = p.Bandwidths[:6]
	m, err := model.ParseCompact("gauss:fwhm=2.5;point:x=1.2,y=0.6,flux=0.3")
	if err != nil {
		t.Fatal(err)
	}
	f, _, err := simulate.Run(p, simulate.ModelSky{Model: m})
	if err != nil {
		t.Fatal(err)
	}
	in := filepath.Join(dir, "night.oifits")
	if err := oifits.WriteFile(in, f); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "cube.fits")
	var stdout, stderr bytes.Buffer
	if code := run([]string{"image", "-channels", "3", "-n", "32", "-iter", "40", "-quiet", "-json", "-o", out, in}, &stdout, &stderr); code != 0 {
		t.Fatalf("exit %d\n%s", code, stderr.String())
	}
	var sum output.CubeSummary
	if err := json.Unmarshal(stdout.Bytes(), &sum); err != nil {
		t.Fatalf("%v\n%s", err, stdout.String())
	}
	if len(sum.Planes) != 3 || sum.Outputs.Spectrum != "" || sum.Outputs.SpectrumNote == "" {
		t.Errorf("summary %+v", sum)
	}
	fitstest.Verify(t, out)
	im, err := fitsimage.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	if im.Planes != 3 || len(im.Wave) != 3 {
		t.Fatalf("cube of %d planes, %d wavelengths", im.Planes, len(im.Wave))
	}
	cards := map[string]any{}
	for _, c := range im.Cards {
		cards[c.Key] = c.Value
	}
	for k, pl := range sum.Planes {
		// Each group holds two adjacent channels: its wavelength is their mean, to the
		// single precision of EFF_WAVE (format E in OI_WAVELENGTH: Pauls et al. 2005, PASP
		// 117, 1255, table 3).
		want := (p.Wavelengths[2*k] + p.Wavelengths[2*k+1]) / 2
		if d := im.Wave[k] - want; d > 1e-7*want || d < -1e-7*want {
			t.Errorf("plane %d at %g m, want %g m", k+1, im.Wave[k], want)
		}
		if c, ok := cards["CHI2R00"+string(rune('1'+k))].(float64); !ok || c != pl.Chi2r {
			t.Errorf("plane %d: CHI2R card %v, summary %g", k+1, cards["CHI2R00"+string(rune('1'+k))], pl.Chi2r)
		}
	}
	var wcs struct{ Wave []float64 }
	if err := json.Unmarshal(fitstest.RunPython(t, "../../testdata/fitsimage/astropy_wave.py", out), &wcs); err != nil {
		t.Fatal(err)
	}
	for k, w := range wcs.Wave {
		if d := w - im.Wave[k]; d > 1e-9*w || d < -1e-9*w {
			t.Errorf("astropy: plane %d at %g m, file %g m", k+1, w, im.Wave[k])
		}
	}
	for _, p := range []string{sum.Outputs.Montage, sum.Outputs.Moments} {
		if st, err := os.Stat(p); err != nil || st.Size() == 0 {
			t.Errorf("%s: %v", p, err)
		}
	}
	fc, err := os.Open(sum.Outputs.CSV)
	if err != nil {
		t.Fatal(err)
	}
	defer fc.Close()
	rows, err := csv.NewReader(fc).ReadAll()
	if err != nil || len(rows) != 4 || rows[0][0] != "plane" {
		t.Errorf("CSV: %v, %d rows", err, len(rows))
	}

	for _, bad := range [][]string{{"-channels", "7"}, {"-channels", "1-2,2-3"}, {"-channels", "5-9"}} {
		stderr.Reset()
		code := run(append(append([]string{"image"}, bad...), "-n", "32", "-quiet", "-o", filepath.Join(dir, "bad.fits"), in), &stdout, &stderr)
		if code != 2 {
			t.Errorf("%v: exit %d (%s)", bad, code, stderr.String())
		}
		if msg := stderr.String(); !strings.Contains(msg, "-channels") || strings.Count(strings.TrimSpace(msg), "\n") > 0 {
			t.Errorf("%v: message %q", bad, msg)
		}
		if _, err := os.Stat(filepath.Join(dir, "bad.fits")); err == nil {
			t.Errorf("%v: output written", bad)
		}
	}
}

// TestImageStarEnv runs `vcz image -channels all -star point` on simulated data and checks
// that the environment image passes fitsverify and carries the star's share and the
// indices; a run cut short by -iter 5 gives its warnings on stderr, in the JSON summary
// and in NWARN/WARNn (checkWarningHeader) and exits with status 1 under -strict; -star
// without -channels exits with status 2 and one line naming -star.
func TestImageStarEnv(t *testing.T) {
	dir := t.TempDir()
	p, _ := simulate.Demo()
	p.HourAngles = []float64{-1.5, 0, 1.5}
	p.Wavelengths = p.Wavelengths[:4]
	p.Bandwidths = p.Bandwidths[:4]
	m, err := model.ParseCompact("point:flux=1;gauss:fwhm=3,x=1,flux=0.8")
	if err != nil {
		t.Fatal(err)
	}
	f, _, err := simulate.Run(p, simulate.ModelSky{Model: m})
	if err != nil {
		t.Fatal(err)
	}
	in := filepath.Join(dir, "se.oifits")
	if err := oifits.WriteFile(in, f); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "env.fits")
	var stdout, stderr bytes.Buffer
	if code := run([]string{"image", "-channels", "all", "-star", "point", "-n", "32", "-iter", "40", "-quiet", "-o", out, in}, &stdout, &stderr); code != 0 {
		t.Fatalf("exit %d\n%s", code, stderr.String())
	}
	fitstest.Verify(t, out)
	im, err := fitsimage.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	keys := map[string]bool{}
	for _, c := range im.Cards {
		keys[c.Key] = true
	}
	for _, k := range []string{"STARF0", "STARIDX", "ENVIDX", "LAMBDA0", "STARF0L", "STARF0U", "ENVIDXL", "ENVIDXU", "NWARN"} {
		if !keys[k] {
			t.Errorf("no %s card", k)
		}
	}
	// The summary stays on stdout with -quiet, and writes no NaN.
	if !strings.Contains(stdout.String(), "Star:") || strings.Contains(stdout.String(), "NaN") {
		t.Errorf("summary:\n%s", stdout.String())
	}
	// A run cut short warns: "warning:" lines on stderr, the list in the JSON summary and
	// WARNn in the header, and -strict exits with status 1 with the outputs written.
	stdout.Reset()
	stderr.Reset()
	short := filepath.Join(dir, "short.fits")
	if code := run([]string{"image", "-channels", "all", "-star", "point", "-n", "32", "-iter", "5", "-quiet", "-json", "-strict", "-o", short, in}, &stdout, &stderr); code != exitFailure {
		t.Fatalf("-iter 5 -strict: exit %d\n%s", code, stderr.String())
	}
	var sum struct {
		Warnings []string `json:"warnings"`
	}
	if err := json.Unmarshal(stdout.Bytes(), &sum); err != nil || len(sum.Warnings) == 0 {
		t.Fatalf("JSON warnings %q (%v):\n%s", sum.Warnings, err, stdout.String())
	}
	if n := strings.Count(stderr.String(), "warning: "); n != len(sum.Warnings) || !strings.Contains(stderr.String(), "limit of 5 iterations") {
		t.Errorf("%d warning lines for %d warnings:\n%s", n, len(sum.Warnings), stderr.String())
	}
	checkWarningHeader(t, short, sum.Warnings)
	stderr.Reset()
	if code := run([]string{"image", "-star", "point", "-n", "32", "-quiet", "-o", filepath.Join(dir, "bad.fits"), in}, &stdout, &stderr); code != 2 ||
		!strings.Contains(stderr.String(), "-star") || strings.Count(strings.TrimSpace(stderr.String()), "\n") > 0 {
		t.Errorf("-star without -channels: exit %d, %q", code, stderr.String())
	}
}
