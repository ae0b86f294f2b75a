package optim

import (
	"errors"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize"
	"gonum.org/v1/gonum/optimize/functions"
)

// gonumFunc adapts a gonum test function to Problem.Func.
func gonumFunc(fn interface {
	Func([]float64) float64
	Grad(grad, x []float64)
}) func(grad, x []float64) float64 {
	return func(grad, x []float64) float64 {
		if grad != nil {
			fn.Grad(grad, x)
		}
		return fn.Func(x)
	}
}

// TestUnconstrained checks convergence to the known minima of standard
// test functions: Rosenbrock's function has its minimum 0 at (1, ..., 1)
// (Rosenbrock 1960, Comput. J. 3, 175; extended form: Moré, Garbow &
// Hillstrom 1981, ACM TOMS 7, 17, problem 21, from memory); the Beale function has its
// minimum 0 at (3, 0.5) (Moré, Garbow & Hillstrom 1981, problem 5, from memory).
func TestUnconstrained(t *testing.T) {
	ones := func(n int) []float64 {
		v := make([]float64, n)
		for i := range v {
			v[i] = 1
		}
		return v
	}
	extStart := func(n int) []float64 {
		v := make([]float64, n)
		for i := range v {
			if i%2 == 0 {
				v[i] = -1.2
			} else {
				v[i] = 1
			}
		}
		return v
	}
	tests := []struct {
		name string
		fn   func(grad, x []float64) float64
		x0   []float64
		want []float64
	}{
		{"Rosenbrock2", gonumFunc(functions.ExtendedRosenbrock{}), []float64{-1.2, 1}, ones(2)},
		{"ExtendedRosenbrock10", gonumFunc(functions.ExtendedRosenbrock{}), extStart(10), ones(10)},
		{"ExtendedRosenbrock100", gonumFunc(functions.ExtendedRosenbrock{}), extStart(100), ones(100)},
		{"Beale", gonumFunc(functions.Beale{}), []float64{1, 1}, []float64{3, 0.5}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			res, err := Minimize(Problem{Func: tc.fn}, tc.x0, Settings{PGTol: 1e-9, FTol: -1, MaxIter: 5000})
			if err != nil {
				t.Fatal(err)
			}
			if res.Status != GradientConvergence {
				t.Errorf("status %v, want %v", res.Status, GradientConvergence)
			}
			for i, v := range res.X {
				if math.Abs(v-tc.want[i]) > 1e-6 {
					t.Fatalf("x[%d] = %.12g, want %g (iter %d)", i, v, tc.want[i], res.Iter)
				}
			}
			if res.F > 1e-12 {
				t.Errorf("f = %g, want ~0", res.F)
			}
			t.Logf("%s: %d iterations, %d evaluations", tc.name, res.Iter, res.Evals)
		})
	}
}

// TestCompareGonumLBFGS compares the iteration count with gonum's
// unconstrained L-BFGS (strong-Wolfe line search) on the extended
// Rosenbrock function: without active bounds the two methods build the
// same quasi-Newton model, so the counts must be of the same order.
func TestCompareGonumLBFGS(t *testing.T) {
	const n = 100
	x0 := make([]float64, n)
	for i := range x0 {
		x0[i] = -1.2
		if i%2 == 1 {
			x0[i] = 1
		}
	}
	fn := functions.ExtendedRosenbrock{}
	for _, m := range []int{5, 10} {
		gres, err := optimize.Minimize(optimize.Problem{Func: fn.Func, Grad: fn.Grad}, x0,
			&optimize.Settings{GradientThreshold: 1e-9, MajorIterations: 5000}, &optimize.LBFGS{Store: m})
		if err != nil {
			t.Fatal(err)
		}
		res, err := Minimize(Problem{Func: gonumFunc(fn)}, x0, Settings{PGTol: 1e-9, FTol: -1, MaxIter: 5000, Memory: m})
		if err != nil {
			t.Fatal(err)
		}
		t.Logf("memory %d: gonum LBFGS %d iterations, %d evaluations; optim %d iterations, %d evaluations",
			m, gres.Stats.MajorIterations, gres.Stats.FuncEvaluations, res.Iter, res.Evals)
		if res.Iter > 2*gres.Stats.MajorIterations {
			t.Errorf("memory %d: optim needs %d iterations, more than twice gonum's %d", m, res.Iter, gres.Stats.MajorIterations)
		}
		if math.Abs(res.F-gres.F) > 1e-12 {
			t.Errorf("memory %d: minimum %g differs from gonum's %g", m, res.F, gres.F)
		}
	}
}

