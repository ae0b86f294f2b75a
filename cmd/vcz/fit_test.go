package main

import (
	"encoding/json"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"vcz/io/fitsimage"
	"vcz/io/oifits"
	"vcz/output"
	"vcz/recon"
	"vcz/recon/model"
	"vcz/recon/simulate"
	"vcz/runspec"
	"vcz/workflow"
)

// simulatedFile writes data of the model spec observed with the four-station
// example plan (seeded noise) and returns its path.
func simulatedFile(t *testing.T, spec string) string {
	t.Helper()
	return simulatedFileWith(t, "plan-four-compact.toml", spec)
}

// simulatedFileWith is simulatedFile with another example plan. Each channel is averaged
// over its band, as an instrument measures it and as fit's default model takes it.
func simulatedFileWith(t *testing.T, planFile, spec string) string {
	t.Helper()
	plan, err := simulate.LoadPlan(filepath.Join("..", "..", "examples", planFile))
	if err != nil {
		t.Fatal(err)
	}
	plan.Smearing = simulate.SmearDefault // the example plans take the band centres
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

func fitParam(t *testing.T, s output.FitSummary, name string) output.FitParamJ {
	t.Helper()
	for _, p := range s.Params {
		if p.Name == name {
			return p
		}
	}
	t.Fatalf("no parameter %s in %+v", name, s.Params)
	return output.FitParamJ{}
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
	var s output.FitSummary
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
	// The companion at (4, −3) mas east-north is at 5 mas, PA
	// atan2(4, −3) = 126.87° east of north (CONVENTIONS.md), ratio 0.05,
	// Δmag −2.5 log10 0.05 = 3.2526.
	if len(s.Pairs) != 1 {
		t.Fatalf("pairs %+v", s.Pairs)
	}
	pr := s.Pairs[0]
	for _, q := range []struct {
		name           string
		got, err, want float64
	}{{"separation", float64(pr.Sep), float64(pr.SepErr), 5}, {"PA", float64(pr.PA), float64(pr.PAErr), 126.8699},
		{"ratio", float64(pr.Ratio), float64(pr.RatioErr), 0.05}, {"Δmag", float64(pr.DMag), float64(pr.DMagErr), 3.2526}} {
		if !(q.err > 0) || math.Abs(q.got-q.want) > 5*q.err {
			t.Errorf("%s = %g ± %g, truth %g", q.name, q.got, q.err, q.want)
		}
	}
	if len(s.Detections) != 1 || s.Detections[0].Component != 2 || s.Detections[0].Extra != 3 ||
		!(s.Detections[0].Sigma > 5) || !s.Detections[0].Searched {
		t.Errorf("significance %+v, want component 2 with 3 parameters above 5σ", s.Detections)
	}
	if pr.Primary != 1 || pr.Component != 2 {
		t.Errorf("pair %d from %d, want 2 from 1", pr.Component, pr.Primary)
	}
	// One plot per fitted data type (the file has them all), then the residuals.
	if len(s.Plots) != 6 || !strings.HasSuffix(s.Plots[4], "-visphi.png") || !strings.HasSuffix(s.Plots[5], "-residuals.png") {
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
	stdout, errs, code := runCmd(t, "fit", "-model", "ud:diameter~2.5", "-grid-search", "-grid-sep", "1mas:15mas",
		"-grid-nsep", "57", "-grid-npa", "120", "-grid-ratio", "0.05", "-json", "-plot", prefix, data)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var s output.FitSummary
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

// A fit that does not converge gives its result with a warning saying so and exits 0, as
// image does (README: 0 success, warnings included), and 1 with -strict; a bad model exits
// 2 with the file, line, component and parameter named.
func TestFitFailures(t *testing.T) {
	data := simulatedFile(t, "ud:diameter=2.5;point:x=4,y=-3,flux=0.05")
	args := []string{"fit", "-model", "ud:diameter~2;point:x~3,y~-2,flux~0.1(0..1)", "-iter", "1", "-quiet", data}
	out, errs, code := runCmd(t, args...)
	if code != exitOK || !strings.Contains(errs, "warning: did not converge") && !strings.Contains(errs, "warning: fit did not converge") || !strings.Contains(out, "Fitted model") {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if _, errs, code = runCmd(t, append([]string{"fit", "-strict"}, args[1:]...)...); code != exitFailure {
		t.Fatalf("-strict: exit %d: %s", code, errs)
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

// A binary fitted from a poor start (companion guessed at x = y = 1 mas,
// truth 1.5 mas away at PA 143.1°, flux ratio 0.2) without -grid-search
// is found within 5σ (a fit to noisy data scatters by its 1σ; 5σ leaves
// room, common practice, no source). The saved model file reads back to
// the printed values, and 'vcz image -from-model' takes its grid from it,
// whether given the model file or the -json output: the field is at least
// three times the diameter of the circle holding the model (the field
// rule of CONVENTIONS.md, common practice, no source), the companion's
// offset plus its radius, here a point's zero.
func TestFitSaveModelThenImage(t *testing.T) {
	data := simulatedFileWith(t, "plan-six-demo.toml", "ud:diameter=1;point:x=0.9,y=-1.2,flux=0.2")
	dir := t.TempDir()
	saved := filepath.Join(dir, "m.toml")
	stdout, errs, code := runCmd(t, "fit", "-model", "ud:diameter~0.7;point:x~1,y~1,flux~0.1(0..1)", "-save-model", saved, "-json", data)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var s output.FitSummary
	if err := json.Unmarshal([]byte(stdout), &s); err != nil {
		t.Fatal(err)
	}
	for name, truth := range map[string]float64{"c1.diameter": 1, "c2.x": 0.9, "c2.y": -1.2, "c2.flux": 0.2} {
		p := fitParam(t, s, name)
		if !(p.Error > 0) || math.Abs(float64(p.Value)-truth) > 5*float64(p.Error) {
			t.Errorf("%s = %g ± %g, truth %g", name, p.Value, p.Error, truth)
		}
	}
	if s.ModelFile != saved || s.Seeded == 0 || s.Grid != nil {
		t.Fatalf("model file %q, %d seeded starts, grid %v", s.ModelFile, s.Seeded, s.Grid)
	}
	m, err := model.Load(saved)
	if err != nil {
		t.Fatal(err)
	}
	for _, p := range s.Params {
		got, err := m.Param(model.Ref{Comp: p.Component - 1, Name: p.Param})
		if err != nil || got.Value != float64(p.Value) || !got.Free {
			t.Errorf("%s in the model file: %+v (%v), printed %v", p.Name, got, err, p.Value)
		}
	}
	jsonFile := filepath.Join(dir, "fit.json")
	if err := os.WriteFile(jsonFile, []byte(stdout), 0o644); err != nil {
		t.Fatal(err)
	}
	x, y, d := float64(fitParam(t, s, "c2.x").Value), float64(fitParam(t, s, "c2.y").Value), float64(fitParam(t, s, "c1.diameter").Value)
	size := 2 * math.Max(math.Hypot(x, y), d/2)
	var grids []output.GridJ
	for _, from := range []string{saved, jsonFile} {
		out := filepath.Join(dir, "img.fits")
		stdout, errs, code := runCmd(t, "image", "-from-model", from, "-iter", "20", "-starts", "1", "-weight", "0.01",
			"-no-png", "-no-plots", "-quiet", "-json", "-o", out, data)
		if code != exitOK {
			t.Fatalf("%s: exit %d: %s", from, code, errs)
		}
		var sum output.ImageSummary
		if err := json.Unmarshal([]byte(stdout), &sum); err != nil {
			t.Fatal(err)
		}
		g := sum.Grid
		want := "model file " + filepath.Base(from) + ": object size"
		if !(g.FOVMas >= 3*size*(1-1e-9) && g.FOVMas < 1.25*3*size) || math.Abs(g.SizeMas-size) > 1e-9*size || !hasReason(g.Reasons, want) {
			t.Errorf("%s: grid %+v; want a field of 3 × %.4g mas and a reason %q", from, g, size, want)
		}
		im, err := fitsimage.ReadFile(out)
		if err != nil {
			t.Fatal(err)
		}
		if im.NX != g.N {
			t.Errorf("%s: image %d pixels wide, grid %d", from, im.NX, g.N)
		}
		grids = append(grids, g)
	}
	if grids[0].N != grids[1].N || grids[0].PixelMas != grids[1].PixelMas {
		t.Errorf("model file grid %+v, -json grid %+v", grids[0], grids[1])
	}
}

func hasReason(reasons []string, prefix string) bool {
	for _, r := range reasons {
		if strings.HasPrefix(r, prefix) {
			return true
		}
	}
	return false
}

// problemFor parses image options as 'vcz image' does and returns the
// problem on the data file and the grid Solve would choose for it.
func problemFor(t *testing.T, data string, args ...string) (recon.Problem, recon.GridChoice) {
	t.Helper()
	fs := newFlagSet("image", "", "", io.Discard)
	opts := runspec.RegisterFlags(fs, runspec.All)
	if err := parseFlags(fs, append(args, data), io.Discard); err != nil {
		t.Fatal(err)
	}
	spec, err := opts.Spec()
	if err != nil {
		t.Fatal(err)
	}
	_, d, err := workflow.ReadData(fs.Args(), spec.Selection())
	if err != nil {
		t.Fatal(err)
	}
	p, _, err := spec.Problem(d)
	if err != nil {
		t.Fatalf("%v: %v", args, err)
	}
	ch, err := recon.ChooseGrid(d, p.GridOptions)
	if err != nil {
		t.Fatal(err)
	}
	return p, ch
}

// -from-model sets the default field from the model's extent and the
// default start image to the model's image; -n, -fov, -pixel and -start
// override their parts. The model's extent is the largest component
// offset plus radius: for small.toml 1.5 mas (the point at (0.9, 1.2),
// a 3-4-5 triangle), so the field is 3 × 3 mas = 9 mas; wide.toml's 20
// mas diameter would need 60 mas, beyond the 11 mas largest scale of the
// data, so the field is 1.25 × 20 mas, enough to hold it.
func TestImageFromModelGrid(t *testing.T) {
	data := simulatedFileWith(t, "plan-six-demo.toml", "ud:diameter=1;point:x=0.9,y=1.2,flux=0.2")
	dir := t.TempDir()
	small := filepath.Join(dir, "small.toml")
	wide := filepath.Join(dir, "wide.toml")
	for path, src := range map[string]string{
		small: "[[component]]\nkind = \"ud\"\ndiameter = {value = 1, free = true}\n\n[[component]]\nkind = \"point\"\nflux = 0.2\nx = 0.9\ny = 1.2\n",
		wide:  "[[component]]\nkind = \"ud\"\ndiameter = 1\n\n[[component]]\nkind = \"point\"\nflux = 0.2\nx = 6\ny = 8\n",
	} {
		if err := os.WriteFile(path, []byte(src), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	_, auto := problemFor(t, data)
	pixel := auto.Pixel / recon.Mas
	if auto.SizeModel != "uniform disc" && auto.SizeModel != "Gaussian" {
		t.Fatalf("without -from-model the size comes from %q", auto.SizeModel)
	}
	for _, c := range []struct {
		args          []string
		fovLo, fovHi  float64 // mas
		n             int     // 0: any
		reason, start string
	}{
		{[]string{"-from-model", small}, 9, 9 * 1.25, 0, "model file small.toml: object size 3 mas", "model"},
		{[]string{"-from-model", small, "-n", "64"}, 64 * pixel, 64 * pixel, 64, "64 × 64 pixels as requested", "model"},
		{[]string{"-from-model", small, "-fov", "6mas"}, 6, 6 + 2*pixel, 0, "", "model"},
		{[]string{"-from-model", small, "-pixel", "0.1mas"}, 9, 9, 90, "model file small.toml", "model"},
		{[]string{"-from-model", small, "-start", "gauss"}, 9, 9 * 1.25, 0, "model file small.toml", "gauss"},
		{[]string{"-from-model", wide}, 25, 25 * 1.25, 0, "field of view 25 mas, 1.25 × the object size", "model"},
	} {
		p, ch := problemFor(t, data, c.args...)
		fov := ch.FOV / recon.Mas
		if fov < c.fovLo*(1-1e-9) || fov > c.fovHi*(1+1e-9) || (c.n > 0 && ch.N != c.n) {
			t.Errorf("%v: %d pixels, field %.6g mas; want %d pixels, field %.4g to %.4g mas", c.args, ch.N, fov, c.n, c.fovLo, c.fovHi)
		}
		if c.reason != "" && !hasReason(ch.Reasons, c.reason) {
			t.Errorf("%v: reasons %q lack %q", c.args, ch.Reasons, c.reason)
		}
		switch c.start {
		case "gauss":
			if p.Start.Kind != recon.StartGaussian {
				t.Errorf("%v: start kind %v, want the Gaussian asked for", c.args, p.Start.Kind)
			}
		case "model":
			if p.Start.Kind != recon.StartImage || p.Start.ImageN != ch.N || p.Start.ImagePixel != ch.Pixel {
				t.Fatalf("%v: start %v on %d pixels of %g rad, grid %d pixels of %g", c.args, p.Start.Kind, p.Start.ImageN, p.Start.ImagePixel, ch.N, ch.Pixel)
			}
			// The start image is the model: its flux centroid is the models's,
			// Σ F_k (x_k, y_k) / Σ F_k, with pixels placed as CONVENTIONS.md
			// says (east left, north up).
			mx, my := 0.2*0.9/1.2, 0.2*1.2/1.2
			if strings.Contains(c.args[1], "wide") {
				mx, my = 0.2*6/1.2, 0.2*8/1.2
			}
			n, px := p.Start.ImageN, p.Start.ImagePixel/recon.Mas
			var sx, sy, tot float64
			for iy := 0; iy < n; iy++ {
				for ix := 0; ix < n; ix++ {
					v := p.Start.Image[iy*n+ix]
					sx += v * -float64(ix-n/2) * px
					sy += v * float64(iy-n/2) * px
					tot += v
				}
			}
			if math.Abs(tot-1) > 1e-9 || math.Hypot(sx/tot-mx, sy/tot-my) > 0.1*px {
				t.Errorf("%v: start image flux %g, centroid (%.4f, %.4f) mas; model (%.4f, %.4f)", c.args, tot, sx/tot, sy/tot, mx, my)
			}
		}
	}
}

// A model file that cannot be read stops 'vcz image' with exit 2 and one
// line naming the file.
func TestImageFromModelErrors(t *testing.T) {
	data := simulatedFile(t, "ud:diameter=2.5")
	dir := t.TempDir()
	files := map[string]string{
		"bad.toml":   "[[component]]\nkind = \"ud\"\ndiam = 3\n",
		"empty.json": "{\"chi2\": 1}\n",
		"cut.json":   "{\"model\": \"ud:diam",
	}
	for name, src := range files {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(src), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	for _, c := range []struct{ file, want string }{
		{"bad.toml", `bad.toml:3: component 1: ud: unknown parameter "diam"`},
		{"empty.json", "empty.json"},
		{"cut.json", "cut.json"},
		{"missing.toml", "missing.toml"},
	} {
		out := filepath.Join(dir, "img.fits")
		_, errs, code := runCmd(t, "image", "-from-model", filepath.Join(dir, c.file), "-o", out, data)
		if code != exitBadInput || !strings.Contains(errs, c.want) || strings.Count(strings.TrimSpace(errs), "\n") != 0 {
			t.Errorf("%s: exit %d, message %q; want exit %d and one line with %q", c.file, code, errs, exitBadInput, c.want)
		}
		if _, err := os.Stat(out); err == nil {
			t.Errorf("%s: an image was written", c.file)
		}
	}
}

// -limits on a simulated single star writes a CSV whose rows are the
// separations asked for, with 5σ limits brighter (smaller Δmag) than 3σ
// ones at every separation (a higher threshold needs a brighter
// companion), and a valid PNG.
func TestFitLimits(t *testing.T) {
	data := simulatedFile(t, "ud:diameter=2.5")
	prefix := filepath.Join(t.TempDir(), "lim")
	stdout, errs, code := runCmd(t, "fit", "-model", "ud:diameter~2.5", "-limits", prefix, "-grid-sep", "1mas:20mas",
		"-limits-nsep", "10", "-limits-npa", "12", "-limits-injection", "-json", data)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var s output.FitSummary
	if err := json.Unmarshal([]byte(stdout), &s); err != nil {
		t.Fatal(err)
	}
	l := s.Limits
	if l == nil || len(l.Sep) != 10 || l.Sep[0] != 1 || l.Sep[9] != 20 || len(l.MeanDMag["3σ"]) != 10 || len(l.InjMeanDMag["5σ"]) != 10 {
		t.Fatalf("limits %+v", l)
	}
	for i := range l.Sep {
		if !(l.MeanDMag["5σ"][i] < l.MeanDMag["3σ"][i]) {
			t.Errorf("%g mas: Δmag %g at 5σ, %g at 3σ", l.Sep[i], l.MeanDMag["5σ"][i], l.MeanDMag["3σ"][i])
		}
	}
	b, err := os.ReadFile(prefix + ".csv")
	if err != nil {
		t.Fatal(err)
	}
	if lines := strings.Split(strings.TrimSpace(string(b)), "\n"); len(lines) != 11 || !strings.HasPrefix(lines[0], "separation_mas,") {
		t.Fatalf("CSV:\n%s", b)
	}
	checkPNG(t, prefix+".png")
}

// TestFitMessageNoStutter checks that an input error of the fit reads "vcz: fit: ...", not
// "vcz: fit: fit: ...".
func TestFitMessageNoStutter(t *testing.T) {
	data := writeDemoData(t, t.TempDir())
	_, errs, code := runCmd(t, "fit", "-model", "ud:diameter=3", data)
	if code != exitBadInput || strings.Contains(errs, "fit: fit:") || !strings.Contains(errs, "no free parameter") {
		t.Errorf("exit %d: %q", code, errs)
	}
}

// TestFitFailedOutputsLeaveNothing checks that a fit whose outputs cannot all be written
// leaves none of them: a -write-pixel that is no angle is refused (exit 2) before the fit
// and its plots, and a plot whose name is taken by a folder (exit 1) takes the plots written
// before it away; option names in the messages are the ones the help lists.
func TestFitFailedOutputsLeaveNothing(t *testing.T) {
	dir := t.TempDir()
	data := writeDemoData(t, dir)
	prefix := filepath.Join(dir, "p")
	img := filepath.Join(dir, "m.fits")
	_, errs, code := runCmd(t, "fit", "-model", "ud:diameter~3", "-quiet", "-o", prefix, "-write-image", img, "-write-pixel", "3", data)
	if code != exitBadInput || strings.Count(errs, "\n") != 1 || !strings.Contains(errs, "-write-pixel") {
		t.Fatalf("-write-pixel 3: exit %d, stderr %q", code, errs)
	}
	if m, _ := filepath.Glob(prefix + "*"); len(m) > 0 {
		t.Errorf("refused run left %v", m)
	}
	if err := os.Mkdir(prefix+"-t3phi.png", 0o755); err != nil {
		t.Fatal(err)
	}
	model := filepath.Join(dir, "m.toml")
	_, errs, code = runCmd(t, "fit", "-model", "ud:diameter~3", "-quiet", "-o", prefix, "-save-model", model, data)
	if code != exitFailure || !strings.Contains(errs, "p-t3phi.png") {
		t.Fatalf("plot in the way: exit %d, stderr %q", code, errs)
	}
	for _, p := range []string{prefix + "-vis2.png", prefix + "-t3amp.png", prefix + "-residuals.png", model} {
		if _, err := os.Stat(p); err == nil {
			t.Errorf("%s left after the failure", filepath.Base(p))
		}
	}
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"-iter", "0"}, "and -iter ≥ 1"},
		{[]string{"-write-image", img, "-write-n", "7"}, "-write-n 7"},
	} {
		_, errs, code = runCmd(t, append(append([]string{"fit", "-model", "ud:diameter~3"}, c.args...), data)...)
		if code != exitBadInput || !strings.Contains(errs, c.want) {
			t.Errorf("%v: exit %d, stderr %q lacks %q", c.args, code, errs, c.want)
		}
	}
}
