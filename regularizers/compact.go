package regularizers

import (
	"fmt"
	"math"
)

// Compact penalizes flux far from the centre of the grid,
//
//	C(x) = sum_p w_p x_p^2,  w_p = (r_p/R0)^2,
//
// where r_p is the distance in pixels of pixel p from the centre pixel
// (NX/2, NY/2) of the conventions (integer division). It is zero for an
// image whose flux sits in the centre pixel (common practice, no source).
//
// Compact keeps the weights in the struct, computed on the first Eval and
// again when NX, NY or R0 change, so it must not be used by several
// goroutines at once.
type Compact struct {
	NX, NY int

	// R0 is the radius in pixels at which the weight is 1. Zero means
	// min(NX, NY)/4; negative panics.
	R0 float64

	w        []float64
	wnx, wny int
	wr0      float64
}

func (r *Compact) weights() []float64 {
	r0 := r.R0
	if r0 == 0 {
		r0 = float64(min(r.NX, r.NY)) / 4
	}
	if !(r0 > 0) {
		panic(fmt.Sprintf("regularizers: Compact: R0 = %g is not positive", r.R0))
	}
	n := r.NX * r.NY
	if len(r.w) == n && r.wnx == r.NX && r.wny == r.NY && r.wr0 == r0 {
		return r.w
	}
	if cap(r.w) < n {
		r.w = make([]float64, n)
	}
	r.w = r.w[:n]
	cx, cy := r.NX/2, r.NY/2
	for iy := range r.NY {
		for ix := range r.NX {
			dx, dy := float64(ix-cx), float64(iy-cy)
			r.w[iy*r.NX+ix] = (dx*dx + dy*dy) / (r0 * r0)
		}
	}
	r.wnx, r.wny, r.wr0 = r.NX, r.NY, r0
	return r.w
}

// Eval returns C(x) and, when grad is non-nil, writes its gradient 2 w x.
func (r *Compact) Eval(grad, x []float64) float64 {
	checkLen("Compact", r.NX, r.NY, grad, x)
	w := r.weights()
	var v float64
	for p, xp := range x {
		v += w[p] * xp * xp
		if grad != nil {
			grad[p] = 2 * w[p] * xp
		}
	}
	return v
}

// String returns "compact(r0=...)" with R0 in pixels.
func (r *Compact) String() string {
	r0 := r.R0
	if r0 == 0 {
		r0 = float64(min(r.NX, r.NY)) / 4
	}
	return fmt.Sprintf("compact(r0=%gpx)", r0)
}

// PriorDistance is the quadratic distance to a prior image g,
//
//	P(x) = sum_p (x_p - g_p)^2 / g_p,
//
// a chi-square-like distance that is cheap where the prior is bright and
// expensive where it is faint; with a Gaussian prior (GaussianPrior) it
// favours compact images of about the prior's FWHM (common practice, no
// source). It is zero at x = g. Build g with a floor so that every g_p > 0.
//
// PriorDistance holds no scratch memory and is safe for concurrent use
// when its fields are not modified.
type PriorDistance struct {
	NX, NY int

	// Prior holds g, NX*NY positive values; a non-positive g_p panics.
	Prior []float64
}

// Eval returns P(x) and, when grad is non-nil, writes its gradient
// 2 (x - g)/g.
func (r *PriorDistance) Eval(grad, x []float64) float64 {
	checkLen("PriorDistance", r.NX, r.NY, grad, x)
	if len(r.Prior) != len(x) {
		panic(fmt.Sprintf("regularizers: PriorDistance: len(Prior) = %d, want NX*NY = %d", len(r.Prior), len(x)))
	}
	var v float64
	for p, xp := range x {
		g := r.Prior[p]
		if !(g > 0) || math.IsInf(g, 0) {
			panic(fmt.Sprintf("regularizers: PriorDistance: Prior[%d] = %g is not positive and finite", p, g))
		}
		d := xp - g
		v += d * d / g
		if grad != nil {
			grad[p] = 2 * d / g
		}
	}
	return v
}

// String returns "prior-distance".
func (r *PriorDistance) String() string { return "prior-distance" }
