package plots

import (
	"bytes"
	"errors"
	"flag"
	"image"
	"image/color"
	"image/png"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
)

// checkPNG encodes f, decodes it with image/png and checks its size, that
// it holds several colours and that the central part of the plot is not
// all background.
func checkPNG(t *testing.T, f *Figure, w, h int) image.Image {
	t.Helper()
	var buf bytes.Buffer
	if err := f.Encode(&buf); err != nil {
		t.Fatalf("Encode: %v", err)
	}
	m, err := png.Decode(&buf)
	if err != nil {
		t.Fatalf("png.Decode: %v", err)
	}
	if b := m.Bounds(); b.Dx() != w || b.Dy() != h {
		t.Fatalf("size %d × %d, want %d × %d", b.Dx(), b.Dy(), w, h)
	}
	colours := map[color.RGBA]bool{}
	ink := 0
	for y := 0; y < h; y++ {
		for x := 0; x < w; x++ {
			c := color.RGBAModel.Convert(m.At(x, y)).(color.RGBA)
			colours[c] = true
			if x > w/6 && x < 5*w/6 && y > h/6 && y < 5*h/6 && c != (color.RGBA{255, 255, 255, 255}) {
				ink++
			}
		}
	}
	if len(colours) < 8 {
		t.Errorf("only %d distinct colours", len(colours))
	}
	if ink < 500 {
		t.Errorf("only %d non-background pixels in the plot area", ink)
	}
	return m
}

// uvTest is a small coverage: 3 baselines × 5 hour angles × 4 channels.
func uvTest() (u, v, lam []float64) {
	for h := 0; h < 5; h++ {
		a := 0.3 * float64(h)
		for ch := 0; ch < 4; ch++ {
			l := 1.6e-6 + 0.2e-6*float64(ch)
			for _, b := range [][2]float64{{30, 5}, {-10, 40}, {20, 45}} {
				bx := b[0]*math.Cos(a) - b[1]*math.Sin(a)
				by := b[0]*math.Sin(a) + b[1]*math.Cos(a)
				u, v, lam = append(u, bx/l), append(v, by/l), append(lam, l)
			}
		}
	}
	return u, v, lam
}

