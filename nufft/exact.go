package nufft

import (
	"math"
	"runtime"
)

// Exact evaluates Forward and Adjoint as direct sums over all pixels and
// points. It costs about nx·ny complex multiply-adds per point and is
// accurate to rounding (relative error about 1e-14 for 256×256 images).
//
// The sum is separable: exp(−2πi(u x + v y)) = E_x(ix)·E_y(iy), and the
// tables E_x, E_y for one point are built by complex recurrence from
// exact values every 32 steps, so each point costs nx+ny table entries
// and nx·ny multiply-adds.
//
// Results do not depend on the number of workers: Forward divides the
// points and Adjoint the image rows into shards fixed by the problem,
// each output is summed in the same order whatever the shards, and the
// tables restart at the same indices (multiples of 32 along each axis),
// so every entry is computed the same way. An Exact must not be used by
// several goroutines at once; make one per goroutine.
type Exact struct {
	*exact
}

type exact struct {
	ext     extJob // the Job of Parallel
	nx, ny  int
	s, t    []float64 // frequencies in cycles per pixel along ix and iy, reduced to [−1/2, 1/2)
	scratch [][]complex128

	pool                 *pool
	fwdShards, adjShards int

	// Arguments of the running phase, set before pool.run.
	fwd  bool
	dstC []complex128
	srcR []float64
	dstR []float64
	srcC []complex128
}

const (
	// exactSerial is the number of multiply-adds below which one
	// goroutine is faster (common practice, no source).
	exactSerial = 2e6
	// exactPoints bounds the number of Forward shards. Adjoint takes
	// shards of exactRows image rows, a multiple of tableRun so that
	// they align with the table restarts; each shard builds the x table
	// of every point again, which costs about as much as two rows.
	exactPoints = 64
	tableRun    = 32
	exactRows   = 2 * tableRun
)

// NewExact makes a direct-sum transform; see Transform for the sums and
// Options for the defaults. It copies u and v.
func NewExact(nx, ny int, pixel float64, u, v []float64, opt Options) (*Exact, error) {
	r, err := resolve("NewExact", nx, ny, pixel, u, v, opt)
	if err != nil {
		return nil, err
	}
	x := &Exact{newExact(r, u, v)}
	if x.pool.n > 1 {
		runtime.AddCleanup(x, stopPool, x.pool.ch)
	}
	return x, nil
}

func newExact(r resolved, u, v []float64) *exact {
	nx, ny := r.nx, r.ny
	e := &exact{nx: nx, ny: ny, s: make([]float64, r.m), t: make([]float64, r.m)}
	for k := range u {
		// x = −(ix − nx/2)·pixel and y = (iy − ny/2)·pixel (CONVENTIONS.md),
		// so u·x + v·y = s·(ix − nx/2) + t·(iy − ny/2).
		e.s[k] = reduce(-u[k] * r.pixel)
		e.t[k] = reduce(v[k] * r.pixel)
	}
	w := r.workers
	e.fwdShards, e.adjShards = 1, 1
	if float64(r.m)*float64(nx)*float64(ny) < exactSerial {
		w = 1
	} else {
		e.fwdShards = min(r.m, exactPoints)
		e.adjShards = chunks(ny, exactRows)
		w = min(w, max(e.fwdShards, e.adjShards))
	}
	e.pool = newPool(w)
	e.scratch = make([][]complex128, w)
	for i := range e.scratch {
		e.scratch[i] = make([]complex128, nx+ny)
	}
	return e
}

// Len returns the number of points m.
func (e *Exact) Len() int { return len(e.s) }

// Size returns the image size.
func (e *Exact) Size() (nx, ny int) { return e.nx, e.ny }

// Parallel is Plan.Parallel.
func (e *Exact) Parallel(n int, j Job) { e.pool.parallel(&e.ext, j, n) }

// SetSerial is Plan.SetSerial.
func (e *Exact) SetSerial(on bool) { e.pool.serial = on }

