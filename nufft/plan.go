package nufft

import (
	"math"
	"runtime"
)

// Plan is the fast transform: a non-uniform FFT with an upsampled grid
// and a Kaiser–Bessel gridding kernel (see the package documentation).
// Everything that depends only on the points — the kernel weights of
// every point along each axis, the grid offsets, the order of the points
// sorted into bins, the division of the work into shards — is computed
// by NewPlan, so a call costs one pass over the points and one 2D FFT.
//
// A Plan must not be used by several goroutines at once: it holds the
// grid and scratch buffers. Make one Plan per goroutine. With
// Options.Workers > 1 each call runs on several goroutines itself; its
// result does not depend on scheduling nor on the number of workers.
type Plan struct {
	*plan
}

const (
	binRows   = 8  // fine-grid rows per bin when sorting points
	colBlock  = 16 // columns per batched column FFT, one shard each
	serialOps = 4e6

	// Shard sizes of the phases without reduction (any size gives the
	// same bits; these keep a shard well above the cost of taking it),
	// and the bounds on the number of spreading shards, each of which
	// holds a band of the grid: at most maxSpread, and at least
	// minSpread points each (common practice, no source).
	rowPairShard = 8    // image row pairs per shard of the x transforms
	interpShard  = 4096 // points per interpolation shard
	maxSpread    = 8
	minSpread    = 1024

	// f32Tol is the loosest tolerance at which the kernel weights are
	// stored as float32: their rounding (relative 6e-8) then adds at
	// most a few percent to the error, and halves the memory and
	// bandwidth of the per-point data.
	f32Tol = 1e-6
)

//go:generate go run gen_kernels.go
//go:generate go run gen_horner.go
//go:generate go run gen_asm.go

type plan struct {
	nx, ny int // image size
	fx, fy int // upsampled grid size, powers of two
	hc     int // columns 0 … hc−1 take the y transforms: fx/2 < hc ≤ fx
	m      int // number of points
	w      int // kernel width in fine cells
	kern   kernel
	corrX  []float64 // 1/φ̂ for each image column, ix = 0..nx−1
	corrY  []float64 // 1/φ̂ for each image row

	// Per point, in sorted order: original index, grid offsets of the
	// first kernel tap along x and y (in [0, fx) and [0, fy)), and the w
	// x weights followed by the w y weights.
	perm   []int32
	x0, y0 []int32
	// flip[i] is 1 where sorted point i is stored mirrored, at (−u, −v),
	// which puts every point in the columns jx ≤ fx/2 + w/2 and those
	// that wrap below 0: the value at (u, v) of the transform of a real
	// image is conj of the value at (−u, −v), so Forward conjugates the
	// mirrored points' values and Adjoint spreads the conjugates of
	// theirs. Forward then needs only the columns 0 … hc−1 and the w
	// columns below fx, half the grid.
	flip    []uint8
	anyFlip bool
	sorted  []complex128 // values at the points in sorted order
	wts     []float64
	wts32   []float32 // used instead of wts when tol ≥ f32Tol

	fftX, fftY *fftPlan

	// grid is the fx×fy upsampled grid of Forward, row-major (fine row
	// j_y holds fx columns), which it interpolates from. It shares its
	// memory with band.
	grid []complex128

	// half holds the columns 0 … hc−1 of the image rows, image row iy
	// at half[iy·hc:]: the hand-over between the row and the column
	// transforms, after the x transforms in Forward and after the y
	// transforms in Adjoint. It is part of halfPad, which has fy/2 rows:
	// fine rows 3fy/4 … fy−1 then 0 … fy/4−1, which hold all image rows
	// (fy ≥ 2ny), the others staying zero. Forward's column transforms
	// read their input from there (fftPlan.transformHalf).
	half, halfPad []complex128

	// Adjoint spreading: shard s spreads its points into band rows
	// [bandLo[s], bandLo[s]+bandRows[s]) of the unwrapped y range,
	// stored at band[bandOff[s]:]. rowSrc[rowStart[r]:rowStart[r+1]]
	// lists the offsets in band of the rows that fold onto fine row r,
	// in shard order, which fixes the order of the reduction.
	band      []complex128
	bandLo    []int
	bandRows  []int
	bandOff   []int
	rowStart  []int32
	rowSrc    []int32
	ptLo      []int   // shard s spreads sorted points [ptLo[s], ptLo[s+1])
	edge      []int32 // the points of shard s with x0 + w > fx are edge[edgeLo[s]:edgeLo[s+1]]
	edgeLo    []int
	scratch   [][]complex128 // per worker
	workers   int
	shards    [nPhases]int // number of shards of each phase
	pool      *pool
	imageRows []int32 // fine row of each image row iy

	// inOrder is set during ForwardSorted and AdjointSorted, whose
	// caller's slice takes the place of sorted.
	inOrder bool

	// The running phases, their numbers of shards, and their arguments.
	phases []int
	counts [nPhases]int
	dstC   []complex128
	srcR   []float64
	dstR   []float64
	srcC   []complex128
}

