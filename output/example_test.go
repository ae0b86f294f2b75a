package output_test

import (
	"fmt"

	"vcz/output"
)

// Stem gives the names of the files written beside a FITS image.
func ExampleStem() {
	stem := output.Stem("night-1-image.fits")
	fmt.Println(stem+".png", stem+"-vis2.png")
	// Output: night-1-image.png night-1-image-vis2.png
}

// FITS header text is printable ASCII; the project's messages are spelled out.
func ExampleASCII() {
	fmt.Println(output.ASCII("χ²ᵣ 1.02 at μ = 3.5e3, pixel λ/(4·B) ≈ 0.25 mas"))
	// Output: chi2r 1.02 at mu = 3.5e3, pixel lambda/(4*B) ~ 0.25 mas
}
