package recon

import (
	"math"
	"testing"
)

// TestChooseCubeFactor runs the factor search on model curves χ²ᵣ(α) = f0 + A·α/(α + αc),
// which rise from a floor f0 with the weight as χ²ᵣ does, and checks the factor chosen
// against the exact inverse of the curve at the aim, α* = αc·s/(1 − s) with s = (aim −
// f0)/A (algebra on the model, no source), and the bounds of the search: at most
// CubeWeightSteps factors, each run from the cube of an earlier step, and the aim computed
// by the formula of chooseWeight from the least χ²ᵣ tried.
func TestChooseCubeFactor(t *testing.T) {
	for _, tc := range []struct {
		name          string
		f0, a, ac     float64
		tau, scatter  float64
		wantEdge      string
		wantFactorMin float64 // the chosen factor must lie at or above this (0: any)
	}{
		// Overfit planes: the floor far below τ, the aim above the cube at α = 1.
		{name: "overfit", f0: 0.45, a: 2, ac: 20, tau: 0.93, scatter: 0.016, wantFactorMin: 1},
		// The gray weight of a chromatic object: nothing moves below α ≈ 10³.
		{name: "chromatic", f0: 0.556, a: 2, ac: 1e4, tau: 0.96, scatter: 0.016, wantFactorMin: 100},
		// Underfit at α = 1: the cube fits worse than the aim, a smaller factor is needed.
		{name: "underfit", f0: 0.8, a: 3, ac: 0.5, tau: 1, scatter: 0.02},
		// The floor above τ (a model that cannot fit): the aim is just above the floor.
		{name: "floor above", f0: 1.3, a: 1, ac: 3, tau: 1, scatter: 0.02},
		// A curve that never reaches the aim within the range (α ≤ 10⁶): the upper edge.
		{name: "flat", f0: 0.5, a: 0.02, ac: 1e9, tau: 1, scatter: 0.01, wantEdge: "upper"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			curve := func(al float64) float64 { return tc.f0 + tc.a*al/(al+tc.ac) }
			runs := 0
			run := func(alpha float64, from int, label string) (float64, int, bool, error) {
				runs++
				if from < -1 || from >= runs {
					t.Errorf("run %d starts from step %d", runs, from)
				}
				return curve(alpha), 10, true, nil
			}
			fs, err := chooseCubeFactor(curve(1), 10, true, tc.tau, tc.scatter, run)
			if err != nil {
				t.Fatal(err)
			}
			if len(fs.path) > CubeWeightSteps || len(fs.path) != runs+1 {
				t.Errorf("%d steps (%d runs), at most %d", len(fs.path), runs, CubeWeightSteps)
			}
			floor := math.Inf(1)
			for _, st := range fs.path {
				floor = math.Min(floor, st.Chi2r)
			}
			aim := floor + max(FloorShare*(tc.tau-floor), FloorMargin*floor, FloorNoise*tc.scatter)
			if math.Abs(fs.target-aim) > 1e-12 || fs.floor != floor {
				t.Errorf("floor %.6g aim %.6g, want %.6g and %.6g", fs.floor, fs.target, floor, aim)
			}
			got := fs.path[fs.best]
			t.Logf("%d factors; floor %.4f, aim %.4f; chose α %.4g at χ²ᵣ %.4f; edge %q", len(fs.path), fs.floor, fs.target, got.Factor, got.Chi2r, fs.edge)
			if fs.edge != tc.wantEdge {
				t.Errorf("edge %q, want %q", fs.edge, tc.wantEdge)
			}
			if tc.wantEdge != "" {
				return
			}
			tol := 0.25 * (aim - floor)
			if math.Abs(got.Chi2r-aim) > tol {
				t.Errorf("χ²ᵣ %.5g at α %.4g, aim %.5g ± %.3g", got.Chi2r, got.Factor, aim, tol)
			}
			s := (aim - tc.f0) / tc.a
			want := tc.ac * s / (1 - s)
			// Within the tolerance band in χ²ᵣ means within the inverse of that band in α.
			lo, hi := (aim-tol-tc.f0)/tc.a, (aim+tol-tc.f0)/tc.a
			if alo, ahi := tc.ac*lo/(1-lo), tc.ac*hi/(1-hi); got.Factor < alo || got.Factor > ahi {
				t.Errorf("α %.4g, exact %.4g (band %.4g–%.4g)", got.Factor, want, alo, ahi)
			}
			if got.Factor < tc.wantFactorMin {
				t.Errorf("α %.4g below %g", got.Factor, tc.wantFactorMin)
			}
		})
	}
}

// TestOverfitWarning checks the bounds of the warning for planes that fit far below their
// expected χ²ᵣ: below τ/VerdictChi2Ratio and by more than three standard deviations of χ²ᵣ,
// τ·√(2/N) (a χ² of N degrees of freedom has variance 2N).
func TestOverfitWarning(t *testing.T) {
	for _, tc := range []struct {
		chi2r, tau float64
		n          int
		warn       bool
	}{
		{0.60, 0.93, 440, true},   // the chromatic demo's planes at α = 1
		{0.80, 0.93, 440, false},  // above τ/1.25 = 0.744
		{0.70, 0.93, 440, true},   // below 0.744 and 0.93·(1 − 3·0.0674) = 0.742
		{0.70, 1.00, 50, false},   // below 0.8 but within 3σ = 0.6 of τ for 50 data
		{0.30, 1.00, 50, true},    // below both
		{0.50, 0, 100, false},     // no expected value
		{1.40, 1.00, 1000, false}, // above: the other warning's case
	} {
		p := &PlaneResult{Chi2r: tc.chi2r, Chi2rTarget: tc.tau, N: tc.n}
		p.Label = "channel 1"
		if w := overfitWarning(0, p); (w != "") != tc.warn {
			t.Errorf("χ²ᵣ %g, τ %g, N %d: warning %q, want one: %v", tc.chi2r, tc.tau, tc.n, w, tc.warn)
		}
	}
}
