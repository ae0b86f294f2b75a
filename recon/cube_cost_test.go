package recon

import (
	"math"
	"math/rand/v2"
	"testing"
)

// costEngine returns an engine on a small chromatic data set whose transform counts its
// calls in tt, and a start image within its bounds.
func costEngine(t *testing.T, tt *transformTimes) (*engine, []float64) {
	t.Helper()
	d := observeChromatic(7, 4, 40, func(l float64) func(u, v float64) complex128 { return discVis(4 * Mas * l / 2e-6) },
		synthOpts{nchan: 2, nha: 3, lmin: 1.9e-6, lmax: 2.2e-6, hspan: 1, sigV2: 0.01, sigPhi: 0.05, t3: true, noise: true})
	g := Grid{N: 16, Pixel: 0.6 * Mas}
	mk := func(n int, pixel float64, u, v []float64) (Transform, error) {
		tr, err := NewTransform(1)(n, pixel, u, v)
		return timed(tr, tt), err
	}
	e, err := newEngine(Problem{Data: d, Reg: tvReg, Transform: mk}, Settings{Seed: 1}, GridChoice{Grid: g, FOV: 16 * g.Pixel})
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(3, 9))
	x0 := make([]float64, g.N*g.N)
	for i := range x0 {
		x0[i] = rng.Float64() / float64(len(x0))
	}
	return e, x0
}

// TestEngineValueWithoutGradient checks that the engine's objective has the same bits whether
// or not the gradient is asked for, which lets a run take its starting value from optim's
// first evaluation (engine.run).
func TestEngineValueWithoutGradient(t *testing.T) {
	var tt transformTimes
	e, x := costEngine(t, &tt)
	rng := rand.New(rand.NewPCG(5, 1))
	grad := make([]float64, len(x))
	for trial := range 5 {
		for _, mu := range []float64{0, 1e3} {
			f := e.f(mu)
			a, b := f(nil, x), f(grad, x)
			if math.Float64bits(a) != math.Float64bits(b) {
				t.Fatalf("point %d, weight %g: %v without the gradient, %v with it", trial, mu, a, b)
			}
		}
		for i := range x {
			x[i] *= 0.5 + rng.Float64()
		}
	}
}

// TestRunEvaluatesOnce checks that a run from a start within the bounds costs one Forward per
// evaluation of optim and nothing more: the start's value comes from optim's first
// evaluation.
func TestRunEvaluatesOnce(t *testing.T) {
	var tt transformTimes
	e, x0 := costEngine(t, &tt)
	out, err := e.run(x0, 1e3, e.obj.Use(), 20, "test")
	if err != nil {
		t.Fatal(err)
	}
	if out.Iter == 0 || tt.nfwd != out.Evals {
		t.Fatalf("%d iterations, %d evaluations, %d Forward calls", out.Iter, out.Evals, tt.nfwd)
	}
	if !(out.F < e.f(1e3)(nil, x0)) {
		t.Fatalf("the run did not lower the objective: %v", out.F)
	}
}

// TestCubeKnownData checks that the cube objective without gradient has the same bits when
// it takes each plane's data value from the plane's last evaluation with gradient (as at the
// end of a plane's run in SolveCube) as when it evaluates the data terms again.
func TestCubeKnownData(t *testing.T) {
	const n, pixel, P = 8, 1e-9, 3
	rng := rand.New(rand.NewPCG(4, 4))
	planes := randomPlanes(rng, P, 0.25/pixel)
	g := Grid{N: n, Pixel: pixel}
	x := make([]float64, P*n*n)
	for i := range x {
		x[i] = (0.2 + rng.Float64()) / float64(n*n)
	}
	c := cubeObjectiveFor(t, planes, g, tvReg, 37, &SpectralSmoothness{Planes: P, NPix: n * n}, 5e3)
	want := c.Eval(nil, x)
	grad := make([]float64, n*n)
	for k, p := range c.Planes {
		p.data, p.known = p.Obj.Eval(grad, x[k*n*n:(k+1)*n*n]), true
	}
	// Evaluations elsewhere in between must not matter: the value is the one kept.
	c.Planes[1].Obj.Eval(nil, make([]float64, n*n))
	if got := c.Eval(nil, x); math.Float64bits(got) != math.Float64bits(want) {
		t.Fatalf("with the kept values %.17g, evaluated %.17g", got, want)
	}
}

