package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"vcz/output"
	"vcz/recon/fit"
	"vcz/recon/model"
)

// spottedGiantData writes the data of the spotted giant example (limb-darkened disc with
// spots) observed by the six-station demo plan, as 'vcz simulate' makes them, and returns
// the path.
func spottedGiantData(t *testing.T) string {
	t.Helper()
	p := filepath.Join(t.TempDir(), "d.oifits")
	if _, errs, code := runCmd(t, "simulate", "-plan", filepath.Join("..", "..", "examples", "plan-six-demo.toml"),
		"-model", filepath.Join("..", "..", "examples", "vaeloris.toml"), "-o", p); code != exitOK {
		t.Fatalf("simulate: exit %d: %s", code, errs)
	}
	return p
}

// A uniform disc cannot fit a spotted, limb-darkened giant (χ²ᵣ about 16 against an
// expected 0.91): fit warns on stderr as image does, with χ²ᵣ above 1.25 times its expected
// value (recon.Chi2rFar, common practice, no source), says so in the text report and in the
// JSON summary, and -strict exits 1 after the report; a disc fitted to a disc's data
// (simulatedFile) gives no warning and -strict exits 0.
func TestFitPoorFitWarns(t *testing.T) {
	data := spottedGiantData(t)
	out, errs, code := runCmd(t, "fit", "-model", "ud:diameter~3", data)
	if code != exitOK || !strings.Contains(errs, "warning: χ²ᵣ = ") || !strings.Contains(errs, "times its expected value") {
		t.Fatalf("exit %d, stderr %q", code, errs)
	}
	if !strings.Contains(out, "finished with 1 warning after") || !strings.Contains(out, "(expected 0.9") {
		t.Errorf("text report does not give the verdict:\n%s", out)
	}
	out, errs, code = runCmd(t, "fit", "-model", "ud:diameter~3", "-strict", "-json", data)
	if code != exitFailure || !strings.Contains(errs, "warning: χ²ᵣ") {
		t.Fatalf("-strict: exit %d, stderr %q", code, errs)
	}
	var s output.FitSummary
	if err := json.Unmarshal([]byte(out), &s); err != nil {
		t.Fatal(err)
	}
	if len(s.Warnings) != 1 || !(float64(s.Chi2r) > 1.25*float64(s.Chi2rExpected)) || !(s.Chi2rExpected > 0.5 && s.Chi2rExpected <= 1) {
		t.Errorf("JSON: χ²ᵣ %g, expected %g, warnings %q", s.Chi2r, s.Chi2rExpected, s.Warnings)
	}

	good := simulatedFile(t, "ud:diameter=2.5")
	out, errs, code = runCmd(t, "fit", "-model", "ud:diameter~2", "-strict", "-json", good)
	if err := json.Unmarshal([]byte(out), &s); code != exitOK || err != nil || strings.Contains(errs, "warning") || s.Warnings == nil || len(s.Warnings) != 0 {
		t.Errorf("right model: exit %d (%v), stderr %q, warnings %#v", code, err, errs, s.Warnings)
	}
}

// After -grid-search on the spotted giant, the companion the search adds ends on the edge
// of the box it is fitted in (±3 grid steps around the best cell): every parameter within
// fit.BoundTol of the range from a limit is flagged at a bound, and the report says its 1σ
// is not meaningful. Neither the -save-model file nor the model printed in the text report
// ("Fitted model:") or in the JSON summary ("model") carries that box as bounds of the model
// (a fit from a copy of it would be held in the box); the file says in its header where the
// box came from, and the summary gives it apart (grid_search box_east_mas, box_north_mas).
func TestFitGridBoxBound(t *testing.T) {
	data := spottedGiantData(t)
	saved := filepath.Join(t.TempDir(), "m.toml")
	out, errs, code := runCmd(t, "fit", "-model", "ud:diameter~3", "-grid-search", "-no-significance", "-json", "-save-model", saved, data)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var s output.FitSummary
	if err := json.Unmarshal([]byte(out), &s); err != nil {
		t.Fatal(err)
	}
	g := s.Grid
	if g == nil || g.Comp != 2 {
		t.Fatalf("grid search summary %+v: want the box of component 2", g)
	}
	near := 0
	for _, p := range s.Params {
		if p.Component != 2 || (p.Param != "x" && p.Param != "y") {
			continue
		}
		box := g.BoxX
		if p.Param == "y" {
			box = g.BoxY
		}
		v, tol := float64(p.Value), fit.BoundTol*(box[1]-box[0])
		d := math.Min(v-box[0], box[1]-v)
		if d > 0 && d <= tol {
			near++ // the case an exact comparison misses
		}
		if d <= tol && !p.AtBound {
			t.Errorf("%s = %.17g is %.3g from a limit of [%.17g, %.17g], within %.3g, and not flagged", p.Name, v, d, box[0], box[1], tol)
		}
	}
	if near == 0 {
		t.Fatalf("no companion coordinate ended just inside its box: the case is not exercised (%+v)", s.Params)
	}
	text, _, _ := runCmd(t, "fit", "-model", "ud:diameter~3", "-grid-search", "-no-significance", data)
	if !strings.Contains(text, "(at a bound: 1σ not meaningful)") {
		t.Errorf("text report lacks the at-bound note:\n%s", text)
	}
	if !strings.Contains(text, "the search's box, not bounds of the model above") {
		t.Errorf("text report does not give the search's box:\n%s", text)
	}
	line, _, _ := strings.Cut(text, "\n")
	printed, ok := strings.CutPrefix(line, "Fitted model: ")
	if !ok {
		t.Fatalf("text report does not start with the model line:\n%s", text)
	}
	for what, spec := range map[string]string{"text report": printed, "JSON model": s.Model} {
		m, err := model.Load(spec)
		if err != nil {
			t.Fatalf("%s %q: %v", what, spec, err)
		}
		for _, name := range []string{"x", "y"} {
			p, err := m.Param(model.Ref{Comp: 1, Name: name})
			if err != nil || !p.Free || !math.IsInf(p.Min, -1) || !math.IsInf(p.Max, 1) {
				t.Errorf("companion %s in the %s %q: %+v (%v), want free without bounds", name, what, spec, p, err)
			}
		}
	}
	b, err := os.ReadFile(saved)
	if err != nil {
		t.Fatal(err)
	}
	m, err := model.Load(saved)
	if err != nil {
		t.Fatal(err)
	}
	for _, name := range []string{"x", "y"} {
		p, err := m.Param(model.Ref{Comp: 1, Name: name})
		if err != nil || !p.Free || !math.IsInf(p.Min, -1) || !math.IsInf(p.Max, 1) {
			t.Errorf("companion %s in the model file: %+v (%v), want free without bounds:\n%s", name, p, err, b)
		}
	}
	if !strings.Contains(string(b), "the search's box (not bounds of the model below)") {
		t.Errorf("model file does not say where the box came from:\n%s", b)
	}
}
