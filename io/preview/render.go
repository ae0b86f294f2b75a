package preview

import (
	"fmt"
	"image"
	"image/color"
	"image/draw"
	"image/png"
	"io"
	"math"
	"strconv"
	"strings"
	"time"

	"vcz/io/safefile"
)

// Interp selects how image pixels are resampled to the display size.
type Interp int

const (
	// Nearest repeats each pixel as a block: the pixel grid stays visible.
	Nearest Interp = iota
	// Bilinear interpolates between pixel centres.
	Bilinear
)

// Beam describes the resolution element drawn in the lower left corner of
// an image: an ellipse of full widths Major and Minor in mas, the major axis
// at position angle PA (degrees east of north). Minor = 0 draws a circle of
// diameter Major; Major = 0 draws nothing. For interferometric data the
// nominal resolution λmin/(2·Bmax) is the usual diameter (common practice,
// no source).
type Beam struct {
	Major, Minor float64 // mas
	PA           float64 // degrees east of north
}

// Options controls the drawing. The zero value draws a cubehelix image of
// a readable size with a linear colour bar and the compass, and nothing that
// needs a pixel scale.
type Options struct {
	// Title is the first line above the image, e.g. target, date range and
	// regularizer; Subtitle an optional second, smaller line.
	Title, Subtitle string

	// Pixel is the pixel size in mas. When it is positive a scale bar in mas
	// and the Beam are drawn; 0 draws neither.
	Pixel float64
	Beam  Beam

	// Size is the display size in output pixels of the longer side of each
	// image. 0 picks an integer multiple of the grid close to 512 for Render
	// and to 256 for Panel, Montage and the GIF frames.
	Size   int
	Interp Interp

	// Min and Max are the data values at the bottom and top of the colour
	// scale; when both are zero the range of the finite pixel values (over
	// all images of a panel, montage or animation) is used.
	Min, Max float64
	// Stretch maps the scale to colours; the zero value, Auto, picks Linear, Asinh or Log from
	// the data (ChooseStretch), and a stretch other than linear is named on the colour bar.
	Stretch Stretch
	// Colormap nil chooses from the data (ChooseColormap): DefaultLightness for point-like
	// images, DefaultCubehelix for the others.
	Colormap Colormap
	// ColorbarLabel is written along the colour bar, e.g. "flux per pixel".
	ColorbarLabel string

	HideColorbar, HideCompass, HideScaleBar bool

	// Columns is the number of images per row of Panel and Montage;
	// 0 means all in one row for Panel and about √n for Montage.
	Columns int

	// Delay is the time each frame of an animated GIF is shown; 0 means
	// 700 ms.
	Delay time.Duration
}

// Frame is one image of a panel, montage or animation.
type Frame struct {
	// Data is the row-major image Data[iy*NX+ix] (ix along FITS axis 1 and
	// towards the west, iy along FITS axis 2 and towards the north).
	Data   []float64
	NX, NY int
	// Label is written above the image in a panel or montage, and as the
	// subtitle of an animation frame; it may hold several lines ("\n").
	Label string
	// Pixel overrides Options.Pixel for this frame when positive (mas).
	Pixel float64
}

const (
	pad      = 14 // outer margin
	gap      = 16 // between images of a panel
	barGap   = 14 // between the image and the colour bar
	barWidth = 16
	inset    = 10 // distance of the decorations from the image edge
)

var (
	white = color.RGBA{255, 255, 255, 255}
	black = color.RGBA{0, 0, 0, 255}
	frame = color.RGBA{90, 90, 90, 255}
)

// Render draws the nx × ny image img (row-major, img[iy*nx+ix]) as a
// preview, north up and east to the left exactly as a FITS viewer shows an
// image with CDELT1 < 0: iy = 0 is the bottom row and ix = 0 the left
// column (CONVENTIONS.md). Around it go the title lines, the colour bar
// with its ticks, and inside its corners the compass (N up, E left), the
// scale bar in mas and the beam.
func Render(img []float64, nx, ny int, opt Options) (*image.RGBA, error) {
	out, _, err := renderOne(img, nx, ny, opt)
	return out, err
}

// renderOne is Render, returning also the image's area in the output.
func renderOne(img []float64, nx, ny int, opt Options) (*image.RGBA, image.Rectangle, error) {
	f := Frame{Data: img, NX: nx, NY: ny}
	if err := f.check(0); err != nil {
		return nil, image.Rectangle{}, err
	}
	sc, err := newScale(&opt, []Frame{f})
	if err != nil {
		return nil, image.Rectangle{}, err
	}
	fc, err := newFaces()
	if err != nil {
		return nil, image.Rectangle{}, err
	}
	out, area := render(f, &opt, sc, fc, defaultSize(max(nx, ny), 512, opt.Size), opt.Subtitle)
	return out, area, nil
}

