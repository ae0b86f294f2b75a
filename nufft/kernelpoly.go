package nufft

import "math"

// kernelPoly gives the w weights of a kernel of width w at one point by
// Horner's rule instead of w evaluations of the kernel. A point at fine
// coordinate t has its first tap at j = ⌈t − w/2⌉, and tap d sits at
// offset x_d = a − d from it, a = t − j ∈ (w/2 − 1, w/2]. With
// s = 2a − w + 1 ∈ (−1, 1], each tap's weight φ(x_d) is a smooth
// function of s alone, approximated on [−1, 1] by its Chebyshev
// interpolant of degree deg written in powers of s (the piecewise
// polynomial kernel of Barnett, Magland & af Klinteberg 2019, SIAM J.
// Sci. Comput. 41, C479, sect. 4). I0(β√(1−z²)) is an entire function of
// z (the series of I0 has only even powers), so the interpolants converge
// faster than geometrically (Trefethen 2013, Approximation Theory and
// Approximation Practice, thm. 8.2); deg is the smallest at which the
// largest error on a fine check grid is at most polyTarget(w).
type kernelPoly struct {
	w, deg int
	c      []float64 // c[j*w+d] is the coefficient of s^j for tap d
}

// maxPolyDeg bounds the degree of the fits; the tightest width needs
// about 20 (TestKernelPoly).
const maxPolyDeg = 28

// polyTarget is the largest error of the fitted weights for width w
// (kernel peak 1): a hundredth of the measured error of the transform at
// that width, so the fit adds at most about 1% to it, but no less than
// 2e-14, the rounding floor of the power form at the widest kernels
// (TestKernelPoly), which is a sixth of the transform's error at w = 14.
func polyTarget(w int) float64 {
	return max(kbError[min(w, len(kbError)-1)]*1e-2, 2e-14)
}

// newKernelPoly fits the taps of k.
func newKernelPoly(k *kernel) kernelPoly {
	w := k.w
	tap := func(d int, s float64) float64 {
		a := (s+float64(w)-1)/2 - float64(d)
		// Evaluate the untruncated kernel: the fit approximates the
		// entire function, which equals φ on (−w/2, w/2).
		z := 2 * a / float64(w)
		return besselI0(k.beta*math.Sqrt(max(0, 1-z*z))) * k.norm
	}
	const nCheck = 97
	target := polyTarget(w)
	var best kernelPoly
	var bestErr float64
	for deg := 2; deg <= maxPolyDeg; deg++ {
		p := kernelPoly{w: w, deg: deg, c: make([]float64, (deg+1)*w)}
		for d := range w {
			mono := chebFit(deg, func(s float64) float64 { return tap(d, s) })
			for j, c := range mono {
				p.c[j*w+d] = c
			}
		}
		var worst float64
		var vals [maxUnrolled]float64
		for i := range nCheck {
			s := -1 + 2*float64(i)/(nCheck-1)
			p.eval(vals[:w], s)
			for d := range w {
				worst = max(worst, math.Abs(vals[d]-tap(d, s)))
			}
		}
		if best.c == nil || worst < bestErr {
			best, bestErr = p, worst
		}
		if worst <= target || deg >= best.deg+4 {
			break
		}
	}
	return best
}

// chebFit returns the coefficients in powers of s of the polynomial of
// degree deg interpolating f at the Chebyshev points of the first kind
// on [−1, 1] (Trefethen 2013, ch. 3; coefficients by the discrete cosine
// sum, then T_{j+1} = 2s·T_j − T_{j−1}).
func chebFit(deg int, f func(float64) float64) []float64 {
	n := deg + 1
	fv := make([]float64, n)
	for i := range n {
		fv[i] = f(math.Cos(math.Pi * (float64(i) + 0.5) / float64(n)))
	}
	mono := make([]float64, n)
	tPrev := make([]float64, n) // T_{j−1}
	tCur := make([]float64, n)  // T_j
	tCur[0] = 1
	for j := range n {
		var a float64
		for i := range n {
			a += fv[i] * math.Cos(math.Pi*float64(j)*(float64(i)+0.5)/float64(n))
		}
		a *= 2 / float64(n)
		if j == 0 {
			a /= 2
		}
		for i := range n {
			mono[i] += a * tCur[i]
		}
		// Next Chebyshev polynomial.
		tNext := make([]float64, n)
		for i := range n {
			if i > 0 {
				tNext[i] += 2 * tCur[i-1]
			}
			if j > 0 {
				tNext[i] -= tPrev[i]
			}
		}
		if j == 0 {
			tNext = make([]float64, n)
			if n > 1 {
				tNext[1] = 1
			}
		}
		tPrev, tCur = tCur, tNext
	}
	return mono
}

// eval sets dst[d], d < w, to the weight of tap d at s.
func (p *kernelPoly) eval(dst []float64, s float64) {
	w := p.w
	dst = dst[:w]
	if hornerUnrolled(dst, p.c, w, p.deg, s) {
		return
	}
	copy(dst, p.c[p.deg*w:])
	for j := p.deg - 1; j >= 0; j-- {
		c := p.c[j*w : j*w+w]
		for d := range dst {
			dst[d] = dst[d]*s + c[d]
		}
	}
}
