package plots

import (
	"fmt"
	"image"
	"image/color"
	"image/png"
	"io"
	"math"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"

	"vcz/io/safefile"
)

// Options sets what every plot shares. The zero value gives an 800 × 600
// pixel plot with the default title of its kind.
type Options struct {
	// Title replaces the plot's default title when not empty.
	Title string
	// Width and Height are the size of the PNG in pixels; 0 means 800
	// and 600.
	Width, Height int
	// LogY draws the y axis of V2 on a logarithmic scale; points whose
	// value is not positive are then left out.
	LogY bool
}

// dpi is the resolution at which plot lengths (points) become pixels.
const dpi = 96

func (o Options) size() (int, int) {
	w, h := o.Width, o.Height
	if w <= 0 {
		w = 800
	}
	if h <= 0 {
		h = 600
	}
	return w, h
}

func (o Options) title(def string) string {
	if o.Title != "" {
		return o.Title
	}
	return def
}

// Figure is a finished plot, ready to be rasterised. It holds the data it
// was made from, so it may be rendered several times and concurrently.
type Figure struct {
	width, height int
	draw          func(c draw.Canvas)
}

// Size returns the size of the figure in pixels.
func (f *Figure) Size() (width, height int) { return f.width, f.height }

// Image rasterises the figure.
func (f *Figure) Image() image.Image {
	c := vgimg.NewWith(
		vgimg.UseWH(vg.Length(f.width)*vg.Inch/dpi, vg.Length(f.height)*vg.Inch/dpi),
		vgimg.UseDPI(dpi),
		vgimg.UseBackgroundColor(color.White),
	)
	f.draw(draw.New(c))
	return c.Image()
}

// Encode writes the figure as a PNG to w.
func (f *Figure) Encode(w io.Writer) error {
	return png.Encode(w, f.Image())
}

// WriteFile writes the figure as a PNG file at path, atomically (the file
// is complete or absent).
func (f *Figure) WriteFile(path string) error {
	m := f.Image()
	return safefile.Write(path, func(w io.Writer) error {
		if err := png.Encode(w, m); err != nil {
			return fmt.Errorf("plots: encoding %s: %w", path, err)
		}
		return nil
	})
}

// single makes a Figure of one plot filling the canvas.
func single(p *plot.Plot, opt Options) *Figure {
	w, h := opt.size()
	return &Figure{width: w, height: h, draw: framedLegend(p)}
}

// framedLegend takes p's legend out of p and returns a function that draws p and then the
// legend in p's data area. gonum/plot places the legend in the area left by the axes,
// before the data area is shrunk to make room for glyphs at its edges; when that room is
// large (wide tick labels, big glyphs) the legend ended up above or right of the frame.
// It is done once, when the figure is made, so that drawing changes nothing and figures
// may be drawn concurrently.
func framedLegend(p *plot.Plot) func(c draw.Canvas) {
	leg := p.Legend
	p.Legend = plot.NewLegend()
	return func(c draw.Canvas) {
		p.Draw(c)
		leg.Draw(p.DataCanvas(c))
	}
}

// newPlot returns a plot with the project's type sizes: 15 pt title,
// 13 pt axis labels, 11 pt tick labels and legend, at 96 dpi.
func newPlot(title, xlabel, ylabel string) *plot.Plot {
	p := plot.New()
	p.Title.Text = title
	p.Title.TextStyle.Font.Size = 15
	p.Title.Padding = 8
	p.X.Label.Text = xlabel
	p.Y.Label.Text = ylabel
	for _, a := range []*plot.Axis{&p.X, &p.Y} {
		a.Label.TextStyle.Font.Size = 13
		a.Tick.Label.Font.Size = 11
	}
	p.Legend.TextStyle.Font.Size = 11
	// Sans-serif text, from the Liberation fonts gonum/plot ships.
	for _, f := range []*font.Font{&p.Title.TextStyle.Font, &p.X.Label.TextStyle.Font, &p.Y.Label.TextStyle.Font,
		&p.X.Tick.Label.Font, &p.Y.Tick.Label.Font, &p.Legend.TextStyle.Font} {
		f.Variant = "Sans"
	}
	p.Legend.Top = true
	p.Legend.Padding = 2
	// Inside the frame, clear of its right edge and of the top.
	p.Legend.XOffs, p.Legend.YOffs = -vg.Points(6), -vg.Points(3)
	p.X.Tick.Marker = cleanTicks{}
	p.Y.Tick.Marker = cleanTicks{}
	return p
}