// quadratic returns f(x) = 0.5 x'Ax - b'x for a dense symmetric A.
func quadratic(a *mat.SymDense, b []float64) func(grad, x []float64) float64 {
	n := len(b)
	return func(grad, x []float64) float64 {
		var f float64
		for i := range n {
			var ax float64
			for j := range n {
				ax += a.At(i, j) * x[j]
			}
			f += 0.5*x[i]*ax - b[i]*x[i]
			if grad != nil {
				grad[i] = ax - b[i]
			}
		}
		return f
	}
}

// kktSolve finds the minimum of 0.5 x'Ax - b'x subject to x >= 0 by
// enumerating the active sets: for a strictly convex problem the solution
// is the unique point with x_F = A_FF^-1 b_F >= 0 on the free set F, x = 0
// elsewhere, and gradient (Ax - b)_i >= 0 on the active set (Karush-Kuhn-
// Tucker conditions; Nocedal & Wright 2006, Theorem 12.1 and sect. 16.5, from memory).
func kktSolve(t *testing.T, a *mat.SymDense, b []float64) []float64 {
	n := len(b)
	for mask := 0; mask < 1<<n; mask++ {
		var idx []int
		for i := range n {
			if mask&(1<<i) != 0 {
				idx = append(idx, i)
			}
		}
		x := make([]float64, n)
		if len(idx) > 0 {
			aff := mat.NewDense(len(idx), len(idx), nil)
			bf := mat.NewVecDense(len(idx), nil)
			for r, i := range idx {
				bf.SetVec(r, b[i])
				for c, j := range idx {
					aff.Set(r, c, a.At(i, j))
				}
			}
			var xf mat.VecDense
			if err := xf.SolveVec(aff, bf); err != nil {
				continue
			}
			for r, i := range idx {
				x[i] = xf.AtVec(r)
			}
		}
		ok := true
		for i := range n {
			var g float64
			for j := range n {
				g += a.At(i, j) * x[j]
			}
			g -= b[i]
			if mask&(1<<i) != 0 && x[i] < 0 {
				ok = false
			}
			if mask&(1<<i) == 0 && g < -1e-12 {
				ok = false
			}
		}
		if ok {
			return x
		}
	}
	t.Fatal("no KKT point found")
	return nil
}

func TestBoundQuadraticKKT(t *testing.T) {
	rnd := rand.New(rand.NewPCG(1, 2))
	for trial := range 5 {
		const n = 8
		m := mat.NewDense(n, n, nil)
		for i := range n {
			for j := range n {
				m.Set(i, j, rnd.NormFloat64())
			}
		}
		a := mat.NewSymDense(n, nil)
		a.SymOuterK(1, m)
		for i := range n {
			a.SetSym(i, i, a.At(i, i)+0.5)
		}
		b := make([]float64, n)
		for i := range b {
			b[i] = rnd.NormFloat64()
		}
		want := kktSolve(t, a, b)
		lower := make([]float64, n)
		x0 := make([]float64, n)
		for i := range x0 {
			x0[i] = 1
		}
		res, err := Minimize(Problem{Func: quadratic(a, b), Lower: lower}, x0,
			Settings{PGTol: 1e-10, FTol: 1e-15, MaxIter: 2000})
		if err != nil {
			t.Fatal(err)
		}
		if !res.Status.Converged() {
			t.Errorf("trial %d: status %v", trial, res.Status)
		}
		nactive := 0
		for i := range n {
			if want[i] == 0 {
				nactive++
			}
			if math.Abs(res.X[i]-want[i]) > 1e-7 {
				t.Errorf("trial %d: x[%d] = %.12g, want %.12g (status %v)", trial, i, res.X[i], want[i], res.Status)
			}
		}
		t.Logf("trial %d: %d of %d bounds active, %d iterations, status %v", trial, nactive, n, res.Iter, res.Status)
	}
}

