package recon

import (
	"fmt"
	"math"
)

// Spectral names a regularizer across the planes of a cube.
type Spectral int

// The spectral regularizers.
const (
	// SpectralSmooth is the quadratic smoothness along the plane axis (SpectralSmoothness),
	// the default.
	SpectralSmooth Spectral = iota
	// SpectralJoint favours a support shared by every plane (JointSparsity).
	SpectralJoint
	// SpectralNone leaves the planes independent but for their common start and grid.
	SpectralNone
)

// spectralNames are the users' words of the spectral regularizers, indexed by Spectral.
var spectralNames = [...]string{"smooth", "joint", "none"}

// String returns the user's word of k.
func (k Spectral) String() string {
	if k < 0 || int(k) >= len(spectralNames) {
		return fmt.Sprintf("Spectral(%d)", int(k))
	}
	return spectralNames[k]
}

// ParseSpectral reads a spectral regularizer and an optional factor on its automatic
// weight, "smooth", "joint:0.3" or "none"; a missing factor is 1. The error says what is
// wrong with the text; the caller names the option.
func ParseSpectral(text string) (Spectral, float64, error) {
	name, f, hasF := cutLast(text, ':')
	factor := 1.0
	if hasF {
		var err error
		if _, err = fmt.Sscanf(f, "%g", &factor); err != nil || !(factor > 0) || math.IsInf(factor, 0) {
			return 0, 0, fmt.Errorf("factor %q of %s is not a positive number", f, name)
		}
	}
	for k, n := range spectralNames {
		if name == n {
			return Spectral(k), factor, nil
		}
	}
	return 0, 0, fmt.Errorf("%q is not a spectral regularizer (want smooth, joint or none, optionally with :FACTOR on the automatic weight)", name)
}

// cutLast splits s around the last sep.
func cutLast(s string, sep byte) (before, after string, found bool) {
	for i := len(s) - 1; i >= 0; i-- {
		if s[i] == sep {
			return s[:i], s[i+1:], true
		}
	}
	return s, "", false
}

// SpectralSmoothness is the quadratic smoothness of a cube along its plane axis,
//
//	S(x) = Σ_{k=1}^{P−1} Σ_p (x_{k+1,p} − x_{k,p})²,
//
// Tikhonov regularization with the first-difference operator along the axis (Tikhonov
// 1963, Soviet Math. Dokl. 4, 1035; reference recalled from memory). It is zero for a gray cube (all planes equal)
// and leaves every plane's own structure to the spatial regularizer. The cube x holds
// Planes images of NPix pixels, plane after plane.
type SpectralSmoothness struct {
	Planes, NPix int

	mid []float64 // mean of the neighbours of the plane being fitted (planeSpectral)
	nb  int       // their number
	cst float64   // ‖x_{k−1} − x_{k+1}‖²/2 of those neighbours
}

// Eval returns S(x) and, when grad is non-nil, overwrites grad with ∂S/∂x.
func (r *SpectralSmoothness) Eval(grad, x []float64) float64 {
	n := r.NPix
	checkCube("SpectralSmoothness", grad, x, r.Planes, n)
	clear(grad)
	s := 0.0
	for k := 1; k < r.Planes; k++ {
		a, b := x[(k-1)*n:k*n], x[k*n:(k+1)*n]
		for i := range n {
			d := b[i] - a[i]
			s += d * d
			if grad != nil {
				grad[k*n+i] += 2 * d
				grad[(k-1)*n+i] -= 2 * d
			}
		}
	}
	return s
}

// JointSparsity favours a support shared by all planes: the mixed ℓ2,1 norm over pixels of
// the vector of a pixel's values along the plane axis,
//
//	L(x) = Σ_p √(Σ_k x_{k,p}² + ε²),
//
// the group-lasso penalty with each pixel's spectrum as one group (Yuan & Lin 2006, J. R.
// Stat. Soc. B 68, 49), smoothed by ε so that its gradient x_{k,p}/√(Σ_k x_{k,p}² +
// ε²) exists where a pixel is empty in every plane (the hyperbolic approximation of |t|,
// common practice, no source). A pixel bright in one plane costs about as much as the same
// flux spread over every plane's copy of it, so a pixel that is needed in one plane is cheap
// in the others, while a pixel no plane needs is pushed to zero everywhere.
type JointSparsity struct {
	Planes, NPix int
	// Eps is ε; 0 means 0.01/NPix, a hundredth of the mean pixel of a plane of flux 1
	// (common practice, no source).
	Eps float64

	others []float64 // Σ_{j≠k} x_{j,p}² of the plane being fitted (planeSpectral)
}

// Eval returns L(x) and, when grad is non-nil, overwrites grad with ∂L/∂x.
func (r *JointSparsity) Eval(grad, x []float64) float64 {
	n := r.NPix
	checkCube("JointSparsity", grad, x, r.Planes, n)
	eps := r.Eps
	if eps == 0 {
		eps = 0.01 / float64(n)
	}
	e2 := eps * eps
	s := 0.0
	for p := range n {
		q := e2
		for k := range r.Planes {
			v := x[k*n+p]
			q += v * v
		}
		q = math.Sqrt(q)
		s += q
		if grad != nil {
			for k := range r.Planes {
				grad[k*n+p] = x[k*n+p] / q
			}
		}
	}
	return s
}

