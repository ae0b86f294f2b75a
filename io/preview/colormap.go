package preview

import (
	"image/color"
	"math"
	"sort"
	"strconv"
)

// Colormap turns a display fraction t in [0, 1] (0 = faintest, 1 =
// brightest) into a colour. Implementations clamp t to [0, 1] and map NaN to
// 0. A Colormap must be safe for concurrent use.
type Colormap interface {
	At(t float64) color.NRGBA
}

// Cubehelix is the colour scheme of Green (2011, Bull. Astr. Soc. India 39,
// 289): a helix through the RGB cube from black to white around the grey
// diagonal, whose perceived intensity rises monotonically, so the map still
// reads correctly when printed in grey.
//
// For a fraction λ in [0, 1] the paper's equations (its eqs. 1-2 with the
// amplitude and angle defined in sect. 3) are
//
//	λ' = λ^γ
//	a  = h λ' (1 − λ') / 2
//	φ  = 2π (s/3 + 1 + r λ)
//	R  = λ' + a (−0.14861 cos φ + 1.78277 sin φ)
//	G  = λ' + a (−0.29227 cos φ − 0.90649 sin φ)
//	B  = λ' + a ( 1.97294 cos φ)
//
// with s the start colour (Start), r the number of R→G→B rotations
// (Rotations, negative for the other sense), h the hue or saturation
// (Hue) and γ the gamma factor (Gamma). The two direction vectors are
// orthogonal to the luminance weights (0.30, 0.59, 0.11) the paper uses, so
// before clipping 0.30 R + 0.59 G + 0.11 B = λ' exactly. Components are
// clipped to [0, 1], which the paper notes may happen for large Hue.
//
// The zero value is a grey ramp (Hue 0) with Gamma 0 taken as 1. The
// paper's default scheme is returned by DefaultCubehelix.
type Cubehelix struct {
	Start     float64 // start colour s, 0 to 3 (0.5 = purple in the paper)
	Rotations float64 // rotations r over the map; negative = B→G→R sense
	Hue       float64 // hue (saturation) parameter h, ≥ 0
	Gamma     float64 // gamma factor γ > 0; 0 means 1
}

// DefaultCubehelix returns the scheme of Green (2011) fig. 1: start 0.5,
// rotations −1.5, hue 1.0, gamma 1.0.
func DefaultCubehelix() Cubehelix {
	return Cubehelix{Start: 0.5, Rotations: -1.5, Hue: 1, Gamma: 1}
}

// rgb returns the unclipped components of the helix at fraction l.
func (c Cubehelix) rgb(l float64) (r, g, b float64) {
	gamma := c.Gamma
	if gamma <= 0 {
		gamma = 1
	}
	lg := math.Pow(l, gamma)
	a := c.Hue * lg * (1 - lg) / 2
	phi := 2 * math.Pi * (c.Start/3 + 1 + c.Rotations*l)
	cp, sp := math.Cos(phi), math.Sin(phi)
	r = lg + a*(-0.14861*cp+1.78277*sp)
	g = lg + a*(-0.29227*cp-0.90649*sp)
	b = lg + a*(1.97294*cp)
	return r, g, b
}

// RGB returns the red, green and blue components in [0, 1] at fraction t,
// clamped to [0, 1] (NaN is taken as 0).
func (c Cubehelix) RGB(t float64) (r, g, b float64) {
	r, g, b = c.rgb(clamp01(t))
	return clamp01(r), clamp01(g), clamp01(b)
}

// At implements Colormap.
func (c Cubehelix) At(t float64) color.NRGBA {
	r, g, b := c.RGB(t)
	return color.NRGBA{R: to8(r), G: to8(g), B: to8(b), A: 255}
}

// Gray is a linear black-to-white ramp.
type Gray struct{}

// At implements Colormap.
func (Gray) At(t float64) color.NRGBA {
	v := to8(clamp01(t))
	return color.NRGBA{R: v, G: v, B: v, A: 255}
}

// Palette returns n colours of m evenly spaced from t = 0 to t = 1
// (n ≥ 2; n = 1 gives the colour at 0.5).
func Palette(m Colormap, n int) color.Palette {
	if m == nil {
		m = DefaultCubehelix()
	}
	p := make(color.Palette, n)
	for i := range p {
		t := 0.5
		if n > 1 {
			t = float64(i) / float64(n-1)
		}
		p[i] = m.At(t)
	}
	return p
}

