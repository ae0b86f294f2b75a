package preview

import (
	"bytes"
	"errors"
	"image"
	"image/color"
	"image/gif"
	"image/png"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// brightCentroid returns the mean position of the pixels of area whose
// colour is c.
func brightCentroid(t *testing.T, m *image.RGBA, area image.Rectangle, c color.RGBA) (float64, float64) {
	t.Helper()
	var sx, sy, n float64
	for y := area.Min.Y; y < area.Max.Y; y++ {
		for x := area.Min.X; x < area.Max.X; x++ {
			if m.RGBAAt(x, y) == c {
				sx += float64(x)
				sy += float64(y)
				n++
			}
		}
	}
	if n == 0 {
		t.Fatal("no pixel of the expected colour in the image area")
	}
	return sx / n, sy / n
}

func TestOrientation(t *testing.T) {
	// CONVENTIONS.md: pixel (ix, iy) sits at x = −(ix − n/2)·pixel (east),
	// y = (iy − n/2)·pixel (north), and previews show north up and east
	// left like a FITS viewer with CDELT1 < 0 (Greisen & Calabretta 2002,
	// A&A 395, 1061: RA increases to the east, i.e. towards negative CDELT1
	// steps). A source east of the centre must therefore appear left of the
	// image centre, and one north of it above.
	const n = 32
	tests := []struct {
		name   string
		ix, iy int
		left   bool // expected left of the centre (else right), when dx != 0
		up     bool // expected above the centre (else below), when dy != 0
		dx, dy bool
	}{
		{"east", n/2 - 6, n / 2, true, false, true, false},
		{"west", n/2 + 6, n / 2, false, false, true, false},
		{"north", n / 2, n/2 + 6, false, true, false, true},
		{"south", n / 2, n/2 - 6, false, false, false, true},
		{"north-east", n/2 - 5, n/2 + 9, true, true, true, true},
	}
	for _, interp := range []Interp{Nearest, Bilinear} {
		for _, tt := range tests {
			img := make([]float64, n*n)
			img[tt.iy*n+tt.ix] = 1
			opt := Options{HideCompass: true, Interp: interp}
			sc, err := newScale(&opt, []Frame{{Data: img, NX: n, NY: n}})
			if err != nil {
				t.Fatal(err)
			}
			fc, err := newFaces()
			if err != nil {
				t.Fatal(err)
			}
			m, area := render(Frame{Data: img, NX: n, NY: n}, &opt, sc, fc, 512, "")
			var cx, cy float64
			if interp == Nearest {
				cx, cy = brightCentroid(t, m, area, sc.color(1))
			} else {
				cx, cy = brightestCentroid(m, area)
			}
			mx := float64(area.Min.X+area.Max.X) / 2
			my := float64(area.Min.Y+area.Max.Y) / 2
			// The display centre sits between pixels n/2−1 and n/2; pixel
			// n/2 is centred half a pixel (8 display pixels) further.
			wantX := float64(area.Min.X) + (float64(tt.ix)+0.5)*16
			wantY := float64(area.Max.Y) - (float64(tt.iy)+0.5)*16
			if math.Abs(cx-wantX) > 1 || math.Abs(cy-wantY) > 1 {
				t.Errorf("%s (interp %d): bright pixel drawn at (%.1f, %.1f), want (%.1f, %.1f)", tt.name, interp, cx, cy, wantX, wantY)
			}
			if tt.dx && (cx < mx) != tt.left {
				t.Errorf("%s: x = %.1f vs centre %.1f, want left = %v", tt.name, cx, mx, tt.left)
			}
			if tt.dy && (cy < my) != tt.up {
				t.Errorf("%s: y = %.1f vs centre %.1f, want up = %v", tt.name, cy, my, tt.up)
			}
		}
	}
}

// brightestCentroid returns the position of the brightest pixel (by
// luminance) of area.
func brightestCentroid(m *image.RGBA, area image.Rectangle) (float64, float64) {
	best, bx, by := -1.0, 0, 0
	for y := area.Min.Y; y < area.Max.Y; y++ {
		for x := area.Min.X; x < area.Max.X; x++ {
			c := m.RGBAAt(x, y)
			if l := luminance(float64(c.R), float64(c.G), float64(c.B)); l > best {
				best, bx, by = l, x, y
			}
		}
	}
	return float64(bx), float64(by)
}

func TestCorners(t *testing.T) {
	// img[iy*nx+ix] with ix = 0 the left column and iy = 0 the bottom row
	// (CONVENTIONS.md). Values 0, 1, 2, 3 at the four corners on a 0..3
	// scale map to four distinct colours; a non-square grid checks that
	// nx and ny are not swapped.
	const nx, ny = 6, 4
	img := make([]float64, nx*ny)
	for i := range img {
		img[i] = 1.5
	}
	img[0*nx+0] = 0         // bottom left
	img[0*nx+nx-1] = 1      // bottom right
	img[(ny-1)*nx+0] = 2    // top left
	img[(ny-1)*nx+nx-1] = 3 // top right
	opt := Options{HideCompass: true}
	f := Frame{Data: img, NX: nx, NY: ny}
	sc, _ := newScale(&opt, []Frame{f})
	fc, _ := newFaces()
	m, area := render(f, &opt, sc, fc, 300, "")
	if area.Dx() != 300 || area.Dy() != 200 {
		t.Fatalf("area %v, want 300 × 200", area)
	}
	probe := []struct {
		x, y int
		v    float64
	}{
		{area.Min.X + 2, area.Max.Y - 3, 0},
		{area.Max.X - 3, area.Max.Y - 3, 1},
		{area.Min.X + 2, area.Min.Y + 2, 2},
		{area.Max.X - 3, area.Min.Y + 2, 3},
	}
	for _, p := range probe {
		if got, want := m.RGBAAt(p.x, p.y), sc.color(p.v); got != want {
			t.Errorf("pixel (%d, %d) = %v, want colour of %g = %v", p.x, p.y, got, p.v, want)
		}
	}
}

// decodePNG encodes m, decodes it with image/png and checks its size and
// that it is not blank.
func checkPNG(t *testing.T, data []byte, wantW, wantH int) image.Image {
	t.Helper()
	m, err := png.Decode(bytes.NewReader(data))
	if err != nil {
		t.Fatalf("png.Decode: %v", err)
	}
	b := m.Bounds()
	if (wantW > 0 && b.Dx() != wantW) || (wantH > 0 && b.Dy() != wantH) {
		t.Fatalf("size %d × %d, want %d × %d", b.Dx(), b.Dy(), wantW, wantH)
	}
	colours := map[color.RGBA]bool{}
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			colours[color.RGBAModel.Convert(m.At(x, y)).(color.RGBA)] = true
		}
	}
	if len(colours) < 50 {
		t.Errorf("only %d distinct colours: the picture is nearly blank", len(colours))
	}
	return m
}