func TestAllPlotsRender(t *testing.T) {
	nan := math.NaN()
	u, v, lam := uvTest()
	n := len(u)
	v2, e2, m2 := make([]float64, n), make([]float64, n), make([]float64, n)
	for i := range u {
		q := math.Hypot(u[i], v[i]) / 5e7
		v2[i], e2[i], m2[i] = math.Exp(-q*q), 0.02, math.Exp(-q*q)*0.98
	}
	v2[2] = math.NaN()
	cpU1, cpV1, cpU2, cpV2 := u[:n/3], v[:n/3], u[n/3:2*n/3], v[n/3:2*n/3]
	phi, perr, pm := make([]float64, n/3), make([]float64, n/3), make([]float64, n/3)
	for i := range phi {
		phi[i], perr[i], pm[i] = 170*math.Sin(float64(i)), 5, 170*math.Sin(float64(i))+4
	}
	grid := Grid{X: []float64{-2, -1, 0, 1, 2}, Y: []float64{-1, 0, 1}, XLabel: "east (mas)", YLabel: "north (mas)", InvertX: true}
	for iy := range grid.Y {
		for ix := range grid.X {
			grid.Values = append(grid.Values, 1+math.Hypot(grid.X[ix]-1, grid.Y[iy]))
		}
	}
	path := []LPoint{{1e3, 30, 0.01, false}, {1e2, 5, 0.1, false}, {10, 1.1, 1, false}, {1, 0.9, 10, false}, {0.3, 0.95, 12, true}}
	cases := []struct {
		name string
		make func(Options) (*Figure, error)
	}{
		{"uv", func(o Options) (*Figure, error) { return UVCoverage(UV{U: u, V: v, Wavelength: lam}, o) }},
		{"uv one colour", func(o Options) (*Figure, error) { return UVCoverage(UV{U: u, V: v}, o) }},
		{"v2", func(o Options) (*Figure, error) {
			return V2(V2Data{U: u, V: v, Value: v2, Err: e2}, []ModelValues{{"a", m2}, {"b", v2}}, []Curve{{"gauss", []float64{0, 1e7, 2e7}, []float64{1, 0.9, 0.8}}}, o)
		}},
		{"v2 log", func(o Options) (*Figure, error) {
			o.LogY = true
			return V2(V2Data{U: u, V: v, Value: v2, Err: e2}, []ModelValues{{"a", m2}}, nil, o)
		}},
		{"closure phase", func(o Options) (*Figure, error) {
			return ClosurePhase(T3Data{U1: cpU1, V1: cpV1, U2: cpU2, V2: cpV2, Phi: phi, Err: perr}, []ModelValues{{"m", pm}}, o)
		}},
		{"v2 by wavelength", func(o Options) (*Figure, error) {
			return V2(V2Data{U: u, V: v, Value: v2, Err: e2, Wavelength: lam}, []ModelValues{{"a", m2}}, nil, o)
		}},
		{"closure phase by wavelength", func(o Options) (*Figure, error) {
			return ClosurePhase(T3Data{U1: cpU1, V1: cpV1, U2: cpU2, V2: cpV2, Phi: phi, Err: perr, Wavelength: lam[:n/3]}, []ModelValues{{"m", pm}}, o)
		}},
		{"visibility amplitude", func(o Options) (*Figure, error) {
			amp := make([]float64, n)
			for i := range amp {
				amp[i] = math.Sqrt(math.Abs(v2[i]))
			}
			fq := make([]float64, n)
			for i := range fq {
				fq[i] = SpatialFrequency(u[i], v[i])
			}
			return Measured(Measurements{Label: "visibility amplitude", Freq: fq, Value: amp, Err: e2, Wavelength: lam}, []ModelValues{{"m", amp}}, nil, o)
		}},
		{"residuals", func(o Options) (*Figure, error) {
			return ResidualPlot([]Residuals{{Name: "V²", Freq: u, Value: NormalizedResiduals(nil, v2, m2, e2)}}, o)
		}},
		{"residuals by wavelength", func(o Options) (*Figure, error) {
			fq := make([]float64, n/3)
			for i := range fq {
				fq[i] = LongestBaseline(cpU1[i], cpV1[i], cpU2[i], cpV2[i])
			}
			return ResidualPlot([]Residuals{{Name: "V²", Freq: u, Value: NormalizedResiduals(nil, v2, m2, e2), Wavelength: lam},
				{Name: "closure phase", Freq: fq, Value: PhaseResiduals(nil, phi, pm, perr), Wavelength: lam[:n/3]}}, o)
		}},
		{"L-curve", func(o Options) (*Figure, error) { return LCurve([]LPath{{"entropy", path, 2, nil}}, o) }},
		{"chi2 map", func(o Options) (*Figure, error) { return Chi2Map(grid, o) }},
		{"contrast", func(o Options) (*Figure, error) {
			sep := []float64{1, 2, 4, 8, 16}
			return Contrast([]ContrastLine{{"3σ", sep, []float64{3, 5, 6, nan, 6.5}, false, 0}, {"5σ", sep, []float64{2, 4, 5, 5.2, 5.5}, true, 1}}, o)
		}},
	}
	for _, c := range cases {
		for _, o := range []Options{{}, {Width: 640, Height: 480, Title: "custom"}} {
			f, err := c.make(o)
			if err != nil {
				t.Fatalf("%s: %v", c.name, err)
			}
			w, h := o.size()
			if fw, fh := f.Size(); fw != w || fh != h {
				t.Errorf("%s: Size() = %d × %d, want %d × %d", c.name, fw, fh, w, h)
			}
			checkPNG(t, f, w, h)
			if *plotsOut != "" && o.Title == "" {
				if err := f.WriteFile(filepath.Join(*plotsOut, strings.ReplaceAll(c.name, " ", "-")+".png")); err != nil {
					t.Error(err)
				}
			}
		}
	}
}

