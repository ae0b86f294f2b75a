package preview

import (
	"fmt"
	"image"
	"image/color"
	"math"
)

// Contour is one level of a map drawn as lines over a preview: the curve where Data, on the
// grid of the image, crosses Level.
type Contour struct {
	Data  []float64 // nx × ny values, row-major like the image
	Level float64
	Color color.RGBA
	Width float64 // line width in output pixels; 0 means 1.5
}

// RenderContours draws the preview of Render and, over the image, the contours: the lines
// where each contour's map crosses its level, found by marching squares between the pixel
// centres (Lorensen & Cline 1987, the two-dimensional case) with the crossing on each cell
// edge placed by linear interpolation. A cell whose four corners alternate (a saddle) gets
// both pairs of lines of its case. NaN values end the lines.
func RenderContours(img []float64, nx, ny int, contours []Contour, opt Options) (*image.RGBA, error) {
	f := Frame{Data: img, NX: nx, NY: ny}
	if err := f.check(0); err != nil {
		return nil, err
	}
	for i, c := range contours {
		if len(c.Data) != nx*ny {
			panic(fmt.Sprintf("preview: contour %d: %d values for a %d × %d grid", i, len(c.Data), nx, ny))
		}
	}
	dst, area, err := renderOne(img, nx, ny, opt)
	if err != nil {
		return nil, err
	}
	for _, c := range contours {
		drawContour(dst, area, nx, ny, c)
	}
	return dst, nil
}

// WriteContours writes the preview of RenderContours as a PNG file at path, atomically.
func WriteContours(path string, img []float64, nx, ny int, contours []Contour, opt Options) error {
	m, err := RenderContours(img, nx, ny, contours, opt)
	if err != nil {
		return err
	}
	return writePNG(path, m)
}

// drawContour draws the lines of c in area, where pixel (ix, iy) has its centre at
// ((ix+0.5)·w/nx, (ny−iy−0.5)·h/ny) from the area's top left corner (row 0 at the bottom, as
// paint places it).
func drawContour(dst *image.RGBA, area image.Rectangle, nx, ny int, c Contour) {
	w := c.Width
	if w <= 0 {
		w = 1.5
	}
	sx, sy := float64(area.Dx())/float64(nx), float64(area.Dy())/float64(ny)
	at := func(fx, fy float64) pt {
		return pt{float64(area.Min.X) + (fx+0.5)*sx, float64(area.Min.Y) + (float64(ny)-fy-0.5)*sy}
	}
	v := func(ix, iy int) float64 { return c.Data[iy*nx+ix] - c.Level }
	// cross returns the point on the edge from corner a (value va) to corner b (value vb)
	// where the map crosses the level.
	cross := func(ax, ay, va, bx, by, vb float64) pt {
		t := va / (va - vb)
		return at(ax+t*(bx-ax), ay+t*(by-ay))
	}
	for iy := 0; iy+1 < ny; iy++ {
		for ix := 0; ix+1 < nx; ix++ {
			x0, y0, x1, y1 := float64(ix), float64(iy), float64(ix+1), float64(iy+1)
			// Corners counter-clockwise from the lower left.
			a, b, cc, d := v(ix, iy), v(ix+1, iy), v(ix+1, iy+1), v(ix, iy+1)
			if math.IsNaN(a + b + cc + d) {
				continue
			}
			var pts []pt
			// Edges in order: bottom (a–b), right (b–c), top (c–d), left (d–a).
			if (a >= 0) != (b >= 0) {
				pts = append(pts, cross(x0, y0, a, x1, y0, b))
			}
			if (b >= 0) != (cc >= 0) {
				pts = append(pts, cross(x1, y0, b, x1, y1, cc))
			}
			if (cc >= 0) != (d >= 0) {
				pts = append(pts, cross(x1, y1, cc, x0, y1, d))
			}
			if (d >= 0) != (a >= 0) {
				pts = append(pts, cross(x0, y1, d, x0, y0, a))
			}
			// Two crossings make one line, four (a saddle) two lines.
			for i := 0; i+1 < len(pts); i += 2 {
				fillPaths(dst, c.Color, segment(pts[i], pts[i+1], w))
			}
		}
	}
}
