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

// kbError is the relative l2 error of Plan against Exact measured with
// the Kaiser–Bessel kernel of width w = 2, 3, … at upsampling 2, for 3000
// random points filling the band and a random 64×64 image
// (TestKernelAccuracy repeats the measurement). Widths beyond 15 are
// limited by rounding.
var kbError = [...]float64{
	2: 6e-2, 3: 5.8e-3, 4: 6.6e-4, 5: 6.4e-5, 6: 7.6e-6, 7: 7.2e-7, 8: 8.9e-8,
	9: 8.3e-9, 10: 9.7e-10, 11: 9.9e-11, 12: 1.09e-11, 13: 1.10e-12,
	14: 1.18e-13, 15: 1.5e-14, 16: 6e-15,
}

// kernelWidth returns the Kaiser–Bessel kernel width in fine-grid cells
// for a relative tolerance: the smallest width whose measured error
// (kbError) is at most tol/1.25. This gives w = 4 for 1e-3, 7 for 1e-6,
// 11 for 1e-9 and 14 for 1e-12; roughly w = ⌈log10(1/tol)⌉ + 1 for
// loose and + 2 for tight tolerances.
func kernelWidth(tol float64) int {
	for w := 2; w < len(kbError); w++ {
		if kbError[w] <= tol/1.25 {
			return w
		}
	}
	return len(kbError) - 1
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
