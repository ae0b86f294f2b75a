package workflow

import (
	"errors"
	"image/png"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
	"vcz/dataset"

	"vcz/io/oifits"
	"vcz/recon"
	"vcz/recon/fit"
	"vcz/recon/model"
	"vcz/recon/simulate"
)

// observe simulates the model m with the example plan of that file name (seeded noise,
// exact model visibilities averaged over each channel's band, as the fits' default model
// takes them) and returns the file and its data set, selected by sel.
func observe(t testing.TB, plan string, m *model.Model, sel dataset.Selection) (*oifits.File, *dataset.Data) {
	t.Helper()
	p, err := simulate.LoadPlan(filepath.Join("..", "examples", plan))
	if err != nil {
		t.Fatal(err)
	}
	p.Smearing = simulate.SmearDefault // the example plans take the band centres
	f, _, err := simulate.Run(p, simulate.ModelSky{Model: m})
	if err != nil {
		t.Fatal(err)
	}
	d, err := dataset.FromFiles([]*oifits.File{f}, sel)
	if err != nil {
		t.Fatal(err)
	}
	return f, d
}

// binaryData is a star of 2.5 mas with a companion of flux ratio 0.05 at (4, −3) mas,
// observed with the four-station example plan (seeded noise).
func binaryData(t *testing.T) *dataset.Data {
	t.Helper()
	m, err := model.Load("ud:diameter=2.5;point:x=4,y=-3,flux=0.05")
	if err != nil {
		t.Fatal(err)
	}
	_, d := observe(t, "plan-four-compact.toml", m, dataset.Selection{})
	return d
}

// FitModel gives the significance of the companion with as many degrees of freedom as it
// has free parameters (one, its flux; Wilks 1938, the difference of nested fits), none
// with SkipSignificance, and detection limits over the default separations when asked;
// WriteLimits writes a CSV of one row per separation, a PNG that the standard library's
// decoder reads, and a summary whose Δmag is −2.5 log10 of the mean ratio (Pogson's
// magnitude scale); SaveModel puts the significance in the model file's header.
func TestFitModelSignificanceLimits(t *testing.T) {
	d := binaryData(t)
	m, err := model.Load("ud:diameter~2;point:x=4,y=-3,flux~0.1(0..1)")
	if err != nil {
		t.Fatal(err)
	}
	set := FitSettings{Fit: fit.Options{Use: dataset.Vis2 | dataset.T3Phi}, Limits: &fit.LimitOptions{NSep: 6, NPA: 8}}
	o, err := FitModel(d, m, set)
	if err != nil {
		t.Fatal(err)
	}
	if len(o.Detections) != 1 || o.Detections[0].Comp != 1 || o.Detections[0].Extra != 1 || !(o.Detections[0].Sigma > 5) {
		t.Fatalf("detections %+v, want component 2 with 1 parameter above 5σ", o.Detections)
	}
	if det := o.Detections[0]; det.Draws != 0 || !math.IsNaN(det.GlobalSigma) {
		t.Errorf("a companion at a fixed position got a field-wide figure: %d draws, %gσ", det.Draws, det.GlobalSigma)
	}
	L := o.Limits
	if L == nil || len(L.Sep) != 6 || L.Sep[0] != 0 || math.Abs(L.Sep[5]-0.75*d.Summarize().LargestScale/recon.Mas) > 1e-9*L.Sep[5] {
		t.Fatalf("limits %+v, want 6 separations from 0 to 3/4 of the largest scale", L)
	}
	prefix := filepath.Join(t.TempDir(), "lim")
	lj, err := o.WriteLimits(prefix, d)
	if err != nil {
		t.Fatal(err)
	}
	for i := range L.Sep {
		if r := L.Mean[0][i]; r > 0 && math.Abs(float64(lj.MeanDMag["3σ"][i])+2.5*math.Log10(r)) > 1e-12 {
			t.Errorf("separation %g: Δmag %g for ratio %g", L.Sep[i], lj.MeanDMag["3σ"][i], r)
		}
	}
	b, err := os.ReadFile(lj.CSV)
	if err != nil {
		t.Fatal(err)
	}
	if n := len(strings.Split(strings.TrimSpace(string(b)), "\n")); lj.CSV != prefix+".csv" || n != 7 {
		t.Errorf("%s: %d lines, want a header and 6 rows", lj.CSV, n)
	}
	f, err := os.Open(lj.Plot)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	if _, err := png.Decode(f); err != nil {
		t.Errorf("%s: %v", lj.Plot, err)
	}
	saved := filepath.Join(t.TempDir(), "m.toml")
	if err := o.SaveModel(saved, []string{"/some/where/sim.oifits"}); err != nil {
		t.Fatal(err)
	}
	if b, err := os.ReadFile(saved); err != nil || !strings.Contains(string(b), "# component 2: Δχ² ") {
		t.Errorf("model file lacks the significance (%v):\n%s", err, b)
	}

	set.SkipSignificance, set.Limits = true, nil
	if o, err = FitModel(d, m, set); err != nil || len(o.Detections) != 0 || o.Limits != nil {
		t.Fatalf("SkipSignificance, no limits: %v, detections %+v, limits %v", err, o.Detections, o.Limits)
	}
}

