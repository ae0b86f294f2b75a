package model

import (
	"math"
)

// DefaultOversample is the number of sub-samples per pixel along each axis
// that Image uses for extended components (raised automatically for
// components smaller than a few pixels).
const DefaultOversample = 8

// Image rasterises the model on an nx×ny grid of pixel radians, row-major
// img[iy*nx+ix], with pixel (ix, iy) centred at x = −(ix − nx/2)·pixel,
// y = (iy − ny/2)·pixel (CONVENTIONS.md: east left, north up). The result
// is normalised so that its pixels sum to 1; flux falling outside the grid
// is therefore dropped before normalising (use Rasterize to learn how
// much). It panics on a non-positive size or pixel.
func (m *Model) Image(nx, ny int, pixel float64) []float64 {
	img := make([]float64, nx*ny)
	m.Rasterize(img, nx, ny, pixel, DefaultOversample)
	var s float64
	for _, p := range img {
		s += p
	}
	if s != 0 {
		for i := range img {
			img[i] /= s
		}
	}
	return img
}

// Rasterize adds the model, in units of its total flux, into dst (length
// nx·ny, grid as for Image) and returns the fraction of the total flux
// that fell outside the grid. Each extended component is sampled at
// over×over points per pixel (more for components spanning few pixels)
// and its samples are scaled so that it contributes exactly its flux
// (minus what lies off the grid). Point sources and thin rings, which have
// no area, are split bilinearly between the four nearest pixel centres,
// a ring as many points along its circumference. A background component
// is spread evenly over the grid.
func (m *Model) Rasterize(dst []float64, nx, ny int, pixel float64, over int) (outside float64) {
	if nx <= 0 || ny <= 0 || !(pixel > 0) || len(dst) != nx*ny {
		panic("model: Rasterize: bad grid")
	}
	if over < 1 {
		over = 1
	}
	tot := m.TotalFlux()
	var inside float64
	for _, c := range m.Components {
		f := c.Flux() / tot
		if f == 0 {
			continue
		}
		inside += f * rasterComponent(dst, c, f, nx, ny, pixel, over)
	}
	return 1 - inside
}

// rasterComponent adds flux f of c into dst and returns the fraction of
// the component's flux that landed on the grid.
func rasterComponent(dst []float64, c *Component, f float64, nx, ny int, pixel float64, over int) float64 {
	p := c.params
	switch c.kind {
	case Background:
		each := f / float64(nx*ny)
		for i := range dst {
			dst[i] += each
		}
		return 1
	case Point:
		return splat(dst, nx, ny, pixel, p[iX].Value*MasToRad, p[iY].Value*MasToRad, f)
	case Ring:
		r := p[iS0].Value * MasToRad / 2
		if r < pixel/4 {
			return splat(dst, nx, ny, pixel, p[iX].Value*MasToRad, p[iY].Value*MasToRad, f)
		}
		n := int(math.Max(256, 16*2*math.Pi*r/pixel))
		cosi := math.Cos(p[iS1].Value * math.Pi / 180)
		sp, cp := math.Sincos(p[iS2].Value * math.Pi / 180)
		var in float64
		for k := 0; k < n; k++ {
			s, co := math.Sincos(2 * math.Pi * (float64(k) + 0.5) / float64(n))
			a, b := r*co, r*cosi*s // along the major and minor axes
			x := p[iX].Value*MasToRad + a*sp + b*cp
			y := p[iY].Value*MasToRad + a*cp - b*sp
			in += splat(dst, nx, ny, pixel, x, y, f/float64(n)) / float64(n)
		}
		return in
	}
	return rasterArea(dst, c, f, nx, ny, pixel, over)
}

// splat adds flux f at (x, y) radians bilinearly to the four nearest pixel
// centres and returns the fraction that landed on the grid.
func splat(dst []float64, nx, ny int, pixel, x, y, f float64) float64 {
	fx := float64(nx/2) - x/pixel
	fy := float64(ny/2) + y/pixel
	ix0, iy0 := math.Floor(fx), math.Floor(fy)
	tx, ty := fx-ix0, fy-iy0
	var in float64
	for dy := 0; dy < 2; dy++ {
		for dx := 0; dx < 2; dx++ {
			ix, iy := int(ix0)+dx, int(iy0)+dy
			w := (1 - tx) * (1 - ty)
			switch {
			case dx == 1 && dy == 0:
				w = tx * (1 - ty)
			case dx == 0 && dy == 1:
				w = (1 - tx) * ty
			case dx == 1 && dy == 1:
				w = tx * ty
			}
			if ix >= 0 && ix < nx && iy >= 0 && iy < ny && w != 0 {
				dst[iy*nx+ix] += w * f
				in += w
			}
		}
	}
	return in
}

// extent returns the radius (radians) beyond which the centred component's
// intensity is zero or negligible (below 1e-19 of its peak for Gaussians).
func extent(c *Component) float64 {
	p := c.params
	switch c.kind {
	case UniformDisc, LinearLD, PowerLD:
		return p[iS0].Value * MasToRad / 2
	case Gaussian:
		// exp(−4 ln2 (r/w)²) < 1e-19 for r > 4 w.
		return 4 * p[iS0].Value * MasToRad
	}
	return 0
}

