package plots

import (
	"fmt"
	"image/color"
	"math"

	"gonum.org/v1/plot/palette"

	"vcz/io/preview"
)

// rangeMap is a palette.ColorMap over [min, max] given by a function of
// the fraction t in [0, 1].
type rangeMap struct {
	min, max, alpha float64
	at              func(t float64) color.Color
}

var _ palette.ColorMap = (*rangeMap)(nil)

func (m *rangeMap) At(v float64) (color.Color, error) {
	if !(v >= m.min && v <= m.max) {
		return nil, fmt.Errorf("plots: value %g outside the colour range [%g, %g]", v, m.min, m.max)
	}
	t := 0.0
	if m.max > m.min {
		t = (v - m.min) / (m.max - m.min)
	}
	return m.at(t), nil
}

func (m *rangeMap) Max() float64       { return m.max }
func (m *rangeMap) Min() float64       { return m.min }
func (m *rangeMap) SetMax(v float64)   { m.max = v }
func (m *rangeMap) SetMin(v float64)   { m.min = v }
func (m *rangeMap) Alpha() float64     { return m.alpha }
func (m *rangeMap) SetAlpha(a float64) { m.alpha = a }
func (m *rangeMap) Palette(n int) palette.Palette {
	cs := make([]color.Color, n)
	for i := range cs {
		t := 0.0
		if n > 1 {
			t = float64(i) / float64(n-1)
		}
		cs[i] = m.at(t)
	}
	return colors(cs)
}

type colors []color.Color

func (c colors) Colors() []color.Color { return c }

// wavelengthColor colours a wavelength by its fraction t of the range from
// the shortest (t = 0, violet-blue) to the longest (t = 1, red), as the
// colours of the visible spectrum run: hue from 260° down to 0° at full
// saturation and 85 % value, dark enough to read on white (common practice,
// no source).
func wavelengthColor(t float64) color.Color {
	t = math.Min(math.Max(t, 0), 1)
	return hsv((1-t)*260, 1, 0.85)
}

// hsv converts hue (degrees), saturation and value in [0, 1] to RGB by the
// hexcone model (Smith 1978, SIGGRAPH Comput. Graph. 12, 12).
func hsv(h, s, v float64) color.RGBA {
	h = math.Mod(h, 360) / 60
	i := math.Floor(h)
	f := h - i
	p, q, r := v*(1-s), v*(1-s*f), v*(1-s*(1-f))
	var R, G, B float64
	switch int(i) {
	case 0:
		R, G, B = v, r, p
	case 1:
		R, G, B = q, v, p
	case 2:
		R, G, B = p, v, r
	case 3:
		R, G, B = p, q, v
	case 4:
		R, G, B = r, p, v
	default:
		R, G, B = v, p, q
	}
	c := func(x float64) uint8 { return uint8(math.Round(255 * x)) }
	return color.RGBA{c(R), c(G), c(B), 255}
}

// cubehelixColor is the colour of the default cubehelix map (see package
// preview) at t, for χ² maps: dark for low χ².
func cubehelixColor(t float64) color.Color {
	return preview.DefaultCubehelix().At(t)
}
