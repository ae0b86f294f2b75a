package recon

import (
	"fmt"
	"math"
)

// fwhmToSigma is 1/(2√(2 ln 2)), the ratio of the standard deviation of a Gaussian to its full
// width at half maximum.
var fwhmToSigma = 1 / (2 * math.Sqrt(2*math.Ln2))

// Fidelity compares a reconstruction rec with the true image truth, both n × n pixels
// (row-major, x[iy*n+ix]) of the same grid. Both are normalised to unit flux and convolved
// with a circular Gaussian of full width at half maximum beamFWHM (in the unit of pixel, e.g.
// radians; zero or negative means no convolution); rec is then shifted by the offset that
// maximises the cross-correlation C(s) = Σ rec'(p) truth(p), searched over integer offsets
// within ±n/2 pixels and refined to a fraction of a pixel by the vertex of the parabola
// through the peak and its two neighbours along each axis (at most half a pixel either way).
// The shifted image is rec'(ix, iy) = rec(ix+shift[0], iy+shift[1]), interpolated
// by cubic convolution at fractional offsets and zero where that lies off the grid. The offset is free because
// closure phases and V² do not fix the position of the object. At that offset it returns
//
//	ncc = Σ (r − r̄)(t − t̄) / √(Σ (r − r̄)² · Σ (t − t̄)²),   l1 = Σ |r − t| / Σ |t|,
//
// the zero-mean normalised cross-correlation (1 for identical images) and the relative L1
// difference (0 for identical images, 2 for disjoint ones). The Gaussian is applied as two
// one-dimensional convolutions, truncated at 4σ and normalised to a sum of 1, with zero
// outside the grid; each convolved image is normalised to unit flux again. An image without
// positive flux gives ncc = NaN and l1 = NaN. It panics if a length is not n².
func Fidelity(rec, truth []float64, n int, pixel, beamFWHM float64) (ncc, l1 float64, shift [2]float64) {
	if n <= 0 || len(rec) != n*n || len(truth) != n*n {
		panic(fmt.Sprintf("recon: Fidelity: lengths %d and %d, want %d", len(rec), len(truth), n*n))
	}
	r := blurNormalized(rec, n, pixel, beamFWHM)
	t := blurNormalized(truth, n, pixel, beamFWHM)
	if r == nil || t == nil {
		return math.NaN(), math.NaN(), shift
	}
	corr := func(sx, sy int) float64 {
		c := 0.0
		for iy := max(0, -sy); iy < min(n, n-sy); iy++ {
			ro, to := (iy+sy)*n+sx, iy*n
			for ix := max(0, -sx); ix < min(n, n-sx); ix++ {
				c += r[ro+ix] * t[to+ix]
			}
		}
		return c
	}
	// Integer cross-correlation peak; ties go to the smallest |shift| found first.
	m := n / 2
	best := math.Inf(-1)
	var bx, by int
	for sy := -m; sy <= m; sy++ {
		for sx := -m; sx <= m; sx++ {
			c := corr(sx, sy)
			if c > best || (c == best && sx*sx+sy*sy < bx*bx+by*by) {
				best, bx, by = c, sx, sy
			}
		}
	}
	vertex := func(cm, c0, cp float64) float64 {
		den := cm - 2*c0 + cp
		if !(den < 0) {
			return 0
		}
		return math.Max(-0.5, math.Min(0.5, 0.5*(cm-cp)/den))
	}
	shift = [2]float64{
		float64(bx) + vertex(corr(bx-1, by), best, corr(bx+1, by)),
		float64(by) + vertex(corr(bx, by-1), best, corr(bx, by+1)),
	}
	rs := shifted(r, n, shift)
	mean := 1 / float64(n*n) // both have unit flux before the shift; rs may have lost a little
	var rm float64
	for _, v := range rs {
		rm += v
	}
	rm /= float64(n * n)
	var sab, saa, sbb, sd, st float64
	for i := range rs {
		a, b := rs[i]-rm, t[i]-mean
		sab += a * b
		saa += a * a
		sbb += b * b
		sd += math.Abs(rs[i] - t[i])
		st += math.Abs(t[i])
	}
	return sab / math.Sqrt(saa*sbb), sd / st, shift
}

