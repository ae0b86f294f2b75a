package recon

import (
	"math"
	"strings"
	"testing"
	"vcz/dataset"

	"vcz/recon/optim"
)

// TestVerdict checks each rule of the quality verdict on results made by hand: a result that
// meets every threshold has no warning, and each defect gives exactly one warning that names
// it.
func TestVerdict(t *testing.T) {
	good := func() (*Result, verdictInput) {
		r := &Result{Chi2r: 1.02, Chi2rTarget: 1, Status: optim.IterationLimit, Weight: 10, Iter: 500,
			Chi2: []TermChi2{{Type: dataset.Vis2, N: 100, Chi2r: 1.0}, {Type: dataset.T3Phi, N: 100, Chi2r: 1.04}}}
		in := verdictInput{expect: map[dataset.DataType]float64{dataset.Vis2: 1, dataset.T3Phi: 1}, tail: 1e-5, auto: true, maxIters: 500}
		return r, in
	}
	r, in := good()
	if w := verdict(r, in); len(w) != 0 {
		t.Fatalf("a good result has warnings %q", w)
	}
	for _, tc := range []struct {
		name string
		edit func(*Result, *verdictInput)
		want string
	}{
		{"chi2 above", func(r *Result, _ *verdictInput) { r.Chi2r = 1.3 }, "expected value"},
		{"one type worse", func(r *Result, _ *verdictInput) {
			r.Chi2[1].Chi2r = 2.6
			r.Chi2r = 1.2 // below the total threshold: only the type rule fires
		}, "t3phi fit at 2.6"},
		{"still falling", func(_ *Result, in *verdictInput) { in.tail = 0.01 }, "still falling"},
		{"too short", func(_ *Result, in *verdictInput) { in.tail = math.NaN() }, "too few"},
		{"stalled", func(_ *Result, in *verdictInput) { in.stalled = true }, "stalled"},
		{"edge", func(_ *Result, in *verdictInput) { in.atEdge = "lower" }, "lower edge"},
		{"search stalled", func(_ *Result, in *verdictInput) { in.atEdge = "stalled" }, "weight search stalled"},
		{"starts", func(r *Result, _ *verdictInput) { r.StartObjectives = []float64{100, 110} }, "starts"},
	} {
		r, in := good()
		tc.edit(r, &in)
		w := verdict(r, in)
		if len(w) != 1 || !strings.Contains(w[0], tc.want) {
			t.Errorf("%s: warnings %q, want one naming %q", tc.name, w, tc.want)
		}
	}
	// A given weight is never at the edge of a search.
	r, in = good()
	in.auto, in.atEdge = false, "upper"
	if w := verdict(r, in); len(w) != 0 {
		t.Errorf("given weight: warnings %q", w)
	}
}

// Chi2rFar is the one χ²ᵣ rule of every verdict: above VerdictChi2Ratio times the expected
// value, or below it over VerdictChi2Ratio and by more than 3√(2/N), the scatter of χ²ᵣ of N
// Gaussian data (the χ² distribution with N degrees of freedom has variance 2N), so that a
// few data are not judged on their noise (the thresholds are common practice, no source).
func TestChi2rFar(t *testing.T) {
	for _, c := range []struct {
		chi2r, expected float64
		n, want         int
	}{
		{1.0, 1, 100, 0},
		{1.26, 1, 100, 1},
		{1.24, 1, 100, 0},
		{1.26 * 0.9, 0.9, 0, 1}, // the high side needs no N
		{0.5, 1, 100, -1},       // 3√(2/100) = 0.42: 0.5 is below 0.58
		{0.7, 1, 100, 0},        // below 1/1.25 but within 3√(2/N)
		{0.5, 1, 10, 0},         // 3√(2/10) = 1.34: no data set of 10 is far below
		{0.5, 1, 0, 0},
		{5, 0, 100, 0},
		{5, math.NaN(), 100, 0},
	} {
		if got := Chi2rFar(c.chi2r, c.expected, c.n); got != c.want {
			t.Errorf("χ²ᵣ %g, expected %g, N %d: %d, want %d", c.chi2r, c.expected, c.n, got, c.want)
		}
	}
}
