package recon

import "math"

// phaseBlockLen is the number of triangles whose smoothed closure-phase terms evalSmoothed
// computes in one pass of smoothPhaseBlock; a multiple of 4, the lanes of the AVX form. The
// block's arrays (7 × 512 bytes) stay in the first-level cache.
const phaseBlockLen = 64

// phaseBlock holds the rotated bispectra z of up to phaseBlockLen triangles with their 1/σ²,
// and the terms smoothPhaseBlock computes from them, as separate arrays of real numbers so that
// four triangles are computed at once. The layout is fixed: the assembly form reads it by
// offset (phase_block_amd64.s).
type phaseBlock struct {
	re, im, is2        [phaseBlockLen]float64 // Re z, Im z and 1/σ² of each triangle
	exact, v, gre, gim [phaseBlockLen]float64 // the exact and smoothed terms and ∂v/∂(Re z, Im z)
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
