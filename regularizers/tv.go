package regularizers

import (
	"fmt"
	"math"
)

// DefaultTVEps is the value of TV.Eps used when it is zero (common
// practice, no source: small against the pixel values of an object that
// fills a fraction of the field, large enough to keep the Hessian bounded).
const DefaultTVEps = 0.01

// forward differences of the image at pixel i = iy*nx+ix, with the
// Neumann boundary: the difference across the last column or row is 0.
func diffs(x []float64, nx, ny, ix, iy, i int) (dx, dy float64) {
	if ix+1 < nx {
		dx = x[i+1] - x[i]
	}
	if iy+1 < ny {
		dy = x[i+nx] - x[i]
	}
	return dx, dy
}

// TV is the edge-preserving, differentiable total variation
//
//	TV(x) = sum_p sqrt(dx_p^2 + dy_p^2 + e^2),
//
// with forward differences dx_p = x[ix+1,iy] - x[ix,iy] and dy_p =
// x[ix,iy+1] - x[ix,iy], set to 0 across the last column and row (Neumann
// boundary). Without e this is the total variation of Rudin, Osher &
// Fatemi (1992, Physica D 60, 259); e > 0 makes it differentiable
// and quadratic where |grad x| << e. A flat image gives N*e.
//
// The threshold is e = Eps*Mean, relative to a reference mean pixel value,
// so that Eps does not depend on the flux scale of the image.
//
// TV holds no scratch memory and is safe for concurrent use when its
// fields are not modified.
type TV struct {
	NX, NY int

	// Eps is e relative to Mean. Zero means DefaultTVEps; negative panics.
	Eps float64

	// Mean is the reference mean pixel value. Zero means 1/(NX*NY), the
	// mean of an image of total flux 1.
	Mean float64
}

// E returns the absolute threshold e = Eps*Mean with defaults applied.
func (r *TV) E() float64 {
	eps := r.Eps
	if eps == 0 {
		eps = DefaultTVEps
	}
	if eps < 0 || math.IsNaN(eps) {
		panic(fmt.Sprintf("regularizers: TV: Eps = %g is negative", eps))
	}
	mean := r.Mean
	if mean == 0 {
		mean = 1 / float64(r.NX*r.NY)
	}
	return eps * mean
}

// Eval returns TV(x) and, when grad is non-nil, writes its gradient.
//
// The gradient is built in one pass over the rows: at pixel i the term
// s_i = sqrt(dx² + dy² + e²) gives -(dx+dy)/s_i to pixel i, dx/s_i to its
// right neighbour and dy/s_i to the pixel below. Each gradient element
// receives its three contributions in the order of a pixel loop that adds
// every term into a zeroed gradient (from the pixel above, from the left,
// then its own), so the bits are those of that loop (tvReference in the
// tests); the left neighbour's contribution is carried in a register and
// the one from above is stored as 0 + dy/s_i, the first addition into a
// zeroed element. A term with s_i not positive (NaN pixels, or e = 0 on a
// flat patch) contributes nothing; such an image is redone by evalSkip.
func (r *TV) Eval(grad, x []float64) float64 {
	checkLen("TV", r.NX, r.NY, grad, x)
	nx, ny := r.NX, r.NY
	e := r.E()
	e2 := e * e
	if grad == nil {
		return tvValue(x, nx, ny, e2)
	}
	v, ok := 0.0, false
	if hasTVAVX {
		v, ok = tvGrad(grad, x, nx, ny, e2)
	} else {
		v, ok = tvGradScalar(grad, x, nx, ny, e2)
	}
	if ok {
		return v
	}
	return tvSkip(grad, x, nx, ny, e2)
}

// tvValue returns TV(x) for the squared threshold e2.
func tvValue(x []float64, nx, ny int, e2 float64) float64 {
	var v float64
	for iy := range ny {
		row := x[iy*nx : iy*nx+nx]
		if iy+1 == ny {
			for ix := range nx - 1 {
				dx := row[ix+1] - row[ix]
				v += math.Sqrt(dx*dx + 0*0 + e2)
			}
			v += math.Sqrt(0*0 + 0*0 + e2)
			break
		}
		below := x[(iy+1)*nx : (iy+2)*nx]
		below = below[:len(row)]
		for ix := range nx - 1 {
			xi := row[ix]
			dx, dy := row[ix+1]-xi, below[ix]-xi
			v += math.Sqrt(dx*dx + dy*dy + e2)
		}
		dy := below[nx-1] - row[nx-1]
		v += math.Sqrt(0*0 + dy*dy + e2)
	}
	return v
}