// shifted returns img sampled at (ix+shift[0], iy+shift[1]) by separable cubic convolution
// (Keys 1981, IEEE Trans. Acoust. Speech Signal Process. 29, 1153, with a = −1/2), whose
// error falls as the cube of the pixel size, zero off the grid. Bilinear interpolation
// would smooth the shifted image by up to a quarter pixel² of variance and cost a few per
// cent of L1 on a beam of a few pixels.
func shifted(img []float64, n int, shift [2]float64) []float64 {
	weights := func(s float64) (int, [4]float64) {
		f := math.Floor(s)
		t := s - f
		var w [4]float64
		for j := range w {
			w[j] = keys(t - float64(j-1))
		}
		return int(f) - 1, w
	}
	ox, wx := weights(shift[0])
	oy, wy := weights(shift[1])
	tmp := make([]float64, n*n)
	for iy := 0; iy < n; iy++ { // along x
		row := img[iy*n : (iy+1)*n]
		for ix := 0; ix < n; ix++ {
			v := 0.0
			for j, w := range wx {
				if k := ix + ox + j; k >= 0 && k < n {
					v += w * row[k]
				}
			}
			tmp[iy*n+ix] = v
		}
	}
	out := make([]float64, n*n)
	for iy := 0; iy < n; iy++ { // along y
		for ix := 0; ix < n; ix++ {
			v := 0.0
			for j, w := range wy {
				if k := iy + oy + j; k >= 0 && k < n {
					v += w * tmp[k*n+ix]
				}
			}
			out[iy*n+ix] = v
		}
	}
	return out
}

// keys is the cubic convolution kernel of Keys (1981) with a = −1/2.
func keys(x float64) float64 {
	x = math.Abs(x)
	switch {
	case x < 1:
		return (1.5*x-2.5)*x*x + 1
	case x < 2:
		return ((-0.5*x+2.5)*x-4)*x + 2
	}
	return 0
}

// blurNormalized returns img/Σimg convolved with the Gaussian of Fidelity and normalised to
// unit flux again, or nil when the image has no positive flux.
func blurNormalized(img []float64, n int, pixel, fwhm float64) []float64 {
	out := make([]float64, n*n)
	f := 0.0
	for _, v := range img {
		f += v
	}
	if !(f > 0) || !finite(f) {
		return nil
	}
	for i, v := range img {
		out[i] = v / f
	}
	if fwhm > 0 && pixel > 0 {
		sigma := fwhm * fwhmToSigma / pixel
		h := int(math.Ceil(4 * sigma))
		k := make([]float64, 2*h+1)
		ks := 0.0
		for i := range k {
			d := float64(i - h)
			k[i] = math.Exp(-d * d / (2 * sigma * sigma))
			ks += k[i]
		}
		for i := range k {
			k[i] /= ks
		}
		tmp := make([]float64, n*n)
		for iy := 0; iy < n; iy++ { // along x
			row := out[iy*n : (iy+1)*n]
			for ix := 0; ix < n; ix++ {
				s := 0.0
				for j := max(0, ix-h); j <= min(n-1, ix+h); j++ {
					s += k[j-ix+h] * row[j]
				}
				tmp[iy*n+ix] = s
			}
		}
		for ix := 0; ix < n; ix++ { // along y
			for iy := 0; iy < n; iy++ {
				s := 0.0
				for j := max(0, iy-h); j <= min(n-1, iy+h); j++ {
					s += k[j-iy+h] * tmp[j*n+ix]
				}
				out[iy*n+ix] = s
			}
		}
		f = 0
		for _, v := range out {
			f += v
		}
		if !(f > 0) {
			return nil
		}
		for i := range out {
			out[i] /= f
		}
	}
	return out
}
