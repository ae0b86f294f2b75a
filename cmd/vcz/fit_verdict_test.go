package main

import (
	"encoding/json"
	"path/filepath"
	"strings"
	"testing"

	"vcz/output"
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