// cleanTicks places labelled ticks at multiples of a 1-2-5 step (about
// five across the axis, and never fewer than three: the next smaller step
// is taken when the span holds fewer) with unlabelled minor ticks between
// them, labelled with the fewest digits that show the value ("25", not
// "25.00").
type cleanTicks struct{}

func (cleanTicks) Ticks(min, max float64) []plot.Tick {
	if !(max > min) || !finite(min, max) {
		return plot.DefaultTicks{}.Ticks(min, max)
	}
	step := niceStep((max - min) / 5)
	for math.Floor(max/step+1e-9)-math.Ceil(min/step-1e-9) < 2 {
		step = smallerStep(step)
	}
	minor := step / 5
	if m := step / math.Pow(10, math.Floor(math.Log10(step))); m == 2 {
		minor = step / 4
	}
	var ts []plot.Tick
	for k := math.Ceil(min/minor - 1e-9); k*minor <= max+1e-9*minor; k++ {
		v := k * minor
		t := plot.Tick{Value: v}
		if r := v / step; math.Abs(r-math.Round(r)) < 1e-6 {
			t.Value = math.Round(r) * step
			t.Label = formatTick(t.Value)
		}
		ts = append(ts, t)
	}
	return ts
}

// smallerStep returns the 1-2-5 step below step: 5 → 2, 2 → 1, 1 → 0.5
// (times the same power of ten).
func smallerStep(step float64) float64 {
	p := math.Pow(10, math.Floor(math.Log10(step)+1e-9))
	switch m := math.Round(step / p); m {
	case 5:
		return 2 * p
	case 2:
		return p
	}
	return p / 2
}

// niceStep returns the number 1, 2 or 5 times a power of ten nearest
// above x (x > 0).
func niceStep(x float64) float64 {
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

func formatTick(v float64) string {
	if math.Abs(v) < 1e-12 {
		return "0"
	}
	return strconv.FormatFloat(v, 'g', 8, 64)
}

// logTicks labels decades; also 2 and 5 times each decade when the axis
// spans less than two decades, and every integer multiple when it spans
// less than one. Unlabelled multiples are minor ticks. An axis so short that fewer than
// three of those would be labelled (a χ²ᵣ from 0.86 to 0.90) gets the 1-2-5 ticks of
// cleanTicks instead, which a logarithmic scale over such a span draws almost evenly.
type logTicks struct{}

func (logTicks) Ticks(min, max float64) []plot.Tick {
	if !(min > 0 && max > min) {
		return nil
	}
	all, fine := max/min < 10, max/min < 100
	var ts []plot.Tick
	for e := math.Floor(math.Log10(min)); e <= math.Ceil(math.Log10(max)); e++ {
		d := math.Pow(10, e)
		for k := 1; k <= 9; k++ {
			v := float64(k) * d
			if v < min*(1-1e-9) || v > max*(1+1e-9) {
				continue
			}
			t := plot.Tick{Value: v}
			if k == 1 || all || (fine && (k == 2 || k == 5)) {
				// No rounding to "0" as on a linear axis: a decade such as 1e-13 is a value.
				t.Label = strconv.FormatFloat(v, 'g', 8, 64)
			}
			ts = append(ts, t)
		}
	}
	labelled := 0
	for _, t := range ts {
		if t.Label != "" {
			labelled++
		}
	}
	if labelled < 3 {
		return cleanTicks{}.Ticks(min, max)
	}
	return ts
}

// padX moves the ends of the x axis outwards by 2 % of its span (by a
// factor for a logarithmic axis), so that glyphs at the ends are not cut.
func padX(p *plot.Plot, logX bool) {
	if logX {
		if p.X.Min > 0 && p.X.Max > p.X.Min {
			f := math.Pow(p.X.Max/p.X.Min, 0.03)
			p.X.Min, p.X.Max = p.X.Min/f, p.X.Max*f
		}
		return
	}
	p.X.Max += 0.02 * (p.X.Max - p.X.Min)
}

// padY is padX for the y axis.
func padY(p *plot.Plot, logY bool) {
	if logY {
		if p.Y.Min > 0 && p.Y.Max > p.Y.Min {
			f := math.Pow(p.Y.Max/p.Y.Min, 0.03)
			p.Y.Min, p.Y.Max = p.Y.Min/f, p.Y.Max*f
		}
		return
	}
	d := 0.02 * (p.Y.Max - p.Y.Min)
	p.Y.Min, p.Y.Max = p.Y.Min-d, p.Y.Max+d
}

// roomForLegend raises the top of the y axis so that a legend of n
// entries in the upper right corner does not cover the data.
func roomForLegend(p *plot.Plot, n int, logY bool) {
	f := 0.065*float64(n) + 0.02
	if logY {
		if p.Y.Min > 0 && p.Y.Max > p.Y.Min {
			p.Y.Max *= math.Pow(p.Y.Max/p.Y.Min, f)
		}
		return
	}
	p.Y.Max += f * (p.Y.Max - p.Y.Min)
}

// seriesColors is the colour-blind-safe palette of Okabe & Ito (2008,
// "Color Universal Design"), without its yellow, which is too pale on
// white: vermillion, blue, bluish green, orange, reddish purple, sky blue.
// Data are drawn in black.
var seriesColors = [...]color.RGBA{
	{213, 94, 0, 255},
	{0, 114, 178, 255},
	{0, 158, 115, 255},
	{230, 159, 0, 255},
	{204, 121, 167, 255},
	{86, 180, 233, 255},
}

func seriesColor(i int) color.Color { return seriesColors[i%len(seriesColors)] }

// finite reports whether all values are finite.
func finite(vs ...float64) bool {
	for _, v := range vs {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return false
		}
	}
	return true
}

