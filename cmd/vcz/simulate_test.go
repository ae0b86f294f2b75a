package main

import (
	"bytes"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"vcz/io/oifits"
)

// vcz simulate on an example plan writes an OIFITS file that passes
// fitsverify with 0 warnings and 0 errors (HEASARC's FITS checker) and that
// inspect reads; a point source gives V² = 1 and closure phase 0 everywhere
// (a point source is fully coherent; fact of the trade) up to the noise the
// plan adds, which the errors bound.
func TestSimulateCommand(t *testing.T) {
	dir := t.TempDir()
	out := filepath.Join(dir, "point.oifits")
	plan := filepath.Join("..", "..", "examples", "plan-four-compact.toml")
	_, errs, code := runCmd(t, "simulate", "-plan", plan, "-model", "point", "-o", out, "-quiet")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	f, err := oifits.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	n := 0
	for _, tab := range f.Vis2 {
		for _, r := range tab.Rows {
			for i, v := range r.Data {
				if d := v - 1; d > 6*r.Err[i] || d < -6*r.Err[i] {
					t.Fatalf("V² = %g ± %g for a point source", v, r.Err[i])
				}
				n++
			}
		}
	}
	for _, tab := range f.T3 {
		for _, r := range tab.Rows {
			for i, p := range r.Phi {
				if p > 6*r.PhiErr[i] || p < -6*r.PhiErr[i] {
					t.Fatalf("closure phase %g ± %g° for a point source", p, r.PhiErr[i])
				}
			}
		}
	}
	if n == 0 {
		t.Fatal("no V² written")
	}
	if _, errs, code := runCmd(t, "inspect", out); code != exitOK {
		t.Fatalf("inspect: exit %d: %s", code, errs)
	}
	fv := requireTool(t, "fitsverify")
	vout, err := exec.Command(fv, "-q", out).CombinedOutput()
	if err != nil || !strings.HasPrefix(string(vout), "verification OK") || strings.Contains(string(vout), "warning") {
		t.Fatalf("fitsverify: %v: %s", err, vout)
	}
}

// A plan with an unknown key fails with exit 2, naming the key and its line.
func TestSimulateUnknownPlanKey(t *testing.T) {
	dir := t.TempDir()
	src, err := os.ReadFile(filepath.Join("..", "..", "examples", "plan-four-compact.toml"))
	if err != nil {
		t.Fatal(err)
	}
	bad := filepath.Join(dir, "bad.toml")
	if err := os.WriteFile(bad, append([]byte("colour = \"blue\"\n"), src...), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "x.oifits")
	_, errs, code := runCmd(t, "simulate", "-plan", bad, "-model", "point", "-o", out)
	if code != exitBadInput || !strings.Contains(errs, "colour") || !strings.Contains(errs, "bad.toml:1:") {
		t.Fatalf("exit %d, stderr %q", code, errs)
	}
	if _, err := os.Stat(out); err == nil {
		t.Fatal("an output file was written for a bad plan")
	}
}

