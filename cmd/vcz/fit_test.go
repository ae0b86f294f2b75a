package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"vcz/io/fitsimage"
	"vcz/io/oifits"
	"vcz/recon/model"
	"vcz/recon/simulate"
)

// simulatedFile writes data of the model spec observed with the four-station
// example plan (seeded noise) and returns its path.
func simulatedFile(t *testing.T, spec string) string {
	t.Helper()
	plan, err := simulate.LoadPlan(filepath.Join("..", "..", "examples", "plan-four-compact.toml"))
	if err != nil {
		t.Fatal(err)
	}
	m, err := model.Load(spec)
	if err != nil {
		t.Fatal(err)
	}
	f, _, err := simulate.Run(plan, simulate.ModelSky{Model: m})
	if err != nil {
		t.Fatal(err)
	}
	p := filepath.Join(t.TempDir(), "sim.oifits")
	if err := oifits.WriteFile(p, f); err != nil {
		t.Fatal(err)
	}
	return p
}

func fitParam(t *testing.T, s fitSummary, name string) fitParamJ {
	t.Helper()
	for _, p := range s.Params {
		if p.Name == name {
			return p
		}
	}
	t.Fatalf("no parameter %s in %+v", name, s.Params)
	return fitParamJ{}
}

// A binary simulated through the OIFITS writer and reader is fitted back
// within 5σ of the truth (a fit to noisy data scatters by its 1σ; 5σ
// leaves room, common practice, no source); the plots are valid PNGs and
// the fitted model's FITS image holds a total flux of 1 (CONVENTIONS.md).
func TestFitBinaryEndToEnd(t *testing.T) {
	data := simulatedFile(t, "ud:diameter=2.5;point:x=4,y=-3,flux=0.05")
	dir := t.TempDir()
	img := filepath.Join(dir, "model.fits")
	stdout, errs, code := runCmd(t, "fit", "-model", "ud:diameter~2;point:x~3,y~-2,flux~0.1(0..1)", "-json",
		"-plot", filepath.Join(dir, "fit"), "-write-image", img, "-n", "64", data)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var s fitSummary
	if err := json.Unmarshal([]byte(stdout), &s); err != nil {
		t.Fatalf("%v in %q", err, stdout)
	}
	for name, truth := range map[string]float64{"c1.diameter": 2.5, "c2.x": 4, "c2.y": -3, "c2.flux": 0.05} {
		p := fitParam(t, s, name)
		if !(p.Error > 0) || math.Abs(float64(p.Value)-truth) > 5*float64(p.Error) {
			t.Errorf("%s = %g ± %g, truth %g", name, p.Value, p.Error, truth)
		}
	}
	if !s.Converged || s.Starts != 16 || len(s.CorrMatrix) != 4 || !(s.Chi2r > 0.5 && s.Chi2r < 2) {
		t.Fatalf("summary %+v", s)
	}
	if len(s.Plots) != 3 {
		t.Fatalf("plots %v", s.Plots)
	}
	for _, p := range s.Plots {
		checkPNG(t, p)
	}
	im, err := fitsimage.ReadFile(img)
	if err != nil {
		t.Fatal(err)
	}
	total := 0.0
	for _, v := range im.Data {
		total += v
	}
	if im.NX != 64 || math.Abs(total-1) > 1e-9 {
		t.Fatalf("image %d × %d, total flux %g", im.NX, im.NY, total)
	}
}

// The grid search finds the simulated companion within two grid steps and
// the final fit converges on it; the map is written as a PNG.
func TestFitGridSearch(t *testing.T) {
	data := simulatedFile(t, "ud:diameter=2.5;point:x=4,y=-3,flux=0.05")
	prefix := filepath.Join(t.TempDir(), "g")
	stdout, errs, code := runCmd(t, "fit", "-model", "ud:diameter~2.5", "-grid-search", "-grid-sep", "1:15",
		"-grid-nsep", "57", "-grid-npa", "120", "-grid-ratio", "0.05", "-json", "-plot", prefix, data)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var s fitSummary
	if err := json.Unmarshal([]byte(stdout), &s); err != nil {
		t.Fatal(err)
	}
	if s.Grid == nil || math.Abs(s.Grid.BestSep-5) > 0.5 || math.Abs(s.Grid.BestPA-126.87) > 6 {
		t.Fatalf("grid %+v; truth 5 mas at 126.9°", s.Grid)
	}
	if x := fitParam(t, s, "c2.x"); math.Abs(float64(x.Value)-4) > 5*float64(x.Error) {
		t.Fatalf("companion x %g ± %g", x.Value, x.Error)
	}
	if _, err := os.Stat(prefix + "-grid.png"); err != nil {
		t.Fatal(err)
	}
	checkPNG(t, prefix+"-grid.png")
}

// A fit that cannot converge exits 1 with a message saying so; a bad model
// exits 2 with the file, line, component and parameter named.
func TestFitFailures(t *testing.T) {
	data := simulatedFile(t, "ud:diameter=2.5;point:x=4,y=-3,flux=0.05")
	_, errs, code := runCmd(t, "fit", "-model", "ud:diameter~2;point:x~3,y~-2,flux~0.1(0..1)", "-max-iter", "1", "-quiet", data)
	if code != exitFailure || !strings.Contains(errs, "did not converge") {
		t.Fatalf("exit %d: %s", code, errs)
	}
	bad := filepath.Join(t.TempDir(), "bad.toml")
	if err := os.WriteFile(bad, []byte("[[component]]\nkind = \"ud\"\ndiameter = 3\n\n[[component]]\nkind = \"point\"\nfluxx = 0.1\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		spec string
		want []string
	}{
		{bad, []string{"bad.toml:7", "component 2", `"fluxx"`}},
		{"ud:diameter~2;blob:x=1", []string{"component 2", `"blob"`}},
	} {
		_, errs, code = runCmd(t, "fit", "-model", c.spec, data)
		if code != exitBadInput {
			t.Fatalf("%s: exit %d: %s", c.spec, code, errs)
		}
		for _, w := range c.want {
			if !strings.Contains(errs, w) {
				t.Errorf("%s: message %q lacks %q", c.spec, errs, w)
			}
		}
	}
	if _, _, code = runCmd(t, "fit", data); code != exitBadInput {
		t.Fatalf("no -model: exit %d", code)
	}
}

// The text report lists each parameter with its uncertainty and unit and
// χ²ᵣ per data type.
func TestFitText(t *testing.T) {
	data := simulatedFile(t, "ud:diameter=2.5")
	out, errs, code := runCmd(t, "fit", "-model", "ud:diameter~2", "-use", "vis2,t3phi", data)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, w := range []string{"c1.diameter", "± ", "mas", "vis2", "t3phi", "converged"} {
		if !strings.Contains(out, w) {
			t.Errorf("output lacks %q:\n%s", w, out)
		}
	}
	if strings.Contains(out, "visamp") {
		t.Errorf("-use vis2,t3phi but visamp reported:\n%s", out)
	}
}
