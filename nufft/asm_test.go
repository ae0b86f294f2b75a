package nufft

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"
)

// TestRadix4Asm checks that the assembly FFT stages (SSE2, and AVX where
// the processor has it) give the bits of the Go stage they replace (same
// operations in the same order), for every stage of two lengths, strides
// 1 and 16, both directions. TestFFT checks the whole transform against
// the defining sum of the DFT.
func TestRadix4Asm(t *testing.T) {
	if !hasAsm {
		t.Skip("no assembly in this build (purego or not amd64)")
	}
	avx := useAVX
	defer func() { useAVX = avx }()
	for _, useAVX = range []bool{false, avx} {
		testRadix4Asm(t)
	}
}

func testRadix4Asm(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for _, n := range []int{64, 512, 128} { // 128 ends with a radix-2 stage
		f := newFFTPlan(n)
		for _, s := range []int{1, 16} {
			for i := range f.stages {
				st := &f.stages[i]
				if st.l == 2 {
					src := make([]complex128, 2*s)
					for k := range src {
						src[k] = complex(rng.NormFloat64(), rng.NormFloat64())
					}
					want := make([]complex128, 2*s)
					got := make([]complex128, 2*s)
					radix2(want, src, s)
					radix2Fast(got, src, s)
					for k := range want {
						if !sameOrClose(got[k], want[k]) {
							t.Fatalf("radix 2, s=%d: value %d is %v, Go stage %v", s, k, got[k], want[k])
						}
					}
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
						if !sameOrClose(got[k], want[k]) {
							t.Fatalf("n=%d l=%d s=%d inverse=%v AVX=%v: value %d is %v, Go stage %v", n, st.l, ss, inv, useAVX, k, got[k], want[k])
						}
					}
				}
			}
		}
	}
}

// TestGriddingAVX checks that the AVX and SSE2 forms of the gridding
// loops, and the AVX2 spreading on pairs of cells where the processor
// has it, give the same bits, for every width with an assembly form and
// both weight precisions, in Forward and Adjoint; TestAccuracy checks
// the results against the exact sum in whichever form the machine runs.
func TestGriddingAVX(t *testing.T) {
	if !hasAsm || !useAVX {
		t.Skip("no AVX assembly in this build or on this processor")
	}
	pairs := usePairs
	defer func() { useAVX, usePairs = true, pairs }()
	rng := rand.New(rand.NewPCG(5, 6))
	// The FFT stages switch with useAVX too; TestRadix4Asm shows they
	// give the same bits.
	nx, ny, m := 40, 36, 3000
	u, v := bandPoints(rng, m, mas)
	img := randImage(rng, nx*ny)
	vis := randVis(rng, m)
	// The points moved into the half of the plane that is never
	// mirrored, v ≤ 0, for the AVX2 spreading that gathers the values
	// itself, which runs only when no point is mirrored (plan.flip).
	vw := make([]float64, m)
	for k := range v {
		vw[k] = -0.999 * math.Abs(v[k])
	}
	for w := minAsm; w <= maxAsm; w++ {
		for _, c := range []struct {
			tol  float64
			v    []float64
			flip bool
		}{{1e-6, v, true}, {1e-9, v, true}, {1e-6, vw, false}, {1e-9, vw, false}} { // float32 and float64 weights
			tol := c.tol
			r, err := resolve("test", nx, ny, mas, u, c.v, Options{Tol: tol, Workers: 1})
			if err != nil {
				t.Fatal(err)
			}
			p := &Plan{newPlan(r, u, c.v, kaiserBessel, w)}
			if p.anyFlip != c.flip {
				t.Fatalf("w=%d tol=%g: mirrored points %v, want %v", w, tol, p.anyFlip, c.flip)
			}
			forms := []struct {
				name       string
				avx, pairs bool
			}{{"SSE2", false, false}, {"AVX", true, false}, {"AVX2 pairs", true, true}}
			if !pairs {
				forms = forms[:2]
			}
			f := make([][]complex128, len(forms))
			a := make([][]float64, len(forms))
			for i, fm := range forms {
				useAVX, usePairs = fm.avx, fm.pairs
				f[i], a[i] = make([]complex128, m), make([]float64, nx*ny)
				p.Forward(f[i], img)
				p.Adjoint(a[i], vis)
			}
			for i := 1; i < len(forms); i++ {
				for k := range f[0] {
					if f[0][k] != f[i][k] {
						t.Fatalf("w=%d tol=%g mirrored=%v: Forward at point %d: SSE2 %v, %s %v", w, tol, c.flip, k, f[0][k], forms[i].name, f[i][k])
					}
				}
				for k := range a[0] {
					if a[0][k] != a[i][k] {
						t.Fatalf("w=%d tol=%g mirrored=%v: Adjoint at pixel %d: SSE2 %v, %s %v", w, tol, c.flip, k, a[0][k], forms[i].name, a[i][k])
					}
				}
			}
		}
	}
}

