package nufft_test

import (
	"fmt"
	"math"

	"vcz/nufft"
)

// A point source 2 mas east of the centre of a 64×64 image with 0.5 mas
// pixels: its visibility is exp(−2πi u x0), a pure phase.
func Example() {
	const mas = math.Pi / 180 / 3600 / 1000
	n, pixel := 64, 0.5*mas
	img := make([]float64, n*n)
	img[(n/2)*n+n/2-4] = 1 // ix = n/2 − 4: x0 = +4 pixels = 2 mas east

	// Baselines of 0, 50 and 100 m east–west at 2.2 µm.
	lambda := 2.2e-6
	u := []float64{0, 50 / lambda, 100 / lambda}
	v := []float64{0, 0, 0}
	p, err := nufft.NewPlan(n, n, pixel, u, v, nufft.Options{Tol: 1e-9})
	if err != nil {
		fmt.Println(err)
		return
	}
	vis := make([]complex128, len(u))
	p.Forward(vis, img)
	for k, z := range vis {
		ph := math.Atan2(imag(z), real(z)) * 180 / math.Pi
		want := math.Remainder(-360*u[k]*2*mas, 360) + 0 // + 0 turns −0 into 0
		fmt.Printf("u = %5.1f Mλ: |V| = %.6f, phase %8.3f° (expected %8.3f°)\n", u[k]/1e6, math.Hypot(real(z), imag(z)), ph, want)
	}
	// Output:
	// u =   0.0 Mλ: |V| = 1.000000, phase    0.000° (expected    0.000°)
	// u =  22.7 Mλ: |V| = 1.000000, phase  -79.333° (expected  -79.333°)
	// u =  45.5 Mλ: |V| = 1.000000, phase -158.666° (expected -158.666°)
}

// The adjoint gives the gradient of a data misfit with respect to the
// image: for χ² = Σ|F x − d|², ∇χ² = 2 Fᴴ(F x − d).
func ExamplePlan_Adjoint() {
	const mas = math.Pi / 180 / 3600 / 1000
	n := 8
	u := []float64{1e7, -3e7, 2e7}
	v := []float64{5e6, 1e7, -2e7}
	p, err := nufft.NewPlan(n, n, mas, u, v, nufft.Options{Tol: 1e-10})
	if err != nil {
		fmt.Println(err)
		return
	}
	x := make([]float64, n*n)
	x[n*n/2+n/2] = 1 // point source at the centre: F x = 1 everywhere
	res := make([]complex128, len(u))
	p.Forward(res, x)
	for k := range res {
		res[k] -= complex(0.5, 0) // data d = 0.5 at every point
	}
	grad := make([]float64, n*n)
	p.Adjoint(grad, res)
	for i := range grad {
		grad[i] *= 2
	}
	fmt.Printf("∂χ²/∂x at the centre: %.6f\n", grad[n*n/2+n/2])
	// Output:
	// ∂χ²/∂x at the centre: 3.000000
}