// withColorBar lays out a main plot and, at its right, a vertical colour
// bar plot aligned with the main plot's data area. When square is set the
// data area of the main plot is made square (equal axes for equal ranges).
func withColorBar(main, bar *plot.Plot, opt Options, square bool) *Figure {
	w, h := opt.size()
	barW := vg.Length(0)
	if bar != nil {
		barW = vg.Length(110) * vg.Inch / dpi
	}
	drawMain := framedLegend(main)
	return &Figure{width: w, height: h, draw: func(c draw.Canvas) {
		mc := c
		mc.Max.X -= barW
		if square {
			mc = squareCanvas(main, mc)
		}
		drawMain(mc)
		if bar == nil {
			return
		}
		da := main.DataCanvas(mc)
		bc := c
		bc.Min.X = mc.Max.X + vg.Length(12)*vg.Inch/dpi
		bc.Min.Y = da.Min.Y
		bc.Max.Y = da.Max.Y
		// The bar plot pads by half a tick label at both ends; extend its
		// canvas by that so the bar itself spans the data area, and trim it
		// on the right so the bar is 18 px wide.
		pad := bar.Y.Tick.Label.Font.Size / 2
		bc.Min.Y -= pad
		bc.Max.Y += pad
		bd := bar.DataCanvas(bc)
		if w := vg.Length(18) * vg.Inch / dpi; bd.Max.X-bd.Min.X > w {
			bc.Max.X -= bd.Max.X - bd.Min.X - w
		}
		bar.Draw(bc)
	}}
}

// squareCanvas shrinks c along the longer side of p's data area, centred,
// so that the data area becomes square; the axes' decorations keep their
// size.
func squareCanvas(p *plot.Plot, c draw.Canvas) draw.Canvas {
	da := p.DataCanvas(c)
	dw, dh := da.Max.X-da.Min.X, da.Max.Y-da.Min.Y
	if dw > dh {
		d := dw - dh
		c.Min.X += d / 2
		c.Max.X -= d / 2
	} else if dh > dw {
		d := dh - dw
		c.Min.Y += d / 2
		c.Max.Y -= d / 2
	}
	return c
}
