package recon

import "math"

// phaseBlockLen is the number of triangles whose closure-phase terms eval and evalSmoothed
// compute in one pass of exactPhaseBlock or smoothPhaseBlock; a multiple of 4, the lanes of
// the AVX form. The block's arrays (9 × 512 bytes) stay in the first-level cache.
const phaseBlockLen = 64

// phaseBlock holds the rotated bispectra z of up to phaseBlockLen triangles with their 1/σ²,
// and the terms exactPhaseBlock or smoothPhaseBlock compute from them, as separate arrays of
// real numbers so that four triangles are computed at once. The layout is fixed: the assembly
// forms read it by offset (phase_block_amd64.s).
type phaseBlock struct {
	re, im, is2        [phaseBlockLen]float64 // Re z, Im z and 1/σ² of each triangle
	exact, v, gre, gim [phaseBlockLen]float64 // the exact and smoothed terms and ∂v/∂(Re z, Im z)
	kb, ab2            [phaseBlockLen]float64 // the gradient factor of the exact term and |z|²
}

// exactPhaseBlock sets, for the first n triangles of b (n rounded up to a multiple of 4, at
// most phaseBlockLen), ab2 to |z|² and, where |z|² > 0, exact to the exact term
// 2(1 − Re z/|z|)/σ² and kb to the factor 2w·Im z/(|z|³σ²) of its gradient (term_t3phi.go),
// with tw = 2w; both are 0 where |z|² > 0 fails. It runs in assembly where smoothPhaseBlock
// does, with the same bits as exactPhaseBlockGo (TestSmoothPhaseBlock).
func exactPhaseBlock(b *phaseBlock, n int, tw float64) {
	if hasPhaseAVX && usePhaseAVX {
		exactPhaseAVX(b, min((n+3)&^3, phaseBlockLen), tw)
		return
	}
	exactPhaseBlockGo(b, n, tw)
}

// exactPhaseBlockGo is exactPhaseBlock in Go, each product rounded on its own (see
// smoothPhaseBlockGo).
func exactPhaseBlockGo(b *phaseBlock, n int, tw float64) {
	n = min((n+3)&^3, phaseBlockLen)
	re, im, is2s := b.re[:n], b.im[:n], b.is2[:n]
	exact, kb, ab2s := b.exact[:n], b.kb[:n], b.ab2[:n]
	for j, x := range re {
		y, is2 := im[j], is2s[j]
		ab2 := float64(x*x) + float64(y*y)
		ab2s[j] = ab2
		if !(ab2 > 0) {
			exact[j], kb[j] = 0, 0
			continue
		}
		ia := 1 / math.Sqrt(ab2)
		exact[j] = 2 * (1 - float64(x*ia)) * is2
		kb[j] = tw * y * ia * is2 * ia * ia
	}
}

// smoothPhaseBlock sets, for the first n triangles of b (n rounded up to a multiple of 4, at
// most phaseBlockLen), exact, v and gre + i·gim to smoothPhaseExact(z, η, 1/σ²) with
// eta2 = η·η, to the bit. It runs the assembly form where the processor has AVX (amd64 without
// the purego tag) and usePhaseAVX is set, smoothPhaseBlockGo otherwise: the same operations in
// the same order, each rounded once (no fused multiply-add), so the same bits
// (TestSmoothPhaseBlock). Both are direct calls, so that b stays on the caller's stack.
func smoothPhaseBlock(b *phaseBlock, n int, eta2 float64) {
	if hasPhaseAVX && usePhaseAVX {
		smoothPhaseAVX(b, min((n+3)&^3, phaseBlockLen), eta2)
		return
	}
	smoothPhaseBlockGo(b, n, eta2)
}

// usePhaseAVX selects the assembly form of smoothPhaseBlock where there is one; tests clear it
// to run the Go form of the same build.
var usePhaseAVX = true

// smoothPhaseBlockGo is smoothPhaseBlock in Go. The conversions float64(·) round each product
// on its own: they keep a compiler for processors with fused multiply-add from fusing it with
// the next addition, which would change the bits.
func smoothPhaseBlockGo(b *phaseBlock, n int, eta2 float64) {
	n = min((n+3)&^3, phaseBlockLen)
	re, im, is2s := b.re[:n], b.im[:n], b.is2[:n]
	exact, v, gre, gim := b.exact[:n], b.v[:n], b.gre[:n], b.gim[:n]
	for j, x := range re {
		y, is2 := im[j], is2s[j]
		a2 := float64(x*x) + float64(y*y)
		a := math.Sqrt(a2)
		iq := 1 / math.Sqrt(a2+eta2)
		d := a - x
		ux, uy, ex := 0.0, 0.0, 0.0
		if a > 0 {
			ia := 1 / a
			ux, uy = x*ia, y*ia
			ex = 2 * (1 - ux) * is2
		}
		c := 2 * is2 * iq
		c3 := c * d * iq * iq
		exact[j] = ex
		v[j] = d * c
		gre[j] = float64(c*(ux-1)) - float64(c3*x)
		gim[j] = float64(c*uy) - float64(c3*y)
	}
}