// testImage is an asymmetric scene: a disc with an eastern spot and a
// companion to the north-east, on 0.25 mas pixels.
func testImage(n int) []float64 {
	img := make([]float64, n*n)
	for iy := 0; iy < n; iy++ {
		for ix := 0; ix < n; ix++ {
			x := -float64(ix-n/2) * 8 / float64(n)
			y := float64(iy-n/2) * 8 / float64(n)
			if r := math.Hypot(x, y); r < 2.5 {
				img[iy*n+ix] = 0.5 + 0.5*math.Sqrt(1-r*r/6.25)
			}
			img[iy*n+ix] += 0.6*math.Exp(-((x-1)*(x-1)+(y-0.6)*(y-0.6))/0.1) +
				0.8*math.Exp(-((x-3.2)*(x-3.2)+(y-2.8)*(y-2.8))/0.02)
		}
	}
	return img
}

func TestEncodeSizes(t *testing.T) {
	tests := []struct {
		n, size, wantArea int
	}{
		{64, 0, 512},  // 8 × 64
		{100, 0, 500}, // 5 × 100
		{256, 0, 512},
		{1024, 0, 512},
		{64, 300, 300},
	}
	for _, tt := range tests {
		var buf bytes.Buffer
		opt := Options{Title: "Test target · 2026-01-02 · total variation", Subtitle: "sub", Pixel: 8.0 / float64(tt.n), Beam: Beam{Major: 0.6}, Size: tt.size, ColorbarLabel: "intensity"}
		if err := Encode(&buf, testImage(tt.n), tt.n, tt.n, opt); err != nil {
			t.Fatal(err)
		}
		m := checkPNG(t, buf.Bytes(), 0, 0)
		// Layout: margin, area, colour bar and its labels, margin.
		if w := m.Bounds().Dx(); w < tt.wantArea+2*pad+barGap+barWidth || w > tt.wantArea+2*pad+200 {
			t.Errorf("n = %d: width %d does not fit an image area of %d", tt.n, w, tt.wantArea)
		}
		if h := m.Bounds().Dy(); h < tt.wantArea+2*pad || h > tt.wantArea+2*pad+60 {
			t.Errorf("n = %d: height %d does not fit an image area of %d", tt.n, h, tt.wantArea)
		}
	}
}

