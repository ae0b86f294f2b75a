package validate_test

import (
	"fmt"
	"math"
	"math/cmplx"

	"vcz/recon"
	"vcz/recon/validate"
)

// The exact sum for a single pixel east of the centre: |V| = 1 and the phase −2π·u·x.
func ExampleDirectSum() {
	const n = 8
	pixel := 1 * recon.Mas
	img := make([]float64, n*n)
	img[(n/2)*n+n/2-1] = 1 // ix = n/2 − 1: x = +1 pixel, east
	u := []float64{1 / (8 * pixel)}
	v := []float64{0}
	dst := make([]complex128, 1)
	validate.DirectSum(dst, img, n, pixel, u, v)
	fmt.Printf("|V| = %.3f, phase = %.1f°\n", cmplx.Abs(dst[0]), cmplx.Phase(dst[0])*180/math.Pi)
	// Output: |V| = 1.000, phase = -45.0°
}

// The scene families and how many scenes each has.
func ExampleScenes() {
	count := map[string]int{}
	for _, s := range validate.Scenes(1 * recon.Mas) {
		count[s.Family]++
	}
	for _, f := range validate.Families {
		fmt.Println(f, count[f])
	}
	// Output:
	// ld-disc 6
	// binary 6
	// ring 5
	// group 5
	// knots 2
}