// checkCube panics when x (or a non-nil grad) is not a cube of planes × n values.
func checkCube(who string, grad, x []float64, planes, n int) {
	if len(x) != planes*n || (grad != nil && len(grad) != len(x)) {
		panic(fmt.Sprintf("recon: %s: want %d × %d values, have %d (gradient %d)", who, planes, n, len(x), len(grad)))
	}
}

// planeSpectral is a spectral regularizer that evaluates the part of itself that depends on
// one plane, the others held fixed, faster than the whole: the sweeps of SolveCube fit one
// plane at a time. prepare is called with the cube before a plane's runs and may keep what
// it needs of it; evalPlane returns S(cube with plane k set to x) up to a constant that does
// not depend on x and, when grad is non-nil, sets grad to a·grad + b·∂S/∂x in the same pass,
// so that a caller adds its own gradient without a pass of its own (a = 0 overwrites grad
// without reading it).
type planeSpectral interface {
	prepare(cube []float64, k int)
	evalPlane(grad []float64, a, b float64, x []float64) float64
}

// prepare keeps the mean m of plane k's neighbours (one or two planes), their number c and
// ‖x_{k−1} − x_{k+1}‖²/2 (0 with one neighbour), for evalPlane.
func (r *SpectralSmoothness) prepare(cube []float64, k int) {
	n := r.NPix
	if len(r.mid) != n {
		r.mid = make([]float64, n)
	}
	r.nb, r.cst = 0, 0
	switch {
	case k > 0 && k < r.Planes-1:
		a, b := cube[(k-1)*n:k*n], cube[(k+1)*n:(k+2)*n]
		s := 0.0
		for i := range r.mid {
			r.mid[i] = 0.5 * (a[i] + b[i])
			d := a[i] - b[i]
			s += d * d
		}
		r.nb, r.cst = 2, 0.5*s
	case k > 0:
		copy(r.mid, cube[(k-1)*n:k*n])
		r.nb = 1
	case k < r.Planes-1:
		copy(r.mid, cube[(k+1)*n:(k+2)*n])
		r.nb = 1
	}
}

// evalPlane returns ‖x − x_{k−1}‖² + ‖x_{k+1} − x‖², the terms of S that hold plane k
// (those of the neighbours that exist), as c·‖x − m‖² + ‖x_{k−1} − x_{k+1}‖²/2 with m the
// mean of the c neighbours (the identity ‖x − a‖² + ‖x − b‖² = 2‖x − (a+b)/2‖² + ‖a − b‖²/2),
// in one pass.
func (r *SpectralSmoothness) evalPlane(grad []float64, a, b float64, x []float64) float64 {
	c := float64(r.nb)
	m := r.mid[:len(x)]
	s := 0.0
	switch {
	case grad == nil:
		for i, v := range x {
			d := v - m[i]
			s += d * d
		}
	case a == 0:
		grad = grad[:len(x)]
		g := 2 * c * b
		for i, v := range x {
			d := v - m[i]
			s += d * d
			grad[i] = g * d
		}
	default:
		grad = grad[:len(x)]
		g := 2 * c * b
		for i, v := range x {
			d := v - m[i]
			s += d * d
			grad[i] = a*grad[i] + g*d
		}
	}
	return c*s + r.cst
}

// evalPlaneDot is evalPlane with a gradient, that also returns Σ_i grad_i·x_i of the gradient
// it writes, summed in the order of the pixels in the same pass (planeReg.evalDot).
func (r *SpectralSmoothness) evalPlaneDot(grad []float64, a, b float64, x []float64) (v, dot float64) {
	c := float64(r.nb)
	m := r.mid[:len(x)]
	grad = grad[:len(x)]
	g := 2 * c * b
	s := 0.0
	if a == 0 {
		for i, xi := range x {
			d := xi - m[i]
			s += d * d
			gi := g * d
			grad[i] = gi
			dot += gi * xi
		}
	} else {
		for i, xi := range x {
			d := xi - m[i]
			s += d * d
			gi := a*grad[i] + g*d
			grad[i] = gi
			dot += gi * xi
		}
	}
	return c*s + r.cst, dot
}

// prepare sums the squares of the other planes, pixel by pixel.
func (r *JointSparsity) prepare(cube []float64, k int) {
	n := r.NPix
	if len(r.others) != n {
		r.others = make([]float64, n)
	}
	clear(r.others)
	for j := range r.Planes {
		if j == k {
			continue
		}
		for p, v := range cube[j*n : (j+1)*n] {
			r.others[p] += v * v
		}
	}
}

// evalPlane returns Σ_p √(x_p² + Σ_{j≠k} x_{j,p}² + ε²), which is L itself, with the sums of
// the other planes from prepare.
func (r *JointSparsity) evalPlane(grad []float64, a, b float64, x []float64) float64 {
	eps := r.Eps
	if eps == 0 {
		eps = 0.01 / float64(r.NPix)
	}
	e2 := eps * eps
	s := 0.0
	for p, v := range x {
		q := math.Sqrt(v*v + r.others[p] + e2)
		s += q
		switch {
		case grad == nil:
		case a == 0:
			grad[p] = b * v / q
		default:
			grad[p] = a*grad[p] + b*v/q
		}
	}
	return s
}
