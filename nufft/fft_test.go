package nufft

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"
)

// TestFFT compares the batched Stockham FFT with the defining sum of the
// DFT, X[j] = Σ x[a] exp(∓2πi a j/n), for radix-4 and mixed lengths.
func TestFFT(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for _, n := range []int{1, 2, 4, 8, 16, 32, 64, 128} {
		for _, b := range []int{1, 3} {
			for _, inv := range []bool{false, true} {
				f := newFFTPlan(n)
				x := make([]complex128, n*b)
				for i := range x {
					x[i] = complex(rng.NormFloat64(), rng.NormFloat64())
				}
				want := make([]complex128, n*b)
				sign := -1.0
				if inv {
					sign = 1
				}
				for c := range b {
					for j := range n {
						var s complex128
						for a := range n {
							s += x[a*b+c] * cmplx.Rect(1, sign*2*math.Pi*float64(a*j%n)/float64(n))
						}
						want[j*b+c] = s
					}
				}
				y := make([]complex128, n*b)
				got := f.transform(append([]complex128(nil), x...), y, b, inv)
				var num, den float64
				for i := range got {
					num += sq(cmplx.Abs(got[i] - want[i]))
					den += sq(cmplx.Abs(want[i]))
				}
				if e := math.Sqrt(num / den); e > 1e-14 {
					t.Errorf("n=%d b=%d inverse=%v: relative error %g", n, b, inv, e)
				}
			}
		}
	}
}

func sq(x float64) float64 { return x * x }
