package fitsimage_test

import (
	"fmt"
	"math"
	"os"
	"path/filepath"

	"vcz/io/fitsimage"
)

func Example() {
	dir, _ := os.MkdirTemp("", "fitsimage-example")
	defer os.RemoveAll(dir)
	path := filepath.Join(dir, "point.fits")
	const mas = math.Pi / (180 * 3600e3)
	// A 4×4 image with all the flux in the phase-centre pixel (n/2, n/2).
	im := &fitsimage.Image{NX: 4, NY: 4, Pixel: 0.5 * mas, Data: make([]float64, 16),
		RA: 83.5, Dec: -5.25, HasRADec: true, BUnit: "flux/pixel", Normalized: true,
		Cards: []fitsimage.Card{{Key: "HISTORY", Value: "example"}}}
	im.Data[2*4+2] = 1
	if err := fitsimage.WriteFile(path, im); err != nil {
		fmt.Println(err)
		return
	}
	back, err := fitsimage.ReadFile(path)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%d×%d, pixel %.2f mas, centre (%.2f, %.2f) deg, %s, normalised %v\n",
		back.NX, back.NY, back.Pixel/mas, back.RA, back.Dec, back.BUnit, back.Normalized)
	fmt.Println("peak", back.Data[2*4+2], "history", back.Cards[0].Value)
	// Output:
	// 4×4, pixel 0.50 mas, centre (83.50, -5.25) deg, flux/pixel, normalised true
	// peak 1 history example
}
