package recon

import (
	"math/rand/v2"
	"testing"
)

// TestEvalAllocs checks that an evaluation of the objective with its gradient allocates
// nothing: the data terms in one part and in parallel parts, exact and smoothed phases, and the
// total objective of Solve (data terms, regularizer, flux term) around it. The transform's own
// test (nufft TestAllocs) covers Forward and Adjoint.
func TestEvalAllocs(t *testing.T) {
	const n, pixel = 32, 1e-9
	rng := rand.New(rand.NewPCG(3, 5))
	d := randomData(rng, 0.5/pixel/2)
	g := Grid{N: n, Pixel: pixel}
	e, err := newEngine(Problem{Data: d, Grid: g, Reg: maxentReg}, Settings{Workers: 2}, GridChoice{Grid: g})
	if err != nil {
		t.Fatal(err)
	}
	x := make([]float64, n*n)
	for i := range x {
		x[i] = 0.2 + rng.Float64()
	}
	grad := make([]float64, n*n)
	f := e.f(3)
	for _, minParallel := range []int{parallelData, 0} {
		for _, smooth := range []float64{0, DefaultPhaseSmoothing} {
			e.obj.minParallel = minParallel
			e.obj.SetPhaseSmoothing(smooth)
			for name, fn := range map[string]func(){
				"Objective.Eval":          func() { e.obj.Eval(grad, x) },
				"Objective.Eval, no grad": func() { e.obj.Eval(nil, x) },
				"total objective":         func() { f(grad, x) },
			} {
				fn() // the first parallel evaluation starts the helpers
				if a := testing.AllocsPerRun(20, fn); a != 0 {
					t.Errorf("%s (threshold %d, smoothing %g): %g allocations per evaluation", name, minParallel, smooth, a)
				}
			}
		}
	}
}