const (
	phFwdRows = iota
	phFwdCols
	phFwdInterp
	phAdjSpread
	phAdjCols
	phAdjRows
	nPhases
)

// The phases of a call, in order, and of one phase alone.
var (
	fwdPhases = []int{phFwdRows, phFwdCols, phFwdInterp}
	adjPhases = []int{phAdjSpread, phAdjCols, phAdjRows}
	onePhase  = func() (a [nPhases]int) {
		for i := range a {
			a[i] = i
		}
		return a
	}()
)

// NewPlan makes a fast transform for an nx×ny image with the given pixel
// size (radians) and points (u, v) in cycles per radian; see Transform
// for the sums and Options for the tolerance and the workers. The plan
// keeps no reference to u and v.
func NewPlan(nx, ny int, pixel float64, u, v []float64, opt Options) (*Plan, error) {
	r, err := resolve("NewPlan", nx, ny, pixel, u, v, opt)
	if err != nil {
		return nil, err
	}
	p := newPlan(r, u, v, kaiserBessel, kernelWidth(r.tol))
	x := &Plan{p}
	if p.pool.n > 1 {
		runtime.AddCleanup(x, stopPool, p.pool.ch)
	}
	return x, nil
}

func newPlan(r resolved, u, v []float64, kind kernelKind, w int) *plan {
	p := &plan{nx: r.nx, ny: r.ny, fx: fineSize(r.nx), fy: fineSize(r.ny), m: r.m, w: w}
	p.kern = newKernel(kind, w)
	fx, fy := p.fx, p.fy

	// Correction factors 1/φ̂(a/f) for a = i − n/2.
	p.corrX = make([]float64, r.nx)
	p.corrY = make([]float64, r.ny)
	for _, c := range []struct {
		corr []float64
		n, f int
	}{{p.corrX, r.nx, fx}, {p.corrY, r.ny, fy}} {
		xi := make([]float64, c.n)
		for i := range xi {
			xi[i] = float64(i-c.n/2) / float64(c.f)
		}
		p.kern.ft(c.corr, xi)
		for i := range c.corr {
			c.corr[i] = 1 / c.corr[i]
		}
	}
	p.imageRows = make([]int32, r.ny)
	for iy := range p.imageRows {
		p.imageRows[iy] = int32(mod(iy-r.ny/2, fy))
	}

	// First taps of each point, then a counting sort by (bin row, x0).
	// u·x + v·y = s·(ix − nx/2) + t·(iy − ny/2) with s = −u·pixel and
	// t = v·pixel (CONVENTIONS.md); fine coordinates are f·s and f·t.
	m := r.m
	half := float64(w) / 2
	// Points with fine x < 0 are stored mirrored (see plan.flip), at
	// x ∈ (0, fx/2].
	fine := func(k int) (x, y float64, flip bool) {
		x, y = reduce(-u[k]*r.pixel)*float64(fx), reduce(v[k]*r.pixel)*float64(fy)
		if x < 0 {
			return -x, -y, true
		}
		return x, y, false
	}
	nb := (fy + binRows - 1) / binRows
	// key is the bin of a point with fine coordinates (x, y); fx and fy
	// are powers of two. Both passes compute it, which is cheaper than
	// storing it.
	key := func(x, y float64) int {
		jx := int(math.Ceil(x-half)) & (fx - 1)
		jy := int(math.Ceil(y-half)) & (fy - 1)
		return jy/binRows*fx + jx
	}
	count := make([]int32, nb*fx+1)
	for k := range m {
		x, y, _ := fine(k)
		count[key(x, y)+1]++
	}
	for i := 1; i < len(count); i++ {
		count[i] += count[i-1]
	}
	// The scatter of the sort also puts the coordinates in the plan's
	// order, so that the weights are computed in sequential passes:
	// scattered stores overlap, where gathered loads would each wait.
	p.perm = make([]int32, m)
	p.flip = make([]uint8, m)
	sx := make([]float64, m)
	sy := make([]float64, m)
	for k := range m {
		x, y, flip := fine(k)
		c := key(x, y)
		i := interleaved(int(count[c]), m)
		count[c]++
		p.perm[i] = int32(k)
		sx[i], sy[i] = x, y
		if flip {
			p.flip[i] = 1
			p.anyFlip = true
		}
	}
	count = nil
	p.sorted = make([]complex128, m)
	p.x0 = make([]int32, m)
	p.y0 = make([]int32, m)
	if r.tol >= f32Tol {
		p.wts32 = make([]float32, 2*w*m)
	} else {
		p.wts = make([]float64, 2*w*m)
	}

	p.hc = min(fx, (fx/2/colBlock+1)*colBlock)
	p.fftX = newFFTPlan(fx)
	p.fftY = newFFTPlan(fy)

	// Shards: every phase is divided into a number of shards fixed by
	// the problem, never by the workers, who only take shards in turn
	// (pool.run). A small problem runs serially in one spreading shard
	// (common practice, no source).
	ops := float64(m)*float64(4*w*w) + 5*float64(fx*fy)*math.Log2(float64(fx*fy))
	serial := ops < serialOps
	pairs := (r.ny + 1) / 2
	p.shards[phFwdRows] = chunks(pairs, rowPairShard)
	p.shards[phAdjRows] = p.shards[phFwdRows]
	p.shards[phFwdCols] = p.hc / colBlock
	p.shards[phAdjCols] = p.shards[phFwdCols]
	p.shards[phFwdInterp] = chunks(m, interpShard)
	ns := 1
	if !serial {
		ns = min(maxSpread, max(1, fy/(4*(w+binRows))), max(1, m/minSpread))
	}
	p.shards[phAdjSpread] = ns
	nw := 1
	if !serial {
		nw = min(r.workers, max(p.shards[phFwdRows], p.shards[phFwdCols], p.shards[phFwdInterp]))
	}
	p.workers = nw
	p.pool = newPool(nw)
	p.scratch = make([][]complex128, nw)
	for i := range p.scratch {
		p.scratch[i] = make([]complex128, 2*max(fx, fy*colBlock))
	}

	// Weights, in sorted order, in shards of points. Kaiser–Bessel
	// weights come from the fitted polynomials, the other kernel (kept
	// for TestKernelAccuracy) from its formula.
	wj := &weightJob{p: p, sx: sx, sy: sy}
	if kind == kaiserBessel {
		wj.poly = newKernelPoly(&p.kern)
	}
	p.pool.run(wj, chunks(m, interpShard))

	// Spreading bands: shard s spreads sorted points [ptLo[s], ptLo[s+1])
	// into its own band, which spans the fine rows its points touch.
	// Because the points are sorted by bin row, the bands overlap by at
	// most binRows − 1 + w rows, so they add at most ns·(binRows + w)
	// rows to the fy rows of the grid.
	p.ptLo = make([]int, ns+1)
	for i := range ns + 1 {
		p.ptLo[i], _ = span(m, i, ns)
	}
	// The points at the grid edge in x, which the spreading takes after
	// the others, listed per shard.
	p.edgeLo = make([]int, ns+1)
	for i := range ns {
		p.edgeLo[i] = len(p.edge)
		for k := p.ptLo[i]; k < p.ptLo[i+1]; k++ {
			if int(p.x0[k])+w > fx {
				p.edge = append(p.edge, int32(k))
			}
		}
	}
	p.edgeLo[ns] = len(p.edge)
	p.bandLo = make([]int, ns)
	p.bandRows = make([]int, ns)
	p.bandOff = make([]int, ns)
	off := 0
	for i := range ns {
		lo, hi := p.ptLo[i], p.ptLo[i+1]
		if lo == hi {
			p.bandOff[i] = off
			continue
		}
		ymin, ymax := int(p.y0[lo]), int(p.y0[lo])
		for _, y := range p.y0[lo:hi] {
			ymin = min(ymin, int(y))
			ymax = max(ymax, int(y))
		}
		p.bandLo[i] = ymin
		p.bandRows[i] = ymax + w - ymin
		p.bandOff[i] = off
		off += p.bandRows[i] * fx
	}
	// Forward uses the grid and Adjoint the bands, never both in one
	// call, and each writes what it reads before reading it: the two
	// share one buffer, the largest of the plan after the weights.
	buf := make([]complex128, max(fx*fy, off))
	p.grid, p.band = buf[:fx*fy], buf[:off]
	p.halfPad = make([]complex128, fy/2*p.hc)
	// Image row iy is fine row iy − ny/2 (mod fy), which is row
	// iy − ny/2 + fy/4 of halfPad.
	p.half = p.halfPad[(fy/4-r.ny/2)*p.hc:][:r.ny*p.hc]
	p.rowStart = make([]int32, fy+1)
	var src []int32
	for r := range fy {
		p.rowStart[r] = int32(len(src))
		for i := range ns {
			for _, rr := range []int{r - p.bandLo[i], r - p.bandLo[i] + fy, r - p.bandLo[i] + 2*fy} {
				if rr >= 0 && rr < p.bandRows[i] {
					src = append(src, int32(p.bandOff[i]+rr*fx))
				}
			}
		}
	}
	p.rowStart[fy] = int32(len(src))
	p.rowSrc = src

	// Write the buffers of the calls once, so that the first call does
	// not pay for mapping fresh pages.
	clear(buf)
	clear(p.halfPad)
	clear(p.sorted)
	for _, s := range p.scratch {
		clear(s)
	}
	return p
}