// tvChunk is the number of pixels of a row whose terms are computed
// together (tvTerms); a multiple of 4.
const tvChunk = 128

// tvTerms holds the terms of up to tvChunk pixels of a row: s = sqrt(dx² +
// dy² + e²) and, with t = 1/s, the contributions dx·t, dy·t and (dx+dy)·t.
type tvTerms struct {
	s, dxt, dyt, ct [tvChunk]float64
}

// tvGrad writes the gradient of TV and returns its value, in one pass over
// the rows; it returns false, with grad partly written, at the first term
// whose s is not positive. The terms of each row but the last, last column
// excepted, are computed in chunks of tvChunk pixels (rowTerms, four at a
// time where the processor has AVX); the value and the gradient follow, in
// pixel order.
func tvGrad(grad, x []float64, nx, ny int, e2 float64) (float64, bool) {
	var tt tvTerms
	var v float64
	clear(grad[:nx]) // the first row receives nothing from above
	for iy := range ny - 1 {
		row := x[iy*nx : iy*nx+nx]
		below := x[(iy+1)*nx : (iy+2)*nx]
		g := grad[iy*nx : iy*nx+nx]
		gb := grad[(iy+1)*nx : (iy+2)*nx]
		below, g, gb = below[:len(row)], g[:len(row)], gb[:len(row)]
		var carry float64 // contribution of the left neighbour; +0 adds nothing to an element that is never -0
		for c0 := 0; c0 < nx-1; c0 += tvChunk {
			n := min(tvChunk, nx-1-c0)
			rowTerms(&tt, row[c0:c0+n+1], below[c0:c0+n], e2)
			s, dxt, dyt, ct := tt.s[:n], tt.dxt[:n], tt.dyt[:n], tt.ct[:n]
			g, gb := g[c0:c0+n], gb[c0:c0+n]
			for k, sk := range s {
				if !(sk > 0) {
					return v, false
				}
				v += sk
				g[k] = g[k] + carry - ct[k]
				carry = dxt[k]
				gb[k] = 0 + dyt[k]
			}
		}
		var dx float64 // 0 across the last column
		dy := below[nx-1] - row[nx-1]
		s := math.Sqrt(dx*dx + dy*dy + e2)
		if !(s > 0) {
			return v, false
		}
		v += s
		t := 1 / s
		g[nx-1] = g[nx-1] + carry - (dx+dy)*t
		gb[nx-1] = 0 + dy*t
	}
	row := x[(ny-1)*nx : ny*nx]
	g := grad[(ny-1)*nx : ny*nx]
	g = g[:len(row)]
	var carry float64
	var dy float64 // 0 across the last row
	for ix := range nx {
		var dx float64
		if ix+1 < nx {
			dx = row[ix+1] - row[ix]
		}
		s := math.Sqrt(dx*dx + dy*dy + e2)
		if !(s > 0) {
			return v, false
		}
		v += s
		t := 1 / s
		g[ix] = g[ix] + carry - (dx+dy)*t
		carry = dx * t
	}
	return v, true
}

// tvGradScalar is tvGrad one pixel at a time, for builds without the AVX
// form of rowTerms: the square root and the division of a pixel overlap
// the additions of its neighbours, which the chunks of tvGrad would keep
// apart.
func tvGradScalar(grad, x []float64, nx, ny int, e2 float64) (float64, bool) {
	var v float64
	clear(grad[:nx]) // the first row receives nothing from above
	for iy := range ny {
		row := x[iy*nx : iy*nx+nx]
		g := grad[iy*nx : iy*nx+nx]
		g = g[:len(row)]
		var carry float64 // contribution of the left neighbour; +0 adds nothing to an element that is never -0
		if iy+1 == ny {
			var dy float64 // 0 across the last row
			for ix := range nx - 1 {
				dx := row[ix+1] - row[ix]
				s := math.Sqrt(dx*dx + dy*dy + e2)
				if !(s > 0) {
					return v, false
				}
				v += s
				t := 1 / s
				g[ix] = g[ix] + carry - (dx+dy)*t
				carry = dx * t
			}
			var dx float64 // 0 across the last column
			s := math.Sqrt(dx*dx + dy*dy + e2)
			if !(s > 0) {
				return v, false
			}
			v += s
			t := 1 / s
			g[nx-1] = g[nx-1] + carry - (dx+dy)*t
			break
		}
		below := x[(iy+1)*nx : (iy+2)*nx]
		gb := grad[(iy+1)*nx : (iy+2)*nx]
		below, gb = below[:len(row)], gb[:len(row)]
		for ix := range nx - 1 {
			xi := row[ix]
			dx, dy := row[ix+1]-xi, below[ix]-xi
			s := math.Sqrt(dx*dx + dy*dy + e2)
			if !(s > 0) {
				return v, false
			}
			v += s
			t := 1 / s
			g[ix] = g[ix] + carry - (dx+dy)*t
			carry = dx * t
			gb[ix] = 0 + dy*t
		}
		var dx float64
		dy := below[nx-1] - row[nx-1]
		s := math.Sqrt(dx*dx + dy*dy + e2)
		if !(s > 0) {
			return v, false
		}
		v += s
		t := 1 / s
		g[nx-1] = g[nx-1] + carry - (dx+dy)*t
		gb[nx-1] = 0 + dy*t
	}
	return v, true
}

