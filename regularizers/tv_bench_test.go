package regularizers

import (
	"fmt"
	"testing"
)

// BenchmarkTV measures TV with its gradient on the image sizes of the cube benchmark (96²)
// and of BenchmarkEval (256²).
func BenchmarkTV(b *testing.B) {
	for _, n := range []int{96, 256} {
		b.Run(fmt.Sprintf("n=%d", n), func(b *testing.B) {
			x := randomImage(n, n, 0.1, 1, 4)
			grad := make([]float64, n*n)
			r := &TV{NX: n, NY: n}
			b.ReportAllocs()
			for b.Loop() {
				r.Eval(grad, x)
			}
		})
	}
}