// TestFitOneTarget checks that fit, like image, refuses the data of two
// targets with an input error naming them, instead of fitting one model to
// two objects.
func TestFitOneTarget(t *testing.T) {
	plan, err := simulate.LoadPlan(filepath.Join("..", "examples", "plan-four-compact.toml"))
	if err != nil {
		t.Fatal(err)
	}
	m, err := model.Load("ud:diameter=2.5")
	if err != nil {
		t.Fatal(err)
	}
	var files []*oifits.File
	for _, name := range []string{"Orrin-A", "Orrin-B"} {
		f, _, err := simulate.Run(plan, simulate.ModelSky{Model: m})
		if err != nil {
			t.Fatal(err)
		}
		f.Targets[0].Name = name
		files = append(files, f)
	}
	d, err := dataset.FromFiles(files, dataset.Selection{})
	if err != nil {
		t.Fatal(err)
	}
	_, err = FitModel(d, m, FitSettings{})
	var ie *InputError
	if !errors.As(err, &ie) || !strings.Contains(err.Error(), "2 targets (Orrin-A, Orrin-B); choose one with -target") {
		t.Fatalf("error %v", err)
	}
}

// TestFitDegenerate checks that data which cannot constrain the model are
// errors, not a fit "converged after 0 iterations": all (u,v) at zero is
// bad input; baselines shrunk 10³⁰⁰ times leave every derivative at zero,
// a computation that cannot succeed. (Errors grown 10³⁰⁰ times are not
// degenerate: a common scale of the errors cancels from the best fit and
// from the covariance rescaled by χ²ᵣ.)
func TestFitDegenerate(t *testing.T) {
	m, err := model.Load("ud:diameter~3(0.5..10)")
	if err != nil {
		t.Fatal(err)
	}
	scaleUV := func(d *dataset.Data, f float64) {
		for _, s := range [][]float64{d.Vis2.U, d.Vis2.V, d.T3.U1, d.T3.V1, d.T3.U2, d.T3.V2, d.Vis.U, d.Vis.V} {
			for i := range s {
				s[i] *= f
			}
		}
	}
	for _, c := range []struct {
		name   string
		change func(d *dataset.Data)
		input  bool
		want   string
	}{
		{"zero-uv", func(d *dataset.Data) { scaleUV(d, 0) }, true, "every (u,v) point is at zero baseline"},
		{"tiny-uv", func(d *dataset.Data) { scaleUV(d, 1e-300) }, false, "the fit is degenerate"},
	} {
		d := binaryData(t)
		c.change(d)
		o, err := FitModel(d, m, FitSettings{SkipSignificance: true})
		var ie *InputError
		if o != nil || err == nil || errors.As(err, &ie) != c.input || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: outcome %v, error %v (want input error %v, %q)", c.name, o != nil, err, c.input, c.want)
		}
	}
}