func TestDecorationsDrawn(t *testing.T) {
	// The scale bar, beam and compass are white with black outlines: with
	// them on, the corners of an all-zero (black) image must hold white.
	const n = 64
	img := make([]float64, n*n)
	img[n*n/2+n/2] = 1
	opt := Options{Pixel: 0.1, Beam: Beam{Major: 1}}
	sc, _ := newScale(&opt, []Frame{{Data: img, NX: n, NY: n}})
	fc, _ := newFaces()
	m, area := render(Frame{Data: img, NX: n, NY: n}, &opt, sc, fc, 512, "")
	q := func(r image.Rectangle) int {
		k := 0
		for y := r.Min.Y; y < r.Max.Y; y++ {
			for x := r.Min.X; x < r.Max.X; x++ {
				if m.RGBAAt(x, y) == white {
					k++
				}
			}
		}
		return k
	}
	c := area.Min.Add(area.Size().Div(2))
	quads := map[string]image.Rectangle{
		"compass (top right)":      image.Rect(c.X, area.Min.Y, area.Max.X, c.Y),
		"scale bar (bottom right)": image.Rect(c.X, c.Y, area.Max.X, area.Max.Y),
		"beam (bottom left)":       image.Rect(area.Min.X, c.Y, c.X, area.Max.Y),
	}
	for name, r := range quads {
		if q(r) < 20 {
			t.Errorf("%s: no decoration drawn", name)
		}
	}
	if k := q(image.Rect(area.Min.X, area.Min.Y, c.X-20, c.Y-20)); k != 0 {
		t.Errorf("top-left quadrant has %d white pixels, want none", k)
	}
	// The beam of 1 mas diameter on 0.1 mas pixels displayed 8× is 80 px
	// across: the white ring spans that width, and its label "resolution"
	// starts 6 px to its right.
	x0, x1 := area.Max.X, area.Min.X
	labelEnd := area.Min.X + inset + 82 + 6
	for y := c.Y; y < area.Max.Y; y++ {
		for x := area.Min.X; x < labelEnd-3; x++ {
			if m.RGBAAt(x, y) == white {
				x0, x1 = min(x0, x), max(x1, x)
			}
		}
	}
	if d := x1 - x0 + 1; d < 79 || d > 83 {
		t.Errorf("beam drawn %d px wide, want 80 (+ stroke)", d)
	}
	if k := q(image.Rect(labelEnd, c.Y, c.X, area.Max.Y)); k < 20 {
		t.Errorf("beam label: %d white pixels right of the beam, want its text", k)
	}
}

func TestRenderErrors(t *testing.T) {
	nan := math.NaN()
	tests := []struct {
		name   string
		img    []float64
		nx, ny int
		opt    Options
		want   string
	}{
		{"short", make([]float64, 3), 2, 2, Options{}, "3 values for a 2 × 2 grid"},
		{"zero size", nil, 0, 2, Options{}, "sizes must be positive"},
		{"all NaN", []float64{nan, nan, nan, nan}, 2, 2, Options{}, "no finite pixel"},
		{"inverted limits", []float64{1, 2, 3, 4}, 2, 2, Options{Min: 2, Max: 1}, "need finite Min < Max"},
	}
	for _, tt := range tests {
		_, err := Render(tt.img, tt.nx, tt.ny, tt.opt)
		if err == nil || !strings.Contains(err.Error(), tt.want) {
			t.Errorf("%s: error %v, want one containing %q", tt.name, err, tt.want)
		}
	}
	if _, err := Panel(nil, Options{}); err == nil {
		t.Error("Panel of no frames: no error")
	}
}