// vcz simulate -chromatic writes differential visibilities (AMPTYP = PHITYP = 'differential')
// of a chromatic model when the plan asks for "dvis", in a file that fitsverify passes, with
// a plan that says nothing of smearing (band averages then, as with smearing = true); a
// broken chromatic model fails with exit 2, naming the file, and writes nothing.
func TestSimulateChromatic(t *testing.T) {
	dir := t.TempDir()
	src, err := os.ReadFile(filepath.Join("..", "..", "examples", "plan-four-compact.toml"))
	if err != nil {
		t.Fatal(err)
	}
	plan := filepath.Join(dir, "plan.toml")
	text := "write = [\"dvis\"]\n" + strings.Replace(strings.Replace(string(src), "write = ", "# write = ", 1), "smearing = false", "", 1)
	if err := os.WriteFile(plan, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	chrom := filepath.Join(dir, "disc.toml")
	if err := os.WriteFile(chrom, []byte("reference = 2.166\n[[component]]\nmodel = \"point\"\n[[disc]]\ninner = 0.5\nouter = 3\ninc = 60\nline = 1.6\nvelocity = 200\nwidth = 15\nflux = 0.6\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "disc.oifits")
	outs, errs, code := runCmd(t, "simulate", "-plan", plan, "-chromatic", chrom, "-o", out)
	if code != exitOK || !strings.Contains(outs, "averaged over each channel's band") {
		t.Fatalf("exit %d: %s%s", code, outs, errs)
	}
	f, err := oifits.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	if len(f.Vis) != 1 || f.Vis[0].PhiTyp != oifits.PhiDifferential || f.Vis[0].AmpTyp != oifits.AmpDifferential || len(f.Vis2)+len(f.T3) != 0 {
		t.Fatalf("tables: %d OI_VIS, %d OI_VIS2, %d OI_T3", len(f.Vis), len(f.Vis2), len(f.T3))
	}
	fv := requireTool(t, "fitsverify")
	if vout, err := exec.Command(fv, "-q", out).CombinedOutput(); err != nil || !strings.HasPrefix(string(vout), "verification OK") || strings.Contains(string(vout), "warning") {
		t.Fatalf("fitsverify: %v: %s", err, vout)
	}
	bad := filepath.Join(dir, "bad.toml")
	if err := os.WriteFile(bad, []byte("[[component]]\nmodel = \"point\"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	out2 := filepath.Join(dir, "x.oifits")
	_, errs, code = runCmd(t, "simulate", "-plan", plan, "-chromatic", bad, "-o", out2)
	if code != exitBadInput || !strings.Contains(errs, "bad.toml: reference wavelength missing") || strings.Count(strings.TrimSpace(errs), "\n") > 0 {
		t.Fatalf("exit %d, stderr %q", code, errs)
	}
	if _, err := os.Stat(out2); err == nil {
		t.Fatal("an output file was written for a bad model")
	}
	if err := os.WriteFile(plan, []byte(strings.Replace(text, "[wavelengths]", "[wavelengths]\nsmearing = true", 1)), 0o644); err != nil {
		t.Fatal(err)
	}
	out3 := filepath.Join(dir, "on.oifits")
	if _, errs, code := runCmd(t, "simulate", "-plan", plan, "-chromatic", chrom, "-o", out3, "-quiet"); code != exitOK {
		t.Fatalf("smearing = true with a chromatic model: exit %d, stderr %q", code, errs)
	}
	g, err := oifits.ReadFile(out3)
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(g.Vis, f.Vis) {
		t.Error("smearing = true and a plan without smearing differ")
	}
}

// TestSimulateSeed checks that -seed is unsigned like every other command's seed: a given
// seed (0 included) replaces the plan's, none keeps it, and -1 is refused as a usage error.
func TestSimulateSeed(t *testing.T) {
	dir := t.TempDir()
	plan := filepath.Join("..", "..", "examples", "plan-six-snapshot.toml")
	read := func(args ...string) []byte {
		t.Helper()
		out := filepath.Join(dir, fmt.Sprintf("s%d.oifits", len(args)))
		if _, errs, code := runCmd(t, append([]string{"simulate", "-plan", plan, "-model", "ud:diameter=2", "-o", out}, args...)...); code != exitOK {
			t.Fatalf("%q: exit %d: %s", args, code, errs)
		}
		b, err := os.ReadFile(out)
		if err != nil {
			t.Fatal(err)
		}
		return b
	}
	plain, zero, seven := read(), read("-seed", "0"), read("-seed", "7", "-quiet")
	if bytes.Equal(plain, seven) || bytes.Equal(zero, seven) {
		t.Error("-seed did not change the noise")
	}
	if _, _, code := runCmd(t, "simulate", "-plan", plan, "-model", "ud:diameter=2", "-o", filepath.Join(dir, "x.oifits"), "-seed", "-1"); code != exitBadInput {
		t.Errorf("-seed -1: exit %d", code)
	}
}

// TestSimulateBadWritePixelWritesNothing checks that a -write-pixel that is no angle is
// refused before anything is written: exit 2, one line naming the option, and no OIFITS
// file left behind (a run refused as bad input must not leave half its outputs).
func TestSimulateBadWritePixelWritesNothing(t *testing.T) {
	dir := t.TempDir()
	out := filepath.Join(dir, "a.oifits")
	img := filepath.Join(dir, "a.fits")
	plan := filepath.Join("..", "..", "examples", "plan-four-compact.toml")
	stdout, errs, code := runCmd(t, "simulate", "-plan", plan, "-model", "ud:diameter=3", "-write-image", img, "-write-pixel", "2", "-o", out)
	if code != exitBadInput || strings.Count(errs, "\n") != 1 || !strings.Contains(errs, "-write-pixel") {
		t.Fatalf("exit %d, stderr %q", code, errs)
	}
	if strings.Contains(stdout, "Wrote") {
		t.Errorf("stdout says a file was written: %q", stdout)
	}
	for _, p := range []string{out, img} {
		if _, err := os.Stat(p); err == nil {
			t.Errorf("%s left after the refusal", filepath.Base(p))
		}
	}
	// The grid size is named by the flag the help lists.
	_, errs, code = runCmd(t, "simulate", "-plan", plan, "-model", "ud:diameter=3", "-write-image", img, "-write-n", "5", "-o", out)
	if code != exitBadInput || !strings.Contains(errs, "-write-n 5") {
		t.Fatalf("-write-n 5: exit %d, stderr %q", code, errs)
	}
}
