package preview

import (
	"image"
	"image/color"
	"image/draw"
	"math"

	"golang.org/x/image/vector"
)

// pt is a point in output pixel coordinates (x right, y down).
type pt struct{ x, y float64 }

// fillPaths fills the closed polygons in paths with colour c, anti-aliased.
// Overlapping polygons of opposite orientation cancel, so a ring is an outer
// polygon plus a reversed inner one. The rasterizer covers only the
// polygons' bounding box.
func fillPaths(dst draw.Image, c color.Color, paths ...[]pt) {
	x0, y0 := math.Inf(1), math.Inf(1)
	x1, y1 := math.Inf(-1), math.Inf(-1)
	for _, p := range paths {
		for _, q := range p {
			x0, y0 = math.Min(x0, q.x), math.Min(y0, q.y)
			x1, y1 = math.Max(x1, q.x), math.Max(y1, q.y)
		}
	}
	if !(x1 >= x0 && y1 >= y0) {
		return
	}
	r := image.Rect(int(math.Floor(x0)), int(math.Floor(y0)), int(math.Ceil(x1))+1, int(math.Ceil(y1))+1)
	clip := r.Intersect(dst.Bounds())
	if clip.Empty() {
		return
	}
	// The rasterizer covers only the visible part of the box; geometry
	// outside it is clipped by the rasterizer's accumulation.
	z := vector.NewRasterizer(clip.Dx(), clip.Dy())
	ox, oy := float64(clip.Min.X), float64(clip.Min.Y)
	for _, p := range paths {
		if len(p) < 3 {
			continue
		}
		z.MoveTo(float32(p[0].x-ox), float32(p[0].y-oy))
		for _, q := range p[1:] {
			z.LineTo(float32(q.x-ox), float32(q.y-oy))
		}
		z.ClosePath()
	}
	z.Draw(dst, clip, image.NewUniform(c), image.Point{})
}

// segment returns the rectangle of width w around the line from a to b.
func segment(a, b pt, w float64) []pt {
	dx, dy := b.x-a.x, b.y-a.y
	l := math.Hypot(dx, dy)
	if l == 0 {
		return nil
	}
	nx, ny := -dy/l*w/2, dx/l*w/2
	return []pt{{a.x + nx, a.y + ny}, {b.x + nx, b.y + ny}, {b.x - nx, b.y - ny}, {a.x - nx, a.y - ny}}
}

// ellipse returns a polygon approximating the ellipse centred on c with
// semi-axes a (along angle theta, radians clockwise from screen up) and b.
// reverse flips its orientation.
func ellipse(c pt, a, b, theta float64, reverse bool) []pt {
	// The count is bounded as a float first: a huge or NaN size (a pixel of 1e-20 mas
	// makes the beam 1e20 pixels wide) would overflow the conversion to int.
	n := 256
	if f := 16 + 4*math.Max(a, b); f < 256 {
		n = int(f)
	}
	p := make([]pt, n)
	// Major axis direction on screen: up is (0, −1); clockwise by theta.
	ux, uy := math.Sin(theta), -math.Cos(theta)
	vx, vy := -uy, ux
	for i := range p {
		t := 2 * math.Pi * float64(i) / float64(n)
		if reverse {
			t = -t
		}
		ca, sb := a*math.Cos(t), b*math.Sin(t)
		p[i] = pt{c.x + ca*ux + sb*vx, c.y + ca*uy + sb*vy}
	}
	return p
}

// ring returns the outline of the ellipse as two polygons of stroke width w.
func ring(c pt, a, b, theta, w float64) [][]pt {
	return [][]pt{
		ellipse(c, a+w/2, b+w/2, theta, false),
		ellipse(c, math.Max(a-w/2, 0), math.Max(b-w/2, 0), theta, true),
	}
}

// arrow returns the shaft and head of an arrow from a to b, of shaft width w.
func arrow(a, b pt, w float64) [][]pt {
	dx, dy := b.x-a.x, b.y-a.y
	l := math.Hypot(dx, dy)
	if l == 0 {
		return nil
	}
	ux, uy := dx/l, dy/l
	head := math.Min(3.5*w+4, l/2)
	base := pt{b.x - ux*head, b.y - uy*head}
	hw := head * 0.55
	return [][]pt{
		segment(a, base, w),
		{b, {base.x - uy*hw, base.y + ux*hw}, {base.x + uy*hw, base.y - ux*hw}},
	}
}
