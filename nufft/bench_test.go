package nufft

import (
	"fmt"
	"math/rand/v2"
	"testing"
	"time"
)

// benchProblem returns m random points filling the band and a random
// image, for a square n×n image with pixel 1 mas.
func benchProblem(n, m int) (pixel float64, u, v, img []float64) {
	const mas = 4.84813681109536e-9
	rng := rand.New(rand.NewPCG(uint64(n), uint64(m)))
	u = make([]float64, m)
	v = make([]float64, m)
	for k := range u {
		u[k] = (rng.Float64() - 0.5) / mas
		v[k] = (rng.Float64() - 0.5) / mas
	}
	img = make([]float64, n*n)
	for i := range img {
		img[i] = rng.Float64()
	}
	return mas, u, v, img
}

var benchSizes = []struct{ n, m int }{{128, 10000}, {256, 100000}, {512, 1000000}}

func benchPlan(b *testing.B, n, m, workers int, adjoint bool) {
	pixel, u, v, img := benchProblem(n, m)
	p, err := NewPlan(n, n, pixel, u, v, Options{Tol: 1e-6, Workers: workers})
	if err != nil {
		b.Fatal(err)
	}
	vis := make([]complex128, m)
	out := make([]float64, n*n)
	// Warm both directions, so that no timed call is the first.
	p.Forward(vis, img)
	p.Adjoint(out, vis)
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		if adjoint {
			p.Adjoint(out, vis)
		} else {
			p.Forward(vis, img)
		}
	}
	b.StopTimer()
	// Split of one call into FFT and gridding time, measured separately.
	fft, grid := p.timeSplit(adjoint, 3, vis, img, out)
	b.ReportMetric(fft.Seconds()*1e3, "fft-ms")
	b.ReportMetric(grid.Seconds()*1e3, "grid-ms")
	_, _, total := p.memBytes()
	b.ReportMetric(float64(total)/(1<<20), "plan-MiB")
	b.ReportMetric(benchError(p, pixel, u, v, img, adjoint), "relerr")
}

// benchError returns the relative l2 error of one call against Exact on
// the first 1000 points (for Adjoint: visibilities nonzero only there),
// which keeps the direct sum affordable.
func benchError(p *Plan, pixel float64, u, v, img []float64, adjoint bool) float64 {
	const k = 1000
	n := p.nx
	e, err := NewExact(n, n, pixel, u[:k], v[:k], Options{})
	if err != nil {
		panic(err)
	}
	if !adjoint {
		got := make([]complex128, len(u))
		p.Forward(got, img)
		want := make([]complex128, k)
		e.Forward(want, img)
		return relErrC(got[:k], want)
	}
	vis := make([]complex128, len(u))
	for i := range k {
		vis[i] = complex(img[i], img[len(img)-1-i]-0.5)
	}
	got := make([]float64, n*n)
	p.Adjoint(got, vis)
	want := make([]float64, n*n)
	e.Adjoint(want, vis[:k])
	return relErrR(got, want)
}

func BenchmarkForward(b *testing.B) {
	for _, s := range benchSizes {
		b.Run(fmt.Sprintf("n=%d/m=%d", s.n, s.m), func(b *testing.B) { benchPlan(b, s.n, s.m, 1, false) })
	}
	b.Run("n=256/m=100000/workers=2", func(b *testing.B) { benchPlan(b, 256, 100000, 2, false) })
	b.Run("n=512/m=1000000/workers=2", func(b *testing.B) { benchPlan(b, 512, 1000000, 2, false) })
}

func BenchmarkAdjoint(b *testing.B) {
	for _, s := range benchSizes {
		b.Run(fmt.Sprintf("n=%d/m=%d", s.n, s.m), func(b *testing.B) { benchPlan(b, s.n, s.m, 1, true) })
	}
	b.Run("n=256/m=100000/workers=2", func(b *testing.B) { benchPlan(b, 256, 100000, 2, true) })
	b.Run("n=512/m=1000000/workers=2", func(b *testing.B) { benchPlan(b, 512, 1000000, 2, true) })
}

func BenchmarkExactForward(b *testing.B) {
	for _, s := range benchSizes[:2] {
		b.Run(fmt.Sprintf("n=%d/m=%d", s.n, s.m), func(b *testing.B) {
			pixel, u, v, img := benchProblem(s.n, s.m)
			e, err := NewExact(s.n, s.n, pixel, u, v, Options{Workers: 1})
			if err != nil {
				b.Fatal(err)
			}
			vis := make([]complex128, s.m)
			b.ReportAllocs()
			for b.Loop() {
				e.Forward(vis, img)
			}
		})
	}
}