func mod(a, n int) int {
	a %= n
	if a < 0 {
		a += n
	}
	return a
}

// Len returns the number of points m.
func (p *Plan) Len() int { return p.m }

// Size returns the image size.
func (p *Plan) Size() (nx, ny int) { return p.nx, p.ny }

// KernelWidth returns the width of the gridding kernel in cells of the
// upsampled grid, which sets the cost per point (about 2w² multiply-adds).
func (p *Plan) KernelWidth() int { return p.w }

// Workers returns the largest number of goroutines a call uses. It
// changes the speed of a call, not its result.
func (p *Plan) Workers() int { return p.workers }

// Forward sets dst[k] = Σ img[iy·nx+ix] exp(−2πi (u_k x + v_k y)) to the
// plan's tolerance. dst must have length m and img length nx·ny; they
// cannot alias.
func (p *Plan) Forward(dst []complex128, img []float64) {
	mustLen("Plan.Forward", "dst", len(dst), p.m)
	mustLen("Plan.Forward", "img", len(img), p.nx*p.ny)
	p.dstC, p.srcR = dst, img
	p.runPhases(fwdPhases)
	p.dstC, p.srcR = nil, nil
}

// Adjoint sets dst[iy·nx+ix] = Re Σ_k vis[k] exp(+2πi (u_k x + v_k y))
// to the plan's tolerance; it is the exact adjoint of Forward. dst must
// have length nx·ny and vis length m.
func (p *Plan) Adjoint(dst []float64, vis []complex128) {
	mustLen("Plan.Adjoint", "dst", len(dst), p.nx*p.ny)
	mustLen("Plan.Adjoint", "vis", len(vis), p.m)
	p.dstR, p.srcC = dst, vis
	p.runPhases(adjPhases)
	p.dstR, p.srcC = nil, nil
}

