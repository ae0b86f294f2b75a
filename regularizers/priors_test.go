package regularizers

import (
	"math"
	"strings"
	"testing"
)

func sum(x []float64) float64 {
	var s float64
	for _, v := range x {
		s += v
	}
	return s
}

// TestGaussianPrior checks the flux, the floor and the width. A pixel of a
// Gaussian of FWHM w holds the integral of exp(−4 ln 2 r²/w²) over its
// square, P(dx)·P(dy) with P(d) = erf((d+½)k) − erf((d−½)k) and k = √(4 ln 2)/w
// (the Gaussian integral through erf, Abramowitz & Stegun 7.1.1); the
// prior's pixels are the mean of sub-pixel samples at 16 per FWHM or more
// (the midpoint rule), whose relative error is at most h²/24·max|f″/f| per
// axis, (w/16)²/24 · 3/σ² ≈ 2.7e-3 within 2σ of the centre (midpoint-rule
// error term), so the ratios to the peak pixel agree to 5e-3. The widths
// are 10 and 4 pixels, with 2 and 4 samples per pixel.
func TestGaussianPrior(t *testing.T) {
	const nx, ny = 40, 30
	for _, w := range []float64{10, 4} {
		g, err := GaussianPrior(nx, ny, w, 2.5, 1e-9)
		if err != nil {
			t.Fatal(err)
		}
		if s := sum(g); math.Abs(s-2.5) > 1e-12 {
			t.Errorf("FWHM %g: flux %g, want 2.5", w, s)
		}
		k := math.Sqrt(4*math.Ln2) / w
		p := func(d int) float64 { return math.Erf((float64(d)+0.5)*k) - math.Erf((float64(d)-0.5)*k) }
		c := g[(ny/2)*nx+nx/2]
		sigma := w / (2 * math.Sqrt(2*math.Ln2))
		for _, off := range [][2]int{{5, 0}, {-5, 0}, {0, 5}, {0, -5}, {3, 4}, {2, 0}, {-1, 2}} {
			if float64(max(off[0], -off[0], off[1], -off[1]))+0.5 > 2*sigma {
				continue // beyond the bound's reach
			}
			got := g[(ny/2+off[1])*nx+nx/2+off[0]] / c
			want := p(off[0]) * p(off[1]) / (p(0) * p(0))
			if math.Abs(got/want-1) > 5e-3 {
				t.Errorf("FWHM %g, offset %v: ratio to peak %g, want %g (pixel integrals)", w, off, got, want)
			}
		}
	}
	// Default floor: every pixel at least about 1e-3 of the mean.
	g, err := GaussianPrior(nx, ny, 4, 1, 0)
	if err != nil {
		t.Fatal(err)
	}
	mean := 1.0 / (nx * ny)
	for i, v := range g {
		if !(v >= 0.99*DefaultPriorFloor*mean) {
			t.Fatalf("pixel %d = %g below the floor %g", i, v, DefaultPriorFloor*mean)
		}
	}
	if s := sum(g); math.Abs(s-1) > 1e-12 {
		t.Errorf("flux %g, want 1", s)
	}
}

// TestDiscPrior checks the flux and the area: the flat top times the area
// pi d^2/4 of the disc holds the flux (area of a circle), to 0.5 % with
// 8x8 sub-pixel sampling of the edge.
func TestDiscPrior(t *testing.T) {
	const nx, ny = 48, 48
	for _, d := range []float64{7, 20, 31.5} {
		m, err := DiscPrior(nx, ny, d, 1, 1e-9)
		if err != nil {
			t.Fatal(err)
		}
		if s := sum(m); math.Abs(s-1) > 1e-12 {
			t.Errorf("d %g: flux %g", d, s)
		}
		top := m[(ny/2)*nx+nx/2]
		area := math.Pi * d * d / 4
		if got := 1 / top; math.Abs(got-area) > 0.005*area {
			t.Errorf("d %g: area %g pixels, want %g", d, got, area)
		}
		if corner := m[0]; corner > 1e-9 {
			t.Errorf("d %g: corner %g, want the floor", d, corner)
		}
	}
	// A tiny disc still gives a valid prior.
	m, err := DiscPrior(8, 8, 0.01, 1, 0)
	if err != nil {
		t.Fatal(err)
	}
	if m[4*8+4] < 0.9 {
		t.Errorf("tiny disc: centre %g", m[4*8+4])
	}
}

func TestImagePrior(t *testing.T) {
	img := []float64{-1, 0, 1, 3}
	m, err := ImagePrior(img, 1, 0.01)
	if err != nil {
		t.Fatal(err)
	}
	if s := sum(m); math.Abs(s-1) > 1e-14 {
		t.Errorf("flux %g", s)
	}
	if !(m[0] > 0) || m[0] != m[1] || math.Abs(m[3]/m[2]-3) > 1e-12 {
		t.Errorf("prior %v: want equal floored first pixels and ratio 3 between the last", m)
	}
	if img[0] != -1 {
		t.Errorf("input modified")
	}
}

func TestPriorErrors(t *testing.T) {
	tests := []struct {
		name string
		fn   func() ([]float64, error)
		want string
	}{
		{"gauss fwhm", func() ([]float64, error) { return GaussianPrior(8, 8, 0, 1, 0) }, "FWHM"},
		{"gauss flux", func() ([]float64, error) { return GaussianPrior(8, 8, 2, -1, 0) }, "flux"},
		{"disc diameter", func() ([]float64, error) { return DiscPrior(8, 8, math.NaN(), 1, 0) }, "diameter"},
		{"disc floor", func() ([]float64, error) { return DiscPrior(8, 8, 3, 1, 2) }, "floor"},
		{"flat grid", func() ([]float64, error) { return FlatPrior(0, 8, 1) }, "grid"},
		{"image nan", func() ([]float64, error) { return ImagePrior([]float64{1, math.NaN()}, 1, 0) }, "pixel 1"},
		{"image zero", func() ([]float64, error) { return ImagePrior([]float64{0, -1}, 1, 0) }, "no positive"},
	}
	for _, tc := range tests {
		_, err := tc.fn()
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: error %v, want containing %q", tc.name, err, tc.want)
		}
	}
}

// TestSupportMask counts the pixels within radius r of the centre: they
// are the integer lattice points with x^2 + y^2 <= r^2 (Gauss's circle
// problem; counts 1, 5, 13, 29, 49, 81, 113, 149, 197, 253, 317 for
// r = 0..10, OEIS A000328, from memory), in pixels and with a pixel of 0.25 (a power of two,
// so that the scaled distances are exact).
func TestSupportMask(t *testing.T) {
	want := []int{1, 5, 13, 29, 49, 81, 113, 149, 197, 253, 317}
	for r, w := range want {
		for _, pixel := range []float64{1, 0.25} {
			mask := SupportMask(32, 30, pixel, float64(r)*pixel)
			n := 0
			for _, in := range mask {
				if in {
					n++
				}
			}
			if n != w {
				t.Errorf("radius %d pixels of %g: %d pixels, want %d", r, pixel, n, w)
			}
			if !mask[15*32+16] {
				t.Errorf("radius %d pixels of %g: centre pixel outside", r, pixel)
			}
		}
	}
	lo, hi := SupportBounds(32, 30, 1, 5)
	mask := SupportMask(32, 30, 1, 5)
	for i := range mask {
		if lo[i] != 0 || (mask[i] && !math.IsInf(hi[i], 1)) || (!mask[i] && hi[i] != 0) {
			t.Fatalf("pixel %d: bounds [%g, %g], inside %v", i, lo[i], hi[i], mask[i])
		}
	}
}
