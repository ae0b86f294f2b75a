package preview

import (
	"fmt"
	"image/color"
	"math"
	"strconv"
)

// lutSize is the number of colours precomputed per colour scale, indexed
// by the normalised value before the stretch. With 16384 levels even the
// steepest stretch (asinh, slope 3.3 at zero) moves by less than one
// 8-bit step between entries.
const lutSize = 16384

// nanColor is drawn for pixels whose value is NaN.
var nanColor = color.RGBA{R: 128, G: 128, B: 128, A: 255}

// colorScale maps data values to colours: value → normalised t in [0, 1]
// between lo and hi → stretched display fraction → colour map.
type colorScale struct {
	lo, hi  float64
	stretch Stretch
	cmap    Colormap
	lut     []color.RGBA // colours by normalised value, stretch applied
	inv     float64      // 1/(hi − lo)
}

// newScale builds the colour scale of opt over the data of all frames: the
// limits are opt.Min and opt.Max when either is non-zero, else the range
// of the finite values.
func newScale(opt *Options, frames []Frame) (*colorScale, error) {
	lo, hi := opt.Min, opt.Max
	if lo == 0 && hi == 0 {
		lo, hi = math.Inf(1), math.Inf(-1)
		for _, f := range frames {
			for _, v := range f.Data {
				if !math.IsNaN(v) && !math.IsInf(v, 0) {
					lo = math.Min(lo, v)
					hi = math.Max(hi, v)
				}
			}
		}
		if lo > hi {
			return nil, fmt.Errorf("preview: no finite pixel value to scale")
		}
		if hi == lo {
			// A constant image: put its value at the bottom of a unit range
			// (or centre it when it is not zero) so the bar stays readable.
			if lo == 0 {
				hi = 1
			} else {
				d := math.Abs(lo) / 2
				lo, hi = lo-d, hi+d
			}
		}
	} else if !(hi > lo) || math.IsInf(lo, 0) || math.IsInf(hi, 0) {
		return nil, fmt.Errorf("preview: colour scale limits Min %g, Max %g: need finite Min < Max", opt.Min, opt.Max)
	}
	var data [][]float64
	for _, f := range frames {
		data = append(data, f.Data)
	}
	cm := opt.Colormap
	if cm == nil {
		cm = ChooseColormap(data...)
	}
	if opt.Stretch == Auto {
		opt.Stretch = ChooseStretch(data...)
	}
	s := &colorScale{lo: lo, hi: hi, stretch: opt.Stretch, cmap: cm, lut: make([]color.RGBA, lutSize), inv: 1 / (hi - lo)}
	for i := range s.lut {
		c := cm.At(s.stretch.Apply(float64(i) / (lutSize - 1)))
		s.lut[i] = color.RGBA{R: c.R, G: c.G, B: c.B, A: 255}
	}
	return s, nil
}

// fraction returns the display fraction of value v, in [0, 1].
func (s *colorScale) fraction(v float64) float64 {
	return s.stretch.Apply((v - s.lo) / (s.hi - s.lo))
}

// color returns the colour of value v.
func (s *colorScale) color(v float64) color.RGBA {
	if math.IsNaN(v) {
		return nanColor
	}
	return s.lut[int(clamp01((v-s.lo)*s.inv)*(lutSize-1)+0.5)]
}

// colorAt returns the colour at display fraction f (after the stretch).
func (s *colorScale) colorAt(f float64) color.RGBA {
	c := s.cmap.At(f)
	return color.RGBA{R: c.R, G: c.G, B: c.B, A: 255}
}

// tick is one labelled value of the colour bar at display fraction pos.
type tick struct {
	pos   float64
	label string
}

