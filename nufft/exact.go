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
// Results do not depend on the number of workers: Forward splits the
// points and Adjoint splits the image rows, and every output is summed in
// the same order in either case. An Exact must not be used by several
// goroutines at once; make one per goroutine.
type Exact struct {
	*exact
}

type exact struct {
	nx, ny  int
	s, t    []float64 // frequencies in cycles per pixel along ix and iy, reduced to [−1/2, 1/2)
	scratch [][]complex128

	pool *pool
	// Arguments of the running phase, set before pool.run.
	fwd      bool
	dstC     []complex128
	srcR     []float64
	dstR     []float64
	srcC     []complex128
	nWorkers int
}

// NewExact makes a direct-sum transform; see Transform for the sums and
// Options for the defaults. It copies u and v.
func NewExact(nx, ny int, pixel float64, u, v []float64, opt Options) (*Exact, error) {
	r, err := resolve("NewExact", nx, ny, pixel, u, v, opt)
	if err != nil {
		return nil, err
	}
	e := &exact{nx: nx, ny: ny, s: make([]float64, r.m), t: make([]float64, r.m)}
	for k := range u {
		// x = −(ix − nx/2)·pixel and y = (iy − ny/2)·pixel (CONVENTIONS.md),
		// so u·x + v·y = s·(ix − nx/2) + t·(iy − ny/2).
		e.s[k] = reduce(-u[k] * pixel)
		e.t[k] = reduce(v[k] * pixel)
	}
	w := r.workers
	// Below about 2e6 multiply-adds one goroutine is faster (common
	// practice, no source).
	if float64(r.m)*float64(nx)*float64(ny) < 2e6 {
		w = 1
	}
	e.pool = newPool(w)
	e.scratch = make([][]complex128, w)
	for i := range e.scratch {
		e.scratch[i] = make([]complex128, nx+ny)
	}
	x := &Exact{e}
	if w > 1 {
		runtime.AddCleanup(x, stopPool, e.pool.ch)
	}
	return x, nil
}

// Len returns the number of points m.
func (e *Exact) Len() int { return len(e.s) }

// Size returns the image size.
func (e *Exact) Size() (nx, ny int) { return e.nx, e.ny }

// Forward sets dst[k] = Σ img[iy·nx+ix] exp(−2πi (u_k x + v_k y)).
// dst must have length m and img length nx·ny; they cannot alias.
func (e *Exact) Forward(dst []complex128, img []float64) {
	mustLen("Exact.Forward", "dst", len(dst), len(e.s))
	mustLen("Exact.Forward", "img", len(img), e.nx*e.ny)
	e.fwd, e.dstC, e.srcR = true, dst, img
	e.pool.run(e.exact, e.pool.n)
	e.dstC, e.srcR = nil, nil
}

// Adjoint sets dst[iy·nx+ix] = Re Σ_k vis[k] exp(+2πi (u_k x + v_k y)).
// dst must have length nx·ny and vis length m.
func (e *Exact) Adjoint(dst []float64, vis []complex128) {
	mustLen("Exact.Adjoint", "dst", len(dst), e.nx*e.ny)
	mustLen("Exact.Adjoint", "vis", len(vis), len(e.s))
	e.fwd, e.dstR, e.srcC = false, dst, vis
	e.pool.run(e.exact, e.pool.n)
	e.dstR, e.srcC = nil, nil
}

func (e *exact) do(i int) {
	n := e.pool.n
	if e.fwd {
		lo, hi := span(len(e.s), i, n)
		e.forward(e.scratch[i], lo, hi)
	} else {
		lo, hi := span(e.ny, i, n)
		e.adjoint(e.scratch[i], lo, hi)
	}
}

// phaseTable sets tab[i] = exp(−2πi f (i − off)) for i in [0, len(tab)),
// by recurrence restarted from math.Sincos every 32 entries, which keeps
// the rounding error below about 1e-15.
func phaseTable(tab []complex128, f float64, off int) {
	sn, cs := math.Sincos(-2 * math.Pi * f)
	step := complex(cs, sn)
	for i0 := 0; i0 < len(tab); i0 += 32 {
		// Reduce f·(i0−off) modulo 1 before scaling by 2π.
		a := f * float64(i0-off)
		a -= math.Round(a)
		sn, cs := math.Sincos(-2 * math.Pi * a)
		z := complex(cs, sn)
		end := min(i0+32, len(tab))
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
