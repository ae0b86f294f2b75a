package batch

import (
	"testing"

	"vcz/recon"
)

// BenchmarkJointEval is one evaluation of the joint objective with its gradient over 4
// epochs of 64² pixels.
func BenchmarkJointEval(b *testing.B) {
	data := simEpochs(b, 4, 0.2, []float64{-2, 0, 2}, 2)
	g := recon.Grid{N: 64, Pixel: 0.1 * recon.Mas}
	j := jointOf(b, data, g, 1e-3)
	j.Lambda = 1e5
	x := make([]float64, 4*g.N*g.N)
	for i := range x {
		x[i] = 1.0 / float64(g.N*g.N)
	}
	grad := make([]float64, len(x))
	b.ReportAllocs()
	for b.Loop() {
		j.Eval(grad, x)
	}
}
