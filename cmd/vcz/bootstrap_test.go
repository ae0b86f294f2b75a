package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"vcz/io/fitsimage"
)

// TestImageBootstrap runs `vcz image -bootstrap` on the demo data: the summary holds the
// bootstrap and its feature test, and the maps are on the image's grid.
func TestImageBootstrap(t *testing.T) {
	dir := t.TempDir()
	data := filepath.Join(dir, "demo.oifits")
	if err := os.WriteFile(data, demoOIFITS, 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "rec.fits")
	stdout, errs, code := runCmd(t, "image", "-n", "32", "-iter", "100", "-starts", "1", "-quiet", "-json",
		"-bootstrap", "3", "-bootstrap-seed", "9", "-feature", "0.7,0.5,0.5", "-o", out, data)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var sum bootstrapJSON
	if err := json.Unmarshal([]byte(stdout), &sum); err != nil {
		t.Fatalf("%v in %q", err, stdout)
	}
	b := sum.Bootstrap
	if b == nil || b.Replicates != 3 || b.Seed != 9 || b.Unit != "exposure" || len(b.Features) != 1 || b.Features[0].Pixels == 0 {
		t.Fatalf("bootstrap summary %+v", b)
	}
	if sum.Grid.N != 32 || sum.Outputs.FITS != out {
		t.Fatalf("image summary %+v", sum.ImageSummary)
	}
	for _, p := range []string{b.Outputs.Mean, b.Outputs.Std, b.Outputs.Significance} {
		im, err := fitsimage.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		if im.NX != 32 {
			t.Errorf("%s: %d pixels per side", p, im.NX)
		}
	}
	checkPNG(t, b.Outputs.PNG)
}

// TestBootstrapUsageErrors: bad bootstrap options exit 2 with one line naming the option,
// before any data are read.
func TestBootstrapUsageErrors(t *testing.T) {
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"-bootstrap", "1"}, "-bootstrap 1"},
		{[]string{"-bootstrap", "-3"}, "-bootstrap -3"},
		{[]string{"-bootstrap", "5", "-bootstrap-unit", "night"}, "-bootstrap-unit"},
		{[]string{"-feature", "1,2,0.5"}, "-feature needs -bootstrap"},
		{[]string{"-bootstrap", "5", "-feature", "1,2,0"}, "radius"},
		{[]string{"-bootstrap", "5", "-feature", "no-such-mask.fits"}, "no-such-mask.fits"},
		{[]string{"-bootstrap", "5", "-feature-ref", "ring"}, "-feature-ref"},
	} {
		args := append(append([]string{"image"}, c.args...), "no-such-data.oifits")
		_, errs, code := runCmd(t, args...)
		if code != exitBadInput || strings.Count(errs, "\n") != 1 || !strings.Contains(errs, c.want) {
			t.Errorf("%v: exit %d, stderr %q; want %d and one line naming %q", c.args, code, errs, exitBadInput, c.want)
		}
	}
}