func TestNaNPixels(t *testing.T) {
	img := testImage(16)
	img[5] = math.NaN()
	if _, err := Render(img, 16, 16, Options{Interp: Bilinear}); err != nil {
		t.Fatal(err)
	}
}

func TestBilinearAtCentres(t *testing.T) {
	// Interpolation reproduces the samples at the pixel centres and is
	// linear in between.
	img := []float64{1, 2, 3, 5, 7, 11}
	for iy := 0; iy < 2; iy++ {
		for ix := 0; ix < 3; ix++ {
			if got := bilinear(img, 3, 2, float64(ix), float64(iy)); got != img[iy*3+ix] {
				t.Errorf("bilinear at (%d, %d) = %g, want %g", ix, iy, got, img[iy*3+ix])
			}
		}
	}
	if got := bilinear(img, 3, 2, 0.5, 0.5); math.Abs(got-(1+2+5+7)/4.0) > 1e-15 {
		t.Errorf("bilinear at the centre of four = %g, want 3.75", got)
	}
}

func TestPanelCommonScale(t *testing.T) {
	// Two constant images, 1 and 2: on the common scale [1, 2] the first
	// is the bottom colour and the second the top colour of the map.
	const n = 8
	a, b := make([]float64, n*n), make([]float64, n*n)
	for i := range a {
		a[i], b[i] = 1, 2
	}
	frames := []Frame{{Data: a, NX: n, NY: n, Label: "one\nsecond line"}, {Data: b, NX: n, NY: n, Label: "two"}}
	m, areas, err := grid(frames, Options{Title: "common", HideCompass: true}, 2)
	if err != nil {
		t.Fatal(err)
	}
	cm := DefaultCubehelix()
	for i, want := range []color.NRGBA{cm.At(0), cm.At(1)} {
		c := areas[i].Min.Add(areas[i].Size().Div(2))
		if got := m.RGBAAt(c.X, c.Y); got.R != want.R || got.G != want.G || got.B != want.B {
			t.Errorf("frame %d centre colour %v, want %v", i, got, want)
		}
	}
	if areas[0].Max.X >= areas[1].Min.X || areas[0].Min.Y != areas[1].Min.Y {
		t.Errorf("frames not side by side: %v %v", areas[0], areas[1])
	}
	var buf bytes.Buffer
	if err := EncodePanel(&buf, []Frame{{Data: testImage(32), NX: 32, NY: 32, Label: "a"}, {Data: testImage(32), NX: 32, NY: 32, Label: "b"}}, Options{Pixel: 0.25}); err != nil {
		t.Fatal(err)
	}
	checkPNG(t, buf.Bytes(), 0, 0)
}

func TestMontageLayout(t *testing.T) {
	frames := make([]Frame, 5)
	for i := range frames {
		frames[i] = Frame{Data: testImage(16), NX: 16, NY: 16, Label: FormatMJD(61000 + float64(i))}
	}
	_, areas, err := grid(frames, Options{}, 3)
	if err != nil {
		t.Fatal(err)
	}
	// Three in the first row, two in the second.
	if areas[0].Min.Y != areas[2].Min.Y || areas[3].Min.Y <= areas[0].Max.Y || areas[3].Min.X != areas[0].Min.X {
		t.Errorf("montage rows wrong: %v", areas)
	}
	var buf bytes.Buffer
	if err := EncodeMontage(&buf, frames, Options{}); err != nil {
		t.Fatal(err)
	}
	checkPNG(t, buf.Bytes(), 0, 0)
}