// plotsOut is a folder to keep the PNGs of TestAllPlotsRender in, for looking at them.
var plotsOut = flag.String("plots.out", "", "write the PNGs of TestAllPlotsRender into this folder")

func TestEmptyInput(t *testing.T) {
	nan := math.NaN()
	cases := map[string]func() (*Figure, error){
		"uv empty": func() (*Figure, error) { return UVCoverage(UV{}, Options{}) },
		"uv NaN":   func() (*Figure, error) { return UVCoverage(UV{U: []float64{nan}, V: []float64{1}}, Options{}) },
		"contrast NaN": func() (*Figure, error) {
			return Contrast([]ContrastLine{{"3σ", []float64{1}, []float64{nan}, false, 0}}, Options{})
		},
		"v2 empty": func() (*Figure, error) { return V2(V2Data{}, nil, nil, Options{}) },
		"v2 all NaN": func() (*Figure, error) {
			return V2(V2Data{U: []float64{1}, V: []float64{1}, Value: []float64{nan}}, nil, nil, Options{})
		},
		"v2 log ≤ 0": func() (*Figure, error) {
			return V2(V2Data{U: []float64{1}, V: []float64{1}, Value: []float64{-0.1}}, nil, nil, Options{LogY: true})
		},
		"cp empty":    func() (*Figure, error) { return ClosurePhase(T3Data{}, nil, Options{}) },
		"resid empty": func() (*Figure, error) { return ResidualPlot(nil, Options{}) },
		"resid NaN": func() (*Figure, error) {
			return ResidualPlot([]Residuals{{Name: "x", Freq: []float64{1}, Value: []float64{nan}}}, Options{})
		},
		"lcurve empty": func() (*Figure, error) { return LCurve(nil, Options{}) },
		"lcurve ≤ 0":   func() (*Figure, error) { return LCurve([]LPath{{"S", []LPoint{{1, 2, -3, false}}, 0, nil}}, Options{}) },
		"chi2 NaN": func() (*Figure, error) {
			return Chi2Map(Grid{X: []float64{0}, Y: []float64{0}, Values: []float64{nan}}, Options{})
		},
	}
	for name, f := range cases {
		if _, err := f(); !errors.Is(err, ErrNoData) {
			t.Errorf("%s: error %v, want ErrNoData", name, err)
		}
	}
}

func TestBadInput(t *testing.T) {
	cases := []struct {
		name string
		f    func() (*Figure, error)
		want string
	}{
		{"uv lengths", func() (*Figure, error) { return UVCoverage(UV{U: []float64{1, 2}, V: []float64{1}}, Options{}) }, "2 u, 1 v"},
		{"v2 lengths", func() (*Figure, error) {
			return V2(V2Data{U: []float64{1}, V: []float64{1}, Value: []float64{1, 2}}, nil, nil, Options{})
		}, "2 values"},
		{"model length", func() (*Figure, error) {
			return V2(V2Data{U: []float64{1}, V: []float64{1}, Value: []float64{1}}, []ModelValues{{"m", []float64{1, 2}}}, nil, Options{})
		}, `model "m" has 2 values for 1 data points`},
		{"grid size", func() (*Figure, error) {
			return Chi2Map(Grid{X: []float64{0, 1}, Y: []float64{0}, Values: []float64{1}}, Options{})
		}, "1 values for a 2 × 1 grid"},
		{"grid order", func() (*Figure, error) {
			return Chi2Map(Grid{X: []float64{1, 0}, Y: []float64{0}, Values: []float64{1, 2}}, Options{})
		}, "must increase"},
	}
	for _, c := range cases {
		if _, err := c.f(); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want one containing %q", c.name, err, c.want)
		}
	}
}

// v2Points returns the points V2 draws of d.
func v2Points(d V2Data, logY bool) dataPoints {
	m := Measurements{Label: "V²", Value: d.Value, Err: d.Err, Freq: make([]float64, len(d.U))}
	for i := range d.U {
		m.Freq[i] = SpatialFrequency(d.U[i], d.V[i])
	}
	return m.points(logY)
}

