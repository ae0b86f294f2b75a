package main

import (
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"vcz/io/fitsimage"
)

// TestSameImageAnyWorkers checks the rule that results do not depend on the machine:
// the same settings give the same pixels, bit for bit, with 1, 2 or 3 transform workers,
// from image, from a batch epoch (which chooses its own worker count) and from compare,
// whether it runs one regularizer or two side by side.
func TestSameImageAnyWorkers(t *testing.T) {
	dir := t.TempDir()
	data := writeDemoData(t, dir)
	fast := []string{"-n", "32", "-iter", "40", "-starts", "1", "-reg", "tv", "-weight", "auto"}
	run := func(args ...string) {
		t.Helper()
		if _, errs, code := runCmd(t, args...); code != exitOK {
			t.Fatalf("%q: exit %d: %s", args, code, errs)
		}
	}
	same := func(what string, a, b []float64) {
		t.Helper()
		if len(a) != len(b) {
			t.Fatalf("%s: %d and %d pixels", what, len(a), len(b))
		}
		for i := range a {
			if math.Float64bits(a[i]) != math.Float64bits(b[i]) {
				t.Fatalf("%s: pixel %d differs: %v and %v", what, i, a[i], b[i])
			}
		}
	}
	var ref []float64
	for _, w := range []string{"1", "2", "3"} {
		out := filepath.Join(dir, "w"+w+".fits")
		run(append(append([]string{"image", "-quiet", "-no-png", "-no-plots", "-o", out, "-workers", w}, fast...), data)...)
		img, _, _ := readImage(t, out)
		if ref == nil {
			ref = img
			continue
		}
		same("image -workers "+w+" against 1", ref, img)
	}
	b := filepath.Join(dir, "batch")
	run(append(append([]string{"batch", "-quiet", "-out", b}, fast...), data)...)
	s := readSummary(t, filepath.Join(b, "summary.json"))
	img, _, _ := readImage(t, filepath.Join(b, s.Rows[0].FITS))
	same("batch epoch against image", ref, img)
	one, two := filepath.Join(dir, "one"), filepath.Join(dir, "two")
	rest := []string{"-n", "32", "-iter", "40", "-starts", "1"}
	compareOn(t, data, one, append([]string{"-reg", "tv"}, rest...)...)
	compareOn(t, data, two, append([]string{"-reg", "tv,mem", "-parallel", "2"}, rest...)...)
	a, _, _ := readImage(t, filepath.Join(one, "tv.fits"))
	c, _, _ := readImage(t, filepath.Join(two, "tv.fits"))
	same("compare tv alone against tv beside mem", a, c)
}

// TestRerun checks that a result made again from its own header (image -rerun) has the
// same pixels bit for bit and the same options, that options cannot be changed on the
// way, and that a data file changed since (by SHA-256, FIPS 180-4) is refused.
func TestRerun(t *testing.T) {
	dir := t.TempDir()
	data := writeDemoData(t, dir)
	first := filepath.Join(dir, "first.fits")
	args := []string{"image", "-quiet", "-no-plots", "-o", first, "-n", "32", "-iter", "40", "-starts", "1", "-reg", "mem", "-seed", "3", data}
	if _, errs, code := runCmd(t, args...); code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	again := filepath.Join(dir, "again.fits")
	if _, errs, code := runCmd(t, "image", "-quiet", "-no-plots", "-rerun", first, "-o", again); code != exitOK {
		t.Fatalf("rerun: exit %d: %s", code, errs)
	}
	a, _, _ := readImage(t, first)
	b, _, _ := readImage(t, again)
	for i := range a {
		if math.Float64bits(a[i]) != math.Float64bits(b[i]) {
			t.Fatalf("pixel %d: %v, then %v", i, a[i], b[i])
		}
	}
	ha, hb := headerValue(t, first, "RUNSPEC"), headerValue(t, again, "RUNSPEC")
	if ha == "" || ha != hb {
		t.Errorf("RUNSPEC %q, then %q", ha, hb)
	}
	if _, errs, code := runCmd(t, "image", "-rerun", first, "-iter", "10", "-o", filepath.Join(dir, "x.fits")); code != exitBadInput || !strings.Contains(errs, "-iter cannot be changed") {
		t.Errorf("-rerun with -iter: exit %d: %s", code, errs)
	}
	raw, _ := os.ReadFile(data)
	raw[len(raw)-1] ^= 1
	os.WriteFile(data, raw, 0o644)
	if _, errs, code := runCmd(t, "image", "-rerun", first, "-o", filepath.Join(dir, "y.fits")); code != exitBadInput || !strings.Contains(errs, "has changed since") {
		t.Errorf("changed data: exit %d: %s", code, errs)
	}
}