func TestGIF(t *testing.T) {
	frames := make([]Frame, 3)
	for i := range frames {
		img := testImage(32)
		for j := range img {
			img[j] *= 1 + float64(i)
		}
		frames[i] = Frame{Data: img, NX: 32, NY: 32, Label: "epoch " + string(rune('A'+i))}
	}
	var buf bytes.Buffer
	if err := EncodeGIF(&buf, frames, Options{Title: "animation", Pixel: 0.25, Delay: 500 * time.Millisecond}); err != nil {
		t.Fatal(err)
	}
	g, err := gif.DecodeAll(&buf)
	if err != nil {
		t.Fatal(err)
	}
	if len(g.Image) != 3 || g.Delay[0] != 50 || g.LoopCount != 0 {
		t.Fatalf("%d frames, delay %v, loop %d; want 3, 50 (×10 ms), 0 (forever)", len(g.Image), g.Delay, g.LoopCount)
	}
	// On the common scale the last frame is the brightest: its brightest
	// palette entry is the top of the colour map (white), the first
	// frame's is not.
	maxLum := func(p *image.Paletted, r image.Rectangle) float64 {
		best := 0.0
		for y := r.Min.Y; y < r.Max.Y; y++ {
			for x := r.Min.X; x < r.Max.X; x++ {
				cr, cg, cb, _ := p.At(x, y).RGBA()
				best = math.Max(best, luminance(float64(cr), float64(cg), float64(cb)))
			}
		}
		return best
	}
	// Compare the image centres, away from text and decorations.
	b := g.Image[0].Bounds()
	r := image.Rect(b.Dx()/2-40, b.Dy()/2-30, b.Dx()/2, b.Dy()/2+30)
	if l0, l2 := maxLum(g.Image[0], r), maxLum(g.Image[2], r); !(l0 < l2) {
		t.Errorf("first frame peak %g not below last frame peak %g", l0, l2)
	}
	for i := 1; i < 3; i++ {
		if g.Image[i].Bounds() != g.Image[0].Bounds() {
			t.Errorf("frame %d size %v differs from %v", i, g.Image[i].Bounds(), g.Image[0].Bounds())
		}
	}
}

func TestWriteFiles(t *testing.T) {
	dir := t.TempDir()
	img := testImage(32)
	fr := []Frame{{Data: img, NX: 32, NY: 32, Label: "x"}}
	for name, write := range map[string]func(string) error{
		"one.png":     func(p string) error { return WriteFile(p, img, 32, 32, Options{}) },
		"panel.png":   func(p string) error { return WritePanel(p, fr, Options{}) },
		"montage.png": func(p string) error { return WriteMontage(p, fr, Options{}) },
		"anim.gif":    func(p string) error { return WriteGIF(p, fr, Options{}) },
	} {
		p := filepath.Join(dir, name)
		if err := write(p); err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		data, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		if strings.HasSuffix(name, ".png") {
			checkPNG(t, data, 0, 0)
		} else if _, err := gif.DecodeAll(bytes.NewReader(data)); err != nil {
			t.Errorf("%s: %v", name, err)
		}
	}
	// A failing render leaves no file.
	p := filepath.Join(dir, "bad.png")
	if err := WriteFile(p, img[:3], 32, 32, Options{}); err == nil {
		t.Error("WriteFile of a short image: no error")
	}
	if _, err := os.Stat(p); !os.IsNotExist(err) {
		t.Errorf("bad.png exists after a failed write: %v", err)
	}
}

func TestTicks(t *testing.T) {
	tests := []struct {
		lo, hi float64
		want   []float64
	}{
		{0, 1, []float64{0, 0.2, 0.4, 0.6, 0.8, 1}},
		{0, 1.53, []float64{0, 0.5, 1, 1.5}},
		{-3, 7, []float64{-2, 0, 2, 4, 6}},
		{2e-5, 9e-5, []float64{2e-5, 4e-5, 6e-5, 8e-5}},
	}
	for _, tt := range tests {
		got := niceTicks(tt.lo, tt.hi, 6)
		if len(got) != len(tt.want) {
			t.Errorf("niceTicks(%g, %g) = %v, want %v", tt.lo, tt.hi, got, tt.want)
			continue
		}
		for i := range got {
			if math.Abs(got[i]-tt.want[i]) > 1e-12*math.Abs(tt.hi) {
				t.Errorf("niceTicks(%g, %g) = %v, want %v", tt.lo, tt.hi, got, tt.want)
				break
			}
		}
	}
	// Small values are labelled in units of a power of ten.
	sc := &colorScale{lo: 0, hi: 3e-4}
	ts, exp := sc.ticks(0.05)
	if exp != -4 || ts[1].label != "0.5" {
		t.Errorf("ticks of [0, 3e-4]: exponent %d, labels %v; want −4 and 0, 0.5, ...", exp, ts)
	}
}

