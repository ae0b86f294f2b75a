package plots

import (
	"bytes"
	"fmt"
	"image"
	"image/color"
	"image/png"
	"math"
	"testing"
)

// The tests of this file read the rendered PNG back (image/png) and look at its pixels, as a
// reader does: the axis lines, the tick marks beside them, the blobs of ink of the tick
// labels, the legend and the colour strips. Layout constants are those of gonum/plot's axes
// (tick marks 8 pt long, minor ones half of that) at 96 dpi.

// decoded renders f to PNG and decodes it.
func decoded(t *testing.T, f *Figure) image.Image {
	t.Helper()
	var buf bytes.Buffer
	if err := f.Encode(&buf); err != nil {
		t.Fatal(err)
	}
	m, err := png.Decode(&buf)
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// gray returns the mean of the RGB components of the pixel at (x, y), 0–255.
func gray(m image.Image, x, y int) float64 {
	r, g, b, _ := m.At(x, y).RGBA()
	return float64(r+g+b) / 3 / 257
}

// ink reports whether the pixel at (x, y) is text or line ink: clearly darker than the
// light grey of the grid lines.
func ink(m image.Image, x, y int) bool { return gray(m, x, y) < 170 }

// mark reports whether the pixel at (x, y) is touched by a thin line: tick marks 0.5 pt
// wide fall between pixel columns and come out light grey.
func mark(m image.Image, x, y int) bool { return gray(m, x, y) < 245 }

// axes is the position of a plot's axis lines in pixels: the x axis runs along row xRow from
// column x0 to x1, the y axis along column yCol from row y0 (top) to y1.
type axes struct{ xRow, x0, x1, yCol, y0, y1 int }

// findAxes finds the axis lines of the main plot of m (the part left of column right): the
// lowest row and the leftmost column holding a dark run of at least half the plot's width or
// height.
func findAxes(t *testing.T, m image.Image, right int) axes {
	t.Helper()
	b := m.Bounds()
	a := axes{xRow: -1, yCol: -1}
	for y := b.Max.Y - 1; y >= 0 && a.xRow < 0; y-- {
		run, start := 0, 0
		for x := 0; x < right; x++ {
			if ink(m, x, y) {
				if run == 0 {
					start = x
				}
				run++
				if run >= right/2 {
					a.xRow, a.x0, a.x1 = y, start, x
				}
			} else {
				if a.xRow >= 0 {
					a.x1 = x - 1
					break
				}
				run = 0
			}
		}
	}
	for x := 0; x < right && a.yCol < 0; x++ {
		run, start := 0, 0
		for y := 0; y < b.Max.Y; y++ {
			if ink(m, x, y) {
				if run == 0 {
					start = y
				}
				run++
				if run >= b.Max.Y/2 {
					a.yCol, a.y0, a.y1 = x, start, y
				}
			} else {
				if a.yCol >= 0 {
					a.y1 = y - 1
					break
				}
				run = 0
			}
		}
	}
	if a.xRow < 0 || a.yCol < 0 {
		t.Fatalf("no axis lines found (x axis row %d, y axis column %d)", a.xRow, a.yCol)
	}
	return a
}

// span is a closed interval of pixels.
type span struct{ lo, hi int }

// blobs groups the indices i in [lo, hi] where has(i) into spans, merging spans less than
// gap pixels apart: the glyphs of one label are closer than that, two labels farther.
func blobs(lo, hi, gap int, has func(i int) bool) []span {
	var out []span
	for i := lo; i <= hi; i++ {
		if !has(i) {
			continue
		}
		if n := len(out); n > 0 && i-out[n-1].hi <= gap {
			out[n-1].hi = i
		} else {
			out = append(out, span{i, i})
		}
	}
	return out
}

// px is a length in points as pixels at the figures' 96 dpi.
func px(pt float64) int { return int(math.Round(pt * dpi / 72)) }

// checkTickLabels checks, from the pixels, that both axes have at least three labelled
// (long) tick marks, that the labels are separate blobs of ink, and that each blob belongs
// to exactly one labelled tick: two labels that touched or overlapped would make one blob
// holding two ticks, and a missing label a tick without a blob.
func checkTickLabels(t *testing.T, m image.Image, a axes, name string) {
	t.Helper()
	// The x axis: tick marks below the line, major ones reaching past half their length.
	majorRow := a.xRow + px(6.5)
	xt := blobs(a.x0, a.x1, 1, func(x int) bool { return mark(m, x, majorRow) })
	// The labels' band: below the tick marks, as tall as the 11 pt labels, above the axis
	// title.
	top := a.xRow + px(8) + 2
	bot := top + px(11)
	w := m.Bounds().Dx()
	xl := blobs(max(a.x0-40, 0), min(a.x1+40, w-1), px(3.5), func(x int) bool {
		for y := top; y <= bot; y++ {
			if ink(m, x, y) {
				return true
			}
		}
		return false
	})
	checkOneToOne(t, name+": x axis", xt, xl)
	// The y axis: tick marks left of the line; labels right-aligned left of them, between
	// the axis title (the first ink from the image's left edge, rotated) and the ticks.
	majorCol := a.yCol - px(6.5)
	yt := blobs(a.y0, a.y1, 1, func(y int) bool { return mark(m, majorCol, y) })
	right := a.yCol - px(8) - 2
	col := func(x int) bool {
		for y := max(a.y0-10, 0); y <= a.y1+10; y++ {
			if ink(m, x, y) {
				return true
			}
		}
		return false
	}
	left := 0
	for left < right && !col(left) {
		left++
	}
	for left < right && col(left) {
		left++
	}
	for left < right && !col(left) {
		left++
	}
	yl := blobs(a.y0-12, a.y1+12, px(2), func(y int) bool {
		for x := left; x <= right; x++ {
			if ink(m, x, y) {
				return true
			}
		}
		return false
	})
	checkOneToOne(t, name+": y axis", yt, yl)
}

// checkOneToOne checks that there are at least three ticks and that every label blob holds
// the centre of exactly one tick and every tick lies in a blob.
func checkOneToOne(t *testing.T, name string, ticks, labels []span) {
	t.Helper()
	if len(ticks) < 3 {
		t.Errorf("%s: %d labelled tick marks, want at least 3", name, len(ticks))
	}
	for _, l := range labels {
		n := 0
		for _, k := range ticks {
			if c := (k.lo + k.hi) / 2; c >= l.lo-1 && c <= l.hi+1 {
				n++
			}
		}
		if n != 1 {
			t.Errorf("%s: the label ink at pixels %d–%d holds %d tick marks, want 1 (labels %v, ticks %v)", name, l.lo, l.hi, n, labels, ticks)
		}
	}
	if len(labels) != len(ticks) {
		t.Errorf("%s: %d label blobs for %d labelled ticks (labels %v, ticks %v)", name, len(labels), len(ticks), labels, ticks)
	}
}

// checkLegendInside checks that no ink of the upper part of the plot (where the legend is)
// lies in the 10 pixels right of the data area, nor in the last 3 columns of the image, nor
// between the title and the top of the data area on the right: the legend stays inside the
// frame.
func checkLegendInside(t *testing.T, m image.Image, a axes, name string) {
	t.Helper()
	w := m.Bounds().Dx()
	// The title: the first rows with ink from the top, down to the first empty row.
	row := func(y int) bool {
		for x := 0; x < w; x++ {
			if ink(m, x, y) {
				return true
			}
		}
		return false
	}
	y := 0
	for y < a.y0 && !row(y) {
		y++
	}
	for y < a.y0 && row(y) {
		y++
	}
	for ; y < a.y0-3; y++ {
		for x := max(a.x1-200, a.yCol+1); x <= min(a.x1+10, w-1); x++ {
			if ink(m, x, y) {
				t.Errorf("%s: ink at (%d, %d), above the data area (from row %d) and below the title: the legend sits outside the frame", name, x, y, a.y0)
				return
			}
		}
	}
	for y := a.y0; y < a.y0+(a.y1-a.y0)/3; y++ {
		for x := a.x1 + 2; x <= a.x1+10 && x < w; x++ {
			if ink(m, x, y) {
				t.Errorf("%s: ink at (%d, %d), right of the data area (ending at column %d): the legend crosses the frame", name, x, y, a.x1)
				return
			}
		}
		for x := w - 3; x < w; x++ {
			if ink(m, x, y) {
				t.Errorf("%s: ink at the image's right edge (%d, %d)", name, x, y)
				return
			}
		}
	}
}

// stripColumns counts the columns right of column from whose pixels over the middle 90 % of
// rows y0–y1 are all off-white and take at least 40 distinct colours: the columns of a
// colour strip.
func stripColumns(m image.Image, from, y0, y1 int) int {
	n := 0
	lo, hi := y0+(y1-y0)/20, y1-(y1-y0)/20
	for x := from; x < m.Bounds().Max.X; x++ {
		seen := map[color.RGBA]bool{}
		ok := true
		for y := lo; y <= hi; y++ {
			c := color.RGBAModel.Convert(m.At(x, y)).(color.RGBA)
			if c.R > 245 && c.G > 245 && c.B > 245 {
				ok = false
				break
			}
			seen[c] = true
		}
		if ok && len(seen) >= 40 {
			n++
		}
	}
	return n
}

// pixelCase is a figure to check and whether it has a colour bar.
type pixelCase struct {
	name string
	fig  func() (*Figure, error)
	bar  bool
}

// TestPixels renders every plot kind on data of several dynamic ranges and checks from
// the PNG that both axes carry at least three tick labels that do not touch, that the
// legend stays inside the frame and that a colour bar has a colour strip.
func TestPixels(t *testing.T) {
	u, v, lam := uvTest()
	n := len(u)
	fq := make([]float64, n)
	for i := range fq {
		fq[i] = SpatialFrequency(u[i], v[i])
	}
	var cases []pixelCase
	// V² and amplitudes: a Gaussian at several widths, so that the values span from 1.01×
	// (barely resolved) to 10⁸× (deep in the wings), on linear and logarithmic axes.
	for _, width := range []float64{1e9, 8e7, 3e7, 1.2e7} {
		v2, e2 := make([]float64, n), make([]float64, n)
		for i := range v2 {
			q := fq[i] / width
			v2[i], e2[i] = math.Exp(-q*q), 0.01*math.Exp(-q*q)+1e-9
		}
		for _, logY := range []bool{false, true} {
			v2, e2, logY := v2, e2, logY
			cases = append(cases,
				pixelCase{fmt.Sprintf("V² width %g log %v", width, logY), func() (*Figure, error) {
					return V2(V2Data{U: u, V: v, Value: v2, Err: e2}, []ModelValues{{"model", v2}}, nil, Options{LogY: logY})
				}, false},
				pixelCase{fmt.Sprintf("V² by wavelength, width %g log %v", width, logY), func() (*Figure, error) {
					return V2(V2Data{U: u, V: v, Value: v2, Err: e2, Wavelength: lam}, []ModelValues{{"model", v2}}, nil, Options{LogY: logY})
				}, true})
		}
	}
	for _, amp := range []float64{2, 30, 170} {
		phi, perr := make([]float64, n), make([]float64, n)
		for i := range phi {
			phi[i], perr[i] = amp*math.Sin(float64(i)), amp/20+0.5
		}
		cases = append(cases, pixelCase{fmt.Sprintf("phase ±%g°", amp), func() (*Figure, error) {
			return Measured(Measurements{Label: "visibility phase", Unit: "°", Phase: true, Freq: fq, Value: phi, Err: perr, Wavelength: lam},
				[]ModelValues{{"model", phi}}, nil, Options{})
		}, true})
		res := make([]float64, n)
		for i := range res {
			res[i] = amp / 10 * math.Sin(3*float64(i))
		}
		cases = append(cases, pixelCase{fmt.Sprintf("residuals ±%g", amp/10), func() (*Figure, error) {
			return ResidualPlot([]Residuals{{Name: "V²", Freq: fq, Value: res, Wavelength: lam}, {Name: "closure phase", Freq: fq[:n/2], Value: res[:n/2], Wavelength: lam[:n/2]}}, Options{})
		}, true})
	}
	// Weight paths whose regularizer and misfit span 1.01× to 10¹⁰×.
	for _, r := range []float64{1.01, 1.3, 10, 1e3, 1e10} {
		var pts []LPoint
		for k := 0; k < 8; k++ {
			f := math.Pow(r, float64(k)/7)
			pts = append(pts, LPoint{Weight: math.Pow(10, float64(3-k)), Misfit: 0.7 * f, Regularizer: 3 / f})
		}
		cases = append(cases, pixelCase{fmt.Sprintf("L-curve %g×", r), func() (*Figure, error) {
			return LCurve([]LPath{{Name: "entropy", Points: pts, Chosen: 4}}, Options{})
		}, false})
	}
	for _, logZ := range []bool{false, true} {
		g := Grid{XLabel: "separation (mas)", YLabel: "position angle (°)", LogZ: logZ}
		for i := 0; i < 30; i++ {
			g.X = append(g.X, 1+float64(i))
		}
		for j := 0; j < 24; j++ {
			g.Y = append(g.Y, float64(15*j))
		}
		for j := range g.Y {
			for i := range g.X {
				g.Values = append(g.Values, 100+1e4*math.Exp(-math.Hypot(g.X[i]-12, (g.Y[j]-90)/15)))
			}
		}
		cases = append(cases, pixelCase{fmt.Sprintf("χ² map log %v", logZ), func() (*Figure, error) { return Chi2Map(g, Options{}) }, true})
	}
	half := make([]int, n)
	for i := range half {
		half[i] = i % 2
	}
	cases = append(cases,
		pixelCase{"V² by instrument", func() (*Figure, error) {
			v2 := make([]float64, n)
			for i := range v2 {
				v2[i] = math.Exp(-fq[i] / 3e7)
			}
			return Measured(Measurements{Label: "V²", Freq: fq, Value: v2, Wavelength: lam, Group: half, GroupNames: []string{"ALPHA-4", "BETA-2"}},
				[]ModelValues{{"model", v2}}, nil, Options{})
		}, false},
		pixelCase{"uv", func() (*Figure, error) { return UVCoverage(UV{U: u, V: v, Wavelength: lam}, Options{}) }, true},
		pixelCase{"contrast", func() (*Figure, error) {
			sep := []float64{1, 2, 4, 8, 16, 32}
			return Contrast([]ContrastLine{{Name: "3σ", Sep: sep, DMag: []float64{2, 3.5, 4.5, 5, 5.2, 5.3}}, {Name: "5σ", Sep: sep, DMag: []float64{1.5, 3, 4, 4.4, 4.6, 4.7}, Dashed: true}}, Options{})
		}, false},
	)
	for _, c := range cases {
		f, err := c.fig()
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		m := decoded(t, f)
		w := m.Bounds().Dx()
		right := w
		if c.bar {
			// The main plot ends where the colour bar's panel (110 px) begins.
			right = w - 110
		}
		a := findAxes(t, m, right)
		checkTickLabels(t, m, a, c.name)
		checkLegendInside(t, m, a, c.name)
		strips := stripColumns(m, a.x1+1, a.y0, a.y1)
		if c.bar && strips < 12 {
			t.Errorf("%s: %d columns of colour strip right of the plot, want the bar's 18", c.name, strips)
		}
		if !c.bar && strips > 0 {
			t.Errorf("%s: %d columns of colour strip, but no colour bar was asked for", c.name, strips)
		}
	}
}

// TestFitEllipse checks the error ellipse of a fitted position: every point p of it has
// (p − c)ᵀ C⁻¹ (p − c) = 1, the 1σ (Δχ² = 1) contour of the covariance C (e.g. Press et al.,
// Numerical Recipes, 3rd ed., sect. 15.6), for tilted and axis-aligned covariances.
func TestFitEllipse(t *testing.T) {
	for _, f := range []FitMark{
		{X: 12, Y: 40, VarX: 0.04, VarY: 9, CovXY: 0.3},
		{X: 3, Y: 200, VarX: 1, VarY: 1, CovXY: 0},
		{X: 0, Y: 0, VarX: 2, VarY: 0.5, CovXY: -0.9},
	} {
		det := f.VarX*f.VarY - f.CovXY*f.CovXY
		for _, p := range f.ellipse(40) {
			dx, dy := p.X-f.X, p.Y-f.Y
			q := (f.VarY*dx*dx - 2*f.CovXY*dx*dy + f.VarX*dy*dy) / det
			if math.Abs(q-1) > 1e-9 {
				t.Fatalf("%+v: point (%g, %g) at Δχ² %g, want 1", f, p.X, p.Y, q)
			}
		}
	}
}

// TestCurveBlackOnColouredData checks that a model curve over data coloured by group is drawn
// in black, as the models' points are: in the palette's sky blue, the colour of the first
// curve, it passed for data and vanished among blue points. No pixel of the figure may then
// be sky blue (within 12 of each 0–255 component; the blue group's antialiased edges stay
// further away).
func TestCurveBlackOnColouredData(t *testing.T) {
	m := Measurements{Label: "V²", Freq: []float64{2e7, 4e7, 6e7, 8e7}, Value: []float64{0.8, 0.5, 0.3, 0.1},
		Err: []float64{0.02, 0.02, 0.02, 0.02}, Group: []int{0, 0, 1, 1}, GroupNames: []string{"A", "B"}}
	c := Curve{Name: "fitted model"}
	for k := 0; k <= 100; k++ {
		q := 1e8 * float64(k) / 100
		c.Freq, c.Value = append(c.Freq, q), append(c.Value, math.Exp(-q/5e7))
	}
	f, err := Measured(m, nil, []Curve{c}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	img := decoded(t, f)
	sky := seriesColors[len(seriesColors)-1]
	near := func(a uint32, b uint8) bool { d := int(a>>8) - int(b); return d > -12 && d < 12 }
	nsky := 0
	b := img.Bounds()
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			r, g, bl, _ := img.At(x, y).RGBA()
			if near(r, sky.R) && near(g, sky.G) && near(bl, sky.B) {
				nsky++
			}
		}
	}
	if nsky > 0 {
		t.Errorf("%d sky-blue pixels: the curve is drawn in a data colour", nsky)
	}
}
