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
	// Auto, the zero value, picks Linear, Asinh or Log from the data (ChooseStretch).
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

// Constants of ChooseStretch (common practice, no source): a pixel fainter than autoVisible
// times the brightest is hard to see on a linear scale; a linear display is kept while the
// pixels above that level hold at least autoFlux of the flux; beyond it, Log is taken when
// the brightest pixel outshines the hidden emission (the pixel that splits the flux of the
// fainter pixels in half) by more than autoContrastLog, since asinh (β = 0.1) shows a pixel
// at 1/32 of the peak at 10 % of the colour range and log at 50 %; else Asinh.
const (
	autoVisible     = 1.0 / 8
	autoFlux        = 0.9
	autoContrastLog = 32
)

// ChooseStretch picks the stretch of Auto for the pixel values of one or more images shown
// on one colour scale. Linear when the pixels a linear scale shows well (above autoVisible
// times the brightest) hold most of the flux (a disc, a smooth object, also with a faint
// haze around it); otherwise Log when the brightest pixel outshines the typical hidden
// pixel by more than autoContrastLog (a star inside a faint ring, point sources on a halo),
// else Asinh (a bright companion beside a resolved disc). Non-positive and non-finite values
// are ignored.
func ChooseStretch(data ...[]float64) Stretch {
	var v []float64
	for _, d := range data {
		for _, x := range d {
			if x > 0 && !math.IsInf(x, 0) {
				v = append(v, x)
			}
		}
	}
	if len(v) == 0 {
		return Linear
	}
	sort.Sort(sort.Reverse(sort.Float64Slice(v)))
	peak := v[0]
	shown, hidden := 0.0, 0.0
	for _, x := range v {
		if x >= autoVisible*peak {
			shown += x
		} else {
			hidden += x
		}
	}
	if shown >= autoFlux*(shown+hidden) {
		return Linear
	}
	// The pixel that splits the hidden flux in half.
	cum, half := 0.0, 0.0
	for _, x := range v {
		if x < autoVisible*peak {
			if cum += x; cum >= hidden/2 {
				half = x
				break
			}
		}
	}
	if peak > autoContrastLog*half {
		return Log
	}
	return Asinh
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
