package main

import (
	"math"
	"path/filepath"
	"testing"
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