// Stretch maps a normalised data value t in [0, 1] (0 at the bottom of the
// colour scale, 1 at its top) to a display fraction in [0, 1]. All stretches
// are monotonically increasing and fix 0 and 1.
type Stretch int

const (
	// Auto, the zero value, picks Linear or Asinh from the data (ChooseStretch).
	Auto Stretch = iota
	// Linear displays t unchanged.
	Linear
	// Sqrt displays √t, lifting faint structure.
	Sqrt
	// Asinh displays asinh(t/β)/asinh(1/β) with β = 0.1: linear near zero
	// and logarithmic above β (the inverse hyperbolic sine scaling of Lupton,
	// Gunn & Szalay 1999, AJ 118, 1406; the value of β is common practice,
	// no source).
	Asinh
	// Log displays log(1 + a t)/log(1 + a) with a = 1000, which spans about
	// three decades (common practice, no source).
	Log
)

const (
	asinhBeta = 0.1
	logA      = 1000.0
)

// String returns the stretch's name as used in labels.
func (s Stretch) String() string {
	switch s {
	case Auto:
		return "auto"
	case Linear:
		return "linear"
	case Sqrt:
		return "sqrt"
	case Asinh:
		return "asinh"
	case Log:
		return "log"
	}
	return "Stretch(" + strconv.Itoa(int(s)) + ")"
}

// Apply returns the display fraction for t; t is clamped to [0, 1].
// Auto (not yet chosen) and unknown values of s act as Linear.
func (s Stretch) Apply(t float64) float64 {
	t = clamp01(t)
	switch s {
	case Sqrt:
		return math.Sqrt(t)
	case Asinh:
		return math.Asinh(t/asinhBeta) / math.Asinh(1/asinhBeta)
	case Log:
		return math.Log1p(logA*t) / math.Log1p(logA)
	}
	return t
}

// autoContrast is the ratio of the brightest pixel to the median of the significant pixels
// (those above autoFloor times the brightest) above which ChooseStretch picks Asinh: a
// linear display then shows the bright pixels and little else; above autoContrastLog it
// picks Log, since asinh (β = 0.1) still shows a pixel at a hundredth of the peak at only 3 %
// of the colour range, log at 35 % (common practice, no source).
const (
	autoContrast    = 8
	autoContrastLog = 64
	autoFloor       = 1e-3
)

// ChooseStretch picks the stretch of Auto for the pixel values of one or more images shown
// on one colour scale: Asinh when the brightest pixel is more than autoContrast times the
// median of the significant pixels (a bright companion beside a resolved disc), Log when it
// is more than autoContrastLog times (a star inside a faint ring, point sources on a halo),
// else Linear (a disc, a smooth object). Non-finite values are ignored.
func ChooseStretch(data ...[]float64) Stretch {
	peak := 0.0
	for _, d := range data {
		for _, v := range d {
			if v > peak && !math.IsInf(v, 0) {
				peak = v
			}
		}
	}
	if !(peak > 0) {
		return Linear
	}
	var sig []float64
	for _, d := range data {
		for _, v := range d {
			if v > autoFloor*peak && !math.IsInf(v, 0) {
				sig = append(sig, v)
			}
		}
	}
	sort.Float64s(sig)
	switch med := sig[len(sig)/2]; {
	case peak > autoContrastLog*med:
		return Log
	case peak > autoContrast*med:
		return Asinh
	}
	return Linear
}

// Invert returns t such that s.Apply(t) = f, for f in [0, 1].
func (s Stretch) Invert(f float64) float64 {
	f = clamp01(f)
	switch s {
	case Sqrt:
		return f * f
	case Asinh:
		return asinhBeta * math.Sinh(f*math.Asinh(1/asinhBeta))
	case Log:
		return math.Expm1(f*math.Log1p(logA)) / logA
	}
	return f
}

func clamp01(t float64) float64 {
	switch {
	case t > 1:
		return 1
	case t >= 0:
		return t
	}
	return 0 // negative or NaN
}

func to8(v float64) uint8 { return uint8(math.Round(255 * v)) }
