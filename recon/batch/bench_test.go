package batch

import (
	"testing"

	"vcz/recon"
)

// BenchmarkJoint is a joint reconstruction of 4 epochs of 32² pixels at a given temporal
// weight, from their independent images.
func BenchmarkJoint(b *testing.B) {
	data := simEpochs(b, 4, 0.2, []float64{-2, 0, 2}, 2)
	g := recon.Grid{N: 32, Pixel: 0.2 * recon.Mas}
	ind, _ := independent(b, data, g, 1e-3, 60)
	b.ReportAllocs()
	for b.Loop() {
		joint(b, data, ind, g, 1e-3, 1e4, 60, 0, 1)
	}
}
