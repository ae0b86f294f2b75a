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