// TestSeparableBounds minimizes sum a_i (x_i - c_i)^2 / 2 over a box,
// whose solution is clamp(c_i, l_i, u_i) (projection theorem for a
// separable strictly convex function; Bertsekas 1999, Nonlinear
// Programming, Prop. 2.1.3, from memory). Many bounds are active and the projected
// gradient at the solution must vanish.
func TestSeparableBounds(t *testing.T) {
	const n = 1000
	rnd := rand.New(rand.NewPCG(3, 4))
	a, c, lo, hi := make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
	for i := range n {
		a[i] = 0.1 + 10*rnd.Float64()
		c[i] = 4*rnd.Float64() - 2
		lo[i] = -1
		hi[i] = 1
		if i%3 == 0 {
			hi[i] = math.Inf(1)
		}
	}
	fn := func(grad, x []float64) float64 {
		var f float64
		for i := range x {
			r := x[i] - c[i]
			f += 0.5 * a[i] * r * r
			if grad != nil {
				grad[i] = a[i] * r
			}
		}
		return f
	}
	res, err := Minimize(Problem{Func: fn, Lower: lo, Upper: hi}, make([]float64, n), Settings{PGTol: 1e-10, FTol: -1})
	if err != nil {
		t.Fatal(err)
	}
	if res.Status != GradientConvergence {
		t.Errorf("status %v", res.Status)
	}
	if res.ProjGradNorm > 1e-10 {
		t.Errorf("projected gradient norm %g", res.ProjGradNorm)
	}
	active := 0
	for i := range n {
		want := min(max(c[i], lo[i]), hi[i])
		if want != c[i] {
			active++
		}
		if math.Abs(res.X[i]-want) > 1e-9 {
			t.Fatalf("x[%d] = %g, want %g", i, res.X[i], want)
		}
	}
	if active < n/5 {
		t.Fatalf("only %d active bounds; test too weak", active)
	}
	t.Logf("%d active bounds, %d iterations, %d evaluations", active, res.Iter, res.Evals)
}

// TestNonIncreasingAndDeterministic checks that every accepted iteration
// lowers the objective and that a rerun gives bit-identical results.
func TestNonIncreasingAndDeterministic(t *testing.T) {
	const n = 200
	fn := gonumFunc(functions.ExtendedRosenbrock{})
	x0 := make([]float64, n)
	lo := make([]float64, n)
	for i := range x0 {
		x0[i] = 0.1 + 0.01*float64(i%7)
		lo[i] = 0.05 * float64(i%5) // some bounds above 1 would be active; these are below the minimum at 1
	}
	lo[3] = 1.5 // an active bound
	var fs []float64
	s := Settings{MaxIter: 300, Callback: func(it Iter) bool {
		fs = append(fs, it.F)
		return true
	}}
	r1, err := Minimize(Problem{Func: fn, Lower: lo}, x0, s)
	if err != nil {
		t.Fatal(err)
	}
	for i := 1; i < len(fs); i++ {
		if fs[i] > fs[i-1] {
			t.Fatalf("objective rose at iteration %d: %g -> %g", i+1, fs[i-1], fs[i])
		}
	}
	if len(fs) != r1.Iter {
		t.Fatalf("callback called %d times for %d iterations", len(fs), r1.Iter)
	}
	r2, err := Minimize(Problem{Func: fn, Lower: lo}, x0, Settings{MaxIter: 300})
	if err != nil {
		t.Fatal(err)
	}
	if r1.F != r2.F || r1.Iter != r2.Iter || r1.Evals != r2.Evals {
		t.Fatalf("rerun differs: %v vs %v", r1, r2)
	}
	for i := range r1.X {
		if r1.X[i] != r2.X[i] {
			t.Fatalf("rerun differs at x[%d]: %v vs %v", i, r1.X[i], r2.X[i])
		}
		if r1.X[i] < lo[i] {
			t.Fatalf("x[%d] = %g below bound %g", i, r1.X[i], lo[i])
		}
	}
	if r1.X[3] != 1.5 {
		t.Errorf("x[3] = %g, want the active bound 1.5", r1.X[3])
	}
}

