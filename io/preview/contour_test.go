package preview

import (
	"image"
	"image/color"
	"image/draw"
	"math"
	"testing"
)

// TestContourCircle draws the level 8 of the distance from pixel (16, 16) on a 32 × 32 grid
// shown at 8 output pixels per pixel: the line is the circle of radius 64 output pixels
// about that pixel's centre. The painted area must be that of a ring of the line's width,
// 2π·64·w (elementary geometry), and lie on the circle.
func TestContourCircle(t *testing.T) {
	const n, s, w = 32, 8, 2.0
	field := make([]float64, n*n)
	for iy := 0; iy < n; iy++ {
		for ix := 0; ix < n; ix++ {
			field[iy*n+ix] = math.Hypot(float64(ix-16), float64(iy-16))
		}
	}
	dst := image.NewRGBA(image.Rect(0, 0, n*s, n*s))
	draw.Draw(dst, dst.Bounds(), image.NewUniform(color.RGBA{255, 255, 255, 255}), image.Point{}, draw.Src)
	drawContour(dst, dst.Bounds(), n, n, Contour{Data: field, Level: 8, Color: color.RGBA{255, 0, 0, 255}, Width: w})
	// Pixel (16, 16) has its centre at (16.5·8, (32−16−0.5)·8) = (132, 124).
	cx, cy := 132.0, 124.0
	area, off := 0.0, 0.0
	for Y := 0; Y < n*s; Y++ {
		for X := 0; X < n*s; X++ {
			c := dst.RGBAAt(X, Y)
			cover := float64(255-c.G) / 255 // red over white: green falls with coverage
			if cover == 0 {
				continue
			}
			area += cover
			if r := math.Hypot(float64(X)+0.5-cx, float64(Y)+0.5-cy); math.Abs(r-64) > w+1.5 {
				off += cover
			}
		}
	}
	want := 2 * math.Pi * 64 * w
	if math.Abs(area-want) > 0.1*want {
		t.Errorf("painted area %.1f output pixels, want %.1f within 10 %%", area, want)
	}
	if off > 0 {
		t.Errorf("%.1f output pixels painted away from the circle", off)
	}
	// Through RenderContours, the picture is a preview with the line over it.
	m, err := RenderContours(field, n, n, []Contour{{Data: field, Level: 8, Color: color.RGBA{255, 0, 0, 255}}}, Options{Size: 256})
	if err != nil {
		t.Fatal(err)
	}
	red := 0
	b := m.Bounds()
	for Y := b.Min.Y; Y < b.Max.Y; Y++ {
		for X := b.Min.X; X < b.Max.X; X++ {
			if c := m.RGBAAt(X, Y); c.R > 200 && c.G < 80 && c.B < 80 {
				red++
			}
		}
	}
	if red < 200 {
		t.Errorf("preview holds %d red pixels, want a drawn circle", red)
	}
}
