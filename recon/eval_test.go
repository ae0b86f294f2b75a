package recon

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"vcz/nufft"
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

// TestSmoothPhaseExact checks the shared evaluation of the closure-phase term against its
// definitions: the exact term against 2(1 − cos φ)/σ² with φ = atan2(Im z, Re z) (the
// wrap-safe χ² of term_phase.go), the smoothed value against 2(|z| − Re z)/(√(|z|² + η²)σ²)
// written out, and its gradient against central finite differences.
func TestSmoothPhaseExact(t *testing.T) {
	rng := rand.New(rand.NewPCG(8, 1))
	for k := 0; k < 200; k++ {
		z := complex(rng.NormFloat64(), rng.NormFloat64())
		if k%10 == 0 {
			z *= 1e-4 // amplitudes well below η
		}
		eta, sigma := 0.01+0.3*rng.Float64(), 0.02+0.5*rng.Float64()
		is2 := 1 / (sigma * sigma)
		exact, v, g := smoothPhaseExact(z, eta, is2)
		phi := math.Atan2(imag(z), real(z))
		if want := 2 * (1 - math.Cos(phi)) * is2; math.Abs(exact-want) > 1e-12*max(want, is2*1e-3) {
			t.Errorf("z = %v, σ = %g: exact term %.15g, want %.15g", z, sigma, exact, want)
		}
		smooth := func(z complex128) float64 {
			a := cmplx.Abs(z)
			return 2 * (a - real(z)) / (math.Sqrt(a*a+eta*eta) * sigma * sigma)
		}
		if want := smooth(z); math.Abs(v-want) > 1e-12*max(want, is2*1e-3) {
			t.Errorf("z = %v, η = %g, σ = %g: smoothed term %.15g, want %.15g", z, eta, sigma, v, want)
		}
		h := 1e-6 * cmplx.Abs(z) // |z| has a kink at 0: steps stay well inside its scale
		gre := (smooth(z+complex(h, 0)) - smooth(z-complex(h, 0))) / (2 * h)
		gim := (smooth(z+complex(0, h)) - smooth(z-complex(0, h))) / (2 * h)
		if d := cmplx.Abs(g - complex(gre, gim)); d > 1e-6*max(cmplx.Abs(g), is2/eta) {
			t.Errorf("z = %v, η = %g, σ = %g: gradient %v, finite differences %v", z, eta, sigma, g, complex(gre, gim))
		}
	}
}

// TestEvalHelpersSameBits checks that the parts of an evaluation give the same bits whether
// the caller evaluates them all (a transform of one worker, or setSerial) or the transform's
// second worker may take one (nufft.Plan.Parallel, countedParallel), with exact and smoothed
// phases: which goroutine evaluates a part must not matter.
func TestEvalHelpersSameBits(t *testing.T) {
	const n, pixel = 16, 1e-9
	rng := rand.New(rand.NewPCG(4, 4))
	d := randomData(rng, 0.5/pixel/2)
	x := make([]float64, n*n)
	for i := range x {
		x[i] = 0.2 + rng.Float64()
	}
	eval := func(workers int, serial bool, smooth float64) (float64, []float64, [nTypes]float64) {
		calls := 0
		mk := func(n int, pixel float64, u, v []float64) (Transform, error) {
			p, err := nufft.NewPlan(n, n, pixel, u, v, nufft.Options{Workers: workers})
			return countedParallel{p, &calls}, err
		}
		m, err := NewForwardModel(d, Grid{N: n, Pixel: pixel}, true, mk)
		if err != nil {
			t.Fatal(err)
		}
		o := NewObjective(d, m, TermOptions{})
		o.minParallel = 0
		o.SetPhaseSmoothing(smooth)
		o.setSerial(serial)
		g := make([]float64, n*n)
		f := o.Eval(g, x)
		if (calls > 0) != !serial {
			t.Fatalf("%d workers, serial %v: the parts went to the transform's workers %d times", workers, serial, calls)
		}
		return f, g, o.chi2
	}
	for _, smooth := range []float64{0, DefaultPhaseSmoothing} {
		f1, g1, c1 := eval(1, false, smooth)
		for _, serial := range []bool{false, true} {
			f2, g2, c2 := eval(2, serial, smooth)
			if f1 != f2 || c1 != c2 {
				t.Errorf("smoothing %g, serial %v: objective %v and χ² %v with two workers, %v and %v with one", smooth, serial, f2, c2, f1, c1)
			}
			for i := range g1 {
				if g1[i] != g2[i] {
					t.Fatalf("smoothing %g, serial %v: gradient %d is %v with two workers, %v with one", smooth, serial, i, g2[i], g1[i])
				}
			}
		}
	}
}

// countedParallel is a nufft.Plan that counts its calls of Parallel.
type countedParallel struct {
	*nufft.Plan
	calls *int
}

func (c countedParallel) Parallel(n int, j nufft.Job) {
	*c.calls++
	c.Plan.Parallel(n, j)
}

// TestPhaseResidual checks the wrap-safe residual of the phase terms against its definition
// 2 sin(Δφ/2)/σ with Δφ = atan2(Im z, Re z) (the normalised residual of term_phase.go) over
// all phases, small and large moduli, the axes and signed zeros, and that its square is the
// exact term 2(1 − cos Δφ)/σ² of the same z.
func TestPhaseResidual(t *testing.T) {
	rng := rand.New(rand.NewPCG(8, 2))
	var zs []complex128
	for k := 0; k < 2000; k++ {
		phi := (2*rng.Float64() - 1) * math.Pi
		if k%7 == 0 {
			phi = math.Pi - math.Ldexp(rng.Float64(), -rng.IntN(40)) // near the negative real axis
		}
		if k%11 == 0 {
			phi = math.Ldexp(2*rng.Float64()-1, -rng.IntN(40)) // near the positive real axis
		}
		zs = append(zs, cmplx.Rect(math.Ldexp(1, rng.IntN(400)-300), phi))
	}
	neg0 := math.Copysign(0, -1)
	zs = append(zs, 1, -1, 1i, -1i, complex(-1, neg0), complex(-2, 0), complex(neg0, 3), complex(5, neg0), 1e200, complex(-1e200, 1))
	for _, z := range zs {
		const sigma = 0.3
		got := phaseResidual(z, sigma)
		phi := math.Atan2(imag(z), real(z))
		want := 2 * math.Sin(phi/2) / sigma
		if math.Abs(got-want) > 2e-15*math.Max(math.Abs(want), 1/sigma) || math.Signbit(got) != math.Signbit(want) {
			t.Errorf("z = %v: residual %.17g, 2 sin(Δφ/2)/σ = %.17g", z, got, want)
		}
		if term := 2 * (1 - math.Cos(phi)) / (sigma * sigma); math.Abs(got*got-term) > 1e-14*math.Max(term, 1) {
			t.Errorf("z = %v: residual² %.17g, 2(1 − cos Δφ)/σ² = %.17g", z, got*got, term)
		}
	}
	if r := phaseResidual(0, 0.1); r != 0 {
		t.Errorf("z = 0: residual %g, want 0", r)
	}
}