func TestCallbackStop(t *testing.T) {
	x0 := []float64{-1.2, 1, -1.2, 1}
	calls := 0
	res, err := Minimize(Problem{Func: gonumFunc(functions.ExtendedRosenbrock{})}, x0,
		Settings{Callback: func(it Iter) bool {
			calls++
			if it.Iter != calls {
				t.Errorf("callback iteration %d at call %d", it.Iter, calls)
			}
			return it.Iter < 3
		}})
	if err != nil {
		t.Fatal(err)
	}
	if res.Status != CallbackStop || res.Iter != 3 || calls != 3 {
		t.Fatalf("status %v after %d iterations and %d calls; want %v after 3", res.Status, res.Iter, calls, CallbackStop)
	}
}

func TestIterationLimit(t *testing.T) {
	x0 := []float64{-1.2, 1}
	res, err := Minimize(Problem{Func: gonumFunc(functions.ExtendedRosenbrock{})}, x0, Settings{MaxIter: 4})
	if err != nil {
		t.Fatal(err)
	}
	if res.Status != IterationLimit || res.Iter != 4 {
		t.Fatalf("status %v after %d iterations", res.Status, res.Iter)
	}
}

func TestFunctionConvergence(t *testing.T) {
	x0 := []float64{-1.2, 1}
	res, err := Minimize(Problem{Func: gonumFunc(functions.ExtendedRosenbrock{})}, x0, Settings{FTol: 1e-3, PGTol: -1})
	if err != nil {
		t.Fatal(err)
	}
	if res.Status != FunctionConvergence {
		t.Fatalf("status %v", res.Status)
	}
}

func TestNonFinite(t *testing.T) {
	tests := []struct {
		name      string
		badEval   int
		gradIndex int
		iter      int
	}{
		// Rosenbrock from (-1.2, 1) accepts the first trial step of its
		// first two iterations (evaluations 2 and 3), checked below.
		{"value at start", 1, -1, 0},
		{"value in first iteration", 2, -1, 1},
		{"gradient in second iteration", 3, 1, 2},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			evals := 0
			fn := func(grad, x []float64) float64 {
				evals++
				f := gonumFunc(functions.ExtendedRosenbrock{})(grad, x)
				if evals == tc.badEval {
					if tc.gradIndex >= 0 {
						grad[tc.gradIndex] = math.Inf(1)
					} else {
						f = math.NaN()
					}
				}
				return f
			}
			res, err := Minimize(Problem{Func: fn}, []float64{-1.2, 1}, Settings{})
			if err == nil {
				t.Fatal("no error")
			}
			var nf *NonFiniteError
			if !errors.As(err, &nf) || !errors.Is(err, ErrNonFinite) {
				t.Fatalf("error %v is not a *NonFiniteError", err)
			}
			if nf.Eval != tc.badEval || nf.GradIndex != tc.gradIndex || nf.Iter != tc.iter {
				t.Errorf("error %+v, want iteration %d, evaluation %d, gradient index %d", nf, tc.iter, tc.badEval, tc.gradIndex)
			}
			if !strings.Contains(err.Error(), "iteration") || !strings.Contains(err.Error(), "evaluation") {
				t.Errorf("message %q does not say where", err)
			}
			if res.Status != NotTerminated {
				t.Errorf("status %v", res.Status)
			}
			if tc.badEval > 1 && math.IsNaN(res.F) {
				t.Errorf("result objective is NaN")
			}
		})
	}
}

func TestBadProblem(t *testing.T) {
	fn := func(grad, x []float64) float64 { return 0 }
	tests := []struct {
		name string
		p    Problem
		x0   []float64
		want string
	}{
		{"nil func", Problem{}, []float64{1}, "Func is nil"},
		{"no variables", Problem{Func: fn}, nil, "no variables"},
		{"lower length", Problem{Func: fn, Lower: []float64{0}}, []float64{1, 2}, "len(Lower)"},
		{"upper length", Problem{Func: fn, Upper: []float64{0}}, []float64{1, 2}, "len(Upper)"},
		{"crossed", Problem{Func: fn, Lower: []float64{0, 2}, Upper: []float64{1, 1}}, []float64{1, 2}, "variable 1 has Lower 2 > Upper 1"},
		{"nan bound", Problem{Func: fn, Lower: []float64{math.NaN()}}, []float64{1}, "NaN"},
		{"nan start", Problem{Func: fn}, []float64{1, math.NaN()}, "x0[1] is NaN"},
	}
	for _, tc := range tests {
		_, err := Minimize(tc.p, tc.x0, Settings{})
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: error %v, want containing %q", tc.name, err, tc.want)
		}
	}
}

