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
			in += splat(dst, nx, ny, pixel, x, y, f/float64(n))
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
	case Gaussian, EllGaussian:
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
		return math.Exp(-4 * math.Ln2 * (x*x + y*y) / (w * w))
	case EllGaussian:
		w := p[iS0].Value * MasToRad
		s, co := math.Sincos(p[iS2].Value * math.Pi / 180)
		a := (x*s + y*co) / w                  // along the major axis
		b := (x*co - y*s) / (p[iS1].Value * w) // along the minor axis
		return math.Exp(-4 * math.Ln2 * (a*a + b*b))
	}
	panic("model: intensity of kind " + string(c.kind))
}

// rasterArea samples an extended component on a sub-pixel grid within its
// bounding box and scales the samples to flux f. A component too small to
// be hit by any sample is added as a point.
func rasterArea(dst []float64, c *Component, f float64, nx, ny int, pixel float64, over int) float64 {
	x0, y0 := c.params[iX].Value*MasToRad, c.params[iY].Value*MasToRad
	r := extent(c)
	if r < pixel/2 {
		over = max(over, int(math.Ceil(4*pixel/math.Max(r, 1e-300))))
		over = min(over, 64)
	}
	// The total of the samples, on and off the grid, fixes the scale, so
	// the same sums are taken over the full bounding box.
	fx := float64(nx/2) - x0/pixel
	fy := float64(ny/2) + y0/pixel
	rp := r / pixel
	ixLo, ixHi := int(math.Floor(fx-rp-1)), int(math.Ceil(fx+rp+1))
	iyLo, iyHi := int(math.Floor(fy-rp-1)), int(math.Ceil(fy+rp+1))
	step := 1 / float64(over)
	var total, in float64
	for iy := iyLo; iy <= iyHi; iy++ {
		for ix := ixLo; ix <= ixHi; ix++ {
			var s float64
			for sy := 0; sy < over; sy++ {
				// Sub-sample centres at offsets (k + 1/2)/over − 1/2 pixel.
				y := (float64(iy-ny/2) + (float64(sy)+0.5)*step - 0.5) * pixel
				for sx := 0; sx < over; sx++ {
					x := -(float64(ix-nx/2) + (float64(sx)+0.5)*step - 0.5) * pixel
					s += intensity(c, x-x0, y-y0)
				}
			}
			total += s
			if ix >= 0 && ix < nx && iy >= 0 && iy < ny {
				in += s
			}
		}
	}
	if total == 0 {
		return splat(dst, nx, ny, pixel, x0, y0, f)
	}
	scale := f / total
	for iy := max(iyLo, 0); iy <= min(iyHi, ny-1); iy++ {
		for ix := max(ixLo, 0); ix <= min(ixHi, nx-1); ix++ {
			var s float64
			for sy := 0; sy < over; sy++ {
				y := (float64(iy-ny/2) + (float64(sy)+0.5)*step - 0.5) * pixel
				for sx := 0; sx < over; sx++ {
					x := -(float64(ix-nx/2) + (float64(sx)+0.5)*step - 0.5) * pixel
					s += intensity(c, x-x0, y-y0)
				}
			}
			dst[iy*nx+ix] += s * scale
		}
	}
	return in / total
}