// Encode writes the preview of Render as a PNG to w.
func Encode(w io.Writer, img []float64, nx, ny int, opt Options) error {
	m, err := Render(img, nx, ny, opt)
	if err != nil {
		return err
	}
	return png.Encode(w, m)
}

// WriteFile writes the preview of Render as a PNG file at path, atomically
// (the file is complete or absent).
func WriteFile(path string, img []float64, nx, ny int, opt Options) error {
	m, err := Render(img, nx, ny, opt)
	if err != nil {
		return err
	}
	return writePNG(path, m)
}

func writePNG(path string, m image.Image) error {
	return safefile.Write(path, func(w io.Writer) error {
		if err := png.Encode(w, m); err != nil {
			return fmt.Errorf("preview: encoding %s: %w", path, err)
		}
		return nil
	})
}

// check reports a frame whose size and data disagree; i is its index.
func (f *Frame) check(i int) error {
	if f.NX <= 0 || f.NY <= 0 {
		return fmt.Errorf("preview: image %d: grid %d × %d: sizes must be positive", i, f.NX, f.NY)
	}
	if len(f.Data) != f.NX*f.NY {
		return fmt.Errorf("preview: image %d: %d values for a %d × %d grid", i, len(f.Data), f.NX, f.NY)
	}
	return nil
}

// defaultSize returns size when positive, else an integer multiple of n
// near target, or target when n exceeds it.
func defaultSize(n, target, size int) int {
	if size > 0 {
		return size
	}
	if n >= target {
		return target
	}
	k := int(math.Round(float64(target) / float64(n)))
	return n * max(k, 1)
}

// displaySize returns the display width and height of an nx × ny image
// whose longer side is s.
func displaySize(nx, ny, s int) (int, int) {
	if nx >= ny {
		return s, max(1, int(math.Round(float64(s)*float64(ny)/float64(nx))))
	}
	return max(1, int(math.Round(float64(s)*float64(nx)/float64(ny)))), s
}

// render draws a single preview and returns it with the rectangle of the
// image area.
func render(f Frame, opt *Options, sc *colorScale, fc *faces, s int, subtitle string) (*image.RGBA, image.Rectangle) {
	w, h := displaySize(f.NX, f.NY, s)
	top := pad
	titleW := 0
	if opt.Title != "" {
		top += lineHeight(fc.title)
		titleW = textWidth(fc.title, opt.Title)
	}
	if subtitle != "" {
		top += lineHeight(fc.sub)
		titleW = max(titleW, textWidth(fc.sub, subtitle))
	}
	if opt.Title != "" || subtitle != "" {
		top += 6
	}
	area := image.Rect(pad, top, pad+w, top+h)
	width := area.Max.X
	var bar barLayout
	if !opt.HideColorbar {
		bar = layoutBar(sc, fc, opt.ColorbarLabel, h)
		width += barGap + bar.width
	}
	width = max(width, pad+titleW) + pad
	height := area.Max.Y + pad
	dst := image.NewRGBA(image.Rect(0, 0, width, height))
	draw.Draw(dst, dst.Bounds(), image.NewUniform(white), image.Point{}, draw.Src)

	y := pad
	if opt.Title != "" {
		drawText(dst, fc.title, pad, y+ascent(fc.title), opt.Title, black)
		y += lineHeight(fc.title)
	}
	if subtitle != "" {
		drawText(dst, fc.sub, pad, y+ascent(fc.sub), subtitle, black)
	}
	pixel := opt.Pixel
	if f.Pixel > 0 {
		pixel = f.Pixel
	}
	paint(dst, area, f, sc, opt.Interp)
	decorate(dst, area, f, pixel, opt, fc, !opt.HideCompass)
	if !opt.HideColorbar {
		drawBar(dst, image.Rect(area.Max.X+barGap, area.Min.Y, area.Max.X+barGap+barWidth, area.Max.Y), sc, fc, bar)
	}
	return dst, area
}