// TestCheckOutputs checks that outputs that cannot be written are refused before any
// work: a missing folder, a folder given as the file, a folder that refuses new files
// (skipped as root, whom permissions do not stop); and that stale temporaries of a killed
// run are swept while other files stay.
func TestCheckOutputs(t *testing.T) {
	dir := t.TempDir()
	stale := filepath.Join(dir, ".star.fits.tmp-123")
	keep := filepath.Join(dir, "star.fits")
	for _, p := range []string{stale, keep} {
		os.WriteFile(p, []byte("x"), 0o644)
		old := time.Now().Add(-time.Hour)
		os.Chtimes(p, old, old)
	}
	if err := CheckOutputs(filepath.Join(dir, "new.fits")); err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(stale); !os.IsNotExist(err) {
		t.Errorf("stale temporary kept (%v)", err)
	}
	if _, err := os.Stat(keep); err != nil {
		t.Errorf("other file removed: %v", err)
	}
	cases := map[string]string{
		filepath.Join(dir, "missing", "a.fits"): "does not exist",
		dir:                                     "is a folder; give a file name",
	}
	if os.Geteuid() != 0 {
		ro := filepath.Join(dir, "ro")
		os.Mkdir(ro, 0o555)
		cases[filepath.Join(ro, "a.fits")] = "cannot write in folder"
	}
	for p, want := range cases {
		err := CheckOutputs(p)
		var ie *InputError
		if !errors.As(err, &ie) || !strings.Contains(err.Error(), want) {
			t.Errorf("%s: %v, want %q", p, err, want)
		}
	}
	if left, _ := filepath.Glob(filepath.Join(dir, ".vcz-check-*")); len(left) != 0 {
		t.Errorf("probe files left: %v", left)
	}
}

// TestFitBootstrap checks the fit's bootstrap errors against the covariance errors on data
// whose error bars are right and independent (a simulated uniform disc, noise drawn from
// those error bars): resampling the rows gives a spread within 30 % of the propagated 1σ, as
// the bootstrap estimate of a standard error should (Efron & Tibshirani 1993, ch. 6: both
// estimate the sampling spread of the estimate; 30 % is the sampling scatter of a spread
// from ~100 replicates and ~100 rows, common practice, no source). The same seed gives the
// same errors.
func TestFitBootstrap(t *testing.T) {
	truth, err := model.Load("ud:diameter=2.5")
	if err != nil {
		t.Fatal(err)
	}
	_, d := observe(t, "plan-four-compact.toml", truth, dataset.Selection{})
	m, err := model.Load("ud:diameter~2")
	if err != nil {
		t.Fatal(err)
	}
	s := FitSettings{SkipSignificance: true, Bootstrap: FitBootstrap{K: 100, Unit: dataset.ByRow, Seed: 3}}
	o, err := FitModel(d, m, s)
	if err != nil {
		t.Fatal(err)
	}
	b := o.Boot
	if b == nil || b.Done != 100 || len(b.Params) != 1 {
		t.Fatalf("bootstrap %+v", b)
	}
	cov := o.Result.Params[0].Err
	t.Logf("bootstrap %.4g mas, covariance %.4g mas", b.Params[0], cov)
	if r := b.Params[0] / cov; !(r > 0.7 && r < 1.3) {
		t.Errorf("bootstrap error %.4g mas against the covariance's %.4g mas (ratio %.2f)", b.Params[0], cov, r)
	}
	again, err := FitModel(d, m, s)
	if err != nil || again.Boot.Params[0] != b.Params[0] {
		t.Errorf("the same seed gave %v, then %v (%v)", b.Params, again.Boot.Params, err)
	}
}