// intensity returns the unnormalised surface brightness of the centred
// component at offset (x, y) radians.
func intensity(c *Component, x, y float64) float64 {
	p := c.params
	switch c.kind {
	case UniformDisc, LinearLD, PowerLD:
		rr := 2 * math.Hypot(x, y) / (p[iS0].Value * MasToRad)
		if rr >= 1 {
			return 0
		}
		mu := math.Sqrt(1 - rr*rr)
		switch c.kind {
		case LinearLD:
			return 1 - p[iS1].Value*(1-mu)
		case PowerLD:
			return math.Pow(mu, p[iS1].Value)
		}
		return 1
	case Gaussian:
		w := p[iS0].Value * MasToRad
		if p[iS1].Value == 1 {
			return math.Exp(-4 * math.Ln2 * (x*x + y*y) / (w * w))
		}
		s, co := math.Sincos(p[iS2].Value * math.Pi / 180)
		a := (x*s + y*co) / w                  // along the major axis
		b := (x*co - y*s) / (p[iS1].Value * w) // along the minor axis
		return math.Exp(-4 * math.Ln2 * (a*a + b*b))
	}
	panic("model: intensity of kind " + string(c.kind))
}

// integral returns the analytic integral of intensity over the sky
// (radians²) for the centred component.
func integral(c *Component) float64 {
	p := c.params
	switch c.kind {
	case UniformDisc, LinearLD, PowerLD:
		r := p[iS0].Value * MasToRad / 2
		a := math.Pi * r * r
		switch c.kind {
		case LinearLD:
			return a * (1 - p[iS1].Value/3) // ∫(1 − u(1 − μ)) over the disc
		case PowerLD:
			return a * 2 / (p[iS1].Value + 2) // ∫ μ^α over the disc
		}
		return a
	case Gaussian:
		w := p[iS0].Value * MasToRad
		if p[iS1].Value == 1 {
			return math.Pi * w * w / (4 * math.Ln2)
		}
		return math.Pi * w * w * p[iS1].Value / (4 * math.Ln2)
	}
	panic("model: integral of kind " + string(c.kind))
}

// rasterArea samples an extended component on a sub-pixel grid over the
// part of its bounding box that lies on the grid, and scales the samples
// to flux f. When the whole box is on the grid the scale comes from the
// sum of the samples, so the component's pixels add up to f exactly;
// otherwise from the analytic integral of the intensity, and the part off
// the grid is lost. A component too small to be hit by any sample is
// added as a point.
func rasterArea(dst []float64, c *Component, f float64, nx, ny int, pixel float64, over int) float64 {
	x0, y0 := c.params[iX].Value*MasToRad, c.params[iY].Value*MasToRad
	r := extent(c)
	if r == 0 {
		return splat(dst, nx, ny, pixel, x0, y0, f)
	}
	if c.kind == Gaussian {
		// A smooth profile needs few samples once it spans several
		// pixels: 16 samples per FWHM along each axis bound the midpoint
		// rule's error well below 1e-4 (common practice, no source).
		w := c.params[iS0].Value * MasToRad
		w *= c.params[iS1].Value // the minor axis
		over = max(1, min(over, int(math.Ceil(16*pixel/w))))
	}
	if r < 2*pixel {
		over = int(math.Min(64, math.Max(float64(over), math.Ceil(8*pixel/r))))
	}
	fx := float64(nx/2) - x0/pixel
	fy := float64(ny/2) + y0/pixel
	rp := r / pixel
	ixLo, ixHi := math.Floor(fx-rp-1), math.Ceil(fx+rp+1)
	iyLo, iyHi := math.Floor(fy-rp-1), math.Ceil(fy+rp+1)
	whole := ixLo >= 0 && iyLo >= 0 && ixHi < float64(nx) && iyHi < float64(ny)
	// Clip to the grid (as floats first: the box of a huge component may
	// not fit an int).
	x1, x2 := int(math.Max(ixLo, 0)), int(math.Min(ixHi, float64(nx-1)))
	y1, y2 := int(math.Max(iyLo, 0)), int(math.Min(iyHi, float64(ny-1)))
	if x1 > x2 || y1 > y2 {
		return 0
	}
	w := x2 - x1 + 1
	tmp := make([]float64, w*(y2-y1+1))
	step := 1 / float64(over)
	var total float64
	for iy := y1; iy <= y2; iy++ {
		for ix := x1; ix <= x2; ix++ {
			var s float64
			for sy := 0; sy < over; sy++ {
				// Sub-sample centres at offsets (k + 1/2)/over − 1/2 pixel.
				y := (float64(iy-ny/2) + (float64(sy)+0.5)*step - 0.5) * pixel
				for sx := 0; sx < over; sx++ {
					x := -(float64(ix-nx/2) + (float64(sx)+0.5)*step - 0.5) * pixel
					s += intensity(c, x-x0, y-y0)
				}
			}
			tmp[(iy-y1)*w+ix-x1] = s
			total += s
		}
	}
	if whole && total == 0 {
		return splat(dst, nx, ny, pixel, x0, y0, f)
	}
	norm := total
	if !whole {
		norm = integral(c) / (pixel * pixel * step * step)
	}
	scale := f / norm
	for iy := y1; iy <= y2; iy++ {
		for ix := x1; ix <= x2; ix++ {
			dst[iy*nx+ix] += tmp[(iy-y1)*w+ix-x1] * scale
		}
	}
	return total / norm
}