func TestFormatMJD(t *testing.T) {
	// MJD = JD − 2400000.5 (IAU 1973 resolution): MJD 0 is 1858-11-17 0h,
	// and J2000.0 = JD 2451545.0 = MJD 51544.5 is 2000-01-01 12h.
	tests := []struct {
		mjd  float64
		want string
	}{
		{0, "1858-11-17"},
		{51544.5, "2000-01-01"},
		{51544.999, "2000-01-01"},
		{51545, "2000-01-02"},
		{math.NaN(), "?"},
	}
	for _, tt := range tests {
		if got := FormatMJD(tt.mjd); got != tt.want {
			t.Errorf("FormatMJD(%g) = %s, want %s", tt.mjd, got, tt.want)
		}
	}
}

func TestPrintableFallback(t *testing.T) {
	fc, _ := newFaces()
	if got := printable(fc.label, "χ²ᵣ"); got != "χ²r" {
		t.Errorf("printable(χ²ᵣ) = %q, want χ²r", got)
	}
}

func BenchmarkRender256(b *testing.B) {
	img := testImage(256)
	for _, bc := range []struct {
		name string
		opt  Options
	}{
		{"nearest", Options{Title: "bench", Pixel: 0.05, Beam: Beam{Major: 0.5}}},
		{"bilinear", Options{Title: "bench", Pixel: 0.05, Beam: Beam{Major: 0.5}, Interp: Bilinear}},
		{"asinh", Options{Title: "bench", Pixel: 0.05, Stretch: Asinh}},
	} {
		b.Run(bc.name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := Render(img, 256, 256, bc.opt); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

func BenchmarkEncode256(b *testing.B) {
	img := testImage(256)
	var buf bytes.Buffer
	b.ReportAllocs()
	for b.Loop() {
		buf.Reset()
		if err := Encode(&buf, img, 256, 256, Options{Title: "bench", Pixel: 0.05}); err != nil {
			b.Fatal(err)
		}
	}
}

func TestConcurrentRenders(t *testing.T) {
	// Render shares only the parsed fonts; concurrent calls must give the
	// same picture as a lone call (run with -race to check for data races).
	img := testImage(32)
	want, err := Render(img, 32, 32, Options{Title: "same", Pixel: 0.25, Beam: Beam{Major: 1}})
	if err != nil {
		t.Fatal(err)
	}
	errs := make(chan error, 4)
	for range 4 {
		go func() {
			got, err := Render(img, 32, 32, Options{Title: "same", Pixel: 0.25, Beam: Beam{Major: 1}})
			if err == nil && !bytes.Equal(got.Pix, want.Pix) {
				err = errors.New("concurrent render differs")
			}
			errs <- err
		}()
	}
	for range 4 {
		if err := <-errs; err != nil {
			t.Error(err)
		}
	}
}

func TestStretchTicks(t *testing.T) {
	// Non-linear bars: labels rounded to one or two significant digits,
	// in increasing order, with a lower end that is zero but for rounding
	// (1e-300 from an underflowing exponential) labelled "0".
	for _, st := range []Stretch{Sqrt, Asinh, Log} {
		sc := &colorScale{lo: 1e-300, hi: 1.53, stretch: st}
		ts, exp := sc.ticks(0.04)
		if exp != 0 || len(ts) < 4 {
			t.Fatalf("%v: %d ticks, exponent %d", st, len(ts), exp)
		}
		if ts[0].label != "0" || ts[len(ts)-1].label != "1.5" {
			t.Errorf("%v: ends labelled %q and %q, want 0 and 1.5", st, ts[0].label, ts[len(ts)-1].label)
		}
		for i := 1; i < len(ts); i++ {
			if ts[i].pos <= ts[i-1].pos {
				t.Errorf("%v: ticks out of order: %v", st, ts)
			}
		}
	}
}

func TestTitleLine(t *testing.T) {
	if got := TitleLine("Star", "", FormatMJDRange(51544.5, 51546.2), "total variation"); got != "Star  ·  2000-01-01 to 2000-01-03  ·  total variation" {
		t.Errorf("TitleLine = %q", got)
	}
	if got := FormatMJDRange(51544.1, 51544.9); got != "2000-01-01" {
		t.Errorf("FormatMJDRange of one day = %q", got)
	}
}
