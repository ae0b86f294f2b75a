package output

import (
	"encoding/json"
	"math"
	"strings"
	"testing"

	"vcz/recon/fit"
	"vcz/recon/model"
)

// The JSON form of detection limits gives Δmag = −2.5 log10 of the ratio (Pogson's
// magnitude scale: a ratio of 0.01 is 5 mag) and null where there is no limit; the text
// report gives the pairs, the local and field-wide significance of a searched position,
// about ten rows of limits and "n/a" for a value that is not finite (the layout is common
// practice, no source).
func TestFitSummaryText(t *testing.T) {
	seps := make([]float64, 20)
	for i := range seps {
		seps[i] = float64(i + 1)
	}
	mean := [][]float64{make([]float64, 20), make([]float64, 20)}
	for i := range seps {
		mean[0][i], mean[1][i] = 0.01, 0.1
	}
	mean[0][0] = math.NaN()
	L := &fit.Limits{Sep: seps, Sigmas: []float64{3, 5}, Mean: mean, Worst: mean, Scale: 1.2}
	L.Inj = &fit.InjLimits{Mean: [][]float64{make([]float64, 20), make([]float64, 20)}}
	L.Inj.Worst = L.Inj.Mean
	for i := range seps {
		L.Inj.Mean[0][i], L.Inj.Mean[1][i] = 0.001, 0.01
	}
	lj := NewFitLimits(L, "lim.csv", "lim.png")
	if got := float64(lj.InjMeanDMag["5σ"][2]); math.Abs(got-5) > 1e-12 {
		t.Errorf("Δmag of a ratio 0.01 by injection: %g, want 5", got)
	}
	if got := float64(lj.MeanDMag["3σ"][1]); math.Abs(got-5) > 1e-12 {
		t.Errorf("Δmag of a ratio 0.01: %g, want 5", got)
	}
	if got := float64(lj.Worst["5σ"][3]); math.Abs(got-2.5) > 1e-12 {
		t.Errorf("Δmag of a ratio 0.1: %g, want 2.5", got)
	}
	b, err := json.Marshal(lj)
	if err != nil || !strings.Contains(string(b), `"3σ":[null,5`) {
		t.Errorf("JSON %s (%v): want null for no limit", b, err)
	}

	s := FitSummary{Model: "ud;point", Chi2ByType: map[string]Chi2J{}, Converged: true, Limits: lj,
		Pairs: []FitPairJ{{Primary: 1, Component: 2, Sep: 5, SepErr: 0.01, PA: 126.87, PAErr: 0.1, Ratio: 0.05, RatioErr: 0.001,
			DMag: 3.2526, DMagErr: 0.02}},
		Detections: []FitDetectJ{{Component: 2, Extra: 3, DeltaChi2: 40, PValue: 1e-8, Sigma: 5.7, Searched: true,
			GlobalPValue: 2e-5, GlobalSigma: 4.26, Trials: 812, SearchDraws: 1000},
			{Component: 3, Extra: 1, DeltaChi2: 9, PValue: 0.0027, Sigma: 3}}}
	var w strings.Builder
	s.WriteText(&w, 0)
	out := w.String()
	for _, want := range []string{"Relative to component 1", "5 ± 0.01", "126.87 ± 0.1", "3.2526 ± 0.02",
		"component 2: Δχ² 40 for 3 parameters, local p = 1e-08, 5.7σ; field-wide p = 2e-05, 4.3σ (812 effective positions, 1000 simulated searches)",
		"component 3: Δχ² 9 for 1 parameters, p = 0.0027, 3.0σ\n", `"field-wide" is the chance`,
		"errors scaled by χ²ᵣ 1.2", "n/a", "Wrote lim.csv and lim.png", "5σ inj.", `"inj.": by injection–recovery`} {
		if !strings.Contains(out, want) {
			t.Errorf("report lacks %q:\n%s", want, out)
		}
	}
	rows := 0
	for _, line := range strings.Split(out, "\n") {
		if strings.HasSuffix(line, "   2.5          7.5            5") {
			rows++
		}
	}
	if rows != 10 {
		t.Errorf("%d rows of limits, want 10 of 20 separations:\n%s", rows, out)
	}
}

// TestBestStartCounted checks that -json counts the best start as the text does, from 1
// (1 being the model's own values), not from 0 as fit.Result.Start does.
func TestBestStartCounted(t *testing.T) {
	m, err := model.Load("ud:diameter~1")
	if err != nil {
		t.Fatal(err)
	}
	s := NewFitSummary(&fit.Result{Model: m, Start: 2, Converged: true}, 16)
	var b strings.Builder
	s.WriteText(&b, 0)
	if s.BestStart != 3 || !strings.Contains(b.String(), "start 3") {
		t.Errorf("best_start %d, text %q", s.BestStart, b.String())
	}
}
