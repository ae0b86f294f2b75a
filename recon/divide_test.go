package recon

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestDivide checks divide against Go's division, bit for bit (IEEE 754 division is
// correctly rounded, whatever the instruction), on lengths that exercise the assembly's steps
// of four and the tail, with zeros of both signs, subnormals, infinities and NaN among the
// numbers and among the divisors, and in place.
func TestDivide(t *testing.T) {
	rng := rand.New(rand.NewPCG(2, 7))
	special := []float64{0, math.Copysign(0, -1), 5e-324, -2.5e-310, math.Inf(1), math.Inf(-1), math.NaN(), math.MaxFloat64, 1}
	for _, n := range []int{0, 1, 3, 4, 5, 8, 31, 9216} {
		src := make([]float64, n)
		for i := range src {
			src[i] = (rng.Float64() - 0.3) * math.Pow(10, float64(rng.IntN(40)-20))
			if rng.IntN(10) == 0 {
				src[i] = special[rng.IntN(len(special))]
			}
		}
		for _, d := range append([]float64{3, 0.7, 1 / 3.0, 1e-300, 9216.000000001}, special...) {
			dst := make([]float64, n)
			divide(dst, src, d)
			in := append([]float64(nil), src...)
			divide(in, in, d)
			for i := range src {
				want := math.Float64bits(src[i] / d)
				if math.Float64bits(dst[i]) != want || math.Float64bits(in[i]) != want {
					t.Fatalf("n %d, %g/%g: %g (in place %g), want %g", n, src[i], d, dst[i], in[i], src[i]/d)
				}
			}
		}
	}
}

// BenchmarkDivide compares divide with the Go loop on a 96² image.
func BenchmarkDivide(b *testing.B) {
	src := make([]float64, 96*96)
	for i := range src {
		src[i] = float64(i%97) + 0.5
	}
	dst := make([]float64, len(src))
	b.Run("divide", func(b *testing.B) {
		for b.Loop() {
			divide(dst, src, 1.0000001)
		}
	})
	b.Run("loop", func(b *testing.B) {
		for b.Loop() {
			for i, v := range src {
				dst[i] = v / 1.0000001
			}
		}
	})
}