// paint fills area with the image resampled to it, row 0 of the image at
// the bottom of area and column 0 at its left. The source position of each
// display column is computed once per call.
func paint(dst *image.RGBA, area image.Rectangle, f Frame, sc *colorScale, interp Interp) {
	w, h := area.Dx(), area.Dy()
	nx, ny := f.NX, f.NY
	// fx[X] is the fractional image column at the centre of display column
	// X; for rows, fy counts from the bottom of the image.
	fx := make([]float64, w)
	for X := range fx {
		fx[X] = (float64(X)+0.5)*float64(nx)/float64(w) - 0.5
	}
	for Y := 0; Y < h; Y++ {
		row := dst.Pix[dst.PixOffset(area.Min.X, area.Min.Y+Y):]
		// sy is the position in image rows counted from the top of the
		// display; the image row index is ny−1−sy.
		sy := (float64(Y)+0.5)*float64(ny)/float64(h) - 0.5
		iy := ny - 1 - min(max(int(math.Floor(sy+0.5)), 0), ny-1)
		line := f.Data[iy*nx : iy*nx+nx]
		for X := 0; X < w; X++ {
			var v float64
			if interp == Bilinear {
				v = bilinear(f.Data, nx, ny, fx[X], float64(ny-1)-sy)
			} else {
				v = line[min(max(int(math.Floor(fx[X]+0.5)), 0), nx-1)]
			}
			c := sc.color(v)
			row[4*X], row[4*X+1], row[4*X+2], row[4*X+3] = c.R, c.G, c.B, 255
		}
	}
}

// bilinear interpolates img at fractional pixel (fx, fy), clamped to the
// grid. A NaN neighbour makes the nearest pixel's value the result.
func bilinear(img []float64, nx, ny int, fx, fy float64) float64 {
	fx = math.Min(math.Max(fx, 0), float64(nx-1))
	fy = math.Min(math.Max(fy, 0), float64(ny-1))
	x0, y0 := int(fx), int(fy)
	x1, y1 := min(x0+1, nx-1), min(y0+1, ny-1)
	tx, ty := fx-float64(x0), fy-float64(y0)
	a, b := img[y0*nx+x0], img[y0*nx+x1]
	c, d := img[y1*nx+x0], img[y1*nx+x1]
	v := (1-ty)*((1-tx)*a+tx*b) + ty*((1-tx)*c+tx*d)
	if math.IsNaN(v) {
		return img[int(math.Round(fy))*nx+int(math.Round(fx))]
	}
	return v
}

// decorate draws the frame around area and, inside it, the scale bar and
// beam (when pixel > 0) and the compass (when compass is set).
func decorate(dst *image.RGBA, area image.Rectangle, f Frame, pixel float64, opt *Options, fc *faces, compass bool) {
	r := area
	fillPaths(dst, frame,
		[]pt{{float64(r.Min.X) - 1, float64(r.Min.Y) - 1}, {float64(r.Max.X) + 1, float64(r.Min.Y) - 1}, {float64(r.Max.X) + 1, float64(r.Max.Y) + 1}, {float64(r.Min.X) - 1, float64(r.Max.Y) + 1}},
		[]pt{{float64(r.Min.X), float64(r.Min.Y)}, {float64(r.Min.X), float64(r.Max.Y)}, {float64(r.Max.X), float64(r.Max.Y)}, {float64(r.Max.X), float64(r.Min.Y)}},
	)
	small := min(r.Dx(), r.Dy()) < 200
	face := fc.label
	if small {
		face = fc.small
	}
	if compass {
		l := math.Min(math.Max(float64(min(r.Dx(), r.Dy()))/9, 14), 34)
		o := pt{float64(r.Max.X - inset), float64(r.Min.Y+inset+ascent(face)+2) + l}
		n := pt{o.x, o.y - l}
		e := pt{o.x - l, o.y}
		haloArrow(dst, o, n, 2)
		haloArrow(dst, o, e, 2)
		drawTextHalo(dst, face, int(n.x)-textWidth(face, "N")/2, int(n.y)-3, "N", white, black)
		drawTextHalo(dst, face, int(e.x)-textWidth(face, "E")-4, int(e.y)+ascent(face)/2-1, "E", white, black)
	}
	if !(pixel > 0) {
		return
	}
	scale := float64(r.Dx()) / (float64(f.NX) * pixel) // display pixels per mas
	if !opt.HideScaleBar {
		field := float64(f.NX) * pixel
		lm := niceLength(field / 4)
		lp := lm * scale
		y := float64(r.Max.Y - inset - 2)
		x1 := float64(r.Max.X - inset)
		a, b := pt{x1 - lp, y}, pt{x1, y}
		fillPaths(dst, black, segment(pt{a.x - 1.5, y}, pt{b.x + 1.5, y}, 6))
		fillPaths(dst, white, segment(a, b, 3))
		lab := strconv.FormatFloat(lm, 'g', 4, 64) + " mas"
		drawTextHalo(dst, face, int(math.Round((a.x+b.x)/2))-textWidth(face, lab)/2, int(y)-6, lab, white, black)
	}
	if opt.Beam.Major > 0 {
		maj := opt.Beam.Major / 2 * scale
		mnr := maj
		if opt.Beam.Minor > 0 {
			mnr = opt.Beam.Minor / 2 * scale
		}
		rad := math.Max(maj, mnr)
		c := pt{float64(r.Min.X+inset) + rad + 1, float64(r.Max.Y-inset) - rad - 1}
		// PA is east of north; east is to the left on the display, so the
		// screen angle clockwise from up is −PA.
		th := -opt.Beam.PA * math.Pi / 180
		fillPaths(dst, black, ring(c, maj, mnr, th, 3.5)...)
		fillPaths(dst, white, ring(c, maj, mnr, th, 1.5)...)
		// Name it, beside the circle (the scale bar names its length the same way), where
		// the frame leaves room beside the scale bar.
		if !small {
			drawTextHalo(dst, face, int(c.x+rad+6), int(c.y)+ascent(face)/2-1, "resolution", white, black)
		}
	}
}

