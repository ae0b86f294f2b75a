package nufft

import (
	"math"

	"gonum.org/v1/gonum/integrate/quad"
)

// kernelKind selects the gridding kernel. Both are functions of
// z = 2x/w on [−1, 1], zero outside, with x in fine-grid cells.
type kernelKind int

const (
	// kaiserBessel is I0(β√(1−z²)) with β = π√((w/σ)²(σ−1/2)² − 0.8),
	// σ = 2 (Beatty, Nishimura & Pauly 2005, IEEE TMI 24, 799, eq. 5).
	kaiserBessel kernelKind = iota
	// expSemicircle is exp(β(√(1−z²) − 1)) with β = 2.30·w at σ = 2
	// (Barnett, Magland & af Klinteberg 2019, SIAM J. Sci. Comput. 41,
	// C479, eq. 1.8 and sect. 4.1).
	expSemicircle
)

// kernel is a gridding kernel of width w fine-grid cells.
type kernel struct {
	kind kernelKind
	w    int
	beta float64
	norm float64 // 1/I0(β) for Kaiser–Bessel, so that the peak value is 1
}

// kernelWidth returns the Kaiser–Bessel kernel width in fine-grid cells
// for a relative tolerance: w = ⌈log10(1/tol)⌉ + 1. Measured relative l2
// errors of Plan against Exact for random points filling the band and
// random images were about 0.65·10^(1−w) for w = 3…14 at upsampling 2
// (TestKernelAccuracy repeats the measurement), so this is the smallest
// width that meets tol; rounding limits the error to about 1e-14.
func kernelWidth(tol float64) int {
	w := int(math.Ceil(-math.Log10(tol))) + 1
	return max(2, min(w, 16))
}

func newKernel(kind kernelKind, w int) kernel {
	k := kernel{kind: kind, w: w}
	switch kind {
	case kaiserBessel:
		const sigma = 2.0
		a := float64(w) / sigma * (sigma - 0.5)
		k.beta = math.Pi * math.Sqrt(a*a-0.8)
		k.norm = 1 / besselI0(k.beta)
	case expSemicircle:
		k.beta = 2.30 * float64(w)
	}
	return k
}

// eval returns the kernel at offset x fine-grid cells from its centre.
func (k *kernel) eval(x float64) float64 {
	z := 2 * x / float64(k.w)
	q := 1 - z*z
	if q <= 0 {
		return 0
	}
	if k.kind == kaiserBessel {
		return besselI0(k.beta*math.Sqrt(q)) * k.norm
	}
	return math.Exp(k.beta * (math.Sqrt(q) - 1))
}

// ft returns the kernel's Fourier transform ∫ φ(x) exp(−2πi ξ x) dx at
// the frequencies xi (cycles per fine-grid cell), into dst. It integrates
// numerically with Gauss–Legendre quadrature on [0, w/2] (the kernel is
// even): 200 nodes resolve cos(2π ξ x) for |ξ| ≤ 1/2 and the kernel to
// far below 1e-14 relative (TestKernelFT checks it against the closed
// form of the Kaiser–Bessel transform, w·sinh(√(β²−(πwξ)²))/√(β²−(πwξ)²),
// Jackson et al. 1991, IEEE TMI 10, 473; from memory).
func (k *kernel) ft(dst, xi []float64) {
	const nq = 200
	x := make([]float64, nq)
	wt := make([]float64, nq)
	quad.Legendre{}.FixedLocations(x, wt, 0, float64(k.w)/2)
	phi := make([]float64, nq)
	for i := range x {
		phi[i] = k.eval(x[i])
	}
	for j, f := range xi {
		var s float64
		for i := range x {
			s += wt[i] * phi[i] * math.Cos(2*math.Pi*f*x[i])
		}
		dst[j] = 2 * s
	}
}

// besselI0 returns the modified Bessel function I0(x) for x ≥ 0 from its
// power series Σ ((x/2)^k / k!)² (Abramowitz & Stegun 1964, eq. 9.6.12).
// All terms are positive, so the sum is accurate to a few ulp; it needs
// about x+20 terms, fine for the β ≤ 40 used here.
func besselI0(x float64) float64 {
	q := x * x / 4
	sum, term := 1.0, 1.0
	for k := 1; k < 500; k++ {
		term *= q / float64(k*k)
		sum += term
		if term < sum*1e-17 {
			break
		}
	}
	return sum
}

// fineSize returns the side of the upsampled grid for an image side n:
// the smallest power of two at least 2n, and at least 16.
func fineSize(n int) int {
	f := 16
	for f < 2*n {
		f *= 2
	}
	return f
}
