package preview

import (
	"fmt"
	"image"
	"image/color"
	"image/draw"
	"image/gif"
	"image/png"
	"io"
	"math"
	"strings"
	"time"

	"vcz/io/safefile"
)

// Panel draws frames side by side, all on one colour scale (Options.Min
// and Max, or the range over every frame) with one colour bar, each with its
// Label above it, in Options.Columns columns (0 = one row). Every image gets
// its scale bar and beam; the compass is drawn on the first only. Frames
// may have different grids; each is drawn with its longer side Options.Size
// pixels long (0 = near 256).
func Panel(frames []Frame, opt Options) (*image.RGBA, error) {
	cols := opt.Columns
	if cols <= 0 {
		cols = len(frames)
	}
	m, _, err := grid(frames, opt, cols)
	return m, err
}

// Montage draws frames, typically the epochs of one target with their dates
// as labels (see FormatMJD), as Panel does but in rows of Options.Columns
// images (0 = ⌈√n⌉).
func Montage(frames []Frame, opt Options) (*image.RGBA, error) {
	cols := opt.Columns
	if cols <= 0 {
		cols = int(math.Ceil(math.Sqrt(float64(len(frames)))))
	}
	m, _, err := grid(frames, opt, cols)
	return m, err
}

// EncodePanel writes the Panel of frames as a PNG to w.
func EncodePanel(w io.Writer, frames []Frame, opt Options) error {
	return encodeDrawn(w, Panel, frames, opt)
}

// WritePanel writes the Panel of frames as a PNG file at path, atomically.
func WritePanel(path string, frames []Frame, opt Options) error {
	return writeDrawn(path, Panel, frames, opt)
}

// EncodeMontage writes the Montage of frames as a PNG to w.
func EncodeMontage(w io.Writer, frames []Frame, opt Options) error {
	return encodeDrawn(w, Montage, frames, opt)
}

// WriteMontage writes the Montage of frames as a PNG file at path,
// atomically.
func WriteMontage(path string, frames []Frame, opt Options) error {
	return writeDrawn(path, Montage, frames, opt)
}

// encodeDrawn writes the image that draw (Panel or Montage) makes of frames as a PNG to
// w; writeDrawn writes it as a PNG file at path, atomically.
func encodeDrawn(w io.Writer, draw func([]Frame, Options) (*image.RGBA, error), frames []Frame, opt Options) error {
	m, err := draw(frames, opt)
	if err != nil {
		return err
	}
	return png.Encode(w, m)
}

func writeDrawn(path string, draw func([]Frame, Options) (*image.RGBA, error), frames []Frame, opt Options) error {
	m, err := draw(frames, opt)
	if err != nil {
		return err
	}
	return writePNG(path, m)
}

func checkFrames(frames []Frame) error {
	if len(frames) == 0 {
		return fmt.Errorf("preview: no image to draw")
	}
	for i := range frames {
		if err := frames[i].check(i); err != nil {
			return err
		}
	}
	return nil
}

