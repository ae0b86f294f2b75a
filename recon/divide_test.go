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

// TestGradRegAVX checks the gradient's last pass with a regularizer, four pixels at a time,
// against the Go loop of ForwardModel.gradientWith that it replaces, bit for bit, for both
// signs at the first pixel and lengths that leave a tail.
func TestGradRegAVX(t *testing.T) {
	if !hasPixelAVX {
		t.Skip("no assembly on this processor or build")
	}
	rng := rand.New(rand.NewPCG(8, 3))
	for _, n := range []int{4, 7, 96 * 96, 96*96 + 2} {
		adj, r := make([]float64, n), make([]float64, n)
		for i := range adj {
			adj[i], r[i] = rng.NormFloat64()*1e3, rng.NormFloat64()
		}
		adj[0], r[1] = math.Copysign(0, -1), 0
		for _, s0 := range []float64{1, -1} {
			cm, inv, sc, c, add := rng.NormFloat64(), 1/(1+rng.Float64()), rng.Float64()*1e2, rng.NormFloat64()*1e-3, rng.NormFloat64()
			got := make([]float64, n)
			gradRegAVX(got, adj, r, s0, cm, inv, sc, c, add)
			for i := range n &^ 3 {
				s := s0
				if i%2 != 0 {
					s = -s0
				}
				want := (s*adj[i]-cm)*inv + sc*(r[i]-c) + add
				if math.Float64bits(got[i]) != math.Float64bits(want) {
					t.Fatalf("n %d, s0 %g, pixel %d: %g, want %g", n, s0, i, got[i], want)
				}
			}
			for i := n &^ 3; i < n; i++ {
				if got[i] != 0 {
					t.Fatalf("n %d: pixel %d of the tail written", n, i)
				}
			}
		}
	}
}
