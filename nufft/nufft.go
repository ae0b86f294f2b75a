package nufft

import (
	"fmt"
	"math"
	"runtime"
)

// Options configures a transform. The zero value gives the documented
// defaults.
type Options struct {
	// Tol is the requested relative l2 accuracy of Forward and Adjoint
	// against the exact direct sum (the error measure of Barnett, Magland
	// & af Klinteberg 2019, eq. 4.1). Zero means 1e-6. Values outside
	// [1e-13, 1e-1] are rejected by the constructors. Exact ignores Tol
	// except for validation.
	Tol float64

	// Workers is the largest number of goroutines one call may use.
	// Zero means runtime.GOMAXPROCS(0). Small problems run serially
	// whatever the setting. It changes the speed of a call, never its
	// result.
	Workers int
}

// DefaultTol is the tolerance used when Options.Tol is zero.
const DefaultTol = 1e-6

// Transform is the linear map between a real nx×ny image and complex
// visibilities at m fixed (u,v) points, and its adjoint.
//
// Forward sets dst[k] = Σ_p img[p] exp(−2πi (u_k x_p + v_k y_p)), with
// len(img) = nx·ny and len(dst) = m. Adjoint sets
// dst[p] = Re Σ_k vis[k] exp(+2πi (u_k x_p + v_k y_p)), the adjoint of
// Forward for the real inner products Re⟨·,·⟩ on C^m and ⟨·,·⟩ on R^(nx·ny).
// Wrong slice lengths panic. Neither method allocates.
type Transform interface {
	Forward(dst []complex128, img []float64)
	Adjoint(dst []float64, vis []complex128)
}

// resolved holds validated constructor arguments.
type resolved struct {
	nx, ny  int
	pixel   float64
	tol     float64
	workers int
	m       int
}

// resolve validates the arguments common to all constructors and fills
// in the defaults of opt.
func resolve(who string, nx, ny int, pixel float64, u, v []float64, opt Options) (resolved, error) {
	var r resolved
	if nx < 1 || ny < 1 {
		return r, fmt.Errorf("nufft: %s: image size %d×%d: both sides must be at least 1", who, nx, ny)
	}
	if nx > 1<<20 || ny > 1<<20 || nx*ny > 1<<30 {
		return r, fmt.Errorf("nufft: %s: image size %d×%d is too large", who, nx, ny)
	}
	if !(pixel > 0) || math.IsInf(pixel, 0) {
		return r, fmt.Errorf("nufft: %s: pixel size %g rad: must be positive and finite", who, pixel)
	}
	if len(u) != len(v) {
		return r, fmt.Errorf("nufft: %s: %d u values but %d v values", who, len(u), len(v))
	}
	if len(u) > math.MaxInt32 {
		return r, fmt.Errorf("nufft: %s: %d points is too many", who, len(u))
	}
	for k := range u {
		if math.IsNaN(u[k]) || math.IsInf(u[k], 0) || math.IsNaN(v[k]) || math.IsInf(v[k], 0) {
			return r, fmt.Errorf("nufft: %s: point %d: (u, v) = (%g, %g) is not finite", who, k, u[k], v[k])
		}
	}
	tol := opt.Tol
	if tol == 0 {
		tol = DefaultTol
	}
	if !(tol >= 1e-13 && tol <= 0.1) {
		return r, fmt.Errorf("nufft: %s: tolerance %g outside [1e-13, 0.1]", who, opt.Tol)
	}
	w := opt.Workers
	if w < 0 {
		return r, fmt.Errorf("nufft: %s: %d workers: must be zero (GOMAXPROCS) or positive", who, w)
	}
	if max := runtime.GOMAXPROCS(0); w == 0 || w > max {
		w = max
	}
	r = resolved{nx: nx, ny: ny, pixel: pixel, tol: tol, workers: w, m: len(u)}
	return r, nil
}

// reduce maps a frequency in cycles per pixel onto [−1/2, 1/2). The
// transforms are periodic in it with period 1 because pixel offsets are
// integers.
func reduce(s float64) float64 {
	s -= math.Floor(s + 0.5)
	if s >= 0.5 { // guards against rounding in the subtraction
		s -= 1
	}
	return s
}

// New returns the faster of Exact and Plan for the given problem, judged
// by an operation count: Exact costs about nx·ny per point, Plan about
// w² per point plus a few FFTs of the upsampled grid (w is the kernel
// width). Both meet opt.Tol.
func New(nx, ny int, pixel float64, u, v []float64, opt Options) (Transform, error) {
	r, err := resolve("New", nx, ny, pixel, u, v, opt)
	if err != nil {
		return nil, err
	}
	w := float64(kernelWidth(r.tol))
	fx, fy := float64(fineSize(nx)), float64(fineSize(ny))
	// Costs in units of one complex multiply-add, with constants measured
	// on the development machine (common practice, no source).
	exact := float64(r.m) * float64(nx) * float64(ny)
	fast := float64(r.m)*(4*w*w+60) + 3*fx*fy*(math.Log2(fx*fy)+4)
	if exact < fast {
		return NewExact(nx, ny, pixel, u, v, opt)
	}
	return NewPlan(nx, ny, pixel, u, v, opt)
}

// mustLen panics with a package-prefixed message when a slice has the
// wrong length, a programmer error.
func mustLen(method, name string, got, want int) {
	if got != want {
		panic(fmt.Sprintf("nufft: %s: len(%s) = %d, want %d", method, name, got, want))
	}
}
