package recon

import (
	"math"
	"math/rand/v2"
	"testing"
)

// phaseBlockInputs returns bispectra that exercise every branch of the smoothed phase term:
// random ones, zeros of both signs, the axes, moduli far below and above η, and subnormal
// parts.
func phaseBlockInputs(rng *rand.Rand, n int) []complex128 {
	zs := []complex128{0, complex(math.Copysign(0, -1), 0), complex(0, math.Copysign(0, -1)),
		1, -1, 1i, -1i, complex(-2, 0), complex(-2, math.Copysign(0, -1)),
		complex(5e-324, 0), complex(-5e-324, 3e-310), complex(1e-200, -1e-200), complex(1e150, -3e149)}
	for len(zs) < n {
		z := complex(rng.NormFloat64(), rng.NormFloat64())
		switch len(zs) % 5 {
		case 0:
			z *= 1e-4 // well below η
		case 1:
			z *= 1e4
		}
		zs = append(zs, z)
	}
	return zs
}

// TestSmoothPhaseBlock checks the block forms of the closure-phase terms against the terms of
// one triangle at a time, to the bit, in Go and (where the processor has AVX) in assembly, for
// every block length: the smoothed one against smoothPhaseExact, which TestSmoothPhaseExact
// checks against the definitions of the terms and finite differences, and the exact one
// against its formula as eval computed it triangle by triangle (TestTerms checks that against
// the residuals and finite differences).
func TestSmoothPhaseBlock(t *testing.T) {
	rng := rand.New(rand.NewPCG(8, 3))
	zs := phaseBlockInputs(rng, 1000)
	forms := []struct {
		name string
		avx  bool
	}{{"Go", false}, {"AVX", true}}
	defer func(u bool) { usePhaseAVX = u }(usePhaseAVX)
	for _, f := range forms {
		if f.avx && !hasPhaseAVX {
			t.Logf("no AVX form on this build or processor")
			continue
		}
		usePhaseAVX = f.avx
		for n := 1; n <= phaseBlockLen; n++ {
			var b phaseBlock
			eta := 0.01 + rng.Float64()
			w := 0.5 + rng.Float64()
			type want struct {
				exact, v        float64
				g               complex128
				xexact, kb, ab2 float64
			}
			ws := make([]want, n)
			for j := range n {
				z := zs[rng.IntN(len(zs))]
				sigma := 0.02 + 0.5*rng.Float64()
				is2 := 1 / (sigma * sigma)
				b.re[j], b.im[j], b.is2[j] = real(z), imag(z), is2
				ws[j].exact, ws[j].v, ws[j].g = smoothPhaseExact(z, eta, is2)
				x, y := real(z), imag(z)
				ws[j].ab2 = x*x + y*y
				if ws[j].ab2 > 0 {
					ia := 1 / math.Sqrt(ws[j].ab2)
					ws[j].xexact = 2 * (1 - x*ia) * is2
					ws[j].kb = 2 * w * y * ia * is2 * ia * ia
				}
			}
			smoothPhaseBlock(&b, n, eta*eta)
			for j, w := range ws {
				got := []float64{b.exact[j], b.v[j], b.gre[j], b.gim[j]}
				exp := []float64{w.exact, w.v, real(w.g), imag(w.g)}
				for k := range got {
					if math.Float64bits(got[k]) != math.Float64bits(exp[k]) {
						t.Fatalf("%s, n = %d, z = %v: output %d is %v, smoothPhaseExact gives %v",
							f.name, n, complex(b.re[j], b.im[j]), k, got[k], exp[k])
					}
				}
			}
			exactPhaseBlock(&b, n, 2*w)
			for j, w := range ws {
				got := []float64{b.exact[j], b.kb[j], b.ab2[j]}
				exp := []float64{w.xexact, w.kb, w.ab2}
				for k := range got {
					if math.Float64bits(got[k]) != math.Float64bits(exp[k]) {
						t.Fatalf("%s, n = %d, z = %v: exact output %d is %v, want %v",
							f.name, n, complex(b.re[j], b.im[j]), k, got[k], exp[k])
					}
				}
			}
		}
	}
}

