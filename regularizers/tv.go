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
func (r *TV) Eval(grad, x []float64) float64 {
	checkLen("TV", r.NX, r.NY, grad, x)
	nx, ny := r.NX, r.NY
	e := r.E()
	e2 := e * e
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
			s := math.Sqrt(dx*dx + dy*dy + e2)
			v += s
			if grad != nil && s > 0 {
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