// TestPortableLoops runs the portable Go loops of this build (the only
// ones with -tags purego or off amd64) against the exact sum at the
// tolerances of TestAccuracy, and checks that the assembly loops give
// their bits (same operations in the same order), or agree to rounding
// where the compiler may fuse multiply-adds in the Go loops.
func TestPortableLoops(t *testing.T) {
	asm := useAsm
	defer func() { useAsm = asm }()
	rng := rand.New(rand.NewPCG(7, 8))
	nx, ny, m := 48, 30, 2000
	pix := 0.5 * mas
	u, v := bandPoints(rng, m, pix)
	img := randImage(rng, nx*ny)
	vis := randVis(rng, m)
	e, err := NewExact(nx, ny, pix, u, v, Options{})
	if err != nil {
		t.Fatal(err)
	}
	wantF := make([]complex128, m)
	e.Forward(wantF, img)
	wantA := make([]float64, nx*ny)
	e.Adjoint(wantA, vis)
	for _, tol := range []float64{1e-3, 1e-6, 1e-9, 1e-12} {
		p, err := NewPlan(nx, ny, pix, u, v, Options{Tol: tol, Workers: 1})
		if err != nil {
			t.Fatal(err)
		}
		var f [2][]complex128
		var a [2][]float64
		for i, on := range []bool{false, asm} {
			useAsm = on
			f[i], a[i] = make([]complex128, m), make([]float64, nx*ny)
			p.Forward(f[i], img)
			p.Adjoint(a[i], vis)
		}
		ef, ea := relErrC(f[0], wantF), relErrR(a[0], wantA)
		if ef > tol || ea > tol {
			t.Errorf("tol=%g, portable loops: relative errors Forward %g, Adjoint %g exceed tol", tol, ef, ea)
		}
		if d := relErrC(f[0], f[1]); d > 1e-13 || (!goFused && d != 0) {
			t.Errorf("tol=%g: Forward of portable and assembly loops differ by %g relative", tol, d)
		}
		if d := relErrR(a[0], a[1]); d > 1e-13 || (!goFused && d != 0) {
			t.Errorf("tol=%g: Adjoint of portable and assembly loops differ by %g relative", tol, d)
		}
	}
}

// TestSortedOrder checks that ForwardSorted and AdjointSorted give the
// bits of Forward and Adjoint with the points in the order of Order, in
// both the assembly and the portable loops, serially and with two
// workers.
func TestSortedOrder(t *testing.T) {
	asm := useAsm
	defer func() { useAsm = asm }()
	rng := rand.New(rand.NewPCG(9, 10))
	nx, ny, m := 64, 50, 30000
	u, v := bandPoints(rng, m, mas)
	img := randImage(rng, nx*ny)
	vis := randVis(rng, m)
	for _, useAsm = range []bool{false, asm} {
		for _, w := range []int{1, 2} {
			p, err := NewPlan(nx, ny, mas, u, v, Options{Workers: w})
			if err != nil {
				t.Fatal(err)
			}
			order := make([]int, m)
			p.Order(order)
			f, fs := make([]complex128, m), make([]complex128, m)
			p.Forward(f, img)
			p.ForwardSorted(fs, img)
			visS := make([]complex128, m)
			for i, k := range order {
				visS[i] = vis[k]
				if fs[i] != f[k] {
					t.Fatalf("asm=%v workers=%d: ForwardSorted[%d] = %v, Forward[%d] = %v", useAsm, w, i, fs[i], k, f[k])
				}
			}
			a, as := make([]float64, nx*ny), make([]float64, nx*ny)
			p.Adjoint(a, vis)
			p.AdjointSorted(as, visS)
			for k := range a {
				if a[k] != as[k] {
					t.Fatalf("asm=%v workers=%d: AdjointSorted pixel %d = %v, Adjoint %v", useAsm, w, k, as[k], a[k])
				}
			}
			// The plan's own buffer is back in place.
			p.Forward(f, img)
			for i, k := range order {
				if fs[i] != f[k] {
					t.Fatalf("asm=%v workers=%d: Forward after the sorted calls differs at point %d", useAsm, w, k)
				}
			}
		}
	}
}

// sameOrClose reports whether a Go loop's value b equals the assembly's
// a: to the bit, or to rounding (1e-14 relative) where the compiler may
// fuse multiply-adds in the Go loops (goFused).
func sameOrClose(a, b complex128) bool {
	if !goFused {
		return a == b
	}
	return cmplx.Abs(a-b) <= 1e-14*(cmplx.Abs(b)+1e-300)
}

// TestConjRev checks the assembly forms of conjRev and addConjRev
// against their definition, dst[j] (+)= conj(src[n−1−j]), written out
// with math/cmplx.Conj, for every length up to 9 (odd lengths take the
// tail of the two-at-a-time AVX loop) and in slices that end where the
// data does.
func TestConjRev(t *testing.T) {
	asm, avx := useAsm, useAVX
	defer func() { useAsm, useAVX = asm, avx }()
	rng := rand.New(rand.NewPCG(11, 12))
	for _, form := range []struct{ asm, avx bool }{{false, false}, {asm, false}, {asm, avx}} {
		useAsm, useAVX = form.asm, form.avx
		for n := 0; n <= 9; n++ {
			src := randVis(rng, n)
			base := randVis(rng, n)
			got, add := make([]complex128, n), append([]complex128(nil), base...)
			conjRev(got, src)
			addConjRev(add, src)
			for j := range n {
				if want := cmplx.Conj(src[n-1-j]); got[j] != want {
					t.Fatalf("asm=%v avx=%v n=%d: conjRev[%d] = %v, want %v", useAsm, useAVX, n, j, got[j], want)
				}
				if want := base[j] + cmplx.Conj(src[n-1-j]); add[j] != want {
					t.Fatalf("asm=%v avx=%v n=%d: addConjRev[%d] = %v, want %v", useAsm, useAVX, n, j, add[j], want)
				}
			}
		}
	}
}