// Order sets dst[i] to the index, among the u and v given to NewPlan,
// of the i-th point in the plan's order, the order of ForwardSorted and
// AdjointSorted. dst must have length m.
func (p *Plan) Order(dst []int) {
	mustLen("Plan.Order", "dst", len(dst), p.m)
	for i, k := range p.perm {
		dst[i] = int(k)
	}
}

// ForwardSorted is Forward with dst in the plan's order of the points
// (Order): dst[i] is the value Forward gives at point Order()[i], to the
// bit. It saves the scattered stores of Forward, which are about a fifth
// of its time at 10⁶ points.
func (p *Plan) ForwardSorted(dst []complex128, img []float64) {
	mustLen("Plan.ForwardSorted", "dst", len(dst), p.m)
	mustLen("Plan.ForwardSorted", "img", len(img), p.nx*p.ny)
	own := p.sorted
	p.sorted, p.inOrder = dst, true
	p.dstC, p.srcR = dst, img
	p.runPhases(fwdPhases)
	p.dstC, p.srcR = nil, nil
	p.sorted, p.inOrder = own, false
}

// AdjointSorted is Adjoint with vis in the plan's order of the points
// (Order): it gives the bits of Adjoint of the visibilities vis[i] at
// points Order()[i], without their gathered loads. vis is not modified.
func (p *Plan) AdjointSorted(dst []float64, vis []complex128) {
	mustLen("Plan.AdjointSorted", "dst", len(dst), p.nx*p.ny)
	mustLen("Plan.AdjointSorted", "vis", len(vis), p.m)
	own := p.sorted
	if !p.anyFlip {
		p.sorted = vis
	}
	p.inOrder = true
	p.dstR, p.srcC = dst, vis
	p.runPhases(adjPhases)
	p.dstR, p.srcC = nil, nil
	p.sorted, p.inOrder = own, false
}

// runPhases runs the phases in order, with one wake-up of the workers
// for all of them (pool.runSteps).
func (p *plan) runPhases(phs []int) {
	p.phases = phs
	for i, ph := range phs {
		p.counts[i] = p.shards[ph]
	}
	p.pool.runSteps(p, p.counts[:len(phs)])
}

// runPhase runs one phase alone.
func (p *plan) runPhase(ph int) {
	p.runPhases(onePhase[ph : ph+1])
}

// do runs shard g of the running phases: shard s of the phase whose
// shards it falls in.
func (p *plan) do(w, g int) {
	ph, s := p.phases[0], g
	for _, ph = range p.phases {
		if s < p.shards[ph] {
			break
		}
		s -= p.shards[ph]
	}
	switch ph {
	case phFwdRows:
		lo, hi := chunk((p.ny+1)/2, s, rowPairShard)
		p.fwdRows(p.scratch[w], lo, hi)
	case phFwdCols:
		p.cols(p.scratch[w], s*colBlock, (s+1)*colBlock, false)
	case phFwdInterp:
		lo, hi := chunk(p.m, s, interpShard)
		p.interp(lo, hi)
	case phAdjSpread:
		p.spread(s)
	case phAdjCols:
		p.cols(p.scratch[w], s*colBlock, (s+1)*colBlock, true)
	case phAdjRows:
		lo, hi := chunk((p.ny+1)/2, s, rowPairShard)
		p.adjRows(p.scratch[w], lo, hi)
	}
}