// TestSolveCubeForwardCalls checks that the cube's sweeps spend no Forward without its
// Adjoint beyond the evaluation of the start: a plane's data value at the end of its run
// serves the cube's evaluations after the sweeps, and each run's start value is that of
// optim's first evaluation.
func TestSolveCubeForwardCalls(t *testing.T) {
	d, planes := smallChromaticDisc(t, 3)
	var tt transformTimes
	mk := func(n int, pixel float64, u, v []float64) (Transform, error) {
		tr, err := NewTransform(1)(n, pixel, u, v)
		return timed(tr, &tt), err
	}
	p := Problem{Data: d, Reg: tvReg, Grid: Grid{N: 24, Pixel: 0.5 * Mas}, Transform: mk}
	s := Settings{Seed: 1, PathIter: 30, MaxIter: 60, WeightSteps: 3}
	gray, err := Solve(p, s)
	if err != nil {
		t.Fatal(err)
	}
	// From given start images: no factor search, whose χ² measurements cost Forward calls
	// of their own.
	starts, weights := make([][]float64, len(planes)), make([]float64, len(planes))
	for k := range planes {
		starts[k], weights[k] = gray.Image, gray.Weight/float64(len(planes))
	}
	tt = transformTimes{}
	if _, err := SolveCube(CubeProblem{Problem: p, Planes: planes, Starts: starts, PlaneWeights: weights}, s); err != nil {
		t.Fatal(err)
	}
	if tt.nfwd-tt.nadj != len(planes) {
		t.Fatalf("%d Forward and %d Adjoint calls for %d planes, want %d more Forward", tt.nfwd, tt.nadj, len(planes), len(planes))
	}
}

// TestPlaneRegDot checks planeReg.evalDot against Eval followed by the engine's sum
// Σ grad_i·x_i, bit for bit: with SpectralSmoothness (the sum in the pass of its gradient)
// with and without a spatial term, and with JointSparsity (a pass of its own).
func TestPlaneRegDot(t *testing.T) {
	const P, side = 4, 6
	n := side * side
	rng := rand.New(rand.NewPCG(12, 5))
	cube := make([]float64, P*n)
	for i := range cube {
		cube[i] = rng.Float64() / float64(n)
	}
	x := make([]float64, n)
	for i := range x {
		x[i] = rng.Float64() / float64(n)
	}
	tv, err := tvReg(Grid{N: side, Pixel: 1})
	if err != nil {
		t.Fatal(err)
	}
	for _, spec := range []Regularizer{&SpectralSmoothness{Planes: P, NPix: n}, &JointSparsity{Planes: P, NPix: n}} {
		for _, spatial := range []Regularizer{nil, tv} {
			for _, k := range []int{0, 2} {
				r := &planeReg{spatial: spatial, mu: 3, spectral: spec, eta: 7e3, cube: append([]float64(nil), cube...), k: k, npix: n}
				r.spectral.(planeSpectral).prepare(r.cube, k)
				g1, g2 := make([]float64, n), make([]float64, n)
				v1 := r.Eval(g1, x)
				dot1 := 0.0
				for i, g := range g1 {
					dot1 += g * x[i]
				}
				v2, dot2 := r.evalDot(g2, x)
				if math.Float64bits(v1) != math.Float64bits(v2) || math.Float64bits(dot1) != math.Float64bits(dot2) {
					t.Fatalf("%T, spatial %v, plane %d: value %v and sum %v, want %v and %v", spec, spatial != nil, k, v2, dot2, v1, dot1)
				}
				for i := range g1 {
					if math.Float64bits(g1[i]) != math.Float64bits(g2[i]) {
						t.Fatalf("%T, spatial %v, plane %d: gradient differs at %d", spec, spatial != nil, k, i)
					}
				}
			}
		}
	}
}

// TestSolveCubeMovedFigures checks that the figures of a cube moved to the centre after its
// sweeps are those of the moved planes, not the values kept from the planes' runs: each
// plane's χ²ᵣ equals that of a fresh evaluation of its image.
func TestSolveCubeMovedFigures(t *testing.T) {
	d, planes := smallChromaticDisc(t, 3)
	g := Grid{N: 24, Pixel: 0.5 * Mas}
	p := Problem{Data: d, Reg: tvReg, Grid: g}
	s := Settings{Seed: 1, PathIter: 30, MaxIter: 60, WeightSteps: 3}
	gray, err := Solve(p, s)
	if err != nil {
		t.Fatal(err)
	}
	// Every plane starts from the gray image moved off the centre (V² and closure phases do
	// not fix the position): the cube is moved back before its sweeps.
	start := append([]float64(nil), gray.Image...)
	shiftCyclic(start, g.N, [2]int{4, 3})
	starts, weights := make([][]float64, len(planes)), make([]float64, len(planes))
	for k := range planes {
		starts[k], weights[k] = start, gray.Weight/float64(len(planes))
	}
	res, err := SolveCube(CubeProblem{Problem: p, Planes: planes, Starts: starts, PlaneWeights: weights}, s)
	if err != nil {
		t.Fatal(err)
	}
	if res.Moves == 0 {
		t.Fatal("the cube was not moved: the test does not reach its case")
	}
	for k, pr := range res.Planes {
		m, err := NewForwardModel(planes[k].Data, g, true, nil)
		if err != nil {
			t.Fatal(err)
		}
		o := NewObjective(planes[k].Data, m, TermOptions{})
		o.Eval(nil, pr.Image)
		if got := o.TotalChi2r(); math.Abs(got-pr.Chi2r) > 1e-9*got {
			t.Errorf("plane %d: χ²ᵣ %.12g in the result, %.12g of its image", k+1, pr.Chi2r, got)
		}
	}
}
