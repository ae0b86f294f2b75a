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
	binRows   = 8 // fine-grid rows per bin when sorting points
	pairBlock = 8 // image column pairs per batched y transform, one shard each
	rowShard  = 8 // fine rows per shard of the x transforms
	serialOps = 4e6

	// Shard size of the interpolation (any size gives the same bits;
	// this keeps a shard well above the cost of taking it), and the
	// bounds on the number of spreading shards, each of which holds a
	// band of the grid: at most maxSpread, and at least minSpread points
	// each (common practice, no source).
	interpShard = 4096 // points per interpolation shard
	maxSpread   = 8
	minSpread   = 1024

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
	ext    extJob // the Job of Parallel
	nx, ny int    // image size
	fx, fy int    // upsampled grid size, powers of two
	m      int    // number of points
	w      int    // kernel width in fine cells
	kern   kernel
	corrX  []float64 // 1/φ̂ for each image column, ix = 0..nx−1
	corrY  []float64 // 1/φ̂ for each image row

	// Per point, in sorted order: original index, grid offsets of the
	// first kernel tap along x and y (in [0, fx) and [0, fy)), and the w
	// x weights followed by the w y weights.
	perm   []int32
	x0, y0 []int32
	// flip[i] is 1 where sorted point i is stored mirrored, at (−u, −v),
	// which puts every point at fine y ≤ 0, so that its kernel covers
	// only the fine rows fy/2 − w/2 … fy − 1 and 0 … w/2 (mirRows): the
	// value at (u, v) of the transform of a real image is conj of the
	// value at (−u, −v), so Forward conjugates the mirrored points'
	// values and Adjoint spreads the conjugates of theirs. The x
	// transforms then run on the rows fy/2 … fy (midRows) only, and the
	// grid holds half the rows.
	flip    []uint8
	anyFlip bool
	sorted  []complex128 // values at the points in sorted order
	wts     []float64
	wts32   []float32 // used instead of wts when tol ≥ f32Tol

	fftX, fftY *fftPlan

	// grid is the fx×fy upsampled grid of Forward, row-major (fine row
	// j_y holds fx columns), which it interpolates from; only the rows
	// the points read are written (see flip). It shares its memory with
	// band.
	grid []complex128

	// mid is the hand-over between the y and the x transforms, after
	// the y transforms in Forward and after the x transforms in Adjoint:
	// row t holds fine row fy/2 + t (mod fy) for t = 0 … fy/2, at
	// mid[t·fx/2:], in the layout of fftPlan.transformHalf's input: fine
	// columns 3fx/4 … fx−1, then 0 … fx/4−1. Image column ix, fine
	// column ix − nx/2, is entry fx/4 − nx/2 + ix; the other entries
	// stay zero (fx ≥ 2nx). The rows below fy/2 mirror these: the
	// transform G of a real image has G(jx, −jy) = conj G(−jx, jy).
	mid []complex128

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
	fwdPhases = []int{phFwdCols, phFwdRows, phFwdInterp}
	adjPhases = []int{phAdjSpread, phAdjRows, phAdjCols}
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
	// Points with fine y > 0 are stored mirrored (see plan.flip), at
	// y ∈ [−fy/2, 0).
	fine := func(k int) (x, y float64, flip bool) {
		x, y = reduce(-u[k]*r.pixel)*float64(fx), reduce(v[k]*r.pixel)*float64(fy)
		if y > 0 {
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

	p.fftX = newFFTPlan(fx)
	p.fftY = newFFTPlan(fy)

	// Shards: every phase is divided into a number of shards fixed by
	// the problem, never by the workers, who only take shards in turn
	// (pool.run). A small problem runs serially in one spreading shard
	// (common practice, no source).
	ops := float64(m)*float64(4*w*w) + 5*float64(fx*fy)*math.Log2(float64(fx*fy))
	serial := ops < serialOps
	p.shards[phFwdCols] = chunks((r.nx+1)/2, pairBlock)
	p.shards[phAdjCols] = p.shards[phFwdCols]
	p.shards[phFwdRows] = chunks(fy/2+1, rowShard)
	p.shards[phAdjRows] = p.shards[phFwdRows]
	p.shards[phFwdInterp] = chunks(m, interpShard)
	ns := 1
	if !serial {
		ns = min(maxSpread, max(1, fy/2/(4*(w+binRows))), max(1, m/minSpread))
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
		// The two buffers of the x or of the y transforms, and the
		// padded input of Forward's y transforms (fwdCols), whose rows
		// other than the image rows stay zero.
		p.scratch[i] = make([]complex128, max(2*fx, 2*fy*pairBlock+fy/2*pairBlock))
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
	// share one buffer, the largest of the plan after the weights. The
	// bands end where the buffer ends, so that they lie, as far as
	// their overlaps allow, on the grid rows they fold onto (fy/2 …
	// fy): with workers that keep their halves of the rows from phase to
	// phase (pool), Forward and Adjoint called in turn then find most of
	// their rows in the cache of the same worker.
	buf := make([]complex128, max(fx*fy, off))
	base := len(buf) - off
	p.grid, p.band = buf[:fx*fy], buf[base:base+off]
	p.mid = make([]complex128, (fy/2+1)*fx/2)
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
	clear(p.mid)
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

// Parallel runs shards 0 … n−1 of j on the plan's workers, the calling goroutine among them
// (only there after SetSerial(true)), and returns when all have finished: for work between
// transforms, such as the data terms of a reconstruction, on helpers that are already awake.
// It must not be called during a call.
func (p *Plan) Parallel(n int, j Job) { p.pool.parallel(&p.ext, j, n) }

// SetSerial makes the calls that follow run on the calling goroutine
// alone (on), or on up to Workers() goroutines again (off): for a caller
// that runs several transforms at once, one per processor. It changes
// the speed of a call, not its result. It must not be called during a
// call.
func (p *Plan) SetSerial(on bool) { p.pool.serial = on }

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
	case phFwdCols:
		p.fwdCols(p.scratch[w], s)
	case phFwdRows:
		p.fwdRows(p.scratch[w], s)
	case phFwdInterp:
		lo, hi := chunk(p.m, s, interpShard)
		p.interp(lo, hi)
	case phAdjSpread:
		p.spread(s)
	case phAdjRows:
		p.adjRows(p.scratch[w], s)
	case phAdjCols:
		p.adjCols(p.scratch[w], s)
	}
}

// The image is real, so the 2D transform G of the padded image is
// Hermitian, G(−jx, −jy) = conj(G(jx, jy)), and Adjoint needs only the
// real part of an inverse transform. Both use this (e.g. Press et al.
// 2007, Numerical Recipes, 3rd ed., sect. 12.3): the y transforms take
// two image columns at once as the real and imaginary parts of one
// complex column, and the x transforms run only on the fine rows fy/2 …
// fy (mod fy), where the points are (plan.flip); Forward fills the few
// rows below fy/2 that the points read by symmetry, from the rows they
// mirror, and Adjoint folds the bands' values there onto those rows.
// The y transforms hand over to the x transforms through mid, which
// holds half the rows of half the columns of the grid.

// midRow returns the fine row held in row t of mid.
func (p *plan) midRow(t int) int { return (p.fy/2 + t) & (p.fy - 1) }

// mirRows is the number of rows next to each end of the rows fy/2 … fy
// that the kernels of the points reach beyond them: a point at fine y ∈
// [−fy/2, 0] reads the rows ⌈y − w/2⌉ … ⌈y − w/2⌉ + w − 1, within w/2
// of that range (one more row for safety costs little).
func (p *plan) mirRows() int { return p.w/2 + 1 }

// fwdCols runs the y transforms of Forward for the image column pairs
// [pairBlock·s, pairBlock·(s+1)): it corrects the columns, transforms
// each pair as one complex column, splits the results (Z = F(c1) +
// i F(c2): F(c1)[k] = (Z[k] + conj Z[−k])/2, F(c2)[k] = (Z[k] − conj
// Z[−k])/(2i)) and stores the rows fy/2 … fy of both columns in mid.
func (p *plan) fwdCols(scr []complex128, s int) {
	nx, ny, fx, fy := p.nx, p.ny, p.fx, p.fy
	const b = pairBlock
	x, y := scr[:fy*b], scr[fy*b:2*fy*b]
	// Image row iy is fine row iy − ny/2 (mod fy), row iy − ny/2 + fy/4
	// of pad (fftPlan.transformHalf); the other rows of pad stay zero.
	pad := scr[2*fy*b : 2*fy*b+fy/2*b]
	q0 := s * b
	nq := min(b, (nx+1)/2-q0) // pairs in this block
	corr := p.corrX[:nx]
	full := 2*(q0+b) <= nx // b complete pairs
	for iy := range ny {
		row := pad[(iy-ny/2+fy/4)*b:][:b]
		cy := p.corrY[iy]
		src := p.srcR[iy*nx : iy*nx+nx]
		if full {
			s2, c2 := src[2*q0:2*q0+2*b], corr[2*q0:2*q0+2*b]
			for c := range row {
				row[c] = complex(s2[2*c]*c2[2*c]*cy, s2[2*c+1]*c2[2*c+1]*cy)
			}
			continue
		}
		for c := range row {
			var v1, v2 float64
			if c < nq {
				ix := 2 * (q0 + c)
				v1 = src[ix] * corr[ix] * cy
				if ix+1 < nx {
					v2 = src[ix+1] * corr[ix+1] * cy
				}
			}
			row[c] = complex(v1, v2)
		}
	}
	out := p.fftY.transformHalf(pad, b, x, y, b, false)
	hw, off := fx/2, fx/4-nx/2
	for t := 0; t <= fy/2; t++ {
		r := p.midRow(t)
		a := out[r*b : r*b+b]
		am := out[((fy-r)&(fy-1))*b:][:b]
		dst := p.mid[t*hw+off : t*hw+off+nx]
		if full {
			d2 := dst[2*q0 : 2*q0+2*b]
			for c, z := range a {
				zm := am[c]
				br, bi := real(zm), -imag(zm)
				d2[2*c] = complex(0.5*(real(z)+br), 0.5*(imag(z)+bi))
				d2[2*c+1] = complex(0.5*(imag(z)-bi), -0.5*(real(z)-br))
			}
			continue
		}
		for c := range nq {
			ix := 2 * (q0 + c)
			z, zm := a[c], am[c]
			br, bi := real(zm), -imag(zm) // conj Z[−k]
			dst[ix] = complex(0.5*(real(z)+br), 0.5*(imag(z)+bi))
			if ix+1 < nx {
				// (z − conj zm)/(2i) = (Im z − Im conj zm)/2 − i(Re z − Re conj zm)/2
				dst[ix+1] = complex(0.5*(imag(z)-bi), -0.5*(real(z)-br))
			}
		}
	}
}

// fwdRows runs the x transforms of Forward on rows [rowShard·s,
// rowShard·(s+1)) of mid into their fine rows of the grid, and fills
// the rows below fy/2 that the points read (mirRows) and that mirror
// them: G(jx, −jy) = conj G(fx − jx, jy). The rows of different shards
// are disjoint.
func (p *plan) fwdRows(scr []complex128, s int) {
	fx, fy := p.fx, p.fy
	z, buf := scr[:fx], scr[fx:2*fx]
	hw, k := fx/2, p.mirRows()
	lo, hi := chunk(fy/2+1, s, rowShard)
	for t := lo; t < hi; t++ {
		r := p.midRow(t)
		// The transform ends in the grid row, which it also takes as
		// one of its two buffers.
		row := p.grid[r*fx : r*fx+fx]
		if p.fftX.halfEndsInX() {
			p.fftX.transformHalf(p.mid[t*hw:t*hw+hw], 1, row, buf, 1, false)
		} else {
			p.fftX.transformHalf(p.mid[t*hw:t*hw+hw], 1, z, row, 1, false)
		}
		// Row fy − r, if it lies below fy/2 and a point reads it.
		rm := (fy - r) & (fy - 1)
		if rm >= 1 && rm < fy/2 && (rm <= k || rm >= fy/2-k) {
			mir := p.grid[rm*fx : rm*fx+fx]
			mir[0] = complex(real(row[0]), -imag(row[0]))
			conjRev(mir[1:], row[1:]) // column fx − j = conj row[j]
		}
	}
}

// adjRows runs the x transforms of Adjoint on the fine rows of mid
// [rowShard·s, rowShard·(s+1)): each row is folded from the spreading
// bands and made Hermitian, Hs(jx, jy) = H(jx, jy) + conj H(−jx, −jy),
// whose other rows are then the conjugates of these (the rows −jy of H
// are nonzero only within mirRows of the ends of the range); its image
// columns go to mid.
//
// A band row folds onto one fine row, and only the x transform of that
// row reads it, except for the rows 0 and fy/2, which are their own
// mirrors: the others are summed and transformed in place, in the band
// row of their first source, which the next spreading clears.
func (p *plan) adjRows(scr []complex128, s int) {
	nx, fx, fy := p.nx, p.fx, p.fy
	z, buf := scr[:fx], scr[fx:2*fx]
	h, hw, off := nx/2, fx/2, fx/4-nx/2
	lo, hi := chunk(fy/2+1, s, rowShard)
	for t := lo; t < hi; t++ {
		r := p.midRow(t)
		d := z
		if srcs := p.rowSrc[p.rowStart[r]:p.rowStart[r+1]]; len(srcs) > 0 && r != 0 && r != fy/2 {
			d = p.band[int(srcs[0]) : int(srcs[0])+fx]
			for _, o := range srcs[1:] {
				s := p.band[int(o) : int(o)+fx]
				for j := range d {
					d[j] += s[j]
				}
			}
		} else {
			p.bandRow(z, r)
		}
		rm := (fy - r) & (fy - 1)
		for _, o := range p.rowSrc[p.rowStart[rm]:p.rowStart[rm+1]] {
			row := p.band[int(o) : int(o)+fx]
			d[0] += complex(real(row[0]), -imag(row[0]))
			addConjRev(d[1:], row[1:]) // column fx − j
		}
		out := p.fftX.transform(d, buf, 1, true)
		// Image columns ix ≥ nx/2 come from 0, 1, ...; columns ix < nx/2
		// from the top of the row.
		dst := p.mid[t*hw+off : t*hw+off+nx]
		copy(dst[:h], out[fx-h:])
		copy(dst[h:], out[:nx-h])
	}
}

// adjCols runs the y transforms of Adjoint for the image column pairs
// [pairBlock·s, pairBlock·(s+1)) and writes the real part times the
// correction into the image. The columns of the Hermitian Hs after the
// x transforms are Hermitian along y, C(−jy) = conj C(jy), so their
// inverse transforms are real, and two columns C1, C2 are transformed as
// Z = C1 + iC2, whose inverse transform is z = c1 + i c2.
func (p *plan) adjCols(scr []complex128, s int) {
	nx, fx, fy := p.nx, p.fx, p.fy
	const b = pairBlock
	x, y := scr[:fy*b], scr[fy*b:2*fy*b]
	q0 := s * b
	nq := min(b, (nx+1)/2-q0)
	full := 2*(q0+b) <= nx // b complete pairs
	hw, off := fx/2, fx/4-nx/2
	for t := 0; t <= fy/2; t++ {
		src := p.mid[t*hw+off : t*hw+off+nx]
		d := x[p.midRow(t)*b:][:b]
		var e []complex128 // row fy/2 − t, the mirror of row fy/2 + t
		if t >= 1 && t < fy/2 {
			e = x[(fy/2-t)*b:][:b]
		}
		if full {
			s2 := src[2*q0 : 2*q0+2*b]
			for c := range d {
				c1, c2 := s2[2*c], s2[2*c+1]
				d[c] = complex(real(c1)-imag(c2), imag(c1)+real(c2))
			}
			if e != nil {
				e = e[:len(d)]
				for c := range e {
					c1, c2 := s2[2*c], s2[2*c+1]
					e[c] = complex(real(c1)+imag(c2), -imag(c1)+real(c2))
				}
			}
			continue
		}
		for c := range d {
			var c1, c2 complex128
			if c < nq {
				ix := 2 * (q0 + c)
				c1 = src[ix]
				if ix+1 < nx {
					c2 = src[ix+1]
				}
			}
			d[c] = complex(real(c1)-imag(c2), imag(c1)+real(c2))
			if e != nil {
				e[c] = complex(real(c1)+imag(c2), -imag(c1)+real(c2)) // conj c1 + i conj c2
			}
		}
	}
	out := p.fftY.transform(x, y, b, true)
	// The factor 1/2 undoes the doubling in Hs = H + conj H(−·).
	corr := p.corrX[:nx]
	for iy, r := range p.imageRows {
		o := out[int(r)*b : int(r)*b+b]
		cy := 0.5 * p.corrY[iy]
		d := p.dstR[iy*nx : iy*nx+nx]
		if full {
			d2, c2 := d[2*q0:2*q0+2*b], corr[2*q0:2*q0+2*b]
			for c, v := range o {
				d2[2*c] = real(v) * c2[2*c] * cy
				d2[2*c+1] = imag(v) * c2[2*c+1] * cy
			}
			continue
		}
		for c := range nq {
			ix := 2 * (q0 + c)
			d[ix] = real(o[c]) * corr[ix] * cy
			if ix+1 < nx {
				d[ix+1] = imag(o[c]) * corr[ix+1] * cy
			}
		}
	}
}

// bandRow sets d, of length fx, to the sum, in shard order, of the band
// rows folding onto fine row r.
func (p *plan) bandRow(d []complex128, r int) {
	srcs := p.rowSrc[p.rowStart[r]:p.rowStart[r+1]]
	if len(srcs) == 0 {
		clear(d)
		return
	}
	copy(d, p.band[int(srcs[0]):])
	for _, o := range srcs[1:] {
		s := p.band[int(o):][:len(d)]
		for j := range d {
			d[j] += s[j]
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
	clear(band)
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
	total = c*max(len(p.grid), len(p.band)) + perPoint + c*len(p.mid) + f*(len(p.corrX)+len(p.corrY)) +
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
