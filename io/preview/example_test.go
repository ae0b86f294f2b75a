package preview_test

import (
	"bytes"
	"fmt"
	"image/png"

	"vcz/io/preview"
)

func ExampleCubehelix() {
	c := preview.DefaultCubehelix()
	for _, t := range []float64{0, 0.5, 1} {
		r, g, b := c.RGB(t)
		fmt.Printf("%.1f: %.4f %.4f %.4f  %v\n", t, r, g, b, c.At(t))
	}
	// Output:
	// 0.0: 0.0000 0.0000 0.0000  {0 0 0 255}
	// 0.5: 0.6275 0.4750 0.2864  {160 121 73 255}
	// 1.0: 1.0000 1.0000 1.0000  {255 255 255 255}
}

func ExampleEncode() {
	// A 32 × 32 image of 0.2 mas pixels with one bright pixel 5 pixels east
	// of the centre (ix = 16 − 5).
	const n = 32
	img := make([]float64, n*n)
	img[(n/2)*n+n/2-5] = 1
	var buf bytes.Buffer
	err := preview.Encode(&buf, img, n, n, preview.Options{
		Title: "Example target",
		Pixel: 0.2,
		Beam:  preview.Beam{Major: 1},
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	m, err := png.Decode(&buf)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(m.Bounds().Dx() > 512, m.Bounds().Dy() > 512)
	// Output: true true
}

func ExampleFormatMJD() {
	fmt.Println(preview.FormatMJD(51544.5))
	// Output: 2000-01-01
}
