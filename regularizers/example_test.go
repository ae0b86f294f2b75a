package regularizers_test

import (
	"fmt"

	"vcz/regularizers"
)

// A flat image of total flux 1 on a 4x4 grid: TV is N*e with e = Eps/N,
// Smooth is zero, and the entropy relative to the flat prior is at its
// maximum, 0.
func Example() {
	const nx, ny = 4, 4
	x := make([]float64, nx*ny)
	for i := range x {
		x[i] = 1.0 / (nx * ny)
	}
	tv := &regularizers.TV{NX: nx, NY: ny, Eps: 0.1}
	sm := &regularizers.Smooth{NX: nx, NY: ny}
	me := &regularizers.MaxEnt{NX: nx, NY: ny}
	fmt.Printf("TV = %.4f, Smooth = %.4f, -S = %.4f\n", tv.Eval(nil, x), sm.Eval(nil, x), me.Eval(nil, x))

	// A weighted sum writes the combined gradient. Doubling pixel 5 gives
	// -S = (1/8) ln 2 - 1/16 and Smooth = 4 (1/16)^2; the gradient there is
	// ln 2 + 10 * 2 * 4/16.
	sum := &regularizers.Sum{Terms: []regularizers.Term{{Weight: 1, R: me}, {Weight: 10, R: sm}}}
	grad := make([]float64, nx*ny)
	x[5] *= 2
	fmt.Printf("%v = %.4f, gradient at pixel 5 = %.4f\n", sum, sum.Eval(grad, x), grad[5])
	// Output:
	// TV = 0.1000, Smooth = 0.0000, -S = 0.0000
	// 1*maxent(prior=flat)+10*smooth = 0.1804, gradient at pixel 5 = 5.6931
}

// A Gaussian prior of FWHM 4 pixels on an 8x8 grid, normalised to unit
// flux. Each pixel is the mean of 4x4 sub-pixel samples, so the pixel
// 2 pixels (FWHM/2) from the centre holds a little more than half of the
// peak: pixel means of a Gaussian are flatter than its values at the
// centres (the exact pixel integrals give 0.510).
func ExampleGaussianPrior() {
	m, err := regularizers.GaussianPrior(8, 8, 4, 1, 1e-6)
	if err != nil {
		fmt.Println(err)
		return
	}
	peak := m[4*8+4]
	fmt.Printf("peak %.4f, half-width pixel / peak = %.3f\n", peak, m[4*8+6]/peak)
	// Output:
	// peak 0.0563, half-width pixel / peak = 0.509
}

// Pixels farther than 1.5 pixels from the centre are held at zero.
func ExampleSupportBounds() {
	lower, upper := regularizers.SupportBounds(5, 5, 1, 1.5)
	for iy := range 5 {
		for ix := range 5 {
			if upper[iy*5+ix] > lower[iy*5+ix] {
				fmt.Print("o")
			} else {
				fmt.Print(".")
			}
		}
		fmt.Println()
	}
	// Output:
	// .....
	// .ooo.
	// .ooo.
	// .ooo.
	// .....
}
