package nufft

import (
	"math/rand/v2"
	"testing"
)

// TestRadix4Asm checks that the assembly FFT stage gives the bits of the
// Go stage it replaces (same operations in the same order), for every
// stage of two lengths, strides 1 and 16, both directions. TestFFT checks
// the whole transform against the defining sum of the DFT.
func TestRadix4Asm(t *testing.T) {
	if !hasAsm {
		t.Skip("no assembly in this build (purego or not amd64)")
	}
	rng := rand.New(rand.NewPCG(3, 4))
	for _, n := range []int{64, 512} {
		f := newFFTPlan(n)
		for _, s := range []int{1, 16} {
			for i := range f.stages {
				st := &f.stages[i]
				if st.l == 2 {
					continue
				}
				// A stage of sub-length l and stride s reads and writes
				// l·s values per block; test one block of n·s values.
				src := make([]complex128, n*s)
				for k := range src {
					src[k] = complex(rng.NormFloat64(), rng.NormFloat64())
				}
				for _, inv := range []bool{false, true} {
					want := make([]complex128, n*s)
					got := make([]complex128, n*s)
					tw := st.fw
					if inv {
						tw = st.iw
					}
					ss := s * (n / st.l) // the stride at which this stage runs
					radix4(want, src, tw, st.l, ss, inv)
					radix4Fast(got, src, st, ss, inv)
					for k := range want {
						if got[k] != want[k] {
							t.Fatalf("n=%d l=%d s=%d inverse=%v: value %d is %v, Go stage %v", n, st.l, ss, inv, k, got[k], want[k])
						}
					}
				}
			}
		}
	}
}
