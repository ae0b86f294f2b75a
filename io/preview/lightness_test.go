package preview

import (
	"math"
	"testing"
)

// lstar returns the CIE 1976 lightness of an 8-bit sRGB colour: the sRGB decoding of
// IEC 61966-2-1 (sect. 5.2), the luminance Y = 0.2126 R + 0.7152 G + 0.0722 B of its
// linear components (the Y row of the sRGB-to-XYZ matrix, ITU-R BT.709), and
// L* = 116 f(Y/Yn) − 16 with f(t) = t^(1/3) above (6/29)³ and t/(3 (6/29)²) + 4/29
// below (CIE 15:2004, eq. 8.1).
func lstar(r, g, b uint8) float64 {
	return lstarF(float64(r)/255, float64(g)/255, float64(b)/255)
}

// lstarF is lstar for sRGB components in [0, 1].
func lstarF(r, g, b float64) float64 {
	dec := func(c float64) float64 {
		if c <= 0.04045 {
			return c / 12.92
		}
		return math.Pow((c+0.055)/1.055, 2.4)
	}
	y := 0.2126*dec(r) + 0.7152*dec(g) + 0.0722*dec(b)
	const e = 6.0 / 29
	f := math.Cbrt(y)
	if y <= e*e*e {
		f = y/(3*e*e) + 4.0/29
	}
	return 116*f - 16
}

// The lightness formula on known points: black 0, white 100, and the sRGB grey 119 at
// L* ≈ 50.0 (Y = 0.1845; 116·0.5693 − 16 = 50.04, worked by hand from the formulas above).
func TestLStar(t *testing.T) {
	for _, c := range []struct {
		v    uint8
		want float64
	}{{0, 0}, {255, 100}, {119, 50.04}} {
		if got := lstar(c.v, c.v, c.v); math.Abs(got-c.want) > 0.02 {
			t.Errorf("L*(%d, %d, %d) = %.3f, want %.2f", c.v, c.v, c.v, got, c.want)
		}
	}
}

// The lightness map rises strictly in L*, sampled at 1 024 fractions, and follows
// L* = 100 t; its 8-bit colours, at every level of an 8-bit display, never fall in L* (8-bit
// greys near black are coarser than those steps, so equal neighbours occur) and follow
// 100 t within the rounding. It runs from black to white, and it is not grey in between when
// it has a chroma.
func TestLightnessMonotone(t *testing.T) {
	for _, m := range []Lightness{DefaultLightness(), {}, {Hue: 250, Chroma: 60}} {
		prev := -1.0
		for i := 0; i <= 1024; i++ {
			tt := float64(i) / 1024
			l := lstarF(m.RGB(tt))
			// The standard's matrices have four decimals: L* = 100 t holds to 0.002 (measured).
			if !(l > prev) || math.Abs(l-100*tt) > 0.01 {
				t.Fatalf("%+v: L* %.6f at t = %.5f after %.6f: want increasing, 100 t", m, l, tt, prev)
			}
			prev = l
		}
		prev = -1
		maxDev, maxChroma := 0.0, 0
		for i := 0; i < 256; i++ {
			tt := float64(i) / 255
			c := m.At(tt)
			l := lstar(c.R, c.G, c.B)
			if l < prev {
				t.Fatalf("%+v: 8-bit L* %.3f at t = %.4f after %.3f: falls", m, l, tt, prev)
			}
			prev = l
			maxDev = math.Max(maxDev, math.Abs(l-100*tt))
			maxChroma = max(maxChroma, int(max(c.R, c.G, c.B))-int(min(c.R, c.G, c.B)))
		}
		if c := m.At(0); c.R|c.G|c.B != 0 {
			t.Errorf("%+v: t = 0 gives %v, want black", m, c)
		}
		if c := m.At(1); c.R&c.G&c.B != 255 {
			t.Errorf("%+v: t = 1 gives %v, want white", m, c)
		}
		// 8-bit rounding moves L* by at most about 0.5 near black (common practice, no source).
		if maxDev > 0.6 {
			t.Errorf("%+v: 8-bit L* departs from 100 t by %.2f", m, maxDev)
		}
		if (m.Chroma > 0) != (maxChroma > 20) {
			t.Errorf("%+v: largest channel spread %d", m, maxChroma)
		}
	}
}

// A star: a bright pixel on a faint floor gets the lightness map; a disc keeps cubehelix.
func TestChooseColormap(t *testing.T) {
	star := make([]float64, 64*64)
	for i := range star {
		star[i] = 1e-4
	}
	star[32*64+32] = 1
	if _, ok := ChooseColormap(star).(Lightness); !ok {
		t.Errorf("star: %T, want Lightness", ChooseColormap(star))
	}
	disc := make([]float64, 64*64)
	for iy := 0; iy < 64; iy++ {
		for ix := 0; ix < 64; ix++ {
			if math.Hypot(float64(ix-32), float64(iy-32)) < 12 {
				disc[iy*64+ix] = 1
			}
		}
	}
	if _, ok := ChooseColormap(disc).(Cubehelix); !ok {
		t.Errorf("disc: %T, want Cubehelix", ChooseColormap(disc))
	}
}
