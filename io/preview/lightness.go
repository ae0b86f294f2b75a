package preview

import (
	"image/color"
	"math"
)

// Lightness is a colour map whose perceived lightness, the CIE 1976 lightness L*, rises in
// proportion to the display fraction: L* = 100 t, from black (t = 0) to white (t = 1),
// through one hue of the CIELAB a*b* plane with the chroma C* = Chroma · sin(π t), zero at
// both ends. A colour outside the sRGB gamut keeps its lightness and hue and has its chroma
// reduced (by bisection) until it fits. Unlike a map through many hues, it paints a bright
// point and the faint wings around it in one tint, brighter only, so a point source looks
// like a point.
//
// The conversion is CIELAB to CIE XYZ under the D65 white (CIE 15:2004, sect. 8.2.1, the
// inverse of its eqs. 8.1–8.3) and XYZ to sRGB (IEC 61966-2-1:1999, the matrix and the
// transfer function of sect. 5.3). L* is monotone in the luminance Y, so a map monotone in
// L* stays monotone printed in grey.
//
// The zero value is a grey ramp of uniform lightness steps.
type Lightness struct {
	Hue    float64 // hue angle h_ab in degrees (0 = +a*, red; 90 = +b*, yellow)
	Chroma float64 // largest chroma C*, at t = 1/2, before gamut reduction
}

// DefaultLightness returns the map used for point-like images: an amber hue (h_ab = 70°)
// with chroma up to 40, reaching the gamut's edge in the bright half.
func DefaultLightness() Lightness { return Lightness{Hue: 70, Chroma: 40} }

// D65 white point of CIE 15:2004 (table T.3), Y normalised to 1.
const d65X, d65Z = 0.95047, 1.08883

// labToLinearRGB converts CIELAB (L*, a*, b*) under D65 to linear sRGB.
func labToLinearRGB(L, a, b float64) (r, g, bl float64) {
	const e = 6.0 / 29
	finv := func(t float64) float64 {
		if t > e {
			return t * t * t
		}
		return 3 * e * e * (t - 4.0/29)
	}
	fy := (L + 16) / 116
	x, y, z := d65X*finv(fy+a/500), finv(fy), d65Z*finv(fy-b/200)
	r = 3.2406*x - 1.5372*y - 0.4986*z
	g = -0.9689*x + 1.8758*y + 0.0415*z
	bl = 0.0557*x - 0.2040*y + 1.0570*z
	return r, g, bl
}

// srgbEncode is the sRGB transfer function (IEC 61966-2-1, sect. 5.3.4 as amended).
func srgbEncode(c float64) float64 {
	if c <= 0.0031308 {
		return 12.92 * c
	}
	return 1.055*math.Pow(c, 1/2.4) - 0.055
}

// RGB returns the sRGB components in [0, 1] at fraction t (clamped; NaN is 0).
func (m Lightness) RGB(t float64) (r, g, b float64) {
	t = clamp01(t)
	L := 100 * t
	h := m.Hue * math.Pi / 180
	inGamut := func(c float64) (float64, float64, float64, bool) {
		r, g, b := labToLinearRGB(L, c*math.Cos(h), c*math.Sin(h))
		const tol = 1e-9
		return r, g, b, r >= -tol && r <= 1+tol && g >= -tol && g <= 1+tol && b >= -tol && b <= 1+tol
	}
	c := m.Chroma * math.Sin(math.Pi*t)
	lr, lg, lb, ok := inGamut(c)
	if !ok {
		lo, hi := 0.0, c
		for range 40 {
			mid := (lo + hi) / 2
			if _, _, _, ok := inGamut(mid); ok {
				lo = mid
			} else {
				hi = mid
			}
		}
		lr, lg, lb, _ = inGamut(lo)
	}
	return srgbEncode(clamp01(lr)), srgbEncode(clamp01(lg)), srgbEncode(clamp01(lb))
}

// At implements Colormap.
func (m Lightness) At(t float64) color.NRGBA {
	r, g, b := m.RGB(t)
	return color.NRGBA{R: to8(r), G: to8(g), B: to8(b), A: 255}
}

// ChooseColormap picks the colour map of Options.Colormap nil for the pixel values of one or
// more images shown on one colour scale: DefaultLightness when a few bright pixels outshine
// the rest (ChooseStretch does not keep them linear: a star, points on a halo), where a map
// through many hues would tint the faint wings of a point as if they were structure; else
// DefaultCubehelix, whose hues separate the levels of an extended object.
func ChooseColormap(data ...[]float64) Colormap {
	if ChooseStretch(data...) != Linear {
		return DefaultLightness()
	}
	return DefaultCubehelix()
}
