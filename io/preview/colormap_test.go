package preview

import (
	"math"
	"testing"
)

// luminance is the perceived intensity with the weights of Green (2011),
// sect. 2: 0.30 R + 0.59 G + 0.11 B.
func luminance(r, g, b float64) float64 { return 0.30*r + 0.59*g + 0.11*b }

func TestCubehelixHandValues(t *testing.T) {
	// Values worked by hand from the equations of Green (2011), sect. 3,
	// with the default scheme s = 0.5, r = −1.5, h = 1, γ = 1:
	//  λ = 0.5:  a = 0.5·0.5/2 = 0.125, φ = 2π(1/6 + 1 − 0.75) ≡ 150°,
	//            cos φ = −0.866025, sin φ = 0.5,
	//            R = 0.5 + 0.125(0.128700 + 0.891385) = 0.627511,
	//            G = 0.5 + 0.125(0.253113 − 0.453245) = 0.474983,
	//            B = 0.5 + 0.125(−1.708616)           = 0.286423.
	//  λ = 0.75: a = 0.09375, φ ≡ 15°, cos φ = 0.965926, sin φ = 0.258819,
	//            R = 0.75 + 0.09375(−0.143547 + 0.461418) = 0.779800,
	//            G = 0.75 + 0.09375(−0.282310 − 0.234617) = 0.701538,
	//            B = 0.75 + 0.09375(1.905715)             = 0.928661.
	//  λ = 0.25: a = 0.09375, φ ≡ −75°, cos φ = 0.258819, sin φ = −0.965926,
	//            R = 0.25 + 0.09375(−0.038463 − 1.722023) = 0.084954,
	//            G = 0.25 + 0.09375(−0.075645 + 0.875601) = 0.324996,
	//            B = 0.25 + 0.09375(0.510640)             = 0.297872.
	// Endpoints: a = 0 and λ' = 0 or 1, so black and white exactly.
	tests := []struct{ l, r, g, b float64 }{
		{0, 0, 0, 0},
		{0.25, 0.084954, 0.324996, 0.297872},
		{0.5, 0.627511, 0.474983, 0.286423},
		{0.75, 0.779800, 0.701538, 0.928661},
		{1, 1, 1, 1},
	}
	c := DefaultCubehelix()
	for _, tt := range tests {
		r, g, b := c.RGB(tt.l)
		if math.Abs(r-tt.r) > 2e-6 || math.Abs(g-tt.g) > 2e-6 || math.Abs(b-tt.b) > 2e-6 {
			t.Errorf("RGB(%g) = (%.6f, %.6f, %.6f), want (%.6f, %.6f, %.6f)", tt.l, r, g, b, tt.r, tt.g, tt.b)
		}
	}
	if got := c.At(0); got.R != 0 || got.G != 0 || got.B != 0 || got.A != 255 {
		t.Errorf("At(0) = %v, want opaque black", got)
	}
	if got := c.At(1); got.R != 255 || got.G != 255 || got.B != 255 {
		t.Errorf("At(1) = %v, want white", got)
	}
}

func TestCubehelixLuminance(t *testing.T) {
	// Green (2011), sect. 2: the deviation from the grey diagonal is chosen
	// perpendicular to the luminance direction, so before clipping the
	// perceived intensity is exactly λ^γ (to the 5 digits of the published
	// coefficients, whose products with the weights leave ~2e-6).
	params := []Cubehelix{
		DefaultCubehelix(),
		{Start: 0, Rotations: 1, Hue: 0.5, Gamma: 0.7},
		{Start: 2.5, Rotations: -3, Hue: 1.2, Gamma: 1.4},
		{}, // grey ramp
	}
	for _, c := range params {
		gamma := c.Gamma
		if gamma == 0 {
			gamma = 1
		}
		for i := 0; i <= 200; i++ {
			l := float64(i) / 200
			r, g, b := c.rgb(l)
			if want := math.Pow(l, gamma); math.Abs(luminance(r, g, b)-want) > 1e-5 {
				t.Errorf("%+v: luminance at %g = %g, want λ^γ = %g", c, l, luminance(r, g, b), want)
			}
		}
	}
}

func TestCubehelixMonotonic(t *testing.T) {
	// The purpose of the scheme (Green 2011, abstract): perceived intensity
	// increases monotonically along the map. After clipping to [0, 1] this
	// must still hold for the default scheme.
	for _, c := range []Cubehelix{DefaultCubehelix(), {Start: 0, Rotations: 1, Hue: 0.5, Gamma: 0.7}} {
		prev := -1.0
		for i := 0; i <= 2000; i++ {
			r, g, b := c.RGB(float64(i) / 2000)
			for _, v := range []float64{r, g, b} {
				if v < 0 || v > 1 {
					t.Fatalf("%+v: component %g outside [0, 1]", c, v)
				}
			}
			y := luminance(r, g, b)
			if y <= prev {
				t.Fatalf("%+v: luminance not increasing at step %d: %g after %g", c, i, y, prev)
			}
			prev = y
		}
	}
}

