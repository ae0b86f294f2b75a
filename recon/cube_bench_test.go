package recon

import (
	"strings"
	"testing"
	"time"
)

// BenchmarkCubeNight reconstructs the 48-channel night of BenchmarkImageNight (nightData)
// on a 96 × 96 grid with total variation: "gray" is Solve on all channels, "cube=12" the
// cube of 12 groups of 4 adjacent channels (SolveCube, which runs the gray image first).
// Reported: seconds per run, the gray run's share (gray-s), the iterations of the cube's
// planes, the transform's share of the time, evaluations per plane iteration, and the cost
// of a plane's iteration in units of one Forward plus one Adjoint of the planes'
// transforms, both timed inside the cube's sweeps (iter/(F+A)run).
func BenchmarkCubeNight(b *testing.B) {
	d := nightData()
	g := Grid{N: 96, Pixel: d.Summarize().Resolution / 4}
	for _, groups := range []int{1, 12} {
		name := "gray"
		if groups > 1 {
			name = "cube=12"
		}
		b.Run(name, func(b *testing.B) {
			planes, err := SplitChannels(d, Channels{Groups: groups})
			if err != nil {
				b.Fatal(err)
			}
			var tt transformTimes
			spentNow := func() time.Duration { return tt.fwd + tt.adj }
			callsNow := func() int { return tt.nfwd + tt.nadj }
			timed := func(n int, pixel float64, u, v []float64) (Transform, error) {
				tr, err := NewTransform(0)(n, pixel, u, v)
				return timedTransform{tr, &tt}, err
			}
			b.ReportAllocs()
			var grayTime, graySpent time.Duration
			var grayCalls, planeIters int
			var res *CubeResult
			for range b.N {
				t0 := time.Now()
				inCube := false
				s := Settings{Seed: 1, Progress: func(p Progress) bool {
					if !inCube && strings.HasPrefix(p.Stage, "plane") {
						// The first iteration of the cube's sweeps: the gray run is over.
						inCube = true
						grayTime += time.Since(t0)
						grayCalls += callsNow()
						graySpent += spentNow()
					}
					return true
				}}
				c0, s0 := callsNow(), spentNow()
				grayCalls -= c0
				graySpent -= s0
				res, err = SolveCube(CubeProblem{Problem: Problem{Data: d, Grid: g, Reg: tvReg, Transform: timed}, Planes: planes}, s)
				if err != nil {
					b.Fatal(err)
				}
				if !inCube {
					grayCalls += callsNow()
					graySpent += spentNow()
				}
				planeIters += res.TotalIter
				if res.Gray != nil {
					planeIters -= res.Gray.TotalIter
				}
			}
			el := b.Elapsed().Seconds()
			b.ReportMetric(el/float64(b.N), "s/run")
			b.ReportMetric(spentNow().Seconds()/el, "nufft-share")
			if groups > 1 {
				cube := el - grayTime.Seconds()
				planeCalls := callsNow() - grayCalls
				perCall := (spentNow() - graySpent).Seconds() / float64(planeCalls)
				b.ReportMetric(grayTime.Seconds()/float64(b.N), "gray-s")
				b.ReportMetric(float64(planeIters)/float64(b.N), "plane-iter/run")
				b.ReportMetric(float64(planeCalls)/float64(planeIters), "evals/iter")
				b.ReportMetric(cube/float64(planeIters)/perCall, "iter/(F+A)run")
				b.Logf("cube: %d planes, η %.3g, %s; χ²ᵣ %.3f (gray %.3f); one plane's Forward+Adjoint %.2f ms",
					len(res.Planes), res.SpectralWeight, res.StopReason, res.Chi2r, res.Gray.Chi2r, perCall*1e3)
			}
		})
	}
}