// ticks returns the labelled values of the colour bar, at least minGap
// apart in display fraction, and the power of ten the labels are divided
// by (0 when they are printed as they are).
func (s *colorScale) ticks(minGap float64) ([]tick, int) {
	var vals []float64
	sig := 0 // significant digits of non-linear labels; 0 = linear labels
	if s.stretch == Linear || s.stretch == Auto {
		vals = niceTicks(s.lo, s.hi, 6)
	} else {
		// Non-linear stretches: ticks evenly spaced in display fraction,
		// each rounded to one significant digit, plus both ends.
		sig = 2
		vals = append(vals, roundSig(s.lo, 2, math.Round))
		for i := 1; i < 5; i++ {
			vals = append(vals, roundSig(s.lo+s.stretch.Invert(float64(i)/5)*(s.hi-s.lo), 1, math.Round))
		}
		vals = append(vals, roundSig(s.hi, 2, math.Floor))
		k := 0
		for _, v := range vals {
			if math.Abs(v) < 1e-6*(s.hi-s.lo) {
				v = 0 // an end that is zero but for rounding
			}
			if v >= s.lo-1e-6*(s.hi-s.lo) && v <= s.hi {
				vals[k] = v
				k++
			}
		}
		vals = vals[:k]
	}
	exp := 0
	m := math.Max(math.Abs(s.lo), math.Abs(s.hi))
	if m > 0 {
		if e := int(math.Floor(math.Log10(m))); e < -2 || e > 3 {
			exp = e
		}
	}
	div := math.Pow(10, float64(exp))
	var out []tick
	last := math.Inf(-1)
	for _, v := range vals {
		p := s.fraction(v)
		if p-last < minGap {
			continue
		}
		last = p
		lab := formatTick(v/div, (s.hi-s.lo)/div)
		if sig > 0 {
			lab = strconv.FormatFloat(v/div, 'g', sig, 64)
		}
		out = append(out, tick{pos: p, label: lab})
	}
	return out, exp
}

// niceStep returns the number 1, 2 or 5 times a power of ten nearest
// above x (x > 0).
func niceStep(x float64) float64 {
	if !(x > 0) {
		return 1
	}
	p := math.Pow(10, math.Floor(math.Log10(x)))
	switch f := x / p; {
	case f <= 1:
		return p
	case f <= 2:
		return 2 * p
	case f <= 5:
		return 5 * p
	}
	return 10 * p
}

// niceTicks returns multiples of a 1-2-5 step inside [lo, hi], about n of
// them.
func niceTicks(lo, hi float64, n int) []float64 {
	step := niceStep((hi - lo) / float64(n))
	var out []float64
	for k := math.Ceil(lo/step - 1e-9); k*step <= hi+1e-9*step; k++ {
		v := k * step
		if math.Abs(v) < 1e-12*step {
			v = 0
		}
		out = append(out, v)
	}
	return out
}

// formatTick prints v with as many decimals as a range of span needs.
func formatTick(v, span float64) string {
	d := 0
	if span > 0 {
		d = int(math.Max(0, -math.Floor(math.Log10(niceStep(span/6)))))
	}
	if d > 6 {
		d = 6
	}
	s := strconv.FormatFloat(v, 'f', d, 64)
	if s == "-0" || (len(s) > 1 && s[0] == '-' && isZero(s[1:])) {
		s = s[1:]
	}
	return s
}

func isZero(s string) bool {
	for _, c := range s {
		if c != '0' && c != '.' {
			return false
		}
	}
	return true
}

// niceLength returns the largest 1-2-5 number not above x (x > 0), used
// for the length of the scale bar.
func niceLength(x float64) float64 {
	p := math.Pow(10, math.Floor(math.Log10(x)))
	switch f := x / p; {
	case f >= 5:
		return 5 * p
	case f >= 2:
		return 2 * p
	}
	return p
}

// roundSig rounds v to n significant digits with the rounding function
// round (math.Round, math.Floor).
func roundSig(v float64, n int, round func(float64) float64) float64 {
	if v == 0 || math.IsNaN(v) || math.IsInf(v, 0) {
		return v
	}
	p := math.Pow(10, math.Floor(math.Log10(math.Abs(v)))-float64(n-1))
	return round(v/p) * p
}
