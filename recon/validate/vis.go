package validate

import (
	"fmt"
	"math"
)

// DirectSum writes to dst[k] the normalised complex visibility of the n × n image img (pixel
// (ix, iy) at x = −(ix − n/2)·pixel, y = (iy − n/2)·pixel radians, row-major img[iy*n+ix]) at
// the spatial frequency (u[k], v[k]) in cycles per radian, by the exact sum of the van
// Cittert–Zernike theorem over every pixel (CONVENTIONS.md):
//
//	V(u, v) = Σ I(x, y) exp(−2πi(u·x + v·y)) / Σ I.
//
// The exponential factorises into exp(−2πi u x)·exp(−2πi v y), so each frequency costs 2n
// complex exponentials and n² multiply-adds; no approximation is made. It panics when the
// lengths disagree or the image has no positive flux.
func DirectSum(dst []complex128, img []float64, n int, pixel float64, u, v []float64) {
	if len(img) != n*n || len(dst) != len(u) || len(v) != len(u) {
		panic(fmt.Sprintf("validate: DirectSum: %d pixels for n = %d, %d outputs for %d and %d frequencies", len(img), n, len(dst), len(u), len(v)))
	}
	tot := 0.0
	for _, p := range img {
		tot += p
	}
	if !(tot > 0) {
		panic(fmt.Sprintf("validate: DirectSum: image flux %g", tot))
	}
	ex := make([]complex128, n)
	ey := make([]complex128, n)
	for k := range u {
		for i := 0; i < n; i++ {
			x := -float64(i-n/2) * pixel
			y := float64(i-n/2) * pixel
			s, c := math.Sincos(-2 * math.Pi * u[k] * x)
			ex[i] = complex(c, s)
			s, c = math.Sincos(-2 * math.Pi * v[k] * y)
			ey[i] = complex(c, s)
		}
		var sum complex128
		for iy := 0; iy < n; iy++ {
			row := img[iy*n : (iy+1)*n]
			var re, im float64
			for ix, p := range row {
				if p != 0 {
					re += p * real(ex[ix])
					im += p * imag(ex[ix])
				}
			}
			sum += complex(re, im) * ey[iy]
		}
		dst[k] = sum / complex(tot, 0)
	}
}

// Fine-grid rendering of a scene for the data: the pixel is a tenth of the resolution
// λmin/(2·Bmax), below the eighth the suite requires, and each pixel is the mean of 9 × 9
// samples.
const (
	finePerRes = 10
	fineSub    = 9
)

// sceneVis holds a scene rendered on its fine grid, ready for DirectSum.
type sceneVis struct {
	img   []float64
	n     int
	pixel float64
}

// newSceneVis renders s on a grid of pixel res/finePerRes that holds its Radius.
func newSceneVis(s Scene, res float64) sceneVis {
	pixel := res / finePerRes
	n := 2*int(math.Ceil(s.Radius/pixel)) + 2
	return sceneVis{img: render(s.Brightness, n, pixel, fineSub), n: n, pixel: pixel}
}

// vis writes the scene's visibilities at (u, v) to dst: the exact sum over the fine pixels
// (DirectSum), divided by the response of the sub-pixel sampling,
// D(u)·D(v) with D(u) = sin(π u p)/(s·sin(π u p/s)) (p the pixel, s = fineSub): a pixel value
// is the mean of s² samples spread over it, and that mean placed at the pixel centre carries
// the samples' phases as that factor (the sum of a geometric series). Dividing by it makes the
// result the sum over all s² samples of every pixel, for an image constant across each
// pixel exactly and otherwise to the next order in the pixel size.
func (sv sceneVis) vis(dst []complex128, u, v []float64) {
	DirectSum(dst, sv.img, sv.n, sv.pixel, u, v)
	for k := range dst {
		dst[k] /= complex(dirichlet(u[k]*sv.pixel, fineSub)*dirichlet(v[k]*sv.pixel, fineSub), 0)
	}
}

// dirichlet returns (1/s) Σ_{j=0}^{s−1} exp(−2πi t (j − (s−1)/2)/s) = sin(πt)/(s·sin(πt/s)), real
// by symmetry, 1 at t = 0.
func dirichlet(t float64, s int) float64 {
	a := math.Pi * t / float64(s)
	if math.Abs(a) < 1e-12 {
		return 1
	}
	return math.Sin(math.Pi*t) / (float64(s) * math.Sin(a))
}