// The image is real, so the 2D transform G of the padded image is
// Hermitian, G(−jx, −jy) = conj(G(jx, jy)), and Adjoint needs only the
// real part of an inverse transform. Both use this (e.g. Press et al.
// 2007, Numerical Recipes, 3rd ed., sect. 12.3): the x transforms take
// two image rows at once as the real and imaginary parts of one complex
// row, and the y transforms run only on the columns jx < p.hc, which
// cover 0 … fx/2; Forward fills the few other columns the points read
// (plan.flip) by symmetry as it stores the columns they mirror.

// fwdRows transforms corrected image rows along x, two at a time, for
// the row pairs [lo, hi), and stores their columns 0 … hc−1 in half.
func (p *plan) fwdRows(scr []complex128, lo, hi int) {
	nx, fx, hc := p.nx, p.fx, p.hc
	z, buf := scr[:fx], scr[fx:2*fx]
	h := nx / 2
	for pr := lo; pr < hi; pr++ {
		i1, i2 := 2*pr, 2*pr+1
		clear(z[nx-h : fx-h]) // the rest is written below
		c1 := p.corrY[i1]
		s1 := p.srcR[i1*nx : i1*nx+nx]
		var c2 float64
		s2 := s1 // unused when the second row is missing (odd ny)
		if i2 < p.ny {
			c2 = p.corrY[i2]
			s2 = p.srcR[i2*nx : i2*nx+nx]
		}
		// Columns ix ≥ nx/2 go to 0, 1, ...; columns ix < nx/2 wrap to
		// the top of the row.
		corr, s1, s2 := p.corrX[:nx], s1[:nx], s2[:nx]
		for j, zr := 0, z[:nx-h]; j < len(zr); j++ {
			ix := j + h
			cx := corr[ix]
			zr[j] = complex(s1[ix]*cx*c1, s2[ix]*cx*c2)
		}
		for ix, zr := 0, z[fx-h:]; ix < len(zr); ix++ {
			cx := corr[ix]
			zr[ix] = complex(s1[ix]*cx*c1, s2[ix]*cx*c2)
		}
		out := p.fftX.transform(z, buf, 1, false)
		// Split Z = F(r1) + i F(r2): F(r1)[k] = (Z[k] + conj Z[−k])/2,
		// F(r2)[k] = (Z[k] − conj Z[−k])/(2i).
		g1 := p.half[i1*hc:][:hc]
		var g2 []complex128
		if i2 < p.ny {
			g2 = p.half[i2*hc:][:hc]
		}
		for k := range g1 {
			a := out[k]
			b := out[(fx-k)&(fx-1)]
			br, bi := real(b), -imag(b) // conj Z[−k]
			g1[k] = complex(0.5*(real(a)+br), 0.5*(imag(a)+bi))
			if g2 != nil {
				// (a − conj b)/(2i) = (Im(a) − Im(conj b))/2 − i(Re(a) − Re(conj b))/2
				g2[k] = complex(0.5*(imag(a)-bi), -0.5*(real(a)-br))
			}
		}
	}
}

// cols transforms columns [c0, c1) along y in blocks of colBlock. In
// Forward only the image rows are nonzero on input, and the first stage
// reads them from halfPad (transformHalf); the output goes to the grid,
// and so do the columns jx ≥ hc that mirror it (fwdMirror). In Adjoint the input is folded from the spreading bands and
// made Hermitian, Hs(j) = H(j) + conj H(−j), and only the image rows of
// the output are stored, in half.
func (p *plan) cols(scr []complex128, c0, c1 int, adjoint bool) {
	fx, fy := p.fx, p.fy
	const b = colBlock
	x, y := scr[:fy*b], scr[fy*b:2*fy*b]
	for c := c0; c < c1; c += b {
		if !adjoint {
			out := p.fftY.transformHalf(p.halfPad[c:], p.hc, x, y, b, false)
			for r := range fy {
				copy(p.grid[r*fx+c:r*fx+c+b], out[r*b:r*b+b])
			}
			p.fwdMirror(out, c)
			continue
		}
		zlo, zhi := p.zeroCols()
		zero := c > 0 && fx-c-b+1 >= zlo && fx-c < zhi
		for r := range fy {
			d := x[r*b : r*b+b]
			p.bandRow(d, r, c)
			// Add conj H(−jx, −r) for jx = c … c+b−1, unless those
			// columns are all in the zero zone.
			if zero {
				continue
			}
			srcs := p.rowSrc[p.rowStart[(fy-r)&(fy-1)]:p.rowStart[(fy-r)&(fy-1)+1]]
			for _, o := range srcs {
				row := p.band[int(o) : int(o)+fx]
				// Column fx − c − j, which is 0 for c = j = 0.
				if c == 0 {
					v := row[0]
					d[0] += complex(real(v), -imag(v))
					addConjRev(d[1:], row[fx-b+1:])
				} else {
					addConjRev(d, row[fx-c-b+1:fx-c+1])
				}
			}
		}
		out := p.fftY.transform(x, y, b, true)
		hc := p.hc
		for iy, r := range p.imageRows {
			copy(p.half[iy*hc+c:iy*hc+c+b], out[int(r)*b:int(r)*b+b])
		}
	}
}