// haloArrow draws a white arrow from a to b with a black outline.
func haloArrow(dst *image.RGBA, a, b pt, w float64) {
	// The outline arrow is longer by one pixel at each end and wider by two.
	dx, dy := b.x-a.x, b.y-a.y
	l := math.Hypot(dx, dy)
	ux, uy := dx/l, dy/l
	fillPaths(dst, black, arrow(pt{a.x - ux, a.y - uy}, pt{b.x + 1.5*ux, b.y + 1.5*uy}, w+2)...)
	fillPaths(dst, white, arrow(a, b, w)...)
}

// barLayout is the measured layout of a colour bar and its labels.
type barLayout struct {
	ticks []tick
	exp   int
	label string
	width int // bar, tick labels and rotated label, in pixels
}

func layoutBar(sc *colorScale, fc *faces, label string, h int) barLayout {
	ts, exp := sc.ticks(float64(lineHeight(fc.small)+2) / float64(h))
	if sc.stretch != Linear && sc.stretch != Auto {
		// Say how the colours map to values when they do not do so linearly.
		if label != "" {
			label += ", "
		}
		label += sc.stretch.String() + " stretch"
	}
	b := barLayout{ticks: ts, exp: exp, label: label}
	if exp != 0 {
		pow := "×1e" + strconv.Itoa(exp)
		if b.label == "" {
			b.label = pow
		} else {
			b.label += " (" + pow + ")"
		}
	}
	tw := 0
	for _, t := range ts {
		tw = max(tw, textWidth(fc.small, t.label))
	}
	b.width = barWidth + 4 + 4 + tw
	if b.label != "" {
		b.width += 6 + lineHeight(fc.label)
	}
	return b
}

// drawBar draws the colour bar in r (bottom = Min, top = Max) with its tick
// marks and labels on the right and the rotated label beyond them.
func drawBar(dst *image.RGBA, r image.Rectangle, sc *colorScale, fc *faces, b barLayout) {
	h := r.Dy()
	for Y := 0; Y < h; Y++ {
		c := sc.colorAt(1 - (float64(Y)+0.5)/float64(h))
		for X := r.Min.X; X < r.Max.X; X++ {
			dst.SetRGBA(X, r.Min.Y+Y, c)
		}
	}
	fr := func(x0, y0, x1, y1 float64) []pt { return []pt{{x0, y0}, {x1, y0}, {x1, y1}, {x0, y1}} }
	x0, y0, x1, y1 := float64(r.Min.X), float64(r.Min.Y), float64(r.Max.X), float64(r.Max.Y)
	fillPaths(dst, frame, fr(x0-1, y0-1, x1+1, y1+1), reverse(fr(x0, y0, x1, y1)))
	tw := 0
	for _, t := range b.ticks {
		y := y1 - t.pos*float64(h)
		fillPaths(dst, black, fr(x1, y-0.5, x1+4, y+0.5))
		ty := int(math.Round(y)) + ascent(fc.small)/2 - 1
		ty = min(max(ty, r.Min.Y+ascent(fc.small)-2), r.Max.Y+2)
		drawText(dst, fc.small, r.Max.X+7, ty, t.label, black)
		tw = max(tw, textWidth(fc.small, t.label))
	}
	if b.label != "" {
		x := r.Max.X + 8 + tw + 6
		drawVertical(dst, fc.label, x, (r.Min.Y+r.Max.Y)/2, b.label, black)
	}
}

func reverse(p []pt) []pt {
	for i, j := 0, len(p)-1; i < j; i, j = i+1, j-1 {
		p[i], p[j] = p[j], p[i]
	}
	return p
}

// splitLines splits a label into lines, dropping a trailing empty one.
func splitLines(s string) []string {
	if s == "" {
		return nil
	}
	return strings.Split(strings.TrimRight(s, "\n"), "\n")
}