// TestEmptySelectionLists checks that a selection that leaves no point is refused naming the
// files and listing the targets and instruments they hold.
func TestEmptySelectionLists(t *testing.T) {
	m, _ := model.Load("ud:diameter=2")
	f, d := observe(t, "plan-four-compact.toml", m, dataset.Selection{WaveMin: 9e-6, WaveMax: 10e-6})
	err := checkData([]*oifits.File{f}, d)
	want := "the files hold targets " + f.Targets[0].Name + " and instruments " + f.Wavelengths[0].InsName
	if err == nil || !strings.Contains(err.Error(), "no usable data points") || !strings.Contains(err.Error(), want) {
		t.Errorf("error %v, want %q", err, want)
	}
}

// A companion found by the grid search, and one whose free position the seeded starts
// searched, get a field-wide significance from simulated searches (SearchDraws of them),
// below the local one for a faint companion; a negative SearchDraws leaves it out.
func TestFitModelSearchCalibrated(t *testing.T) {
	d := binaryData(t)
	grid := &fit.GridOptions{SepMin: 1, SepMax: 10, NSep: 20, NPA: 36, Ratio: 0.05}
	for _, c := range []struct {
		name  string
		model string
		set   FitSettings
		draws int
	}{
		{"grid", "ud:diameter~2", FitSettings{Grid: grid, SearchDraws: 300}, 300},
		{"starts", "ud:diameter~2;point:x~1,y~1,flux~0.1(0..1)", FitSettings{SearchDraws: 300}, 300},
		{"none", "ud:diameter~2", FitSettings{Grid: grid, SearchDraws: -1}, 0},
	} {
		m, err := model.Load(c.model)
		if err != nil {
			t.Fatal(err)
		}
		c.set.Fit.Use = dataset.Vis2 | dataset.T3Phi
		o, err := FitModel(d, m, c.set)
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		if len(o.Detections) != 1 {
			t.Fatalf("%s: detections %+v", c.name, o.Detections)
		}
		det := o.Detections[0]
		if det.Draws != c.draws {
			t.Errorf("%s: %d simulated searches, want %d", c.name, det.Draws, c.draws)
		}
		if c.draws > 0 && !(det.GlobalSigma <= det.Sigma && det.GlobalSigma > 0 && det.Trials > 1) {
			t.Errorf("%s: local %gσ, field-wide %gσ over %g effective positions", c.name, det.Sigma, det.GlobalSigma, det.Trials)
		}
	}
}

// TestFitUndeterminedGivesResult checks that a fit whose companion goes to zero flux, where
// the data stop constraining its position, still gives the best values and χ² with the
// position named as undetermined, instead of refusing the whole fit as degenerate: a disc
// with a companion searched for at a flux ratio of 0.02 over 1–20 mas in the demo data.
func TestFitUndeterminedGivesResult(t *testing.T) {
	_, d := demoData(t)
	m, err := model.Load("ud:diameter~1")
	if err != nil {
		t.Fatal(err)
	}
	g := &fit.GridOptions{SepMin: 1, SepMax: 20, NSep: 60, NPA: 120, Ratio: 0.02} // as vcz fit -grid-search
	o, err := FitModel(d, m, FitSettings{Grid: g, SkipSignificance: true})
	if o == nil {
		t.Fatalf("no outcome: %v", err)
	}
	var flat []string
	for _, p := range o.Result.Params {
		if p.Undetermined {
			flat = append(flat, p.Ref.String())
		}
	}
	if got := strings.Join(flat, " "); got != "c2.x c2.y" || math.IsNaN(o.Result.Chi2) || math.IsNaN(o.Result.Params[0].Err) {
		t.Errorf("undetermined %q, χ² %g, diameter 1σ %g; want c2.x c2.y and numbers", got, o.Result.Chi2, o.Result.Params[0].Err)
	}
}