// TestT3PhiBlockBits checks the blocked closure-phase term, exact and smoothed, against the
// same term evaluated one triangle after the other (the smoothed one with smoothPhaseExact):
// the same χ², excess and gradient, to the bit, in Go and in assembly, over the night of
// BenchmarkImageNight in parts that do not fill their last block.
func TestT3PhiBlockBits(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 8))
	d := nightData()
	tm := t3PhiKind{}.bind(d, termConfig{}).(*t3PhiTerm)
	n := newNeeds(d)
	tm.need(n)
	s := newSampling(d, n)
	vis := make([]complex128, len(s.U))
	for i := range vis {
		vis[i] = complex(rng.NormFloat64()*0.4, rng.NormFloat64()*0.4)
	}
	vis[0] = 0 // a zero bispectrum
	const w = 1.7
	// The references: the former loops, one triangle after the other.
	refExact := func(g []complex128, lo, hi int) (float64, float64) {
		s0 := 0.0
		for j := lo; j < hi; j++ {
			r := &s.t3[tm.idx[j]]
			w1, w2, w3 := sides(vis, *r)
			b := w1 * (w2 * (w3 * tm.e[j]))
			ab2 := real(b)*real(b) + imag(b)*imag(b)
			if !(ab2 > 0) {
				continue
			}
			is2 := tm.is2[j]
			ia := 1 / math.Sqrt(ab2)
			s0 += 2 * (1 - real(b)*ia) * is2
			kb := 2 * w * imag(b) * ia * is2 * ia * ia
			a1 := real(w1)*real(w1) + imag(w1)*imag(w1)
			a2 := real(w2)*real(w2) + imag(w2)*imag(w2)
			a3 := real(w3)*real(w3) + imag(w3)*imag(w3)
			k1, k2, k3 := kb*(a2*a3), kb*(a1*a3), kb*(a1*a2)
			addGrad(g, r[0], complex(-k1*imag(w1), k1*real(w1)))
			addGrad(g, r[1], complex(-k2*imag(w2), k2*real(w2)))
			addGrad(g, r[2], complex(-k3*imag(w3), k3*real(w3)))
		}
		return s0, 0
	}
	var eta float64
	refSmooth := func(g []complex128, lo, hi int) (float64, float64) {
		s0, sm := 0.0, 0.0
		for j := lo; j < hi; j++ {
			r := &s.t3[tm.idx[j]]
			w1, w2, w3 := sides(vis, *r)
			w3e := w3 * tm.e[j]
			d1 := w2 * w3e
			b := w1 * d1
			x, v, gz := smoothPhaseExact(b, eta, tm.is2[j])
			s0 += x
			sm += v
			gb := complex(w*real(gz), w*imag(gz))
			addGrad(g, r[0], conj(d1)*gb)
			addGrad(g, r[1], conj(w1*w3e)*gb)
			addGrad(g, r[2], conj(w1*w2*tm.e[j])*gb)
		}
		return s0, w * (sm - s0)
	}
	defer func(u bool) { usePhaseAVX = u }(usePhaseAVX)
	for _, avx := range []bool{false, true} {
		if avx && !hasPhaseAVX {
			continue
		}
		usePhaseAVX = avx
		for _, smooth := range []float64{0, 0.5} {
			eta = smooth * tm.scale
			ref := refExact
			if smooth > 0 {
				ref = refSmooth
			}
			for _, parts := range []int{1, 7} {
				for k := range parts {
					lo, hi := part(tm.len(), k, parts)
					g, gr := make([]complex128, len(vis)), make([]complex128, len(vis))
					c := &evalCtx{s: &s, vis: vis, w: w, smooth: smooth, grad: g}
					x, ex := tm.eval(c, k, parts)
					xr, exr := ref(gr, lo, hi)
					if x != xr || ex != exr {
						t.Errorf("AVX %v, smoothing %g, part %d of %d: χ² %v and excess %v, one by one %v and %v", avx, smooth, k, parts, x, ex, xr, exr)
					}
					for i := range g {
						if g[i] != gr[i] {
							t.Fatalf("AVX %v, smoothing %g, part %d of %d: gradient %d is %v, one by one %v", avx, smooth, k, parts, i, g[i], gr[i])
						}
					}
				}
			}
		}
	}
}