// zeroCols returns the zero zone, the columns [zlo, zhi) that no call
// writes in the grid or in the spreading bands (which share their
// memory and their columns): Forward writes the columns 0 … hc−1 and the
// w columns below fx (fwdMirror), and the points, all at fine x in [0,
// fx/2] (plan.flip), spread into columns below fx/2 + w/2 + 1 and above
// fx − w/2 − 1; hc ≥ fx/2 + colBlock covers that for every width up to
// maxUnrolled = 16. NewPlan clears the zone, and Adjoint neither clears
// nor reads it. The zone is empty (zlo = zhi) when fx − w ≤ hc.
func (p *plan) zeroCols() (zlo, zhi int) {
	return p.hc, max(p.hc, p.fx-p.w)
}

// bandRow sets d to the sum, in shard order, of the band rows folding
// onto fine row r, at columns c … c+len(d)−1.
func (p *plan) bandRow(d []complex128, r, c int) {
	srcs := p.rowSrc[p.rowStart[r]:p.rowStart[r+1]]
	if len(srcs) == 0 {
		clear(d)
		return
	}
	copy(d, p.band[int(srcs[0])+c:])
	for _, o := range srcs[1:] {
		s := p.band[int(o)+c:][:len(d)]
		for j := range d {
			d[j] += s[j]
		}
	}
}

// fwdMirror sets the columns jx ≥ hc of the grid that the points read
// (the w columns below fx, where the kernels of the points near x = 0
// wrap; plan.flip) and that mirror columns c … c+colBlock−1 of the
// column block out, by the Hermitian symmetry G(jx, jy) = conj G(fx−jx,
// −jy): column fx−j for each j in the block with 1 ≤ j ≤ min(w,
// fx−hc). The block is still in cache, so the grid is written once and
// never read back for this; the columns of different blocks are
// disjoint. The columns hc ≤ jx < fx−w are never written nor read.
func (p *plan) fwdMirror(out []complex128, c int) {
	fx, fy := p.fx, p.fy
	const b = colBlock
	lo, hi := max(c, 1), min(c+b, fx-p.hc+1, p.w+1)
	if lo >= hi {
		return
	}
	for r := range fy {
		src := out[((fy-r)&(fy-1))*b:][lo-c : hi-c]
		conjRev(p.grid[r*fx+fx-hi+1:r*fx+fx-lo+1], src) // column fx−j = conj src[j]
	}
}

// adjRows transforms image row pairs [lo, hi) along x and writes the
// real part times the correction into the image. The columns jx > fx/2
// of the Hermitian column output C are conj C(fx−jx); two rows C1, C2
// are transformed as Z = C1 + iC2, whose inverse transform is
// z = c1 + i c2 with c1, c2 real.
func (p *plan) adjRows(scr []complex128, lo, hi int) {
	nx, fx := p.nx, p.fx
	z, buf := scr[:fx], scr[fx:2*fx]
	h := nx / 2
	for pr := lo; pr < hi; pr++ {
		i1, i2 := 2*pr, 2*pr+1
		// Columns 0 … fx/2 of the image rows, which hc covers.
		g1 := p.half[i1*p.hc:][:fx/2+1]
		g2 := g1
		if i2 < p.ny {
			g2 = p.half[i2*p.hc:][:fx/2+1]
		}
		for k := 0; k <= fx/2; k++ {
			a, b := g1[k], g2[k]
			z[k] = complex(real(a)-imag(b), imag(a)+real(b))
		}
		for k := fx/2 + 1; k < fx; k++ {
			a, b := g1[fx-k], g2[fx-k] // conjugated below
			z[k] = complex(real(a)+imag(b), -imag(a)+real(b))
		}
		out := p.fftX.transform(z, buf, 1, true)
		// The factor 1/2 undoes the doubling in Hs = H + conj H(−·).
		// Image columns ix ≥ nx/2 come from 0, 1, ...; columns ix < nx/2
		// from the top of the row.
		corr := p.corrX[:nx]
		lo, hi := out[fx-h:fx], out[:nx-h]
		c1 := 0.5 * p.corrY[i1]
		d1 := p.dstR[i1*nx : i1*nx+nx]
		for ix, v := range lo {
			d1[ix] = real(v) * corr[ix] * c1
		}
		for j, v := range hi {
			d1[h+j] = real(v) * corr[h+j] * c1
		}
		if i2 < p.ny {
			c2 := 0.5 * p.corrY[i2]
			d2 := p.dstR[i2*nx : i2*nx+nx]
			for ix, v := range lo {
				d2[ix] = imag(v) * corr[ix] * c2
			}
			for j, v := range hi {
				d2[h+j] = imag(v) * corr[h+j] * c2
			}
		}
	}
}