// headerValue returns the string value of a keyword of the FITS image at path.
func headerValue(t *testing.T, path, key string) string {
	t.Helper()
	im, err := fitsimage.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range im.Cards {
		if c.Key == key {
			s, _ := c.Value.(string)
			return s
		}
	}
	return ""
}

// TestEveryFITSReads checks every kind of FITS image the commands write with two independent
// readers: HEASARC fitsverify (0 warnings, 0 errors, the FITS standard's checks, CHECKSUM
// included) and astropy (CCDData.read with the BUNIT, a WCS with two celestial axes, and the
// checksum verified): image and its -rerun, fit -write-image, simulate -write-image, demo's
// image and truth, and image -bootstrap's maps.
func TestEveryFITSReads(t *testing.T) {
	dir := t.TempDir()
	data := writeDemoData(t, dir)
	fast := []string{"-n", "32", "-iter", "30", "-starts", "1", "-weight", "0.001"}
	run := func(args ...string) {
		t.Helper()
		if _, errs, code := runCmd(t, args...); code != exitOK {
			t.Fatalf("%q: exit %d: %s", args, code, errs)
		}
	}
	img := filepath.Join(dir, "img.fits")
	run(append(append([]string{"image", "-quiet", "-no-plots", "-o", img, "-bootstrap", "3"}, fast...), data)...)
	run("image", "-quiet", "-no-plots", "-rerun", img, "-o", filepath.Join(dir, "again.fits"))
	run("fit", "-quiet", "-model", "ud:diameter~3", "-write-image", filepath.Join(dir, "fit.fits"), data)
	run("simulate", "-plan", filepath.Join("..", "..", "examples", "plan-six-snapshot.toml"), "-model", "ud:diameter=2",
		"-o", filepath.Join(dir, "s.oifits"), "-write-image", filepath.Join(dir, "sim.fits"))
	run("demo", "-quiet", "-o", filepath.Join(dir, "demo"))
	files, _ := filepath.Glob(filepath.Join(dir, "*.fits"))
	more, _ := filepath.Glob(filepath.Join(dir, "demo", "*.fits"))
	files = append(files, more...)
	if len(files) < 9 {
		t.Fatalf("only %d FITS files: %v", len(files), files)
	}
	fv := requireTool(t, "fitsverify")
	for _, p := range files {
		vout, err := exec.Command(fv, p).CombinedOutput()
		if err != nil || !strings.Contains(string(vout), "Verification found 0 warning(s) and 0 error(s)") {
			t.Errorf("fitsverify %s: %v:\n%s", filepath.Base(p), err, vout)
		}
	}
	if _, err := exec.LookPath("/usr/bin/python3"); err != nil {
		t.Skip("no /usr/bin/python3 for astropy")
	}
	out, err := exec.Command("/usr/bin/python3", append([]string{filepath.Join("testdata", "astropy_read.py")}, files...)...).CombinedOutput()
	if err != nil {
		t.Fatalf("astropy: %v:\n%s", err, out)
	}
	lines := strings.Split(strings.TrimSpace(string(out)), "\n")
	if len(lines) != len(files) {
		t.Fatalf("astropy read %d of %d files:\n%s", len(lines), len(files), out)
	}
	for _, l := range lines {
		f := strings.Fields(l)
		if len(f) != 4 || f[2] != "2" || f[3] != "checksum-ok" {
			t.Errorf("astropy: %q", l)
		}
	}
}