// grid lays frames out in cols columns under the title, with one colour
// bar on the right.
func grid(frames []Frame, opt Options, cols int) (*image.RGBA, []image.Rectangle, error) {
	if err := checkFrames(frames); err != nil {
		return nil, nil, err
	}
	sc, err := newScale(&opt, frames)
	if err != nil {
		return nil, nil, err
	}
	fc, err := newFaces()
	if err != nil {
		return nil, nil, err
	}
	cols = min(cols, len(frames))
	rows := (len(frames) + cols - 1) / cols
	n := 0
	for _, f := range frames {
		n = max(n, f.NX, f.NY)
	}
	s := defaultSize(n, 256, opt.Size)
	labelLines, cellW := 0, s
	for _, f := range frames {
		ls := splitLines(f.Label)
		labelLines = max(labelLines, len(ls))
		for _, l := range ls {
			cellW = max(cellW, textWidth(fc.label, l))
		}
	}
	labelH := labelLines * lineHeight(fc.label)
	if labelH > 0 {
		labelH += 4
	}
	cellH := labelH + s

	top := pad
	titleW := 0
	if opt.Title != "" {
		top += lineHeight(fc.title)
		titleW = textWidth(fc.title, opt.Title)
	}
	if opt.Subtitle != "" {
		top += lineHeight(fc.sub)
		titleW = max(titleW, textWidth(fc.sub, opt.Subtitle))
	}
	if opt.Title != "" || opt.Subtitle != "" {
		top += 8
	}
	gridW := cols*cellW + (cols-1)*gap
	gridH := rows*cellH + (rows-1)*gap
	barTop, barBottom := top+labelH, top+gridH
	var bar barLayout
	width := pad + gridW
	if !opt.HideColorbar {
		bar = layoutBar(sc, fc, opt.ColorbarLabel, barBottom-barTop)
		width += barGap + bar.width
	}
	width = max(width, pad+titleW) + pad
	height := top + gridH + pad
	dst := image.NewRGBA(image.Rect(0, 0, width, height))
	draw.Draw(dst, dst.Bounds(), image.NewUniform(white), image.Point{}, draw.Src)

	y := pad
	if opt.Title != "" {
		drawText(dst, fc.title, pad, y+ascent(fc.title), opt.Title, black)
		y += lineHeight(fc.title)
	}
	if opt.Subtitle != "" {
		drawText(dst, fc.sub, pad, y+ascent(fc.sub), opt.Subtitle, black)
	}
	areas := make([]image.Rectangle, len(frames))
	for i, f := range frames {
		cx := pad + (i%cols)*(cellW+gap)
		cy := top + (i/cols)*(cellH+gap)
		for k, l := range splitLines(f.Label) {
			lx := cx + (cellW-textWidth(fc.label, l))/2
			drawText(dst, fc.label, lx, cy+k*lineHeight(fc.label)+ascent(fc.label), l, black)
		}
		w, h := displaySize(f.NX, f.NY, s)
		ax := cx + (cellW-w)/2
		ay := cy + labelH + (s-h)/2
		area := image.Rect(ax, ay, ax+w, ay+h)
		areas[i] = area
		pixel := opt.Pixel
		if f.Pixel > 0 {
			pixel = f.Pixel
		}
		paint(dst, area, f, sc, opt.Interp)
		decorate(dst, area, f, pixel, &opt, fc, i == 0 && !opt.HideCompass)
	}
	if !opt.HideColorbar {
		x := pad + gridW + barGap
		drawBar(dst, image.Rect(x, barTop, x+barWidth, barBottom), sc, fc, bar)
	}
	return dst, areas, nil
}

// gifColors is the number of palette entries of an animation taken by the
// colour map; the other 256 − gifColors are greys for text and lines.
const gifColors = 224

// EncodeGIF writes an animated GIF that loops through frames, one frame
// each, shown Options.Delay apiece (0 = 700 ms). Every frame is a Render
// preview on the common colour scale of all frames, titled Options.Title
// with the frame's Label as its subtitle (after Options.Subtitle). The
// palette is 224 colours of the colour map plus 32 greys, shared by all
// frames; colours are mapped to their nearest palette entry without
// dithering.
func EncodeGIF(w io.Writer, frames []Frame, opt Options) error {
	a, err := animate(frames, opt)
	if err != nil {
		return err
	}
	return gif.EncodeAll(w, a)
}

// WriteGIF writes the animation of EncodeGIF to path, atomically.
func WriteGIF(path string, frames []Frame, opt Options) error {
	a, err := animate(frames, opt)
	if err != nil {
		return err
	}
	return safefile.Write(path, func(w io.Writer) error {
		if err := gif.EncodeAll(w, a); err != nil {
			return fmt.Errorf("preview: encoding %s: %w", path, err)
		}
		return nil
	})
}

// frameSubtitle is the one-line subtitle of an animation frame: the options' subtitle and the
// frame's label, whose lines (a montage draws them one under the other) are joined by " · ".
func frameSubtitle(subtitle, label string) string {
	parts := strings.FieldsFunc(label, func(r rune) bool { return r == '\n' || r == '\r' })
	if subtitle != "" {
		parts = append([]string{subtitle}, parts...)
	}
	return strings.Join(parts, "  ·  ")
}