// timeSplit returns the minimum over reps of the time of the FFT phases
// and of the gridding phase (interpolation or spreading) of one call;
// the Hermitian fill of Forward is part of its column transforms. The FFT phases run as
// one parallel call, as in Forward and Adjoint, so with several workers
// each part pays one wake-up of the helpers.
func (p *plan) timeSplit(adjoint bool, reps int, vis []complex128, img, out []float64) (fft, grid time.Duration) {
	p.dstC, p.srcR, p.dstR, p.srcC = vis, img, out, vis
	defer func() { p.dstC, p.srcR, p.dstR, p.srcC = nil, nil, nil, nil }()
	fft, grid = time.Hour, time.Hour
	for range reps {
		t0 := time.Now()
		if adjoint {
			p.runPhase(phAdjSpread)
			t1 := time.Now()
			p.runPhases(adjPhases[1:]) // cols and rows, in one call as Adjoint runs them
			t2 := time.Now()
			grid, fft = min(grid, t1.Sub(t0)), min(fft, t2.Sub(t1))
		} else {
			p.runPhases(fwdPhases[:2]) // rows and cols, in one call as Forward runs them
			t1 := time.Now()
			p.runPhase(phFwdInterp)
			t2 := time.Now()
			fft, grid = min(fft, t1.Sub(t0)), min(grid, t2.Sub(t1))
		}
	}
	return fft, grid
}

// BenchmarkExactAdjoint runs a problem of the size for which New picks
// Exact, serially and with two workers.
func BenchmarkExactAdjoint(b *testing.B) {
	const n, m = 128, 200
	for _, w := range []int{1, 2} {
		b.Run(fmt.Sprintf("n=%d/m=%d/workers=%d", n, m, w), func(b *testing.B) {
			pixel, u, v, img := benchProblem(n, m)
			e, err := NewExact(n, n, pixel, u, v, Options{Workers: w})
			if err != nil {
				b.Fatal(err)
			}
			vis := make([]complex128, m)
			e.Forward(vis, img)
			out := make([]float64, n*n)
			b.ReportAllocs()
			for b.Loop() {
				e.Adjoint(out, vis)
			}
		})
	}
}

// BenchmarkNewPlan measures making a plan, which computes the kernel
// weights of every point.
func BenchmarkNewPlan(b *testing.B) {
	for _, s := range benchSizes {
		b.Run(fmt.Sprintf("n=%d/m=%d", s.n, s.m), func(b *testing.B) {
			pixel, u, v, _ := benchProblem(s.n, s.m)
			b.ReportAllocs()
			for b.Loop() {
				if _, err := NewPlan(s.n, s.n, pixel, u, v, Options{Tol: 1e-6, Workers: 1}); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// BenchmarkSorted runs ForwardSorted and AdjointSorted, the calls in the
// plan's order of the points, at the largest size, where the permutation
// of Forward and Adjoint costs most.
func BenchmarkSorted(b *testing.B) {
	const n, m = 512, 1000000
	pixel, u, v, img := benchProblem(n, m)
	p, err := NewPlan(n, n, pixel, u, v, Options{Tol: 1e-6, Workers: 1})
	if err != nil {
		b.Fatal(err)
	}
	vis := make([]complex128, m)
	out := make([]float64, n*n)
	p.ForwardSorted(vis, img)
	p.AdjointSorted(out, vis)
	for _, adjoint := range []bool{false, true} {
		name := "Forward"
		if adjoint {
			name = "Adjoint"
		}
		b.Run(fmt.Sprintf("%s/n=%d/m=%d", name, n, m), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if adjoint {
					p.AdjointSorted(out, vis)
				} else {
					p.ForwardSorted(vis, img)
				}
			}
		})
	}
}

// nopJob is a job whose shards do nothing, for the cost of the pool.
type nopJob struct{}

func (nopJob) do(_, _ int) {}

// BenchmarkPool measures the cost of a parallel call itself: waking the
// helpers, taking the shards and waiting at the ends of the steps, with
// shards that do nothing. A transform's call has 3 or 4 steps of 8 to
// 33 shards at 256² and 512².
func BenchmarkPool(b *testing.B) {
	for _, w := range []int{1, 2} {
		for _, steps := range []int{1, 4} {
			b.Run(fmt.Sprintf("workers=%d/steps=%d", w, steps), func(b *testing.B) {
				p := newPool(w)
				defer stopPool(p.ch)
				counts := make([]int, steps)
				for i := range counts {
					counts[i] = 16
				}
				b.ReportAllocs()
				for b.Loop() {
					p.runSteps(nopJob{}, counts)
				}
			})
		}
	}
}
