//go:build !purego

package nufft

// hasAsm reports whether the gridding loops have an assembly form on
// this build: amd64 without the purego tag. Build with -tags purego to
// run the portable Go loops instead (the tests run both).
const hasAsm = true

// cpuHasAVX reports whether the processor and the operating system
// support AVX (fft_amd64.s).
func cpuHasAVX() bool

// useAsm selects the assembly loops; tests clear it to run the portable
// Go loops of the same build.
var useAsm = true

// useAVX selects the AVX form of the gridding loops, which gives the
// same bits as the SSE2 form (TestGriddingAVX) in fewer instructions.
// Tests switch it.
var useAVX = cpuHasAVX()

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

// spreadAsm spreads the sorted points [lo, hi) that do not wrap in x
// into band (first row ylo) with the SSE2 loops and reports whether it
// did; the caller then spreads the points at the grid edge.
func (p *plan) spreadAsm(band []complex128, ylo, lo, hi int) bool {
	w := p.w
	if !useAsm || w < minAsm || w > maxAsm || lo >= hi {
		return false
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
	return true
}

// interpEdge evaluates sorted point i, whose taps wrap around the grid
// in x, with the assembly loop on a copy of its w×w cells in scr.
func (p *plan) interpEdge(scr []complex128, i int) {
	w, fx, fy := p.w, p.fx, p.fy
	t := scr[:w*w]
	x0, r := int(p.x0[i]), int(p.y0[i])
	for dy := range w {
		row := p.grid[r*fx : r*fx+fx]
		for d := range w {
			c := x0 + d
			if c >= fx {
				c -= fx
			}
			t[dy*w+d] = row[c]
		}
		if r++; r == fy {
			r = 0
		}
	}
	f32, f64 := &interpSSE2f32, &interpSSE2f64
	if useAVX {
		f32, f64 = &interpAVXf32, &interpAVXf64
	}
	if p.wts32 != nil {
		f32[w](&t[0], w, w, &edgeOrigin, &edgeOrigin, &p.wts32[2*w*i], &p.sorted[i], 1)
	} else {
		f64[w](&t[0], w, w, &edgeOrigin, &edgeOrigin, &p.wts[2*w*i], &p.sorted[i], 1)
	}
}

// spreadEdge spreads sorted point k, whose taps wrap around the grid in
// x, with the assembly loop into w×w cells of scr, then adds them to the
// band.
func (p *plan) spreadEdge(scr, band []complex128, ylo, k int) {
	w, fx := p.w, p.fx
	t := scr[:w*w]
	clear(t)
	f32, f64 := &spreadSSE2f32, &spreadSSE2f64
	if useAVX {
		f32, f64 = &spreadAVXf32, &spreadAVXf64
	}
	if p.wts32 != nil {
		f32[w](&t[0], w, 0, &edgeOrigin, &edgeOrigin, &p.wts32[2*w*k], &p.sorted[k], 1)
	} else {
		f64[w](&t[0], w, 0, &edgeOrigin, &edgeOrigin, &p.wts[2*w*k], &p.sorted[k], 1)
	}
	x0, y0 := int(p.x0[k]), int(p.y0[k])-ylo
	for dy := range w {
		row := band[(y0+dy)*fx : (y0+dy)*fx+fx]
		for d := range w {
			c := x0 + d
			if c >= fx {
				c -= fx
			}
			row[c] += t[dy*w+d]
		}
	}
}

// edgeOrigin is the offset 0 of the one point of interpEdge and
// spreadEdge; a variable because the loops take offsets by pointer, and
// a package one because a local would escape through the indirect call.
// It is never written.
var edgeOrigin int32
