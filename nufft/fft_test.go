package nufft

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/dsp/fourier"
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

// TestFFTHalf checks transformHalf, the transform of a batch whose
// middle half is zero read from rows of a larger array, against the
// defining sum of the DFT of the zero-padded input, and against
// transform of that input, which it must match value for value (the
// operations it skips add zeros; to rounding where the compiler may
// fuse multiply-adds, sameOrClose), with the assembly stages and the Go
// loops.
func TestFFTHalf(t *testing.T) {
	asm, avx := useAsm, useAVX
	defer func() { useAsm, useAVX = asm, avx }()
	rng := rand.New(rand.NewPCG(5, 6))
	for _, form := range []struct{ asm, avx bool }{{false, false}, {asm, false}, {asm, avx}} {
		useAsm, useAVX = form.asm, form.avx
		for _, n := range []int{4, 8, 16, 32, 64, 128} {
			for _, b := range []int{1, 2, 3} {
				for _, inv := range []bool{false, true} {
					f := newFFTPlan(n)
					m, stride := n/4, b+5
					// Rows 0 … m−1 of src are the values 3n/4 … n−1,
					// rows m … 2m−1 the values 0 … n/4−1; the columns
					// beyond b are not part of the batch.
					src := make([]complex128, 2*m*stride)
					for i := range src {
						src[i] = complex(rng.NormFloat64(), rng.NormFloat64())
					}
					x := make([]complex128, n*b)
					for j := range m {
						copy(x[j*b:j*b+b], src[(m+j)*stride:])
						copy(x[(3*m+j)*b:(3*m+j)*b+b], src[j*stride:])
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
					ref := f.transform(append([]complex128(nil), x...), y, b, inv)
					got := f.transformHalf(src, stride, make([]complex128, n*b), make([]complex128, n*b), b, inv)
					var num, den float64
					for i := range got {
						if !sameOrClose(got[i], ref[i]) {
							t.Fatalf("asm=%v avx=%v n=%d b=%d inverse=%v: value %d is %v, transform of the padded input %v", useAsm, useAVX, n, b, inv, i, got[i], ref[i])
						}
						num += sq(cmplx.Abs(got[i] - want[i]))
						den += sq(cmplx.Abs(want[i]))
					}
					if e := math.Sqrt(num / den); e > 1e-14 {
						t.Errorf("asm=%v avx=%v n=%d b=%d inverse=%v: relative error %g against the DFT sum", useAsm, useAVX, n, b, inv, e)
					}
				}
			}
		}
	}
}

// BenchmarkFFT compares the Stockham FFT with gonum's CmplxFFT on one
// sequence of length 1024 and on a batch of 16.
func BenchmarkFFT(b *testing.B) {
	const n, batch = 1024, 16
	rng := rand.New(rand.NewPCG(1, 1))
	x := make([]complex128, n*batch)
	for i := range x {
		x[i] = complex(rng.NormFloat64(), rng.NormFloat64())
	}
	y := make([]complex128, n*batch)
	z := make([]complex128, n*batch)
	f := newFFTPlan(n)
	b.Run("own/n=1024", func(b *testing.B) {
		for b.Loop() {
			copy(z[:n], x[:n])
			f.transform(z[:n], y[:n], 1, false)
		}
	})
	b.Run("own/n=1024/batch=16", func(b *testing.B) {
		for b.Loop() {
			copy(z, x)
			f.transform(z, y, batch, false)
		}
	})
	g := fourier.NewCmplxFFT(n)
	b.Run("gonum/n=1024", func(b *testing.B) {
		for b.Loop() {
			g.Coefficients(y[:n], x[:n])
		}
	})
}