func animate(frames []Frame, opt Options) (*gif.GIF, error) {
	if err := checkFrames(frames); err != nil {
		return nil, err
	}
	sc, err := newScale(&opt, frames)
	if err != nil {
		return nil, err
	}
	fc, err := newFaces()
	if err != nil {
		return nil, err
	}
	n := 0
	for _, f := range frames {
		n = max(n, f.NX, f.NY)
	}
	s := defaultSize(n, 256, opt.Size)
	imgs := make([]*image.RGBA, len(frames))
	var size image.Point
	for i, f := range frames {
		imgs[i], _ = render(f, &opt, sc, fc, s, frameSubtitle(opt.Subtitle, f.Label))
		size.X = max(size.X, imgs[i].Bounds().Dx())
		size.Y = max(size.Y, imgs[i].Bounds().Dy())
	}
	pal := gifPalette(sc.cmap)
	q := newQuantizer(pal)
	delay := opt.Delay
	if delay <= 0 {
		delay = 700 * time.Millisecond
	}
	a := &gif.GIF{LoopCount: 0}
	for _, m := range imgs {
		p := image.NewPaletted(image.Rect(0, 0, size.X, size.Y), pal)
		wi := q.index(white)
		for i := range p.Pix {
			p.Pix[i] = wi
		}
		b := m.Bounds()
		for y := 0; y < b.Dy(); y++ {
			for x := 0; x < b.Dx(); x++ {
				o := m.PixOffset(x, y)
				c := color.RGBA{m.Pix[o], m.Pix[o+1], m.Pix[o+2], 255}
				p.Pix[y*p.Stride+x] = q.index(c)
			}
		}
		a.Image = append(a.Image, p)
		a.Delay = append(a.Delay, int(delay/(10*time.Millisecond)))
	}
	return a, nil
}

// gifPalette returns the shared palette of an animation.
func gifPalette(cm Colormap) color.Palette {
	pal := make(color.Palette, 0, 256)
	for i := 0; i < gifColors; i++ {
		c := cm.At(float64(i) / (gifColors - 1))
		pal = append(pal, color.RGBA{c.R, c.G, c.B, 255})
	}
	for i := 0; i < 256-gifColors; i++ {
		v := uint8(math.Round(255 * float64(i) / float64(255-gifColors)))
		pal = append(pal, color.RGBA{v, v, v, 255})
	}
	return pal
}

// quantizer maps colours to their nearest palette entry (Euclidean distance
// in RGB), remembering each answer: a preview holds a few thousand distinct
// colours at most, so the cache keeps the search cheap.
type quantizer struct {
	pal   []color.RGBA
	cache map[color.RGBA]uint8
}

func newQuantizer(p color.Palette) *quantizer {
	q := &quantizer{cache: make(map[color.RGBA]uint8)}
	for _, c := range p {
		r, g, b, _ := c.RGBA()
		q.pal = append(q.pal, color.RGBA{uint8(r >> 8), uint8(g >> 8), uint8(b >> 8), 255})
	}
	return q
}

func (q *quantizer) index(c color.RGBA) uint8 {
	if i, ok := q.cache[c]; ok {
		return i
	}
	best, bd := 0, math.MaxInt
	for i, p := range q.pal {
		dr, dg, db := int(c.R)-int(p.R), int(c.G)-int(p.G), int(c.B)-int(p.B)
		if d := dr*dr + dg*dg + db*db; d < bd {
			best, bd = i, d
		}
	}
	q.cache[c] = uint8(best)
	return uint8(best)
}

// FormatMJD returns the UTC calendar date of a modified Julian date as
// YYYY-MM-DD (MJD 0 is 1858-11-17 00:00 UTC, by the definition of MJD =
// JD − 2400000.5), for montage and animation labels. A non-finite mjd gives
// "?".
func FormatMJD(mjd float64) string {
	if math.IsNaN(mjd) || math.IsInf(mjd, 0) || math.Abs(mjd) > 1e7 {
		return "?"
	}
	epoch := time.Date(1858, 11, 17, 0, 0, 0, 0, time.UTC)
	days := math.Floor(mjd)
	t := epoch.AddDate(0, 0, int(days)).Add(time.Duration((mjd - days) * 86400 * float64(time.Second)))
	return t.Format("2006-01-02")
}

// FormatMJDRange returns the dates of an MJD interval as "YYYY-MM-DD" when
// both ends fall on the same UTC day and "YYYY-MM-DD to YYYY-MM-DD"
// otherwise.
func FormatMJDRange(lo, hi float64) string {
	a, b := FormatMJD(lo), FormatMJD(hi)
	if a == b {
		return a
	}
	return a + " to " + b
}

// TitleLine joins the non-empty parts (e.g. target, date range,
// regularizer) with a spaced middle dot into one title line.
func TitleLine(parts ...string) string {
	var s string
	for _, p := range parts {
		if p == "" {
			continue
		}
		if s != "" {
			s += "  ·  "
		}
		s += p
	}
	return s
}