func TestNaNSkipped(t *testing.T) {
	nan := math.NaN()
	d := V2Data{U: []float64{1e7, 2e7, nan, 4e7, 5e7}, V: []float64{0, 0, 0, 0, 0},
		Value: []float64{0.9, nan, 0.5, 0.3, -0.01}, Err: []float64{0.1, 0.1, 0.1, math.Inf(1), 0.01}}
	// Point 1 has a NaN value, 2 a NaN u, 3 an infinite error: points 0
	// and 4 remain; on a log axis point 4 (V² < 0) goes too.
	if got := v2Points(d, false); got.Len() != 2 || got.idx[0] != 0 || got.idx[1] != 4 {
		t.Errorf("linear: kept %v, want points 0 and 4", got.idx)
	}
	if got := v2Points(d, true); got.Len() != 1 || got.idx[0] != 0 {
		t.Errorf("log: kept %v, want point 0", got.idx)
	}
	// The lower error bar on a log axis stops above zero.
	lg := v2Points(V2Data{U: []float64{1}, V: []float64{0}, Value: []float64{0.05}, Err: []float64{0.2}}, true)
	if lo, hi := lg.YError(0); !(lo < 0.05) || hi != 0.2 {
		t.Errorf("log error bar (%g, %g), want low < value, high = 0.2", lo, hi)
	}
	if _, err := V2(d, []ModelValues{{"m", []float64{1, nan, 1, 1, 1}}}, nil, Options{}); err != nil {
		t.Errorf("V2 with NaN points: %v", err)
	}
}

