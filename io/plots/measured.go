package plots

import (
	"fmt"
	"image/color"
	"math"
	"sort"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Measurements are the measurements of one data type for a plot against spatial frequency:
// squared visibilities, visibility or triple-product amplitudes, visibility or closure phases.
type Measurements struct {
	// Label names the quantity on the y axis and in the default title ("visibility
	// amplitude"); Unit is its unit, "" for a ratio or "°" for a phase.
	Label, Unit string
	// Phase says the values are angles in degrees: they are shown wrapped into (−180°, 180°],
	// error bars are cut at ±190° and models wrapped likewise.
	Phase bool
	// Triangle says Freq is the longest baseline of a closure triangle, which the x axis
	// then names.
	Triangle bool
	// Freq is each point's spatial frequency in cycles per radian.
	Freq []float64
	// Value and Err are the values and their 1σ errors (Err nil draws no error bars).
	Value, Err []float64
	// Wavelength is each point's wavelength in metres; when it holds more than one value the
	// data are coloured by wavelength from violet (shortest) to red (longest) with a colour
	// bar in µm. Nil draws the data in black.
	Wavelength []float64
	// Group, when GroupNames has several names, gives each point's group (an index into
	// GroupNames), e.g. its instrument: the data are then coloured by group, one legend
	// entry each, instead of by wavelength.
	Group      []int
	GroupNames []string
}

// Measured plots m against spatial frequency in Mλ: data with error bars, each model's values
// at the data points (ModelValues parallel to m.Value, in its unit) and each curve as a line.
// Data of several wavelengths are coloured by wavelength, with a colour bar (or by group); the
// models are then drawn in black, told apart by their shapes, and the curves in black, told
// apart by their dashes. Non-finite points are skipped (and, with
// Options.LogY, points not above zero, whose error bars are cut at a tenth of the value).
func Measured(m Measurements, models []ModelValues, curves []Curve, opt Options) (*Figure, error) {
	return measured(m, models, curves, opt, upperFirst(m.Label))
}

// measured is Measured with the default title.
func measured(m Measurements, models []ModelValues, curves []Curve, opt Options, title string) (*Figure, error) {
	name := m.Label
	if name == "" {
		name = "data"
	}
	n := len(m.Value)
	if len(m.Freq) != n || (m.Err != nil && len(m.Err) != n) || (m.Wavelength != nil && len(m.Wavelength) != n) || (m.Group != nil && len(m.Group) != n) {
		return nil, fmt.Errorf("plots: %s: %d values, %d frequencies, %d errors, %d wavelengths and %d groups", name, n, len(m.Freq), len(m.Err), len(m.Wavelength), len(m.Group))
	}
	grouped := m.Group != nil && len(m.GroupNames) > 1
	for _, g := range m.Group {
		if grouped && (g < 0 || g >= len(m.GroupNames)) {
			return nil, fmt.Errorf("plots: %s: group %d of %d names", name, g, len(m.GroupNames))
		}
	}
	logY := opt.LogY && !m.Phase
	pts := m.points(logY)
	if pts.Len() == 0 {
		return nil, fmt.Errorf("plots: %s: %w", name, ErrNoData)
	}
	xlabel := "spatial frequency (Mλ)"
	if m.Triangle {
		xlabel = "longest baseline of the triangle (Mλ)"
	}
	ylabel := m.Label
	if m.Unit != "" {
		ylabel += " (" + m.Unit + ")"
	}
	p := newPlot(opt.title(title), xlabel, ylabel)
	if logY {
		p.Y.Scale = plot.LogScale{}
		p.Y.Tick.Marker = logTicks{}
	}
	p.Add(plotter.NewGrid())
	lr := pts.lambdaRange()
	dataName := "data"
	if logY {
		if k := m.nonPositive(); k > 0 {
			dataName = "data (" + strconv.Itoa(k) + " ≤ 0 not shown)"
		}
	}
	entries := 1
	if grouped {
		lr = lambdaRange{math.Inf(1), math.Inf(-1)}
		names := make([]string, len(m.GroupNames))
		for g, gn := range m.GroupNames {
			names[g] = "data, " + gn
			if k := m.nonPositiveIn(g); logY && k > 0 {
				names[g] += " (" + strconv.Itoa(k) + " ≤ 0 not shown)"
			}
		}
		if err := addGroups(p, pts, m.Err != nil, names); err != nil {
			return nil, fmt.Errorf("plots: %s: %w", name, err)
		}
		entries = len(m.GroupNames)
	} else if err := addData(p, pts, m.Err != nil, dataName, lr); err != nil {
		return nil, fmt.Errorf("plots: %s: %w", name, err)
	}
	if err := addModels(p, pts, models, n, m.Phase, logY, lr.coloured() || grouped); err != nil {
		return nil, fmt.Errorf("plots: %s: %w", name, err)
	}
	if err := addCurves(p, curves, logY, lr.coloured() || grouped); err != nil {
		return nil, fmt.Errorf("plots: %s: %w", name, err)
	}
	p.X.Min = 0
	if m.Phase {
		// Phases are wrapped to ±180°: an error bar beyond that is cut at the axis rather
		// than stretching it (with the legend's room above, a 190° bar pushed the axis to
		// 630°).
		p.Y.Min, p.Y.Max = math.Max(p.Y.Min, -190), math.Min(p.Y.Max, 190)
	}
	padX(p, false)
	padY(p, logY)
	roomForLegend(p, entries+len(models)+len(curves), logY)
	if m.Phase {
		p.Y.Tick.Marker = degreeTicks{}
	}
	return withColorBar(p, lr.bar(), opt, false), nil
}

// nonPositive returns the number of points of m with finite coordinates and a value not
// above zero, which a logarithmic axis cannot show.
func (m *Measurements) nonPositive() int {
	k := 0
	for i, v := range m.Value {
		if finite(m.Freq[i], v) && v <= 0 {
			k++
		}
	}
	return k
}

// nonPositiveIn is nonPositive for the points of group g.
func (m *Measurements) nonPositiveIn(g int) int {
	k := 0
	for i, v := range m.Value {
		if m.Group[i] == g && finite(m.Freq[i], v) && v <= 0 {
			k++
		}
	}
	return k
}

// points returns the finite points of m (with logY, the positive ones), phases wrapped and
// error bars cut as Measured draws them.
func (m *Measurements) points(logY bool) dataPoints {
	var pts dataPoints
	for i := range m.Value {
		x, y, e, l := m.Freq[i]/MegaLambda, m.Value[i], 0.0, 0.0
		if m.Err != nil {
			e = m.Err[i]
		}
		if m.Wavelength != nil {
			l = m.Wavelength[i]
		}
		if !finite(x, y, e, l) || (logY && y <= 0) {
			continue
		}
		lo, hi := e, e
		switch {
		case m.Phase:
			// A bar is cut at ±190°, so that it does not run under the legend: beyond
			// ±180° it says only that the phase is unknown.
			y = WrapDegrees(y)
			lo, hi = math.Min(e, y+190), math.Min(e, 190-y)
		case logY:
			lo = math.Min(e, 0.9*y)
		}
		pts.add(i, x, y, lo, hi)
		pts.lam = append(pts.lam, l)
		if m.Group != nil {
			pts.grp = append(pts.grp, m.Group[i])
		}
	}
	return pts
}

// Constants of AutoLog (common practice, no source): a logarithmic axis is worth it when the
// positive values span more than autoLogSpan between their 5th and 95th percentiles, and
// harmless when at most autoLogDropped of the values are not positive (it cannot show them).
const (
	autoLogSpan    = 100
	autoLogDropped = 0.1
)

// AutoLog reports whether values (V², amplitudes) are better shown on a logarithmic axis:
// their positive values span more than two decades between the 5th and the 95th
// percentile, and at most a tenth of the finite values are zero or negative. Measured
// names the points a logarithmic axis leaves out in the legend.
func AutoLog(values []float64) bool {
	var pos []float64
	nonpos := 0
	for _, v := range values {
		switch {
		case !finite(v):
		case v > 0:
			pos = append(pos, v)
		default:
			nonpos++
		}
	}
	if len(pos) < 2 || float64(nonpos) > autoLogDropped*float64(nonpos+len(pos)) {
		return false
	}
	sort.Float64s(pos)
	at := func(q float64) float64 { return pos[int(math.Round(q*float64(len(pos)-1)))] }
	return at(0.95) > autoLogSpan*at(0.05)
}

// lambdaRange is the range of the wavelengths of a plot's points (metres).
type lambdaRange struct{ min, max float64 }

// coloured reports whether the points span several wavelengths and are coloured by them.
func (r lambdaRange) coloured() bool { return r.max > r.min }

// color returns the colour of wavelength l.
func (r lambdaRange) color(l float64) color.Color {
	return wavelengthColor((l - r.min) / (r.max - r.min))
}

// bar returns the colour bar of the wavelengths in µm, nil when the points are not coloured.
func (r lambdaRange) bar() *plot.Plot {
	if !r.coloured() {
		return nil
	}
	bar := newPlot("", "", "wavelength (µm)")
	bar.HideX()
	bar.Y.Label.TextStyle.Font.Size = 12
	bar.Add(&plotter.ColorBar{ColorMap: &rangeMap{min: r.min * 1e6, max: r.max * 1e6, alpha: 1, at: wavelengthColor}, Vertical: true})
	return bar
}

func (d dataPoints) lambdaRange() lambdaRange {
	r := lambdaRange{math.Inf(1), math.Inf(-1)}
	for _, l := range d.lam {
		r.min, r.max = math.Min(r.min, l), math.Max(r.max, l)
	}
	return r
}

// upperFirst returns s with its first letter in upper case ("closure phase" → "Closure
// phase"); symbols such as "V²" are unchanged.
func upperFirst(s string) string {
	for i, r := range s {
		if r >= 'a' && r <= 'z' {
			return s[:i] + string(r-'a'+'A') + s[i+1:]
		}
		break
	}
	return s
}

// addErrorBars adds the vertical error bars of d to p, thin and grey under the points.
func addErrorBars(p *plot.Plot, d dataPoints) error {
	e, err := plotter.NewYErrorBars(d)
	if err != nil {
		return err
	}
	e.LineStyle.Color = color.Gray{110}
	e.LineStyle.Width = vg.Points(0.6)
	e.CapWidth = vg.Points(2.5)
	p.Add(e)
	return nil
}

// addGroups adds the data as points with error bars, coloured by group from the palette, with
// the legend entry names[g] for group g.
func addGroups(p *plot.Plot, d dataPoints, withErr bool, names []string) error {
	if withErr {
		if err := addErrorBars(p, d); err != nil {
			return err
		}
	}
	for g, gn := range names {
		var xy plotter.XYs
		for k := range d.xy {
			if d.grp[k] == g {
				xy = append(xy, d.xy[k])
			}
		}
		if len(xy) == 0 {
			continue
		}
		s, err := plotter.NewScatter(xy)
		if err != nil {
			return err
		}
		s.GlyphStyle = dataGlyph
		s.GlyphStyle.Radius = vg.Points(2.2)
		s.GlyphStyle.Color = seriesColor(g)
		p.Add(s)
		p.Legend.Add(gn, s)
	}
	return nil
}

// dataGlyph is the glyph of a data point.
var dataGlyph = draw.GlyphStyle{Shape: draw.CircleGlyph{}, Radius: vg.Points(1.8), Color: color.Black}
