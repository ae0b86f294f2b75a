package nufft

import (
	"fmt"
	"testing"
	"time"
)

// BenchmarkPhases times each phase of Forward and Adjoint alone, best
// of the benchmark's iterations, with one and two workers at 256² and
// 512²: the figures of the speed-up from one to two workers, phase by
// phase. A phase runs on the output of the phase before it, which the
// warm-up calls leave in place.
func BenchmarkPhases(b *testing.B) {
	names := [nPhases]string{"fwd-rows", "fwd-cols", "fwd-interp", "adj-spread", "adj-cols", "adj-rows"}
	for _, s := range benchSizes[1:] {
		for _, workers := range []int{1, 2} {
			b.Run(fmt.Sprintf("n=%d/m=%d/workers=%d", s.n, s.m, workers), func(b *testing.B) {
				pixel, u, v, img := benchProblem(s.n, s.m)
				p, err := NewPlan(s.n, s.n, pixel, u, v, Options{Tol: 1e-6, Workers: workers})
				if err != nil {
					b.Fatal(err)
				}
				vis := make([]complex128, s.m)
				out := make([]float64, s.n*s.n)
				p.Forward(vis, img)
				p.Adjoint(out, vis)
				p.dstC, p.srcR, p.dstR, p.srcC = vis, img, out, vis
				defer func() { p.dstC, p.srcR, p.dstR, p.srcC = nil, nil, nil, nil }()
				var best [nPhases]time.Duration
				for i := range best {
					best[i] = time.Hour
				}
				b.ReportAllocs()
				for b.Loop() {
					for _, phs := range [][]int{fwdPhases, adjPhases} {
						for _, ph := range phs {
							t0 := time.Now()
							p.runPhase(ph)
							best[ph] = min(best[ph], time.Since(t0))
						}
					}
				}
				for ph, d := range best {
					b.ReportMetric(d.Seconds()*1e3, names[ph]+"-ms")
				}
			})
		}
	}
}
