//go:build !purego

package nufft

// hasAsm reports whether the gridding loops have an assembly form on
// this build: amd64 without the purego tag. Build with -tags purego to
// run the portable Go loops instead (the tests run both).
const hasAsm = true

// cpuHasAVX reports whether the processor and the operating system
// support AVX (fft_amd64.s).
func cpuHasAVX() bool

// cpuHasAVX2 reports whether the processor has AVX2 (fft_amd64.s).
func cpuHasAVX2() bool

// useAsm selects the assembly loops; tests clear it to run the portable
// Go loops of the same build.
var useAsm = true

// useAVX selects the AVX form of the gridding loops, which gives the
// same bits as the SSE2 form (TestGriddingAVX) in fewer instructions.
// Tests switch it.
var useAVX = cpuHasAVX()

// usePairs selects the spreading loops on pairs of cells (AVX2), which
// give the bits of the other forms (TestGriddingAVX). Tests switch it.
var usePairs = useAVX && cpuHasAVX2()

// interpAsm interpolates the sorted points [lo, hi) that do not wrap in
// x with the SSE2 loops and reports whether it did; the caller then
// handles the points at the grid edge.
func (p *plan) interpAsm(lo, hi int) bool {
	w := p.w
	if !useAsm || w < minAsm || w > maxAsm || lo >= hi {
		return false
	}
	f32, f64 := &interpSSE2f32, &interpSSE2f64
	if useAVX {
		f32, f64 = &interpAVXf32, &interpAVXf64
	}
	if p.wts32 != nil {
		f32[w](&p.grid[0], p.fx, p.fy, &p.x0[lo], &p.y0[lo], &p.wts32[2*w*lo], &p.sorted[lo], hi-lo)
	} else {
		f64[w](&p.grid[0], p.fx, p.fy, &p.x0[lo], &p.y0[lo], &p.wts[2*w*lo], &p.sorted[lo], hi-lo)
	}
	return true
}

// hasSpreadAsm reports whether spreadAsm runs for the plan's width.
func (p *plan) hasSpreadAsm() bool {
	return useAsm && p.w >= minAsm && p.w <= maxAsm
}

// spreadGathers reports whether spreadAsm reads the caller's values
// through the permutation itself (the AVX2 loops).
func (p *plan) spreadGathers() bool {
	return p.hasSpreadAsm() && usePairs && p.w >= minPair
}

// spreadAsm spreads the sorted points [lo, hi) that do not wrap in x
// into band (first row ylo) with the assembly loops, skipping the
// others; the caller checks hasSpreadAsm. Where spreadGathers, the
// values are p.srcC[p.perm[i]], conjugated where p.flip[i] is 1, unless
// p.inOrder.
func (p *plan) spreadAsm(band []complex128, ylo, lo, hi int) {
	w := p.w
	if lo >= hi {
		return
	}
	if usePairs && w >= minPair {
		gather := !p.inOrder
		switch {
		case gather && p.wts32 != nil:
			spreadAVX2f32Gather[w](&band[0], p.fx, ylo, &p.x0[lo], &p.y0[lo], &p.wts32[2*w*lo], &p.srcC[0], &p.perm[lo], &p.flip[lo], hi-lo)
		case gather:
			spreadAVX2f64Gather[w](&band[0], p.fx, ylo, &p.x0[lo], &p.y0[lo], &p.wts[2*w*lo], &p.srcC[0], &p.perm[lo], &p.flip[lo], hi-lo)
		case p.wts32 != nil:
			spreadAVX2f32[w](&band[0], p.fx, ylo, &p.x0[lo], &p.y0[lo], &p.wts32[2*w*lo], &p.sorted[lo], hi-lo)
		default:
			spreadAVX2f64[w](&band[0], p.fx, ylo, &p.x0[lo], &p.y0[lo], &p.wts[2*w*lo], &p.sorted[lo], hi-lo)
		}
		return
	}
	f32, f64 := &spreadSSE2f32, &spreadSSE2f64
	if useAVX {
		f32, f64 = &spreadAVXf32, &spreadAVXf64
	}
	if p.wts32 != nil {
		f32[w](&band[0], p.fx, ylo, &p.x0[lo], &p.y0[lo], &p.wts32[2*w*lo], &p.sorted[lo], hi-lo)
	} else {
		f64[w](&band[0], p.fx, ylo, &p.x0[lo], &p.y0[lo], &p.wts[2*w*lo], &p.sorted[lo], hi-lo)
	}
}
