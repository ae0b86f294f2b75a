package regularizers_test

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"

	"vcz/recon/optim"
	"vcz/regularizers"
)

// denoiseProblem returns f(x) = 0.5 ||x - b||^2 + mu Smooth(x) with its
// gradient, using the package's Smooth and a scratch gradient.
func denoiseProblem(nx, ny int, mu float64, b []float64) func(grad, x []float64) float64 {
	sm := &regularizers.Smooth{NX: nx, NY: ny}
	tmp := make([]float64, nx*ny)
	return func(grad, x []float64) float64 {
		f := mu * sm.Eval(tmp, x)
		for i := range x {
			r := x[i] - b[i]
			f += 0.5 * r * r
			grad[i] = r + mu*tmp[i]
		}
		return f
	}
}

// differenceMatrix builds the forward-difference operator D (one row per
// horizontal and per vertical neighbour pair) independently of Smooth, so
// that Smooth(x) = ||D x||^2.
func differenceMatrix(nx, ny int) *mat.Dense {
	n := nx * ny
	rows := (nx-1)*ny + nx*(ny-1)
	d := mat.NewDense(rows, n, nil)
	r := 0
	for iy := range ny {
		for ix := range nx {
			i := iy*nx + ix
			if ix+1 < nx {
				d.Set(r, i+1, 1)
				d.Set(r, i, -1)
				r++
			}
			if iy+1 < ny {
				d.Set(r, i+nx, 1)
				d.Set(r, i, -1)
				r++
			}
		}
	}
	return d
}

// TestSmoothDenoiseNormalEquations minimizes 0.5 ||x - b||^2 + mu ||D x||^2
// with x >= 0 by optim, on data b whose solution is strictly positive, and
// compares with the solution of the normal equations (I + 2 mu D^T D) x = b
// computed by gonum/mat (Tikhonov & Arsenin 1977; first-order optimality
// of a convex quadratic): the bounds are inactive, so both must agree.
func TestSmoothDenoiseNormalEquations(t *testing.T) {
	const nx, ny = 12, 10
	const mu = 0.7
	n := nx * ny
	b := make([]float64, n)
	for iy := range ny {
		for ix := range nx {
			b[iy*nx+ix] = 2 + math.Sin(0.9*float64(ix)) + 0.5*math.Cos(1.3*float64(iy)+0.2*float64(ix))
		}
	}
	d := differenceMatrix(nx, ny)
	var a mat.Dense
	a.Mul(d.T(), d)
	a.Scale(2*mu, &a)
	for i := range n {
		a.Set(i, i, a.At(i, i)+1)
	}
	var want mat.VecDense
	if err := want.SolveVec(&a, mat.NewVecDense(n, b)); err != nil {
		t.Fatal(err)
	}
	for i := range n {
		if want.AtVec(i) <= 0 {
			t.Fatalf("reference solution not positive at %d; bounds would be active", i)
		}
	}
	res, err := optim.Minimize(optim.Problem{Func: denoiseProblem(nx, ny, mu, b), Lower: make([]float64, n)},
		make([]float64, n), optim.Settings{PGTol: 1e-12, FTol: 1e-16})
	if err != nil {
		t.Fatal(err)
	}
	var scale, worst float64
	for i := range n {
		scale = max(scale, math.Abs(want.AtVec(i)))
		worst = max(worst, math.Abs(res.X[i]-want.AtVec(i)))
	}
	if worst > 1e-6*scale {
		t.Errorf("max |x - x_normal| = %g > 1e-6 * %g (status %v, %d iterations)", worst, scale, res.Status, res.Iter)
	}
	t.Logf("%d iterations, %d evaluations, max deviation %.2g, status %v", res.Iter, res.Evals, worst, res.Status)
}

// TestSmoothDenoiseActiveBounds solves the same problem with data that are
// negative over part of the grid, so positivity is active, and checks the
// Karush-Kuhn-Tucker conditions of min f(x) s.t. x >= 0 (Nocedal & Wright
// 2006, Theorem 12.1, from memory): grad_i = 0 where x_i > 0, grad_i >= 0 where x_i = 0,
// to 1e-6, above the resolution sqrt(eps |f|) ~ 1e-7 of a line search on
// function values.
func TestSmoothDenoiseActiveBounds(t *testing.T) {
	const nx, ny = 16, 16
	const mu = 0.5
	n := nx * ny
	b := make([]float64, n)
	for iy := range ny {
		for ix := range nx {
			b[iy*nx+ix] = math.Sin(0.5*float64(ix)) * math.Cos(0.4*float64(iy))
		}
	}
	fn := denoiseProblem(nx, ny, mu, b)
	res, err := optim.Minimize(optim.Problem{Func: fn, Lower: make([]float64, n)}, make([]float64, n),
		optim.Settings{PGTol: 1e-10, FTol: 1e-16})
	if err != nil {
		t.Fatal(err)
	}
	g := make([]float64, n)
	fn(g, res.X)
	zero := 0
	for i, xi := range res.X {
		switch {
		case xi < 0:
			t.Fatalf("x[%d] = %g violates the bound", i, xi)
		case xi == 0:
			zero++
			if g[i] < -1e-6 {
				t.Errorf("pixel %d at the bound with gradient %g < 0", i, g[i])
			}
		default:
			if math.Abs(g[i]) > 1e-6 {
				t.Errorf("free pixel %d (x = %g) with gradient %g", i, xi, g[i])
			}
		}
	}
	if zero < n/5 {
		t.Fatalf("only %d of %d pixels at the bound; test too weak", zero, n)
	}
	t.Logf("%d of %d pixels at the bound, %d iterations, status %v", zero, n, res.Iter, res.Status)
}
