package recon

import (
	"math"
	"math/rand/v2"
	"testing"

	"vcz/dataset"
	"vcz/nufft"
)

// plainTransform hides the sorted calls of the transform it wraps, so that a forward model
// made with it keeps its points in the order of the data and calls Forward and Adjoint.
type plainTransform struct{ Transform }

// TestSortedModel checks the forward model that keeps its visibilities in the order of the
// gridding transform's points (nufft.Plan's Order, ForwardSorted, AdjointSorted) against the
// one that keeps them in the order of the data and lets the transform permute them: the
// objective, its gradient, every term's χ² and the predicted observables agree to rounding
// without smearing (only the order of one sum over the points changes), and to the bit with
// smearing, whose band averages gather their sub-points in the same order. The unpermuted
// model is itself checked against the direct sum (TestModelAgainstDirectSum) and against
// finite differences (TestObjectiveGradient, TestSmearGradient).
func TestSortedModel(t *testing.T) {
	const n, pixel = 48, 1e-9
	rng := rand.New(rand.NewPCG(3, 9))
	d := wideBandData(rng, 0.5/pixel/2, 0.2, 0.02)
	img := make([]float64, n*n)
	for i := range img {
		img[i] = 0.1 + rng.Float64()
	}
	for _, w := range []int{1, 2} {
		plan := func(n int, pixel float64, u, v []float64) (Transform, error) {
			return nufft.NewPlan(n, n, pixel, u, v, nufft.Options{Workers: w})
		}
		plain := func(n int, pixel float64, u, v []float64) (Transform, error) {
			tr, err := plan(n, pixel, u, v)
			return plainTransform{tr}, err
		}
		for _, sm := range []Smearing{SmearOff, SmearOn} {
			opt := ModelOptions{Smearing: sm, SmearTol: 1e-6}
			ms, err := NewForwardModelWith(d, Grid{N: n, Pixel: pixel}, true, plan, opt)
			if err != nil {
				t.Fatal(err)
			}
			mp, err := NewForwardModelWith(d, Grid{N: n, Pixel: pixel}, true, plain, opt)
			if err != nil {
				t.Fatal(err)
			}
			if ms.st == nil || mp.st != nil {
				t.Fatalf("sorted model: transform %T in its order %v; plain model %T in its order %v", ms.tr, ms.st != nil, mp.tr, mp.st != nil)
			}
			if ms.Smearing().Modelled != (sm == SmearOn) {
				t.Fatalf("%v: smearing modelled %v", sm, ms.Smearing().Modelled)
			}
			tol := 1e-13
			if sm == SmearOn {
				tol = 0
			}
			for _, smooth := range []float64{0, DefaultPhaseSmoothing} {
				os, op := NewObjective(d, ms, TermOptions{}), NewObjective(d, mp, TermOptions{})
				os.SetPhaseSmoothing(smooth)
				op.SetPhaseSmoothing(smooth)
				gs, gp := make([]float64, n*n), make([]float64, n*n)
				js, jp := os.Eval(gs, img), op.Eval(gp, img)
				if e := math.Abs(js-jp) / math.Abs(jp); !(e <= tol) {
					t.Errorf("%d workers, %v, smoothing %g: objective %.17g, unsorted %.17g (relative %.3g)", w, sm, smooth, js, jp, e)
				}
				if e := relErr(gs, gp); !(e <= tol) {
					t.Errorf("%d workers, %v, smoothing %g: gradient relative difference %.3g", w, sm, smooth, e)
				}
				for _, ty := range dataset.DataTypes() {
					if a, b := os.Chi2(ty), op.Chi2(ty); a != b {
						t.Errorf("%d workers, %v, smoothing %g: χ² of %v %.17g, unsorted %.17g", w, sm, smooth, ty, a, b)
					}
				}
			}
			ps, pp := predict(d, &ms.sampling, ms.vis), predict(d, &mp.sampling, mp.vis)
			for _, ty := range dataset.DataTypes() {
				a, b := ps.Of(ty), pp.Of(ty)
				for i := range b {
					if a[i] != b[i] && !(math.IsNaN(a[i]) && math.IsNaN(b[i])) {
						t.Fatalf("%d workers, %v: prediction %d of %v is %.17g, unsorted %.17g", w, sm, i, ty, a[i], b[i])
					}
				}
			}
		}
	}
}