func TestCubehelixClamp(t *testing.T) {
	c := DefaultCubehelix()
	if c.At(-3) != c.At(0) || c.At(math.NaN()) != c.At(0) || c.At(7) != c.At(1) {
		t.Error("fractions outside [0, 1] and NaN must clamp to the ends")
	}
}

func TestStretch(t *testing.T) {
	for _, s := range []Stretch{Linear, Sqrt, Asinh, Log} {
		if s.Apply(0) != 0 || math.Abs(s.Apply(1)-1) > 1e-15 {
			t.Errorf("%v: Apply(0) = %g, Apply(1) = %g, want 0 and 1", s, s.Apply(0), s.Apply(1))
		}
		prev := -1.0
		for i := 0; i <= 100; i++ {
			f := float64(i) / 100
			v := s.Apply(f)
			if v <= prev {
				t.Errorf("%v not increasing at %g", s, f)
			}
			prev = v
			if back := s.Apply(s.Invert(v)); math.Abs(back-v) > 1e-12 {
				t.Errorf("%v: Apply(Invert(%g)) = %g", s, v, back)
			}
		}
	}
	// Fixed points of the closed forms: √0.25 = 0.5; log(1 + 1000·t) /
	// log(1001) at t = 0.000999 ≈ log(1.999)/log(1001) = 0.10029 (worked by
	// hand); asinh(0.1/0.1)/asinh(10) = 0.881374/2.998223 = 0.293966.
	checks := []struct {
		s        Stretch
		in, want float64
	}{
		{Sqrt, 0.25, 0.5},
		{Log, 0.000999, math.Log(1.999) / math.Log(1001)},
		{Asinh, 0.1, 0.293966},
	}
	for _, c := range checks {
		if got := c.s.Apply(c.in); math.Abs(got-c.want) > 1e-6 {
			t.Errorf("%v.Apply(%g) = %g, want %g", c.s, c.in, got, c.want)
		}
	}
}

func TestPalette(t *testing.T) {
	p := Palette(nil, 5)
	if len(p) != 5 || p[0] != DefaultCubehelix().At(0) || p[4] != DefaultCubehelix().At(1) {
		t.Errorf("Palette(nil, 5) = %v", p)
	}
}

// TestChooseStretch checks the automatic stretch on images whose answer is not in doubt: a
// uniform disc shows well linearly, also with a faint haze around it; a companion 20 times
// brighter per pixel than a disc gets asinh; a star holding a third of the flux inside a
// faint ring, and point sources on a halo, vanish except for their brightest pixels and get
// log (the thresholds are common practice, no source).
func TestChooseStretch(t *testing.T) {
	const n = 64
	disc := make([]float64, n*n)
	ring := make([]float64, n*n)
	for iy := 0; iy < n; iy++ {
		for ix := 0; ix < n; ix++ {
			r := math.Hypot(float64(ix-n/2), float64(iy-n/2))
			if r < 20 {
				disc[iy*n+ix] = 1
			}
			if r > 14 && r < 20 {
				ring[iy*n+ix] = 1
			}
		}
	}
	ring[n/2*n+n/2] = 300 // a star holding about a third of the flux
	halo := make([]float64, n*n)
	for i := range halo {
		halo[i] = 0.2
	}
	halo[10*n+10], halo[40*n+30] = 30, 20
	binary := append([]float64(nil), disc...)
	binary[5*n+5] = 20
	hazy := append([]float64(nil), disc...)
	for i := range hazy {
		if hazy[i] == 0 {
			hazy[i] = 0.005
		}
	}
	for _, c := range []struct {
		name string
		data [][]float64
		want Stretch
	}{
		{"disc", [][]float64{disc}, Linear},
		{"disc in a faint haze", [][]float64{hazy}, Linear},
		{"companion beside a disc", [][]float64{binary}, Asinh},
		{"star in a ring", [][]float64{ring}, Log},
		{"points on a halo", [][]float64{halo}, Log},
		{"disc beside a ring on one scale", [][]float64{disc, ring}, Log},
		{"empty", [][]float64{make([]float64, 4)}, Linear},
		{"NaN only", [][]float64{{math.NaN()}}, Linear},
	} {
		if got := ChooseStretch(c.data...); got != c.want {
			t.Errorf("%s: %v, want %v", c.name, got, c.want)
		}
	}
}