func TestUVOrientation(t *testing.T) {
	// East to the left (CONVENTIONS.md): a point of positive u lies left
	// of one of negative u; v increases upwards. The data area is square
	// and both axes span the same range (equal axes).
	p, bar, err := uvPlots(UV{U: []float64{3e7}, V: []float64{1e7}, Wavelength: []float64{2e-6}}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if bar != nil {
		t.Error("one wavelength: colour bar made")
	}
	c := draw.New(vgimg.New(8*vg.Inch, 6*vg.Inch))
	sq := squareCanvas(p, c)
	da := p.DataCanvas(sq)
	if dw, dh := da.Max.X-da.Min.X, da.Max.Y-da.Min.Y; math.Abs(float64(dw-dh)) > 0.5 {
		t.Errorf("data area %v × %v, want square", dw, dh)
	}
	if p.X.Min != p.Y.Min || p.X.Max != p.Y.Max {
		t.Errorf("axis ranges x [%g, %g], y [%g, %g], want equal", p.X.Min, p.X.Max, p.Y.Min, p.Y.Max)
	}
	tx, ty := p.Transforms(&da)
	if !(tx(30) < tx(-30)) {
		t.Errorf("u = +30 Mλ at %v, u = −30 at %v: positive u must be left", tx(30), tx(-30))
	}
	// vg's y axis points up.
	if !(ty(10) > ty(-10)) {
		t.Errorf("v = +10 at %v, −10 at %v: positive v must be up", ty(10), ty(-10))
	}
	// Both (u, v) and (−u, −v) are drawn.
	q, _, _ := uvPlots(UV{U: []float64{3e7}, V: []float64{1e7}}, Options{})
	if q.X.Max < 30 || q.X.Min > -30 {
		t.Errorf("x range [%g, %g] does not hold ±30 Mλ", q.X.Min, q.X.Max)
	}
}

func TestUVColouredByWavelength(t *testing.T) {
	// The shortest wavelength is drawn violet-blue, the longest red.
	u, v, lam := uvTest()
	f, err := UVCoverage(UV{U: u, V: v, Wavelength: lam}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	m := f.Image()
	var red, blue int
	b := m.Bounds()
	for y := 0; y < b.Dy(); y++ {
		for x := 0; x < b.Dx()-130; x++ { // the plot, not the colour bar
			r, g, bl, _ := m.At(x, y).RGBA()
			switch {
			case r > 0xc000 && g < 0x4000 && bl < 0x4000:
				red++
			case bl > 0xc000 && r < 0x8000 && g < 0x4000:
				blue++
			}
		}
	}
	if red < 50 || blue < 50 {
		t.Errorf("red pixels %d, blue pixels %d: want both wavelength ends drawn", red, blue)
	}
	if wavelengthColor(0) == wavelengthColor(1) {
		t.Error("wavelength colours do not vary")
	}
}

func TestChi2MapMinimumEastLeft(t *testing.T) {
	// A minimum at +10 mas east on an east-left map lies in the left part
	// of the picture; its red marker is found there.
	g := Grid{XLabel: "east (mas)", YLabel: "north (mas)", InvertX: true}
	for i := 0; i <= 30; i++ {
		g.X = append(g.X, -15+float64(i))
		g.Y = append(g.Y, -15+float64(i))
	}
	for _, y := range g.Y {
		for _, x := range g.X {
			g.Values = append(g.Values, 2+math.Hypot(x-10, y))
		}
	}
	f, err := Chi2Map(g, Options{})
	if err != nil {
		t.Fatal(err)
	}
	m := f.Image()
	var sx, n float64
	b := m.Bounds()
	for y := 0; y < b.Dy(); y++ {
		for x := 0; x < b.Dx(); x++ {
			r, gg, bl, _ := m.At(x, y).RGBA()
			if r > 0xd000 && gg < 0x6000 && bl < 0x5000 {
				sx += float64(x)
				n++
			}
		}
	}
	if n == 0 {
		t.Fatal("minimum marker not found")
	}
	if cx := sx / n; cx > 0.35*float64(b.Dx()) {
		t.Errorf("marker at x = %.0f of %d: not on the left (east)", cx, b.Dx())
	}
	// The heat map grid for an inverted axis lists negated X in increasing
	// order with the values moved along.
	gz := gridXYZ{g: &g, neg: true}
	if gz.X(0) != -15 || gz.X(30) != 15 || gz.Z(0, 15) != g.Values[15*31+30] {
		t.Errorf("negated grid wrong: X(0) = %g, X(30) = %g", gz.X(0), gz.X(30))
	}
}

func TestGeometry(t *testing.T) {
	// Worked by hand: baselines (3, 4) and (1, 0) have lengths 5 and 1;
	// the closing baseline (4, 4) has 4√2 = 5.656854.
	if got := LongestBaseline(3, 4, 1, 0); math.Abs(got-4*math.Sqrt2) > 1e-12 {
		t.Errorf("LongestBaseline = %g, want 5.656854", got)
	}
	if got := LongestBaseline(3, 4, -3, -3.5); got != 5 {
		t.Errorf("LongestBaseline = %g, want 5", got)
	}
	if got := SpatialFrequency(3e6, 4e6); got != 5e6 {
		t.Errorf("SpatialFrequency = %g, want 5e6", got)
	}
	for _, c := range []struct{ in, want float64 }{
		{0, 0}, {180, 180}, {-180, 180}, {190, -170}, {-190, 170}, {540, 180}, {359, -1}, {-721, -1},
	} {
		if got := WrapDegrees(c.in); math.Abs(got-c.want) > 1e-12 {
			t.Errorf("WrapDegrees(%g) = %g, want %g", c.in, got, c.want)
		}
	}
}

func TestResiduals(t *testing.T) {
	r := NormalizedResiduals(nil, []float64{1, 2, 3}, []float64{0.5, 2, 1}, []float64{0.25, 1, 0})
	if r[0] != 2 || r[1] != 0 || !math.IsNaN(r[2]) {
		t.Errorf("NormalizedResiduals = %v, want [2 0 NaN]", r)
	}
	// 179° and −179° are 2° apart across the wrap.
	p := PhaseResiduals(make([]float64, 2), []float64{179, 10}, []float64{-179, 20}, []float64{1, 5})
	if math.Abs(p[0]+2) > 1e-12 || math.Abs(p[1]+2) > 1e-12 {
		t.Errorf("PhaseResiduals = %v, want [-2 -2]", p)
	}
	defer func() {
		if recover() == nil {
			t.Error("no panic on mismatched lengths")
		}
	}()
	NormalizedResiduals(nil, []float64{1}, []float64{1, 2}, []float64{1})
}

// tickLabels joins the labels of the labelled ticks.
func tickLabels(ts []plot.Tick) string {
	var lab []string
	for _, tk := range ts {
		if tk.Label != "" {
			lab = append(lab, tk.Label)
		}
	}
	return strings.Join(lab, " ")
}

func TestTicks(t *testing.T) {
	for _, c := range []struct {
		name string
		got  string
		want string
	}{
		{"cleanTicks(0, 50)", tickLabels(cleanTicks{}.Ticks(0, 50)), "0 10 20 30 40 50"},
		{"logTicks(0.01, 3)", tickLabels(logTicks{}.Ticks(0.01, 3)), "0.01 0.1 1"},
		{"logTicks(0.5, 1.1)", tickLabels(logTicks{}.Ticks(0.5, 1.1)), "0.5 0.6 0.7 0.8 0.9 1"},
		// A span holding one multiple of its decade falls back to 1-2-5 steps.
		{"logTicks(0.862, 0.903)", tickLabels(logTicks{}.Ticks(0.862, 0.903)), "0.87 0.88 0.89 0.9"},
		// The 1-2-5 step nearest a fifth of the span (0.05) labels only 0.2 and 0.25 here:
		// the next smaller step is taken, so that at least three labels show.
		{"cleanTicks(0.152, 0.262)", tickLabels(cleanTicks{}.Ticks(0.152, 0.262)), "0.16 0.18 0.2 0.22 0.24 0.26"},
		{"logTicks(0.152, 0.262)", tickLabels(logTicks{}.Ticks(0.152, 0.262)), "0.16 0.18 0.2 0.22 0.24 0.26"},
		{"cleanTicks(0.0007, 0.00102)", tickLabels(cleanTicks{}.Ticks(0.0007, 0.00102)), "0.0007 0.0008 0.0009 0.001"},
		// Decades far below 1 are values on a logarithmic axis, not rounding noise about 0.
		{"logTicks(1e-14, 1e-10)", tickLabels(logTicks{}.Ticks(1e-14, 1e-10)), "1e-14 1e-13 1e-12 1e-11 1e-10"},
	} {
		if c.got != c.want {
			t.Errorf("%s labels %q, want %q", c.name, c.got, c.want)
		}
	}
}

func TestWriteFile(t *testing.T) {
	u, v, lam := uvTest()
	f, err := UVCoverage(UV{U: u, V: v, Wavelength: lam}, Options{Width: 500, Height: 400})
	if err != nil {
		t.Fatal(err)
	}
	p := filepath.Join(t.TempDir(), "uv.png")
	if err := f.WriteFile(p); err != nil {
		t.Fatal(err)
	}
	data, err := os.ReadFile(p)
	if err != nil {
		t.Fatal(err)
	}
	cfg, err := png.DecodeConfig(bytes.NewReader(data))
	if err != nil || cfg.Width != 500 || cfg.Height != 400 {
		t.Errorf("written PNG %d × %d (%v), want 500 × 400", cfg.Width, cfg.Height, err)
	}
}

func BenchmarkV2(b *testing.B) {
	n := 14000
	u, v, val, e, m := make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
	for i := range u {
		u[i] = 4e7 * math.Cos(float64(i))
		v[i] = 4e7 * math.Sin(float64(i)*1.3)
		q := math.Hypot(u[i], v[i]) / 5e7
		val[i], e[i], m[i] = math.Exp(-q*q), 0.02, math.Exp(-q*q)
	}
	b.ReportAllocs()
	for b.Loop() {
		f, err := V2(V2Data{U: u, V: v, Value: val, Err: e}, []ModelValues{{"m", m}}, nil, Options{})
		if err != nil {
			b.Fatal(err)
		}
		_ = f.Image()
	}
}

func TestConcurrentImage(t *testing.T) {
	// A Figure may be rendered from several goroutines (run with -race).
	u, v, lam := uvTest()
	f, err := UVCoverage(UV{U: u, V: v, Wavelength: lam}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	want := f.Image().(*image.RGBA)
	done := make(chan bool, 3)
	for range 3 {
		go func() {
			done <- bytes.Equal(f.Image().(*image.RGBA).Pix, want.Pix)
		}()
	}
	for range 3 {
		if !<-done {
			t.Error("concurrent rendering gave a different image")
		}
	}
}

// TestWithUnit checks the minimum's position in the χ² map title: a space between number and
// unit, none before the degree sign (SI Brochure, 9th edition, BIPM 2019, sect. 5.4.3; the
// rule is quoted from memory).
func TestWithUnit(t *testing.T) {
	for _, c := range []struct {
		v    float64
		unit string
		want string
	}{{12.5, "mas", "12.5 mas"}, {45, "°", "45°"}, {0.00123456, "", "0.00123"}} {
		if got := withUnit(c.v, c.unit); got != c.want {
			t.Errorf("withUnit(%g, %q) = %q, want %q", c.v, c.unit, got, c.want)
		}
	}
}

// AutoLog: two decades between the 5th and 95th percentiles of the positive values, at most
// a tenth not positive (the rule of AutoLog, common practice, no source).
func TestAutoLog(t *testing.T) {
	ramp := func(n int, f func(i int) float64) []float64 {
		v := make([]float64, n)
		for i := range v {
			v[i] = f(i)
		}
		return v
	}
	decay := ramp(100, func(i int) float64 { return math.Pow(10, -4*float64(i)/99) })
	for _, c := range []struct {
		name string
		v    []float64
		want bool
	}{
		{"four decades", decay, true},
		{"0.5 to 0.9", ramp(100, func(i int) float64 { return 0.5 + 0.004*float64(i) }), false},
		{"four decades, 20 % negative", append(append([]float64{}, decay...), ramp(25, func(int) float64 { return -1e-3 })...), false},
		{"four decades, 5 % zero and NaN", append(append([]float64{}, decay...), 0, 0, 0, 0, 0, math.NaN(), math.NaN()), true},
		{"one value", []float64{1}, false},
	} {
		if got := AutoLog(c.v); got != c.want {
			t.Errorf("%s: AutoLog = %v, want %v", c.name, got, c.want)
		}
	}
	// On a logarithmic axis the legend counts the points it cannot show.
	m := Measurements{Label: "V²", Freq: []float64{1e7, 2e7, 3e7, 4e7}, Value: []float64{0.5, 0.01, -0.001, 0}}
	if k := m.nonPositive(); k != 2 {
		t.Errorf("%d points not above zero, want 2", k)
	}
}

// A model value at a V² null (1e-17) is left out of a logarithmic axis that would otherwise
// reach down to it.
func TestModelsBelowLogAxis(t *testing.T) {
	p := plot.New()
	p.Y.Scale = plot.LogScale{}
	d := dataPoints{xy: plotter.XYs{{X: 1, Y: 1e-3}, {X: 2, Y: 0.5}}, idx: []int{0, 1}}
	m := []ModelValues{{Name: "image", Value: []float64{1e-17, 0.4}}}
	if err := addModels(p, d, m, 2, false, true, false); err != nil {
		t.Fatal(err)
	}
	if p.Y.Min < 1e-5 {
		t.Errorf("y axis reaches down to %g, want no lower than a hundredth of the lowest data point, 1e-5", p.Y.Min)
	}
}

// On a linear axis nothing is left out: negative closure phases of the
// model are drawn like positive ones.
func TestModelsNegativeOnLinearAxis(t *testing.T) {
	p := plot.New()
	d := dataPoints{xy: plotter.XYs{{X: 1, Y: -150}, {X: 2, Y: 30}}, idx: []int{0, 1}}
	m := []ModelValues{{Name: "image", Value: []float64{-140, 25}}}
	if err := addModels(p, d, m, 2, true, false, false); err != nil {
		t.Fatal(err)
	}
	if p.Y.Min > -140 {
		t.Errorf("y axis starts at %g: the model's value −140 is not drawn", p.Y.Min)
	}
}
