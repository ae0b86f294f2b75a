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
// plane at a time. prepare is called with the cube before a plane's runs; evalPlane returns
// S(cube with plane k set to x) up to a constant that does not depend on x, and writes the
// gradient with respect to x when grad is non-nil.
type planeSpectral interface {
	prepare(cube []float64, k int)
	evalPlane(grad, x, cube []float64, k int) float64
}

func (r *SpectralSmoothness) prepare([]float64, int) {}

// evalPlane returns ‖x − x_{k−1}‖² + ‖x_{k+1} − x‖², the terms of S that hold plane k.
func (r *SpectralSmoothness) evalPlane(grad, x, cube []float64, k int) float64 {
	n := r.NPix
	clear(grad)
	s := 0.0
	if k > 0 {
		a := cube[(k-1)*n : k*n]
		for i, v := range x {
			d := v - a[i]
			s += d * d
			if grad != nil {
				grad[i] += 2 * d
			}
		}
	}
	if k < r.Planes-1 {
		b := cube[(k+1)*n : (k+2)*n]
		for i, v := range x {
			d := b[i] - v
			s += d * d
			if grad != nil {
				grad[i] -= 2 * d
			}
		}
	}
	return s
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
func (r *JointSparsity) evalPlane(grad, x, _ []float64, _ int) float64 {
	eps := r.Eps
	if eps == 0 {
		eps = 0.01 / float64(r.NPix)
	}
	e2 := eps * eps
	s := 0.0
	for p, v := range x {
		q := math.Sqrt(v*v + r.others[p] + e2)
		s += q
		if grad != nil {
			grad[p] = v / q
		}
	}
	return s
}