// interp evaluates sorted points [lo, hi) from the transformed grid.
// The values go to p.sorted in sorted order and are then scattered to
// dst in a separate tight loop: the scattered stores are independent and
// overlap their cache misses, which matters once dst outgrows the cache.
func (p *plan) interp(lo, hi int) {
	if p.interpAsm(lo, hi) {
		// The points at the grid edge, as the Go loops do them.
		for i := lo; i < hi; i++ {
			if int(p.x0[i])+p.w > p.fx {
				p.interpWrap(i)
			}
		}
	} else if !p.interpUnrolled(lo, hi) {
		for i := lo; i < hi; i++ {
			p.interpWrap(i)
		}
	}
	flip := p.flip[lo:hi]
	if p.inOrder {
		s := p.sorted[lo:hi]
		s = s[:len(flip)]
		for i, f := range flip {
			s[i] = conjIf(s[i], f)
		}
		return
	}
	dst, perm := p.dstC, p.perm[lo:hi]
	perm = perm[:len(flip)]
	for i, v := range p.sorted[lo:hi] {
		dst[perm[i]] = conjIf(v, flip[i])
	}
}

// conjIf returns conj(v) if f is 1 and v if f is 0, without a branch
// (the mirrored points are in no predictable order): the sign bit of
// the imaginary part is flipped by f.
func conjIf(v complex128, f uint8) complex128 {
	return complex(real(v), math.Float64frombits(math.Float64bits(imag(v))^uint64(f)<<63))
}

// interpWrap evaluates sorted point i with general width and wrap-around
// in x; the unrolled loops use it for the points at the grid edge.
func (p *plan) interpWrap(i int) {
	w, fx, fy := p.w, p.fx, p.fy
	var buf [2 * maxUnrolled]float64
	wt := p.weights(buf[:], i)
	wx, wy := wt[:w], wt[w:]
	x0, y0 := int(p.x0[i]), int(p.y0[i])
	var ar, ai float64
	for dy, wv := range wy {
		r := y0 + dy
		if r >= fy {
			r -= fy
		}
		row := p.grid[r*fx : r*fx+fx]
		var sr, si float64
		for d, wxv := range wx {
			c := x0 + d
			if c >= fx {
				c -= fx
			}
			sr += real(row[c]) * wxv
			si += imag(row[c]) * wxv
		}
		ar += sr * wv
		ai += si * wv
	}
	p.sorted[i] = complex(ar, ai)
}

// spread adds the points of shard i, times their kernel weights, into
// its band: first the points inside the grid in x, then those at its
// edge, each group in the plan's order. The assembly and the Go loops
// keep this order, so every cell sums its terms in the same order.
func (p *plan) spread(i int) {
	band := p.band[p.bandOff[i] : p.bandOff[i]+p.bandRows[i]*p.fx]
	// The columns of the zero zone are zero already.
	zlo, zhi := p.zeroCols()
	for r := 0; r < len(band); r += p.fx {
		row := band[r : r+p.fx]
		clear(row[:zlo])
		clear(row[zhi:])
	}
	ylo, lo, hi := p.bandLo[i], p.ptLo[i], p.ptLo[i+1]
	edge := p.edge[p.edgeLo[i]:p.edgeLo[i+1]]
	if !p.inOrder && p.spreadGathers() {
		// The assembly reads the visibilities through the permutation,
		// and conjugates those of the mirrored points; the points at the
		// edge get theirs here.
		p.spreadAsm(band, ylo, lo, hi)
		for _, k := range edge {
			p.sorted[k] = conjIf(p.srcC[p.perm[k]], p.flip[k])
			p.spreadWrap(band, ylo, int(k))
		}
		return
	}
	// Gather the visibilities into sorted order first, the conjugates
	// for the mirrored points (plan.flip). AdjointSorted's values are in
	// sorted order already, and are taken as they are when no point is
	// mirrored.
	flip, dst := p.flip[lo:hi], p.sorted[lo:hi]
	dst = dst[:len(flip)]
	switch {
	case !p.inOrder:
		src, perm := p.srcC, p.perm[lo:hi]
		perm = perm[:len(flip)]
		for j, f := range flip {
			dst[j] = conjIf(src[perm[j]], f)
		}
	case p.anyFlip:
		src := p.srcC[lo:hi]
		src = src[:len(flip)]
		for j, f := range flip {
			dst[j] = conjIf(src[j], f)
		}
	}
	switch {
	case p.hasSpreadAsm():
		p.spreadAsm(band, ylo, lo, hi)
	case p.spreadUnrolled(band, ylo, lo, hi):
	default:
		for k := lo; k < hi; k++ {
			if int(p.x0[k])+p.w <= p.fx {
				p.spreadWrap(band, ylo, k)
			}
		}
	}
	for _, k := range edge {
		p.spreadWrap(band, ylo, int(k))
	}
}

