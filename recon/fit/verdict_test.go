package fit

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// The expected χ²ᵣ of a fit is the mean expectation of its residuals' squares: 1 for V² and
// closure amplitudes, and for a wrap-safe closure phase of Gaussian error σ E[2(1 − cos ε)]/σ²
// = 2(1 − e^(−σ²/2))/σ², as E[cos ε] = e^(−σ²/2) (the characteristic function of the normal
// distribution). A right model fitted to data with those errors lands within three times the
// scatter √(2/DOF) of χ²ᵣ of it (common practice, no source) and gets no warning; a model that
// cannot fit the data (a single disc for a binary) gets the warning above 1.25 times the
// expected value, and error bars three times too large (χ²ᵣ about 1/9) the one far below,
// by the rule of the images' verdict (recon.Chi2rFar, common practice, no source).
func TestVerdictChi2(t *testing.T) {
	const sigPhi = 1.0 // rad
	n := noise{v2: 0.01, t3amp: 0.01, t3phi: sigPhi, rng: rand.New(rand.NewPCG(7, 11))}
	d := synth(modelVis(mustLoad(t, "ud:diameter=1.2;point:x=4,y=-3,flux=0.3")), n)
	res, err := Fit(d, mustLoad(t, "ud:diameter~1.2;point:x~4,y~-3,flux~0.3(0..1)"), Options{})
	if err != nil {
		t.Fatal(err)
	}
	nv2, nt3 := len(d.Vis2.Value), len(d.T3.Phi)
	want := (float64(nv2+nt3) + float64(nt3)*2*(1-math.Exp(-sigPhi*sigPhi/2))/(sigPhi*sigPhi)) / float64(nv2+2*nt3)
	if math.Abs(res.Chi2rExpected-want) > 1e-12 {
		t.Errorf("expected χ²ᵣ %.15g, want %.15g", res.Chi2rExpected, want)
	}
	if dev := math.Abs(res.Chi2r - want); dev > 3*want*math.Sqrt(2/float64(res.DOF)) {
		t.Errorf("right model: χ²ᵣ %g, %g from its expected value %g", res.Chi2r, dev, want)
	}
	if len(res.Warnings) != 0 {
		t.Errorf("right model: warnings %q", res.Warnings)
	}

	bad, err := Fit(d, mustLoad(t, "ud:diameter~1.2"), Options{})
	if err != nil {
		t.Fatal(err)
	}
	if !(bad.Chi2r > 1.25*bad.Chi2rExpected) || len(bad.Warnings) != 1 || !strings.Contains(bad.Warnings[0], "times its expected value") {
		t.Errorf("disc for a binary: χ²ᵣ %g (expected %g), warnings %q", bad.Chi2r, bad.Chi2rExpected, bad.Warnings)
	}

	for _, e := range [][]float64{d.Vis2.Err, d.T3.AmpErr, d.T3.PhiErr} {
		for i := range e {
			e[i] *= 3
		}
	}
	low, err := Fit(d, mustLoad(t, "ud:diameter~1.2;point:x~4,y~-3,flux~0.3(0..1)"), Options{})
	if err != nil {
		t.Fatal(err)
	}
	if len(low.Warnings) != 1 || !strings.Contains(low.Warnings[0], "far below its expected value") {
		t.Errorf("error bars 3 times too large: χ²ᵣ %g (expected %g), warnings %q", low.Chi2r, low.Chi2rExpected, low.Warnings)
	}
}

// A fit that did not converge says so in its verdict too.
func TestVerdictNotConverged(t *testing.T) {
	d := synth(modelVis(mustLoad(t, "ud:diameter=1.2;point:x=4,y=-3,flux=0.3")), exactNoise)
	res, _ := Fit(d, mustLoad(t, "ud:diameter~2;point:x~1,y~1,flux~0.1(0..1)"), Options{MaxIter: 2})
	if res == nil || len(res.Warnings) == 0 || !strings.Contains(res.Warnings[len(res.Warnings)-1], "did not converge after 2 iterations") {
		t.Fatalf("warnings %q", res.Warnings)
	}
}

// A value counts as on a bound within BoundTol of the range between two finite bounds, or
// of one unit with one bound: the change of variables is stationary there, and a fit whose
// minimum lies beyond the bound may stop a small step short of it (common practice, no
// source). Values further inside do not count.
func TestAtBoundTolerance(t *testing.T) {
	inf := math.Inf(1)
	pr := &problem{lo: []float64{-2.496, 0, -inf, -inf}, hi: []float64{-1.656, inf, 5, inf}}
	rng := 0.84
	for _, c := range []struct {
		i    int
		x    float64
		want bool
	}{
		{0, -2.496, true},
		{0, -2.496 + 6e-6*rng, true},
		{0, -1.656 - 0.5*BoundTol*rng, true},
		{0, -2.496 + 2*BoundTol*rng, false},
		{0, -2.0, false},
		{1, 0, true},
		{1, 0.5 * BoundTol, true},
		{1, 2 * BoundTol, false},
		{2, 5 - 0.5*BoundTol, true},
		{2, 4, false},
		{3, 1e300, false},
	} {
		if got := pr.atBound(c.i, c.x); got != c.want {
			t.Errorf("parameter in [%g, %g] at %.17g: at a bound %t, want %t", pr.lo[c.i], pr.hi[c.i], c.x, got, c.want)
		}
	}
}