// TestStartProjectedAndUnchanged checks that x0 is left alone and that an
// infeasible start is projected before the first evaluation.
func TestStartProjectedAndUnchanged(t *testing.T) {
	x0 := []float64{-3, 5}
	fn := func(grad, x []float64) float64 {
		if x[0] < 0 || x[1] > 1 {
			t.Fatalf("infeasible point %v evaluated", x)
		}
		grad[0], grad[1] = 2*(x[0]-2), 2*(x[1]+2)
		return (x[0]-2)*(x[0]-2) + (x[1]+2)*(x[1]+2)
	}
	res, err := Minimize(Problem{Func: fn, Lower: []float64{0, -1}, Upper: []float64{1, 1}}, x0, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	if x0[0] != -3 || x0[1] != 5 {
		t.Errorf("x0 modified: %v", x0)
	}
	if res.X[0] != 1 || res.X[1] != -1 {
		t.Errorf("x = %v, want the corner [1 -1]", res.X)
	}
}

// TestNoAllocPerIteration checks that the allocation count does not grow
// with the number of iterations: the workspace is allocated once.
func TestNoAllocPerIteration(t *testing.T) {
	const n = 50
	x0 := make([]float64, n)
	for i := range x0 {
		x0[i] = -1.2
		if i%2 == 1 {
			x0[i] = 1
		}
	}
	lo := make([]float64, n)
	for i := range lo {
		lo[i] = -2
	}
	fn := gonumFunc(functions.ExtendedRosenbrock{})
	allocs := func(iters int) float64 {
		return testing.AllocsPerRun(5, func() {
			res, err := Minimize(Problem{Func: fn, Lower: lo}, x0, Settings{MaxIter: iters, FTol: -1, PGTol: -1})
			if err != nil || res.Iter != iters {
				t.Fatalf("run: %v, %d iterations", err, res.Iter)
			}
		})
	}
	a2, a40 := allocs(2), allocs(40)
	if a40 != a2 {
		t.Fatalf("%v allocations for 2 iterations, %v for 40", a2, a40)
	}
}

// TestStartAtSolution checks that a start at the solution ends at once:
// at a vertex of the box whose gradient points outwards the projected
// gradient is exactly zero, even with PGTol disabled.
func TestStartAtSolution(t *testing.T) {
	fn := func(grad, x []float64) float64 {
		grad[0], grad[1] = 2*(x[0]+1), 2*(x[1]-3)
		return (x[0]+1)*(x[0]+1) + (x[1]-3)*(x[1]-3)
	}
	for _, pgtol := range []float64{0, -1} {
		res, err := Minimize(Problem{Func: fn, Lower: []float64{0, 0}, Upper: []float64{1, 2}}, []float64{0, 2}, Settings{PGTol: pgtol})
		if err != nil {
			t.Fatal(err)
		}
		if res.Status != GradientConvergence || res.Iter != 0 || res.Evals != 1 || res.ProjGradNorm != 0 {
			t.Errorf("PGTol %g: %v after %d iterations, %d evaluations, projected gradient %g",
				pgtol, res.Status, res.Iter, res.Evals, res.ProjGradNorm)
		}
	}
}

// TestCallbackFields checks the Iter values passed to the callback
// against the final Result.
func TestCallbackFields(t *testing.T) {
	var last Iter
	var xs []float64
	res, err := Minimize(Problem{Func: gonumFunc(functions.ExtendedRosenbrock{})}, []float64{-1.2, 1},
		Settings{Callback: func(it Iter) bool {
			if it.Step <= 0 || it.Evals < it.Iter+1 {
				t.Errorf("iteration %d: step %g, %d evaluations", it.Iter, it.Step, it.Evals)
			}
			last = it
			xs = append(xs[:0], it.X...)
			return true
		}})
	if err != nil {
		t.Fatal(err)
	}
	if last.Iter != res.Iter || last.Evals != res.Evals || last.F != res.F || last.ProjGradNorm != res.ProjGradNorm {
		t.Errorf("last callback %+v, result %+v", last, res)
	}
	for i := range xs {
		if xs[i] != res.X[i] {
			t.Errorf("callback x %v, result x %v", xs, res.X)
		}
	}
}

// TestScale checks Settings.Scale and Result.Scale on f = ½c|x|²: with γ = 1/c the first
// steepest-descent step −γ∇f = −x lands on the minimum (Newton's step for a quadratic), so
// the run needs one trial point; and a run reports the scale s·y/y·y = 1/c of its pairs.
func TestScale(t *testing.T) {
	const c = 1e6
	p := Problem{Func: func(g, x []float64) float64 {
		f := 0.0
		for i, v := range x {
			f += 0.5 * c * v * v
			if g != nil {
				g[i] = c * v
			}
		}
		return f
	}}
	x0 := []float64{1, -2, 3}
	res, err := Minimize(p, x0, Settings{Scale: 1 / c, PGTol: 1e-12})
	if err != nil {
		t.Fatal(err)
	}
	if res.Evals != 2 || res.F != 0 {
		t.Errorf("with Scale 1/c: %d evaluations, f = %g; want 2 and 0", res.Evals, res.F)
	}
	res, err = Minimize(p, x0, Settings{MaxIter: 3})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(res.Scale*c-1) > 1e-9 {
		t.Errorf("Result.Scale = %g, want 1/c = %g", res.Scale, 1/c)
	}
}

// TestAcceptMarksFree checks that accept marks the free variables of the new point as
// setFree does on its own (the rule of Thiébaut 2002: a variable at a bound whose gradient
// points out of the box is held), on random points with many variables at their bounds.
func TestAcceptMarksFree(t *testing.T) {
	rng := rand.New(rand.NewPCG(4, 2))
	const n = 300
	for _, bounds := range []string{"lower", "upper", "both", "none"} {
		lo, hi := make([]float64, n), make([]float64, n)
		for i := range lo {
			lo[i], hi[i] = -1, 1
		}
		p := Problem{Func: func(g, x []float64) float64 { return 0 }}
		switch bounds {
		case "lower":
			p.Lower = lo
		case "upper":
			p.Upper = hi
		case "both":
			p.Lower, p.Upper = lo, hi
		}
		w := newWorkspace(n, 3)
		r := &run{p: p, w: w}
		pick := func() float64 {
			switch rng.IntN(4) {
			case 0:
				return -1
			case 1:
				return 1
			}
			return 2*rng.Float64() - 1
		}
		for trial := 0; trial < 20; trial++ {
			for i := range n {
				// Runs of equal state, so that both long and short runs occur.
				if i == 0 || rng.IntN(6) == 0 {
					w.xt[i] = pick()
				} else {
					w.xt[i] = w.xt[i-1]
				}
				w.x[i] = pick()
				w.g[i] = rng.NormFloat64()
				w.gt[i] = rng.NormFloat64()
			}
			r.accept(0)
			got := append([]int(nil), w.runs...)
			want := r.setFree(w.x, w.g)
			if r.nfree != want || !slices.Equal(got, w.runs) {
				t.Fatalf("%s bounds, trial %d: accept marked %d free in runs %v; setFree %d in %v", bounds, trial, r.nfree, got, want, w.runs)
			}
		}
	}
}

// TestNonFiniteGradientFolded checks the gradient test that accept folds into its sum s.y: a
// NaN or infinite component at an accepted trial or at a rejected one stops the run at that
// evaluation, as a scan after every evaluation does, and the run keeps the correction pairs it
// had: a run resumed from its State takes the same steps as one resumed from a run stopped
// by its callback just before. Evaluations are found by running the problem cleanly first.
func TestNonFiniteGradientFolded(t *testing.T) {
	x0 := []float64{-1.2, 1, -1.2, 1, 0.5, -0.3}
	rosen := gonumFunc(functions.ExtendedRosenbrock{})
	// The clean run: the evaluations at which each iteration ends (its accepted trial), and
	// one rejected trial after the memory is full.
	var ends []int
	if _, err := Minimize(Problem{Func: rosen}, x0, Settings{Callback: func(it Iter) bool {
		ends = append(ends, it.Evals)
		return true
	}}); err != nil {
		t.Fatal(err)
	}
	accepted, rejected, iterAt := 0, 0, map[int]int{}
	for k := 1; k < len(ends); k++ {
		for e := ends[k-1] + 1; e <= ends[k]; e++ {
			iterAt[e] = k + 1
		}
		if k > DefaultMemory+1 && accepted == 0 {
			accepted = ends[k]
		}
		if k > DefaultMemory+1 && rejected == 0 && ends[k]-ends[k-1] > 1 {
			rejected = ends[k-1] + 1
		}
	}
	if accepted == 0 || rejected == 0 {
		t.Fatalf("clean run has no accepted or rejected trial after %d iterations: %v", DefaultMemory+1, ends)
	}
	for _, bad := range []float64{math.NaN(), math.Inf(-1)} {
		for _, badEval := range []int{accepted, rejected} {
			evals := 0
			fn := func(grad, x []float64) float64 {
				evals++
				f := rosen(grad, x)
				if evals == badEval {
					grad[3] = bad
				}
				return f
			}
			var st State
			_, err := Minimize(Problem{Func: fn}, x0, Settings{Resume: &st})
			var nf *NonFiniteError
			if !errors.As(err, &nf) {
				t.Fatalf("%g at evaluation %d: error %v, want a *NonFiniteError", bad, badEval, err)
			}
			if nf.Eval != badEval || nf.GradIndex != 3 || nf.Iter != iterAt[badEval] {
				t.Errorf("%g at evaluation %d: error %+v, want evaluation %d, index 3, iteration %d",
					bad, badEval, nf, badEval, iterAt[badEval])
			}
			// The same run stopped after the iterations completed before the bad evaluation.
			var ref State
			if _, err := Minimize(Problem{Func: rosen}, x0, Settings{Resume: &ref, Callback: func(it Iter) bool {
				return it.Iter < nf.Iter-1
			}}); err != nil {
				t.Fatal(err)
			}
			if st.Pairs() != ref.Pairs() || st.Pairs() != DefaultMemory {
				t.Fatalf("pairs kept %d, reference %d, want %d", st.Pairs(), ref.Pairs(), DefaultMemory)
			}
			xr := []float64{0.3, 0.2, -0.5, 0.9, 1.1, 0.7}
			r1, err1 := Minimize(Problem{Func: rosen}, xr, Settings{Resume: &st, MaxIter: 5})
			r2, err2 := Minimize(Problem{Func: rosen}, xr, Settings{Resume: &ref, MaxIter: 5})
			if err1 != nil || err2 != nil {
				t.Fatal(err1, err2)
			}
			for i := range r1.X {
				if math.Float64bits(r1.X[i]) != math.Float64bits(r2.X[i]) {
					t.Fatalf("%g at evaluation %d: resumed run differs at x[%d]: %g vs %g", bad, badEval, i, r1.X[i], r2.X[i])
				}
			}
		}
	}
}

// TestLastAtX checks Result.LastAtX against the point of the last call of Func: true and that
// point equal to X for a run that stops after an accepted step, false for a run whose last
// trial points were rejected (a gradient of the wrong sign, so no step along it decreases
// the objective and the line search fails).
func TestLastAtX(t *testing.T) {
	for _, wrong := range []bool{false, true} {
		last := make([]float64, 3)
		sign := 1.0
		if wrong {
			sign = -1
		}
		fn := func(grad, x []float64) float64 {
			copy(last, x)
			f := 0.0
			for i, v := range x {
				d := v - float64(i+1)
				f += d * d
				grad[i] = sign * 2 * d
			}
			return f
		}
		res, err := Minimize(Problem{Func: fn, Lower: make([]float64, 3)}, []float64{5, 5, 5}, Settings{MaxIter: 3})
		if err != nil {
			t.Fatal(err)
		}
		same := true
		for i := range last {
			same = same && math.Float64bits(last[i]) == math.Float64bits(res.X[i])
		}
		if res.LastAtX != !wrong || (res.LastAtX && !same) {
			t.Fatalf("wrong gradient %v: status %v, LastAtX %v, last point %v, X %v", wrong, res.Status, res.LastAtX, last, res.X)
		}
		if wrong && (res.Status != LineSearchFailure || same) {
			t.Fatalf("wrong gradient: status %v, last point %v, X %v", res.Status, last, res.X)
		}
	}
}
