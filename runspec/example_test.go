package runspec_test

import (
	"fmt"

	"vcz/recon"
	"vcz/regularizers"
	"vcz/runspec"
)

// A Spec set in Go, its canonical text (only the options that differ from `vcz image`'s
// defaults, the worker count left out) and the Spec read back from the text. The text is
// exact: 0.2*mas is the float64 that "0.2mas" reads as (the constant expression
// 0.2*recon.Mas rounds once, not twice, and is written 0.19999999999999998mas).
func ExampleSpec_String() {
	mas := recon.Mas
	s := runspec.Spec{
		Grid:         64,
		Pixel:        0.2 * mas,
		Regularizers: []regularizers.NamedTerm{{Name: "mem", Rel: 1}, {Name: "compact", Rel: 0.1}},
		Prior:        runspec.Prior{Kind: runspec.PriorGaussian},
		Workers:      4,
	}
	text := s.String()
	fmt.Print(text)
	back, err := runspec.Parse(text)
	fmt.Println(back.Grid, back.RegularizerLabel(), back.Workers, err)
	// Output:
	// n=64
	// pixel=0.2mas
	// reg=mem,compact:0.1
	// prior=gauss
	// 64 mem + 0.1·compact 0 <nil>
}