// spreadWrap spreads sorted point k with general width and wrap-around
// in x.
func (p *plan) spreadWrap(band []complex128, ylo, k int) {
	w, fx := p.w, p.fx
	var buf [2 * maxUnrolled]float64
	wt := p.weights(buf[:], k)
	wx, wy := wt[:w], wt[w:]
	x0, y0 := int(p.x0[k]), int(p.y0[k])-ylo
	vis := p.sorted[k]
	vr, vi := real(vis), imag(vis)
	for dy, wv := range wy {
		cr, ci := vr*wv, vi*wv
		row := band[(y0+dy)*fx : (y0+dy)*fx+fx]
		for d, wxv := range wx {
			c := x0 + d
			if c >= fx {
				c -= fx
			}
			row[c] += complex(cr*wxv, ci*wxv)
		}
	}
}

// weights returns the 2w weights of sorted point i, converted into buf
// when they are stored as float32.
func (p *plan) weights(buf []float64, i int) []float64 {
	w := p.w
	if p.wts32 == nil {
		return p.wts[2*w*i : 2*w*i+2*w]
	}
	buf = buf[:2*w]
	for d, x := range p.wts32[2*w*i : 2*w*i+2*w] {
		buf[d] = float64(x)
	}
	return buf
}

// memBytes returns the bytes held by the plan's slices.
func (p *plan) memBytes() (grid, perPoint, total int) {
	const c, f, i32 = 16, 8, 4
	grid = c * len(p.grid)
	perPoint = len(p.flip) + i32*(len(p.perm)+len(p.x0)+len(p.y0)) + f*len(p.wts) + i32*len(p.wts32) + c*len(p.sorted)
	// grid and band share their memory.
	total = c*max(len(p.grid), len(p.band)) + perPoint + c*len(p.halfPad) + f*(len(p.corrX)+len(p.corrY)) +
		i32*(len(p.rowStart)+len(p.rowSrc)+len(p.imageRows)+len(p.edge))
	for _, s := range p.scratch {
		total += c * len(s)
	}
	for _, f := range []*fftPlan{p.fftX, p.fftY} {
		for _, st := range f.stages {
			total += c * (len(st.fw) + len(st.iw))
		}
	}
	return grid, perPoint, total
}

// weightJob computes the first taps and the kernel weights of the
// sorted points, one shard of interpShard points at a time.
type weightJob struct {
	p      *plan
	sx, sy []float64 // fine coordinates of the points in the plan's order
	poly   kernelPoly
}

func (j *weightJob) do(_, s int) {
	p, w := j.p, j.p.w
	lo, hi := chunk(p.m, s, interpShard)
	half := float64(w) / 2
	var buf [2 * maxUnrolled]float64
	for i := lo; i < hi; i++ {
		sx, sy := j.sx[i], j.sy[i]
		jx := math.Ceil(sx - half)
		jy := math.Ceil(sy - half)
		p.x0[i] = int32(int(jx) & (p.fx - 1))
		p.y0[i] = int32(int(jy) & (p.fy - 1))
		// Offsets of the point from its first taps, a ∈ (w/2 − 1, w/2].
		ax, ay := sx-jx, sy-jy
		wt := buf[:2*w]
		if p.wts != nil {
			wt = p.wts[2*w*i : 2*w*i+2*w]
		}
		if j.poly.c != nil {
			j.poly.eval(wt[:w], 2*ax-float64(w)+1)
			j.poly.eval(wt[w:], 2*ay-float64(w)+1)
		} else {
			for d := range w {
				wt[d] = p.kern.eval(ax - float64(d))
				wt[w+d] = p.kern.eval(ay - float64(d))
			}
		}
		if p.wts32 != nil {
			out := p.wts32[2*w*i : 2*w*i+2*w]
			for d, x := range wt {
				out[d] = float32(x)
			}
		}
	}
}

// interleaveBlock is the number of sorted points whose two halves
// interleave (see interleaved). 64 to 512 gave the same speed, 16 less
// and 1 (no interleaving) 10–13 % more spreading time at 128² and 256².
const interleaveBlock = 128

// interleaved returns the position in the plan's order of the point at
// position i of the sort (by bin row and x0) of m points: within each
// block of interleaveBlock positions the first and second halves
// alternate. Neighbours in the sort touch mostly the same cells, so the
// spreading of a point would wait on the stores of the point before it;
// alternating two runs about half a block apart in x lets the processor
// overlap them. The interpolation reads the same cells in the same
// block either way, at the same speed (measured).
func interleaved(i, m int) int {
	b := interleaveBlock
	lo := i - i%b
	q := (min(b, m-lo) + 1) / 2
	if o := i - lo; o < q {
		return lo + 2*o
	}
	return lo + 2*(i-lo-q) + 1
}
