package recon

import (
	"testing"
	"time"
)

// BenchmarkCubeNight reconstructs the 48-channel night of BenchmarkImageNight (nightData)
// on a 96 × 96 grid with total variation: "gray" is Solve on all channels, "cube=12" the
// cube of 12 groups of 4 adjacent channels (SolveCube, which runs the gray image first).
// Reported: seconds per run, the iterations of the cube's planes, the transform's share of
// the time, and the cost of a plane's iteration in units of one Forward plus one Adjoint of
// that plane's transform, timed inside the runs (iter/(F+A)run), over the cube's sweeps
// alone (the gray run measured apart).
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
			var spent time.Duration
			calls := 0
			timed := func(n int, pixel float64, u, v []float64) (Transform, error) {
				tr, err := NewTransform(0)(n, pixel, u, v)
				return timedTransform{tr, &spent, &calls}, err
			}
			b.ReportAllocs()
			var grayTime time.Duration
			var grayCalls, planeIters int
			var res *CubeResult
			for range b.N {
				t0 := time.Now()
				inCube := false
				s := Settings{Seed: 1, Progress: func(p Progress) bool {
					if !inCube && len(p.Stage) > 5 && p.Stage[:5] == "plane" {
						inCube = true
						grayTime += time.Since(t0)
						grayCalls = calls
					}
					return true
				}}
				res, err = SolveCube(CubeProblem{Problem: Problem{Data: d, Grid: g, Reg: tvReg, Transform: timed}, Planes: planes}, s)
				if err != nil {
					b.Fatal(err)
				}
				planeIters += res.TotalIter
				if res.Gray != nil {
					planeIters -= res.Gray.TotalIter
				}
			}
			el := b.Elapsed().Seconds()
			b.ReportMetric(el/float64(b.N), "s/run")
			b.ReportMetric(spent.Seconds()/el, "nufft-share")
			if groups > 1 {
				cube := el - grayTime.Seconds()
				b.ReportMetric(grayTime.Seconds()/float64(b.N), "gray-s")
				b.ReportMetric(float64(planeIters)/float64(b.N), "plane-iter/run")
				perCall := spent.Seconds() / float64(calls)
				b.ReportMetric(cube/float64(planeIters)/perCall, "iter/(F+A)run")
				b.ReportMetric(float64(calls-grayCalls*1)/float64(planeIters), "evals/iter")
				b.Logf("cube: %d planes, η %.3g, %s; χ²ᵣ %.3f (gray %.3f)", len(res.Planes), res.SpectralWeight, res.StopReason, res.Chi2r, res.Gray.Chi2r)
			}
		})
	}
}