// rowTerms fills tt[k] for k < len(below) ≤ tvChunk from the pixels of a
// row, row[k+1] - row[k] = dx, and those below them, below[k] - row[k] = dy,
// with the operations of the pixel loop (IEEE 754, each correctly rounded,
// no fused multiply-add), so that the AVX form has the bits of the Go one.
func rowTerms(tt *tvTerms, row, below []float64, e2 float64) {
	n := len(below)
	if len(row) != n+1 || n > tvChunk {
		panic("regularizers: rowTerms: bad lengths")
	}
	k := 0
	if hasTVAVX && n >= 4 {
		k = n &^ 3
		rowTermsAVX(tt, &row[0], &below[0], k, e2)
	}
	rowTermsGo(tt, row, below, k, e2)
}

// rowTermsGo is rowTerms in Go, from pixel k0 on.
func rowTermsGo(tt *tvTerms, row, below []float64, k0 int, e2 float64) {
	row = row[:len(below)+1]
	for k := k0; k < len(below); k++ {
		xi := row[k]
		dx, dy := row[k+1]-xi, below[k]-xi
		s := math.Sqrt(dx*dx + dy*dy + e2)
		t := 1 / s
		tt.s[k], tt.dxt[k], tt.dyt[k], tt.ct[k] = s, dx*t, dy*t, (dx+dy)*t
	}
}

// tvSkip is the pixel loop that adds every term into a zeroed gradient,
// skipping the terms whose s is not positive.
func tvSkip(grad, x []float64, nx, ny int, e2 float64) float64 {
	clear(grad)
	var v float64
	for iy := range ny {
		for ix := range nx {
			i := iy*nx + ix
			dx, dy := diffs(x, nx, ny, ix, iy, i)
			s := math.Sqrt(dx*dx + dy*dy + e2)
			v += s
			if s > 0 {
				t := 1 / s
				grad[i] -= (dx + dy) * t
				if ix+1 < nx {
					grad[i+1] += dx * t
				}
				if iy+1 < ny {
					grad[i+nx] += dy * t
				}
			}
		}
	}
	return v
}

// String returns "tv(eps=...)" with the relative threshold.
func (r *TV) String() string {
	eps := r.Eps
	if eps == 0 {
		eps = DefaultTVEps
	}
	return fmt.Sprintf("tv(eps=%g)", eps)
}

// Smooth is the quadratic smoothness (Tikhonov) regularizer
//
//	Q(x) = sum_p (dx_p^2 + dy_p^2),
//
// with the forward differences and boundary of TV (Tikhonov & Arsenin
// 1977, Solutions of Ill-Posed Problems: the first-order stabilizer).
// Its gradient is 2 D^T D x with D the difference operator.
//
// Smooth holds no scratch memory and is safe for concurrent use.
type Smooth struct {
	NX, NY int
}

// Eval returns Q(x) and, when grad is non-nil, writes its gradient.
func (r *Smooth) Eval(grad, x []float64) float64 {
	checkLen("Smooth", r.NX, r.NY, grad, x)
	nx, ny := r.NX, r.NY
	if grad != nil {
		for i := range grad {
			grad[i] = 0
		}
	}
	var v float64
	for iy := range ny {
		for ix := range nx {
			i := iy*nx + ix
			dx, dy := diffs(x, nx, ny, ix, iy, i)
			v += dx*dx + dy*dy
			if grad != nil {
				grad[i] -= 2 * (dx + dy)
				if ix+1 < nx {
					grad[i+1] += 2 * dx
				}
				if iy+1 < ny {
					grad[i+nx] += 2 * dy
				}
			}
		}
	}
	return v
}

// String returns "smooth".
func (r *Smooth) String() string { return "smooth" }
