package recon_test

import (
	"fmt"

	"vcz/dataset"
	"vcz/io/oifits"
	"vcz/recon"
	"vcz/recon/simulate"
)

// The grid a reconstruction of the embedded demo data would use: the pixel from the
// nominal resolution, the field from the size of a disc fitted to V², each with its reason.
func Example() {
	f, _, err := simulate.DemoData()
	if err != nil {
		fmt.Println(err)
		return
	}
	d, err := dataset.FromFiles([]*oifits.File{f}, dataset.Selection{})
	if err != nil {
		fmt.Println(err)
		return
	}
	g, err := recon.ChooseGrid(d, recon.GridOptions{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%d × %d pixels of %.4f mas, field %.2f mas\n", g.N, g.N, g.Pixel/recon.Mas, g.FOV/recon.Mas)
	for _, why := range g.Reasons {
		fmt.Println("-", why)
	}
	// Output:
	// 96 × 96 pixels of 0.1185 mas, field 11.38 mas
	// - pixel 0.1185 mas = 0.25 × resolution λmin/(2·Bmax) = 0.474 mas
	// - V² fit: uniform disc of 3.817 mas; field of view 3 × that = 11.45 mas
	// - field of view capped at the largest constrained scale λmax/Bmin = 11.02 mas before the pixel count is rounded up
	// - 96 × 96 pixels (even, factors 2, 3, 5 only): field of view 11.38 mas, 3.2 % beyond λmax/Bmin by the rounding up of the pixel count
}