// Forward sets dst[k] = Σ img[iy·nx+ix] exp(−2πi (u_k x + v_k y)).
// dst must have length m and img length nx·ny; they cannot alias.
func (e *Exact) Forward(dst []complex128, img []float64) {
	mustLen("Exact.Forward", "dst", len(dst), len(e.s))
	mustLen("Exact.Forward", "img", len(img), e.nx*e.ny)
	e.fwd, e.dstC, e.srcR = true, dst, img
	e.pool.run(e.exact, e.fwdShards)
	e.dstC, e.srcR = nil, nil
}

// Adjoint sets dst[iy·nx+ix] = Re Σ_k vis[k] exp(+2πi (u_k x + v_k y)).
// dst must have length nx·ny and vis length m.
func (e *Exact) Adjoint(dst []float64, vis []complex128) {
	mustLen("Exact.Adjoint", "dst", len(dst), e.nx*e.ny)
	mustLen("Exact.Adjoint", "vis", len(vis), len(e.s))
	e.fwd, e.dstR, e.srcC = false, dst, vis
	e.pool.run(e.exact, e.adjShards)
	e.dstR, e.srcC = nil, nil
}

func (e *exact) do(w, s int) {
	if e.fwd {
		lo, hi := span(len(e.s), s, e.fwdShards)
		e.forward(e.scratch[w], lo, hi)
		return
	}
	lo, hi := 0, e.ny
	if e.adjShards > 1 {
		lo, hi = chunk(e.ny, s, exactRows)
	}
	e.adjoint(e.scratch[w], lo, hi)
}

// phaseTable sets tab[i] = exp(−2πi f (i − off)) for i in [0, len(tab)),
// by recurrence restarted from math.Sincos every tableRun entries from
// tab[0], which keeps the rounding error below about 1e-15.
func phaseTable(tab []complex128, f float64, off int) {
	sn, cs := math.Sincos(-2 * math.Pi * f)
	step := complex(cs, sn)
	for i0 := 0; i0 < len(tab); i0 += tableRun {
		// Reduce f·(i0−off) modulo 1 before scaling by 2π.
		a := f * float64(i0-off)
		a -= math.Round(a)
		sn, cs := math.Sincos(-2 * math.Pi * a)
		z := complex(cs, sn)
		end := min(i0+tableRun, len(tab))
		for j := i0; j < end; j++ {
			tab[j] = z
			z *= step
		}
	}
}

func (e *exact) forward(tab []complex128, lo, hi int) {
	nx, ny := e.nx, e.ny
	ex, ey := tab[:nx], tab[nx:nx+ny]
	img := e.srcR
	for k := lo; k < hi; k++ {
		phaseTable(ex, e.s[k], nx/2)
		phaseTable(ey, e.t[k], ny/2)
		var sr, si float64
		for iy := range ny {
			row := img[iy*nx : iy*nx+nx]
			var rr, ri float64
			for ix, p := range row {
				c := ex[ix]
				rr += p * real(c)
				ri += p * imag(c)
			}
			c := ey[iy]
			sr += rr*real(c) - ri*imag(c)
			si += rr*imag(c) + ri*real(c)
		}
		e.dstC[k] = complex(sr, si)
	}
}

// adjoint sets the image rows [lo, hi); lo must be a multiple of
// tableRun, so that the rows' table entries are those of a whole-image
// table.
func (e *exact) adjoint(tab []complex128, lo, hi int) {
	nx, ny := e.nx, e.ny
	ex, ey := tab[:nx], tab[nx:nx+ny]
	dst := e.dstR[lo*nx : hi*nx]
	clear(dst)
	for k, vk := range e.srcC {
		phaseTable(ex, e.s[k], nx/2)
		phaseTable(ey[:hi-lo], e.t[k], ny/2-lo)
		for iy := lo; iy < hi; iy++ {
			// c = vis·conj(E_y); the pixel gets Re(c·conj(E_x)).
			y := ey[iy-lo]
			cr := real(vk)*real(y) + imag(vk)*imag(y)
			ci := imag(vk)*real(y) - real(vk)*imag(y)
			row := dst[(iy-lo)*nx : (iy-lo)*nx+nx]
			for ix := range row {
				c := ex[ix]
				row[ix] += cr*real(c) + ci*imag(c)
			}
		}
	}
}
