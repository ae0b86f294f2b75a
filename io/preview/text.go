package preview

import (
	"fmt"
	"image"
	"image/color"
	"image/draw"
	"strings"
	"sync"

	"golang.org/x/image/font"
	"golang.org/x/image/font/gofont/gobold"
	"golang.org/x/image/font/gofont/goregular"
	"golang.org/x/image/font/opentype"
	"golang.org/x/image/math/fixed"
)

// The Go fonts are parsed once and shared: an *opentype.Font is safe for
// concurrent use, while the faces made from it are not, so each drawing
// call makes its own faces (see newFaces).
var fonts = sync.OnceValues(func() ([2]*opentype.Font, error) {
	var f [2]*opentype.Font
	var err error
	if f[0], err = opentype.Parse(goregular.TTF); err != nil {
		return f, fmt.Errorf("preview: parsing Go Regular: %w", err)
	}
	if f[1], err = opentype.Parse(gobold.TTF); err != nil {
		return f, fmt.Errorf("preview: parsing Go Bold: %w", err)
	}
	return f, nil
})

// faces holds the type sizes of one drawing call, in pixels.
type faces struct {
	title, sub, label, small font.Face
}

func newFaces() (*faces, error) {
	f, err := fonts()
	if err != nil {
		return nil, err
	}
	mk := func(ft *opentype.Font, size float64) (font.Face, error) {
		return opentype.NewFace(ft, &opentype.FaceOptions{Size: size, DPI: 72, Hinting: font.HintingFull})
	}
	var fc faces
	if fc.title, err = mk(f[1], 17); err != nil {
		return nil, err
	}
	if fc.sub, err = mk(f[0], 14); err != nil {
		return nil, err
	}
	if fc.label, err = mk(f[0], 13); err != nil {
		return nil, err
	}
	if fc.small, err = mk(f[0], 12); err != nil {
		return nil, err
	}
	return &fc, nil
}

// textWidth returns the advance width of s in pixels.
func textWidth(f font.Face, s string) int {
	return font.MeasureString(f, printable(f, s)).Ceil()
}

// lineHeight returns the distance between baselines in pixels.
func lineHeight(f font.Face) int {
	return f.Metrics().Height.Ceil()
}

// ascent returns the height above the baseline in pixels.
func ascent(f font.Face) int {
	return f.Metrics().Ascent.Ceil()
}

// drawText draws s with its baseline starting at (x, y).
func drawText(dst draw.Image, f font.Face, x, y int, s string, c color.Color) {
	d := font.Drawer{Dst: dst, Src: image.NewUniform(c), Face: f, Dot: fixed.P(x, y)}
	d.DrawString(printable(f, s))
}

// fallback replaces characters the Go fonts lack but labels commonly use.
var fallback = map[rune]string{
	'ᵣ': "r", 'ᵥ': "v", '₀': "0", '₁': "1", '₂': "2", '₃': "3", '⁻': "-",
	'⁰': "0", '⁴': "4", '⁵': "5", '⁶': "6", '⁷': "7", '⁸': "8", '⁹': "9",
}

// printable returns s with each character that f has no glyph for replaced
// by its entry in fallback, or by '?'.
func printable(f font.Face, s string) string {
	ok := true
	for _, r := range s {
		if _, has := f.GlyphAdvance(r); !has {
			ok = false
			break
		}
	}
	if ok {
		return s
	}
	var b strings.Builder
	for _, r := range s {
		if _, has := f.GlyphAdvance(r); has {
			b.WriteRune(r)
		} else if rep, found := fallback[r]; found {
			b.WriteString(rep)
		} else {
			b.WriteRune('?')
		}
	}
	return b.String()
}

// drawTextHalo draws s in fg over a one-pixel outline of bg, so that it stays
// legible over any part of an image.
func drawTextHalo(dst draw.Image, f font.Face, x, y int, s string, fg, bg color.Color) {
	for dy := -1; dy <= 1; dy++ {
		for dx := -1; dx <= 1; dx++ {
			if dx != 0 || dy != 0 {
				drawText(dst, f, x+dx, y+dy, s, bg)
			}
		}
	}
	drawText(dst, f, x, y, s, fg)
}

// drawVertical draws s rotated by 90° counter-clockwise (reading from
// bottom to top), the top of its letters towards x, centred vertically on
// yc.
func drawVertical(dst draw.Image, f font.Face, x, yc int, s string, c color.Color) {
	w, h := textWidth(f, s), lineHeight(f)
	if w == 0 {
		return
	}
	mask := image.NewAlpha(image.Rect(0, 0, w, h))
	d := font.Drawer{Dst: mask, Src: image.Opaque, Face: f, Dot: fixed.P(0, ascent(f))}
	d.DrawString(printable(f, s))
	rot := image.NewAlpha(image.Rect(0, 0, h, w))
	for py := 0; py < h; py++ {
		for px := 0; px < w; px++ {
			rot.Pix[(w-1-px)*rot.Stride+py] = mask.Pix[py*mask.Stride+px]
		}
	}
	r := image.Rect(x, yc-w/2, x+h, yc-w/2+w)
	draw.DrawMask(dst, r, image.NewUniform(c), image.Point{}, rot, image.Point{}, draw.Over)
}
