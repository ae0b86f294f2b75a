package model

import (
	"math"
	"testing"
)

// TestUniformDiscGaussianV checks the one-dimensional visibilities against published values
// and against the components they serve.
func TestUniformDiscGaussianV(t *testing.T) {
	const theta = 3 * MasToRad
	// The first zero of J1 is j1,1 = 3.8317059702 (Abramowitz & Stegun, table 9.5), so a
	// uniform disc's visibility first vanishes at π·θ·q = j1,1.
	if v := UniformDiscV(theta, 3.8317059702075123/(math.Pi*theta)); math.Abs(v) > 1e-12 {
		t.Errorf("UniformDiscV at the first zero of J1 = %g, want 0", v)
	}
	// 2·J1(z)/z = 1 − z²/8 + z⁴/192 − … (A&S eq. 9.1.10), at z = 10⁻³.
	if v, want := UniformDiscV(theta, 1e-3/(math.Pi*theta)), 1-1e-6/8+1e-12/192; math.Abs(v-want) > 1e-15 {
		t.Errorf("UniformDiscV near 0 = %.17g, want %.17g", v, want)
	}
	// A Gaussian's visibility is 1/2 at q = 2 ln 2/(π·FWHM): exp(−(2 ln 2)²/(4 ln 2)) = 1/2.
	if v := GaussianV(theta, 2*math.Ln2/(math.Pi*theta)); math.Abs(v-0.5) > 1e-15 {
		t.Errorf("GaussianV at its half point = %.17g, want 0.5", v)
	}
	ud, err := New(UniformDisc, map[string]float64{"diameter": 3})
	if err != nil {
		t.Fatal(err)
	}
	g, err := New(Gaussian, map[string]float64{"fwhm": 3})
	if err != nil {
		t.Fatal(err)
	}
	for _, q := range []float64{0, 1e6, 3e7, 1e8, 4e8} {
		u, v := 0.6*q, 0.8*q
		if d := math.Abs(UniformDiscV(theta, q) - real(ud.Vis(u, v))); d > 1e-14 {
			t.Errorf("q = %g: UniformDiscV and the ud component differ by %g", q, d)
		}
		if d := math.Abs(GaussianV(theta, q) - real(g.Vis(u, v))); d > 1e-14 {
			t.Errorf("q = %g: GaussianV and the gauss component differ by %g", q, d)
		}
	}
}
