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
// planes, the transform's share of the time, and, for the planes' runs after the gray image:
// evaluations of the objective per iteration (evals/iter: Forward calls, one per evaluation),
// the cost of an iteration (iter/(F+A)run) and of an evaluation (eval/(F+A)run) in units of
// one Forward plus one Adjoint of the planes' transforms, all timed inside the cube's sweeps,
// so that the ratios hold on a loaded machine too. The transform calls are those the
// reconstruction makes, in the transform's own order of the points (ForwardSorted,
// AdjointSorted). The sweeps fit several planes at once (planes-at-once, cubeWorkers), each
// with its transform on one processor: the costs are then in processor time, the sweeps'
// wall time times planes-at-once (idle time included) against the
// mean duration of a transform call.
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
			var tt, grayTT transformTimes // all calls, and those of the gray runs
			timedMk := func(n int, pixel float64, u, v []float64) (Transform, error) {
				tr, err := NewTransform(0)(n, pixel, u, v)
				return timed(tr, &tt), err
			}
			sub := func(a, b transformTimes) transformTimes {
				return transformTimes{fwd: a.fwd - b.fwd, adj: a.adj - b.adj, nfwd: a.nfwd - b.nfwd, nadj: a.nadj - b.nadj}
			}
			add := func(a, b transformTimes) transformTimes {
				return transformTimes{fwd: a.fwd + b.fwd, adj: a.adj + b.adj, nfwd: a.nfwd + b.nfwd, nadj: a.nadj + b.nadj}
			}
			b.ReportAllocs()
			var grayTime time.Duration
			var planeIters int
			var res *CubeResult
			for range b.N {
				t0 := time.Now()
				tt0 := tt
				inCube := false
				s := Settings{Seed: 1, Progress: func(p Progress) bool {
					if !inCube && strings.HasPrefix(p.Stage, "plane") {
						// The first iteration of the cube's sweeps: the gray run is over.
						inCube = true
						grayTime += time.Since(t0)
						grayTT = add(grayTT, sub(tt, tt0))
					}
					return true
				}}
				res, err = SolveCube(CubeProblem{Problem: Problem{Data: d, Grid: g, Reg: tvReg, Transform: timedMk}, Planes: planes}, s)
				if err != nil {
					b.Fatal(err)
				}
				if !inCube {
					grayTT = add(grayTT, sub(tt, tt0))
				}
				planeIters += res.TotalIter
				if res.Gray != nil {
					planeIters -= res.Gray.TotalIter
				}
			}
			el := b.Elapsed().Seconds()
			b.ReportMetric(el/float64(b.N), "s/run")
			b.ReportMetric((tt.fwd+tt.adj).Seconds()/el, "nufft-share")
			if groups > 1 {
				at := min(cubeWorkers(Settings{}), (groups+1)/2)
				b.ReportMetric(float64(at), "planes-at-once")
				cube := (el - grayTime.Seconds()) * float64(at)
				pt := sub(tt, grayTT)
				pair := pt.perPair().Seconds()
				b.ReportMetric(grayTime.Seconds()/float64(b.N), "gray-s")
				b.ReportMetric(float64(planeIters)/float64(b.N), "plane-iter/run")
				b.ReportMetric(float64(pt.nfwd)/float64(planeIters), "evals/iter")
				b.ReportMetric(cube/float64(planeIters)/pair, "iter/(F+A)run")
				b.ReportMetric(cube/float64(pt.nfwd)/pair, "eval/(F+A)run")
				b.Logf("cube: %d planes, η %.3g, %s; χ²ᵣ %.3f (gray %.3f); planes: %d Forward, %d Adjoint, %.3f + %.3f ms",
					len(res.Planes), res.SpectralWeight, res.StopReason, res.Chi2r, res.Gray.Chi2r,
					pt.nfwd, pt.nadj, pt.fwd.Seconds()/float64(pt.nfwd)*1e3, pt.adj.Seconds()/float64(pt.nadj)*1e3)
			}
		})
	}
}
