package plots

import (
	"errors"
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

// MegaLambda is the number of cycles per radian in one Mλ (10⁶ wavelengths
// of baseline), the unit of spatial frequency on every axis.
const MegaLambda = 1e6

// ErrNoData is returned (wrapped) when nothing is left to plot after
// non-finite points are skipped.
var ErrNoData = errors.New("no finite data to plot")

// SpatialFrequency returns √(u² + v²) for u, v in cycles per radian.
func SpatialFrequency(u, v float64) float64 { return math.Hypot(u, v) }

// LongestBaseline returns the longest of the three spatial frequencies of
// a closure triangle (u1, v1), (u2, v2) and (u1 + u2, v1 + v2), in the unit
// of its arguments; the third baseline follows from the OI_T3 definition
// (Pauls et al. 2005, PASP 117, 1255, sect. 6.4; CONVENTIONS.md).
func LongestBaseline(u1, v1, u2, v2 float64) float64 {
	return math.Max(math.Max(math.Hypot(u1, v1), math.Hypot(u2, v2)), math.Hypot(u1+u2, v1+v2))
}

// NormalizedResiduals writes (data[i] − model[i]) / sigma[i] into dst and
// returns it; dst is allocated when nil. Points with a non-finite value or
// a non-positive sigma give NaN, which the plots skip. It panics when the
// lengths differ.
func NormalizedResiduals(dst, data, model, sigma []float64) []float64 {
	dst = residualDst(dst, data, model, sigma)
	for i := range data {
		dst[i] = math.NaN()
		if sigma[i] > 0 {
			dst[i] = (data[i] - model[i]) / sigma[i]
		}
	}
	return dst
}

// PhaseResiduals is NormalizedResiduals for phases in degrees: the
// difference is wrapped into (−180°, 180°] before division, so 179° and
// −179° differ by 2°.
func PhaseResiduals(dst, data, model, sigma []float64) []float64 {
	dst = residualDst(dst, data, model, sigma)
	for i := range data {
		dst[i] = math.NaN()
		if sigma[i] > 0 {
			dst[i] = WrapDegrees(data[i]-model[i]) / sigma[i]
		}
	}
	return dst
}

func residualDst(dst, data, model, sigma []float64) []float64 {
	if len(model) != len(data) || len(sigma) != len(data) {
		panic(fmt.Sprintf("plots: residuals of %d data, %d model values, %d errors", len(data), len(model), len(sigma)))
	}
	if dst == nil {
		dst = make([]float64, len(data))
	}
	if len(dst) != len(data) {
		panic(fmt.Sprintf("plots: residuals: dst has %d elements for %d data", len(dst), len(data)))
	}
	return dst
}

// WrapDegrees returns the angle a in (−180, 180].
func WrapDegrees(a float64) float64 {
	a = math.Mod(a, 360)
	switch {
	case a > 180:
		a -= 360
	case a <= -180:
		a += 360
	}
	return a
}

// UV is the (u, v) coverage of a data set: one entry per measured point,
// in cycles per radian (u = UCOORD/λ towards the east, v = VCOORD/λ towards
// the north), with the point's wavelength in metres (nil, or all equal,
// draws one colour and no colour bar).
type UV struct {
	U, V       []float64
	Wavelength []float64
}

// UVCoverage plots the (u, v) points and their mirror images (−u, −v) in
// Mλ on equal axes, u increasing to the left (east left, like the sky),
// coloured by wavelength from violet (shortest) to red (longest) with a
// colour bar in µm.
func UVCoverage(d UV, opt Options) (*Figure, error) {
	p, bar, err := uvPlots(d, opt)
	if err != nil {
		return nil, err
	}
	return withColorBar(p, bar, opt, true), nil
}

// uvPlots returns the coverage plot and its colour bar plot (nil for one
// wavelength).
func uvPlots(d UV, opt Options) (p, bar *plot.Plot, err error) {
	if len(d.V) != len(d.U) || (d.Wavelength != nil && len(d.Wavelength) != len(d.U)) {
		return nil, nil, fmt.Errorf("plots: (u,v) coverage: %d u, %d v and %d wavelengths", len(d.U), len(d.V), len(d.Wavelength))
	}
	var pts plotter.XYs
	var lam []float64
	lmin, lmax := math.Inf(1), math.Inf(-1)
	rmax := 0.0
	for i := range d.U {
		u, v := d.U[i]/MegaLambda, d.V[i]/MegaLambda
		l := 0.0
		if d.Wavelength != nil {
			l = d.Wavelength[i]
		}
		if !finite(u, v, l) {
			continue
		}
		pts = append(pts, plotter.XY{X: u, Y: v}, plotter.XY{X: -u, Y: -v})
		lam = append(lam, l, l)
		lmin, lmax = math.Min(lmin, l), math.Max(lmax, l)
		rmax = math.Max(rmax, math.Hypot(u, v))
	}
	if len(pts) == 0 {
		return nil, nil, fmt.Errorf("plots: (u,v) coverage: %w", ErrNoData)
	}
	p = newPlot(opt.title("(u,v) coverage"), "u (Mλ, east to the left)", "v (Mλ, north up)")
	p.X.Scale = plot.InvertedScale{Normalizer: plot.LinearScale{}}
	if rmax == 0 {
		rmax = 1
	}
	r := rmax * 1.08
	p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = -r, r, -r, r
	p.Add(plotter.NewGrid())
	s, err := plotter.NewScatter(pts)
	if err != nil {
		return nil, nil, fmt.Errorf("plots: (u,v) coverage: %w", err)
	}
	s.GlyphStyle = draw.GlyphStyle{Shape: draw.CircleGlyph{}, Radius: vg.Points(2), Color: color.RGBA{0, 90, 170, 255}}
	coloured := lmax > lmin
	if coloured {
		s.GlyphStyleFunc = func(i int) draw.GlyphStyle {
			g := s.GlyphStyle
			g.Color = wavelengthColor((lam[i] - lmin) / (lmax - lmin))
			return g
		}
	}
	p.Add(s)
	// A cross at the origin marks zero spatial frequency.
	p.Add(originMark())
	if !coloured {
		return p, nil, nil
	}
	bar = newPlot("", "", "wavelength (µm)")
	bar.HideX()
	bar.Y.Label.TextStyle.Font.Size = 12
	bar.Add(&plotter.ColorBar{ColorMap: &rangeMap{min: lmin * 1e6, max: lmax * 1e6, alpha: 1, at: wavelengthColor}, Vertical: true})
	return p, bar, nil
}

func originMark() plot.Plotter {
	s, _ := plotter.NewScatter(plotter.XYs{{}})
	s.GlyphStyle = draw.GlyphStyle{Shape: draw.CrossGlyph{}, Radius: vg.Points(4), Color: color.Gray{80}}
	return s
}

// V2Data is a set of squared visibilities at (U, V) in cycles per radian,
// with their 1σ errors Err (nil draws no error bars) and their wavelengths in
// metres (nil, or all equal, draws the data in black; see Measurements).
type V2Data struct {
	U, V       []float64
	Value, Err []float64
	Wavelength []float64
}

// ModelValues are a model's predictions at the points of a data set, in
// the data's unit (V², or closure phase in degrees); Name is its legend
// entry, e.g. the regularizer.
type ModelValues struct {
	Name  string
	Value []float64
}

// Curve is a continuous model, e.g. a fitted disc's V², drawn as a line
// through Freq (spatial frequency in cycles per radian) and Value.
type Curve struct {
	Name        string
	Freq, Value []float64
}

// dataPoints holds the finite points of a data plot, their errors and
// their indices in the input.
type dataPoints struct {
	xy   plotter.XYs
	errs plotter.YErrors
	idx  []int
	lam  []float64 // wavelengths (m), when the caller gives them
	grp  []int     // groups (Measurements.Group), when the caller gives them
}

func (d dataPoints) Len() int                        { return len(d.xy) }
func (d dataPoints) XY(i int) (float64, float64)     { return d.xy[i].X, d.xy[i].Y }
func (d dataPoints) YError(i int) (float64, float64) { return d.errs[i].Low, d.errs[i].High }
func (d *dataPoints) add(i int, x, y, lo, hi float64) {
	d.xy = append(d.xy, plotter.XY{X: x, Y: y})
	d.errs = append(d.errs, struct{ Low, High float64 }{lo, hi})
	d.idx = append(d.idx, i)
}

// addData adds the data as points with error bars: black, or coloured by wavelength when
// they span several (lr).
func addData(p *plot.Plot, d dataPoints, withErr bool, name string, lr lambdaRange) error {
	s, err := plotter.NewScatter(d.xy)
	if err != nil {
		return err
	}
	s.GlyphStyle = dataGlyph
	if lr.coloured() {
		// The legend shows the glyph in dark grey; the colour bar gives the wavelengths.
		s.GlyphStyle.Color = color.Gray{70}
		s.GlyphStyle.Radius = vg.Points(2.2)
		s.GlyphStyleFunc = func(i int) draw.GlyphStyle {
			g := s.GlyphStyle
			g.Color = lr.color(d.lam[i])
			return g
		}
	}
	if withErr {
		if err := addErrorBars(p, d); err != nil {
			return err
		}
	}
	p.Add(s)
	p.Legend.Add(name, s)
	return nil
}

// addModels adds each model's values at the plotted data points as
// open glyphs, one legend entry each: coloured, or black when the data are coloured by
// wavelength (black). wrap wraps phases.
func addModels(p *plot.Plot, d dataPoints, models []ModelValues, n int, wrap, logY, black bool) error {
	// On a logarithmic axis, model values far below every data point (a V² null of a
	// disc, 1e-17) would stretch the axis over decades that hold no data: values below a
	// hundredth of the lowest data point, a tenth of the reach of its error bar, are left
	// out, and the legend counts them. On a linear axis every value is drawn.
	floor := math.Inf(-1)
	if logY {
		floor = math.Inf(1)
		for _, q := range d.xy {
			floor = math.Min(floor, q.Y/100)
		}
	}
	for k, m := range models {
		if len(m.Value) != n {
			return fmt.Errorf("model %q has %d values for %d data points", m.Name, len(m.Value), n)
		}
		var xy plotter.XYs
		below := 0
		for j, i := range d.idx {
			y := m.Value[i]
			if wrap {
				y = WrapDegrees(y)
			}
			if !finite(y) || (logY && y <= 0) {
				continue
			}
			if y < floor {
				below++
				continue
			}
			xy = append(xy, plotter.XY{X: d.xy[j].X, Y: y})
		}
		if len(xy) == 0 {
			continue
		}
		s, err := plotter.NewScatter(xy)
		if err != nil {
			return err
		}
		s.GlyphStyle = draw.GlyphStyle{Shape: modelShape(k), Radius: vg.Points(2.6), Color: seriesColor(k)}
		if black {
			s.GlyphStyle.Color = color.Black
			s.GlyphStyle.Radius = vg.Points(3.2)
		}
		p.Add(s)
		name := legendName(m.Name, "model", k, len(models))
		if below > 0 {
			name += " (" + strconv.Itoa(below) + " below the axis not shown)"
		}
		p.Legend.Add(name, s)
	}
	return nil
}

func modelShape(k int) draw.GlyphDrawer {
	shapes := [...]draw.GlyphDrawer{draw.RingGlyph{}, draw.BoxGlyph{}, draw.TriangleGlyph{}, draw.CrossGlyph{}, draw.PlusGlyph{}, draw.SquareGlyph{}}
	return shapes[k%len(shapes)]
}

func legendName(name, def string, k, n int) string {
	if name != "" {
		return name
	}
	if n == 1 {
		return def
	}
	return def + " " + strconv.Itoa(k+1)
}

// V2 plots squared visibilities against spatial frequency in Mλ, data
// with error bars, each model's values at the data points and each curve
// as a line. Non-finite points are skipped (and, with Options.LogY, points
// not above zero; their error bars are cut at a tenth of the value).
func V2(d V2Data, models []ModelValues, curves []Curve, opt Options) (*Figure, error) {
	n := len(d.Value)
	if len(d.U) != n || len(d.V) != n || (d.Err != nil && len(d.Err) != n) {
		return nil, fmt.Errorf("plots: V²: %d u, %d v, %d values, %d errors", len(d.U), len(d.V), n, len(d.Err))
	}
	m := Measurements{Label: "V²", Value: d.Value, Err: d.Err, Wavelength: d.Wavelength, Freq: make([]float64, n)}
	for i := range m.Freq {
		m.Freq[i] = SpatialFrequency(d.U[i], d.V[i])
	}
	return measured(m, models, curves, opt, "Squared visibility")
}

func addCurves(p *plot.Plot, curves []Curve, logY, black bool) error {
	for k, c := range curves {
		if len(c.Freq) != len(c.Value) {
			return fmt.Errorf("curve %q has %d frequencies and %d values", c.Name, len(c.Freq), len(c.Value))
		}
		var xy plotter.XYs
		for i := range c.Freq {
			x, y := c.Freq[i]/MegaLambda, c.Value[i]
			if !finite(x, y) || (logY && y <= 0) {
				continue
			}
			xy = append(xy, plotter.XY{X: x, Y: y})
		}
		if len(xy) < 2 {
			continue
		}
		l, err := plotter.NewLine(xy)
		if err != nil {
			return err
		}
		l.LineStyle.Width = vg.Points(1.4)
		l.LineStyle.Color = seriesColor(len(seriesColors) - 1 - k)
		if black {
			// Data coloured by wavelength or group: a coloured line would pass for, or hide
			// among, the data (sky blue through the blue and cyan points); the dashes tell
			// several curves apart.
			l.LineStyle.Color = color.Black
		}
		l.LineStyle.Dashes = [][]vg.Length{nil, {vg.Points(6), vg.Points(3)}, {vg.Points(2), vg.Points(2)}}[k%3]
		p.Add(l)
		p.Legend.Add(legendName(c.Name, "curve", k, len(curves)), l)
	}
	return nil
}

// T3Data is a set of closure phases in degrees with 1σ errors (nil draws
// no error bars), for triangles given by their first two baselines
// (U1, V1) and (U2, V2) in cycles per radian as in OI_T3.
type T3Data struct {
	U1, V1, U2, V2 []float64
	Phi, Err       []float64
	// Wavelength in metres colours the data as in Measurements (nil: black).
	Wavelength []float64
}

// ClosurePhase plots closure phases (degrees, wrapped into (−180, 180])
// against the longest baseline of each triangle in Mλ, data with error
// bars and each model's values. Non-finite points are skipped.
func ClosurePhase(d T3Data, models []ModelValues, opt Options) (*Figure, error) {
	n := len(d.Phi)
	if len(d.U1) != n || len(d.V1) != n || len(d.U2) != n || len(d.V2) != n || (d.Err != nil && len(d.Err) != n) {
		return nil, fmt.Errorf("plots: closure phase: %d phases but baseline columns of %d, %d, %d, %d and %d errors",
			n, len(d.U1), len(d.V1), len(d.U2), len(d.V2), len(d.Err))
	}
	m := Measurements{Label: "closure phase", Unit: "°", Phase: true, Triangle: true,
		Value: d.Phi, Err: d.Err, Wavelength: d.Wavelength, Freq: make([]float64, n)}
	for i := range m.Freq {
		m.Freq[i] = LongestBaseline(d.U1[i], d.V1[i], d.U2[i], d.V2[i])
	}
	return measured(m, models, nil, opt, "Closure phase")
}

// degreeTicks puts ticks at multiples of 15°, 30°, 45° or 90°.
type degreeTicks struct{}

func (degreeTicks) Ticks(min, max float64) []plot.Tick {
	span := max - min
	if span < 60 {
		return cleanTicks{}.Ticks(min, max)
	}
	step := 90.0
	for _, s := range []float64{15, 30, 45, 90} {
		if span/s <= 8 {
			step = s
			break
		}
	}
	var ts []plot.Tick
	for v := math.Ceil(min/step) * step; v <= max; v += step {
		ts = append(ts, plot.Tick{Value: v, Label: strconv.FormatFloat(v, 'f', -1, 64)})
	}
	return ts
}

// Residuals is one data type's normalised residuals (data − model)/σ at
// spatial frequencies Freq in cycles per radian (for closure phases, the
// longest baseline of the triangle). Name is the legend entry, e.g. "V²".
// Wavelength, in metres, colours the points as in Measurements (nil: one
// colour per set).
type Residuals struct {
	Name        string
	Freq, Value []float64
	Wavelength  []float64
}

// ResidualPlot plots normalised residuals against spatial frequency in
// Mλ, one shape and colour per set, with guide lines at 0, ±1 and ±3. When
// the points span several wavelengths they are coloured by wavelength with
// a colour bar in µm, and the sets told apart by their shapes. Each legend
// entry gives the set's root mean square. Non-finite points are skipped.
func ResidualPlot(sets []Residuals, opt Options) (*Figure, error) {
	p := newPlot(opt.title("Normalised residuals"), "spatial frequency (Mλ)", "(data − model) / σ")
	p.Add(plotter.NewGrid())
	xmax, ymax, total := 0.0, 3.5, 0
	type set struct {
		xy   plotter.XYs
		lam  []float64
		name string
	}
	var keep []set
	lr := lambdaRange{math.Inf(1), math.Inf(-1)}
	for k, s := range sets {
		if len(s.Freq) != len(s.Value) || (s.Wavelength != nil && len(s.Wavelength) != len(s.Value)) {
			return nil, fmt.Errorf("plots: residuals %q: %d frequencies, %d values and %d wavelengths", s.Name, len(s.Freq), len(s.Value), len(s.Wavelength))
		}
		var xy plotter.XYs
		var lam []float64
		sum := 0.0
		for i := range s.Freq {
			x, y, l := s.Freq[i]/MegaLambda, s.Value[i], 0.0
			if s.Wavelength != nil {
				l = s.Wavelength[i]
			}
			if !finite(x, y, l) {
				continue
			}
			xy = append(xy, plotter.XY{X: x, Y: y})
			if s.Wavelength != nil {
				lam = append(lam, l)
				lr.min, lr.max = math.Min(lr.min, l), math.Max(lr.max, l)
			}
			sum += y * y
			xmax, ymax = math.Max(xmax, x), math.Max(ymax, math.Abs(y)*1.05)
		}
		if len(xy) == 0 {
			continue
		}
		total += len(xy)
		name := legendName(s.Name, "set", k, len(sets))
		keep = append(keep, set{xy, lam, fmt.Sprintf("%s (rms %.2f, %d points)", name, math.Sqrt(sum/float64(len(xy))), len(xy))})
	}
	if total == 0 {
		return nil, fmt.Errorf("plots: residuals: %w", ErrNoData)
	}
	if xmax == 0 {
		xmax = 1
	}
	for _, g := range []struct {
		y    float64
		dash []vg.Length
	}{{0, nil}, {1, []vg.Length{vg.Points(5), vg.Points(3)}}, {-1, []vg.Length{vg.Points(5), vg.Points(3)}},
		{3, []vg.Length{vg.Points(1.5), vg.Points(2.5)}}, {-3, []vg.Length{vg.Points(1.5), vg.Points(2.5)}}} {
		l, _ := plotter.NewLine(plotter.XYs{{X: 0, Y: g.y}, {X: xmax * 1.03, Y: g.y}})
		l.LineStyle.Color = color.Gray{90}
		l.LineStyle.Width = vg.Points(0.8)
		l.LineStyle.Dashes = g.dash
		p.Add(l)
	}
	for k, s := range keep {
		sc, err := plotter.NewScatter(s.xy)
		if err != nil {
			return nil, fmt.Errorf("plots: residuals: %w", err)
		}
		sc.GlyphStyle = draw.GlyphStyle{Shape: modelShape(k), Radius: vg.Points(2.2), Color: seriesColor(k)}
		if lr.coloured() && s.lam != nil {
			sc.GlyphStyle.Color = color.Gray{70}
			sc.GlyphStyle.Radius = vg.Points(2.6)
			lam := s.lam
			sc.GlyphStyleFunc = func(i int) draw.GlyphStyle {
				g := sc.GlyphStyle
				g.Color = lr.color(lam[i])
				return g
			}
		}
		p.Add(sc)
		p.Legend.Add(s.name, sc)
	}
	p.X.Min, p.X.Max = 0, xmax*1.03
	p.Y.Min, p.Y.Max = -ymax, ymax
	roomForLegend(p, len(keep), false)
	if p.Y.Max-p.Y.Min <= 14 {
		p.Y.Tick.Marker = integerTicks{}
	}
	return withColorBar(p, lr.bar(), opt, false), nil
}

// LPoint is one reconstruction along a regularization-weight path: the
// weight, the data misfit (χ²ᵣ of the data) and the regularizer's value
// at the solution. Both must be positive to appear on the log-log axes;
// pass a penalty form (e.g. −S for an entropy S ≤ 0).
type LPoint struct {
	Weight, Misfit, Regularizer float64
	// Stalled marks a run that moved nothing: drawn as a red cross, not joined.
	Stalled bool
}

// LPath is the weight path of one regularizer; Chosen is the index of the
// selected weight in Points (−1 for none). Final, when set, is the result at the
// weight used, marked where it lies whether or not it is a step of the path (a
// final run may go on from a step, or use a weight between steps).
type LPath struct {
	Name   string
	Points []LPoint
	Chosen int
	Final  *LPoint
}

// LCurve plots each path's data misfit against its regularizer value on
// log-log axes, points joined in the order of their weights (a search may try
// them in any order), stalled runs drawn as red crosses and not joined, the
// chosen weight marked with a large ring and labelled with its value. Points
// with non-finite or non-positive coordinates are skipped.
func LCurve(paths []LPath, opt Options) (*Figure, error) {
	p := newPlot(opt.title("L-curve"), "regularizer value", "data misfit χ²ᵣ")
	p.X.Scale, p.Y.Scale = plot.LogScale{}, plot.LogScale{}
	p.X.Tick.Marker, p.Y.Tick.Marker = logTicks{}, logTicks{}
	p.Add(plotter.NewGrid())
	total := 0
	for k, path := range paths {
		var xy, stalled plotter.XYs
		chosen := -1
		order := make([]int, len(path.Points))
		for i := range order {
			order[i] = i
		}
		sort.SliceStable(order, func(a, b int) bool { return path.Points[order[a]].Weight > path.Points[order[b]].Weight })
		for _, i := range order {
			q := path.Points[i]
			if !finite(q.Misfit, q.Regularizer) || q.Misfit <= 0 || q.Regularizer <= 0 {
				continue
			}
			if q.Stalled {
				stalled = append(stalled, plotter.XY{X: q.Regularizer, Y: q.Misfit})
				continue
			}
			if i == path.Chosen {
				chosen = len(xy)
			}
			xy = append(xy, plotter.XY{X: q.Regularizer, Y: q.Misfit})
		}
		if len(stalled) > 0 {
			sc, err := plotter.NewScatter(stalled)
			if err != nil {
				return nil, fmt.Errorf("plots: L-curve: %w", err)
			}
			sc.GlyphStyle = draw.GlyphStyle{Shape: draw.CrossGlyph{}, Radius: vg.Points(4), Color: color.RGBA{R: 200, A: 255}}
			p.Add(sc)
			p.Legend.Add("stalled run", sc)
			total += len(stalled)
		}
		if len(xy) == 0 {
			continue
		}
		total += len(xy)
		l, s, err := plotter.NewLinePoints(xy)
		if err != nil {
			return nil, fmt.Errorf("plots: L-curve: %w", err)
		}
		l.LineStyle.Color = seriesColor(k)
		l.LineStyle.Width = vg.Points(1.2)
		s.GlyphStyle = draw.GlyphStyle{Shape: draw.CircleGlyph{}, Radius: vg.Points(2.2), Color: seriesColor(k)}
		p.Add(l, s)
		p.Legend.Add(legendName(path.Name, "path", k, len(paths)), l, s)
		var c plotter.XY
		var w float64
		switch f := path.Final; {
		case f != nil && finite(f.Misfit, f.Regularizer) && f.Misfit > 0 && f.Regularizer > 0:
			c, w, chosen = plotter.XY{X: f.Regularizer, Y: f.Misfit}, f.Weight, 0
		case chosen >= 0:
			c, w = xy[chosen], path.Points[path.Chosen].Weight
		}
		if chosen >= 0 {
			m, _ := plotter.NewScatter(plotter.XYs{c})
			m.GlyphStyle = draw.GlyphStyle{Shape: draw.RingGlyph{}, Radius: vg.Points(7), Color: color.Black}
			lab, err := plotter.NewLabels(plotter.XYLabels{XYs: plotter.XYs{c}, Labels: []string{"  weight " + strconv.FormatFloat(w, 'g', 3, 64)}})
			if err != nil {
				return nil, fmt.Errorf("plots: L-curve: %w", err)
			}
			lab.TextStyle[0].Font.Size = 11
			lab.TextStyle[0].Font.Variant = "Sans"
			lab.Offset = vg.Point{X: vg.Points(4), Y: vg.Points(3)}
			p.Add(m, lab)
		}
	}
	if total == 0 {
		return nil, fmt.Errorf("plots: L-curve: %w", ErrNoData)
	}
	padX(p, true)
	padY(p, true)
	roomForLegend(p, len(paths), true)
	return single(p, opt), nil
}

// Grid is a map of values on a rectangular grid, e.g. χ² of a companion
// search over separation and position angle or over east/north offsets:
// Values[iy*len(X)+ix] at (X[ix], Y[iy]), X and Y the cell centres in
// increasing order. NaN cells are drawn grey.
type Grid struct {
	X, Y   []float64
	Values []float64
	// XLabel, YLabel and ZLabel name the axes and the colour bar, with units.
	XLabel, YLabel, ZLabel string
	// XUnit and YUnit are the units of X and Y for the position of the minimum in the
	// title ("mas", "°"); empty for none.
	XUnit, YUnit string
	// InvertX runs X to the left (set it for east offsets, east left).
	InvertX bool
	// LogZ colours by log10 of the values (non-positive ones are grey).
	LogZ bool
	// Fit, when non-nil, marks a fitted position with its error ellipse.
	Fit *FitMark
}

// FitMark is a fitted position on a map with the covariance of its two coordinates.
type FitMark struct {
	X, Y              float64
	VarX, VarY, CovXY float64
	Label             string // legend entry, e.g. "fit, 1σ ellipse"
}

// ellipse returns n points of the ellipse of the fit's 1σ errors, the set where
// (p − c)ᵀ C⁻¹ (p − c) = 1 (Δχ² = 1 for the two coordinates; e.g. Press et al., Numerical
// Recipes, 3rd ed., sect. 15.6): with C = V diag(λ₁, λ₂) Vᵀ, c + V diag(√λ₁, √λ₂)(cos t,
// sin t).
func (f *FitMark) ellipse(n int) plotter.XYs {
	a, b, c := f.VarX, f.CovXY, f.VarY
	// Eigenvalues and the angle of the first eigenvector of [[a, b], [b, c]].
	tr, det := a+c, a*c-b*b
	disc := math.Sqrt(math.Max(tr*tr/4-det, 0))
	l1, l2 := tr/2+disc, math.Max(tr/2-disc, 0)
	th := 0.5 * math.Atan2(2*b, a-c)
	cs, sn := math.Cos(th), math.Sin(th)
	pts := make(plotter.XYs, n+1)
	for k := range pts {
		t := 2 * math.Pi * float64(k) / float64(n)
		u, v := math.Sqrt(l1)*math.Cos(t), math.Sqrt(l2)*math.Sin(t)
		pts[k].X = f.X + cs*u - sn*v
		pts[k].Y = f.Y + sn*u + cs*v
	}
	return pts
}

// gridXYZ presents a Grid to the heat map. With neg set, columns are
// listed in reverse with X negated, so the map can be drawn on an ordinary
// axis whose labels are negated (negTicks): the rasterized heat map cannot
// be drawn on an inverted axis, and the vector one shows seams.
type gridXYZ struct {
	g         *Grid
	logZ, neg bool
}

func (g gridXYZ) Dims() (int, int) { return len(g.g.X), len(g.g.Y) }
func (g gridXYZ) X(c int) float64 {
	if g.neg {
		return -g.g.X[len(g.g.X)-1-c]
	}
	return g.g.X[c]
}
func (g gridXYZ) Y(r int) float64 { return g.g.Y[r] }
func (g gridXYZ) Z(c, r int) float64 {
	if g.neg {
		c = len(g.g.X) - 1 - c
	}
	v := g.g.Values[r*len(g.g.X)+c]
	if g.logZ {
		if v <= 0 {
			return math.NaN()
		}
		return math.Log10(v)
	}
	return v
}

// Chi2Map draws g as an image, dark for low values (cubehelix), with a
// colour bar and the lowest cell marked by a red dot in a white ring; the
// title gives the minimum and where it is.
func Chi2Map(g Grid, opt Options) (*Figure, error) {
	nx, ny := len(g.X), len(g.Y)
	if nx == 0 || ny == 0 || len(g.Values) != nx*ny {
		return nil, fmt.Errorf("plots: χ² map: %d values for a %d × %d grid", len(g.Values), nx, ny)
	}
	for _, a := range [][]float64{g.X, g.Y} {
		for i := 1; i < len(a); i++ {
			if !(a[i] > a[i-1]) {
				return nil, fmt.Errorf("plots: χ² map: axis values must increase (%g after %g)", a[i], a[i-1])
			}
		}
	}
	gz := gridXYZ{g: &g, logZ: g.LogZ}
	zmin, zmax, best := math.Inf(1), math.Inf(-1), -1
	for r := 0; r < ny; r++ {
		for c := 0; c < nx; c++ {
			z := gz.Z(c, r)
			if !finite(z) {
				continue
			}
			if z < zmin {
				zmin, best = z, r*nx+c
			}
			zmax = math.Max(zmax, z)
		}
	}
	if best < 0 {
		return nil, fmt.Errorf("plots: χ² map: %w", ErrNoData)
	}
	if zmax == zmin {
		zmax = zmin + 1
	}
	cm := &rangeMap{min: zmin, max: zmax, alpha: 1, at: cubehelixColor}
	gz.neg = g.InvertX
	h := plotter.NewHeatMap(gz, cm.Palette(256))
	h.Min, h.Max = zmin, zmax
	h.NaN = color.Gray{150}
	h.Rasterized = true
	bx, by := g.X[best%nx], g.Y[best/nx]
	zbest := g.Values[best]
	p := newPlot(opt.title("χ² map")+fmt.Sprintf(" — minimum %.4g at %s, %s", zbest, withUnit(bx, g.XUnit), withUnit(by, g.YUnit)), g.XLabel, g.YLabel)
	mx := bx
	if g.InvertX {
		p.X.Tick.Marker = negTicks{}
		mx = -bx
	}
	p.Add(h)
	// The minimum: a red dot in a white ring, visible on any colour.
	ring, _ := plotter.NewScatter(plotter.XYs{{X: mx, Y: by}})
	ring.GlyphStyle = draw.GlyphStyle{Shape: draw.CircleGlyph{}, Radius: vg.Points(5.5), Color: color.White}
	dot, _ := plotter.NewScatter(plotter.XYs{{X: mx, Y: by}})
	dot.GlyphStyle = draw.GlyphStyle{Shape: draw.CircleGlyph{}, Radius: vg.Points(3.5), Color: color.RGBA{230, 40, 30, 255}}
	p.Add(ring, dot)
	if f := g.Fit; f != nil && finite(f.VarX) && finite(f.VarY) && finite(f.CovXY) {
		pts := f.ellipse(96)
		if g.InvertX {
			for i := range pts {
				pts[i].X = -pts[i].X
			}
		}
		line, err := plotter.NewLine(pts)
		if err == nil {
			line.LineStyle = draw.LineStyle{Color: color.RGBA{60, 200, 255, 255}, Width: vg.Points(1.5)}
			p.Add(line)
			if f.Label != "" {
				p.Legend.Add(f.Label, line)
			}
		}
	}
	zl := g.ZLabel
	if zl == "" {
		zl = "χ²"
	}
	if g.LogZ {
		zl = "log₁₀ " + zl
	}
	bar := newPlot("", "", zl)
	bar.HideX()
	bar.Y.Label.TextStyle.Font.Size = 12
	bar.Add(&plotter.ColorBar{ColorMap: cm, Vertical: true})
	return withColorBar(p, bar, opt, false), nil
}

// withUnit formats v with three significant digits and its unit: a space before a word
// ("12.5 mas"), none before a degree sign ("45°"), as the SI brochure (BIPM 2019, sect. 5.4.3)
// writes them.
func withUnit(v float64, unit string) string {
	s := fmt.Sprintf("%.3g", v)
	switch unit {
	case "":
		return s
	case "°":
		return s + unit
	}
	return s + " " + unit
}

// negTicks labels an axis that carries −x with the values of x.
type negTicks struct{}

func (negTicks) Ticks(min, max float64) []plot.Tick {
	ts := cleanTicks{}.Ticks(min, max)
	for i := range ts {
		if ts[i].Label != "" {
			ts[i].Label = formatTick(-ts[i].Value)
		}
	}
	return ts
}

// integerTicks labels every integer, for residuals in units of σ.
type integerTicks struct{}

func (integerTicks) Ticks(min, max float64) []plot.Tick {
	var ts []plot.Tick
	for v := math.Ceil(min); v <= max; v++ {
		ts = append(ts, plot.Tick{Value: v, Label: formatTick(v)})
	}
	return ts
}

// ContrastLine is one detection-limit curve: the magnitude difference
// DMag of the faintest companion detected at each separation Sep (mas).
type ContrastLine struct {
	Name      string
	Sep, DMag []float64
	// Dashed draws the line dashed, e.g. for a worst case beside a mean.
	Dashed bool
	// Series picks the colour from the palette: lines with equal Series
	// share a colour (e.g. the mean and worst case of one significance).
	Series int
}

// Contrast plots detection limits, Δmag against separation in mas, one
// line per ContrastLine, fainter companions (larger Δmag) higher up.
// Non-finite points break nothing: they are left out.
func Contrast(lines []ContrastLine, opt Options) (*Figure, error) {
	p := newPlot(opt.title("Detection limits"), "separation (mas)", "Δmag (companion − primary)")
	p.Add(plotter.NewGrid())
	total := 0
	for k, c := range lines {
		if len(c.Sep) != len(c.DMag) {
			return nil, fmt.Errorf("plots: contrast: line %q has %d separations and %d values", c.Name, len(c.Sep), len(c.DMag))
		}
		var xy plotter.XYs
		for i := range c.Sep {
			if finite(c.Sep[i], c.DMag[i]) {
				xy = append(xy, plotter.XY{X: c.Sep[i], Y: c.DMag[i]})
			}
		}
		if len(xy) == 0 {
			continue
		}
		total += len(xy)
		l, err := plotter.NewLine(xy)
		if err != nil {
			return nil, fmt.Errorf("plots: contrast: %w", err)
		}
		l.LineStyle.Width = vg.Points(1.6)
		l.LineStyle.Color = seriesColor(c.Series)
		if c.Dashed {
			l.LineStyle.Dashes = []vg.Length{vg.Points(6), vg.Points(3)}
		}
		p.Add(l)
		p.Legend.Add(legendName(c.Name, "limit", k, len(lines)), l)
	}
	if total == 0 {
		return nil, fmt.Errorf("plots: contrast: %w", ErrNoData)
	}
	padX(p, false)
	padY(p, false)
	roomForLegend(p, len(lines), false)
	return single(p, opt), nil
}
