package fitsimage

import (
	"bytes"
	"testing"
)

// FuzzDecode checks that Decode never panics on malformed FITS input and
// that an accepted image has consistent dimensions.
func FuzzDecode(f *testing.F) {
	var buf bytes.Buffer
	if err := Encode(&buf, testImage(3, 2, 2)); err != nil {
		f.Fatal(err)
	}
	f.Add(buf.Bytes())
	f.Fuzz(func(t *testing.T, data []byte) {
		im, err := Decode(data)
		if err != nil {
			return
		}
		if len(im.Data) != im.NX*im.NY*max(im.Planes, 1) || !(im.Pixel > 0) {
			t.Fatalf("inconsistent image: %d×%d×%d with %d values, pixel %v", im.NX, im.NY, im.Planes, len(im.Data), im.Pixel)
		}
	})
}
