package regularizers

import (
	"fmt"
	"math"
)

// DefaultMaxEntFloor is the value of MaxEnt.Floor used when it is zero.
const DefaultMaxEntFloor = 1e-8

// MaxEnt is the negative entropy of an image relative to a prior image m,
//
//	-S(x) = sum_p [ x_p ln(x_p/m_p) - x_p + m_p ],
//
// where S is the entropy of Skilling & Bryan (1984, MNRAS 211, 111)
// and Narayan & Nityananda (1986, ARA&A 24, 127). Each term is
// non-negative and zero only at x_p = m_p, so -S >= 0 with its minimum 0
// at x = m: minimizing -S pulls the image towards the prior. The gradient
// is ln(x_p/m_p).
//
// The gradient tends to -Inf as x_p -> 0. Below x_f = Floor*m_p each term
// is continued by its tangent at x_f, value m_p - x_f + x_p ln(Floor) and
// gradient ln(Floor), so value and gradient stay finite and consistent
// at x_p = 0 (and for negative x_p); at x_p = 0 the term is m_p(1 - Floor),
// within Floor*m_p of the limit m_p of x ln x -> 0.
//
// MaxEnt holds no scratch memory and is safe for concurrent use when its
// fields are not modified.
type MaxEnt struct {
	NX, NY int

	// Prior holds the prior image m, NX*NY positive values. Nil means a
	// flat prior of total flux 1, m_p = 1/(NX*NY). FlatPrior,
	// GaussianPrior, DiscPrior and ImagePrior build priors with a floor
	// that keeps every m_p > 0. A non-positive m_p panics.
	Prior []float64

	// Floor is the fraction of m_p below which the tangent continuation
	// is used. Zero means DefaultMaxEntFloor; it must be below 1.
	Floor float64
}

// Eval returns -S(x) and, when grad is non-nil, writes its gradient.
func (r *MaxEnt) Eval(grad, x []float64) float64 {
	checkLen("MaxEnt", r.NX, r.NY, grad, x)
	n := len(x)
	if r.Prior != nil && len(r.Prior) != n {
		panic(fmt.Sprintf("regularizers: MaxEnt: len(Prior) = %d, want NX*NY = %d", len(r.Prior), n))
	}
	floor := r.Floor
	if floor == 0 {
		floor = DefaultMaxEntFloor
	}
	if !(floor > 0 && floor < 1) {
		panic(fmt.Sprintf("regularizers: MaxEnt: Floor = %g, want 0 < Floor < 1", floor))
	}
	lnFloor := math.Log(floor)
	flat := 1 / float64(n)
	var v float64
	for p, xp := range x {
		m := flat
		if r.Prior != nil {
			m = r.Prior[p]
			if !(m > 0) {
				panic(fmt.Sprintf("regularizers: MaxEnt: Prior[%d] = %g is not positive", p, m))
			}
		}
		xf := floor * m
		var g float64
		if xp >= xf {
			g = math.Log(xp / m)
			v += xp*g - xp + m
		} else {
			g = lnFloor
			v += m - xf + xp*lnFloor
		}
		if grad != nil {
			grad[p] = g
		}
	}
	return v
}

// String returns "maxent(prior=flat)" or "maxent(prior=image)".
func (r *MaxEnt) String() string {
	if r.Prior == nil {
		return "maxent(prior=flat)"
	}
	return "maxent(prior=image)"
}
