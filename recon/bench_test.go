package recon

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"runtime"
	"sync"
	"testing"
	"time"

	"vcz/dataset"
	"vcz/nufft"
)

// timedTransform adds up the time spent in each direction of the transform and counts the
// calls.
type timedTransform struct {
	Transform
	t *transformTimes
}

type transformTimes struct {
	fwd, adj   time.Duration
	nfwd, nadj int
}

func (t timedTransform) Forward(dst []complex128, img []float64) {
	t0 := time.Now()
	t.Transform.Forward(dst, img)
	t.t.add(&t.t.fwd, &t.t.nfwd, time.Since(t0))
}

func (t timedTransform) Adjoint(dst []float64, vis []complex128) {
	t0 := time.Now()
	t.Transform.Adjoint(dst, vis)
	t.t.add(&t.t.adj, &t.t.nadj, time.Since(t0))
}

// timedMu guards the transformTimes of timed transforms, which the planes of a cube call at
// once.
var timedMu sync.Mutex

// add adds one call of duration d to the sum *sum and the count *n.
func (t *transformTimes) add(sum *time.Duration, n *int, d time.Duration) {
	timedMu.Lock()
	*sum += d
	*n++
	timedMu.Unlock()
}

// Parallel passes the work on to the transform's workers when it has them
// (nufft.Plan.Parallel), otherwise runs it here; it is not timed.
func (t timedTransform) Parallel(n int, j nufft.Job) {
	if p, ok := t.Transform.(interface{ Parallel(int, nufft.Job) }); ok {
		p.Parallel(n, j)
		return
	}
	for k := range n {
		j.Do(0, k)
	}
}

// SetSerial passes the setting on to the transform when it has it (nufft.Plan.SetSerial).
func (t timedTransform) SetSerial(on bool) {
	if s, ok := t.Transform.(interface{ SetSerial(bool) }); ok {
		s.SetSerial(on)
	}
}

// timedSorted is timedTransform for a transform that also works in its own order of the
// points (sortedTransform): its sorted calls are timed with the plain ones.
type timedSorted struct {
	timedTransform
	st sortedTransform
}

func (t timedSorted) Order(dst []int) { t.st.Order(dst) }

func (t timedSorted) ForwardSorted(dst []complex128, img []float64) {
	t0 := time.Now()
	t.st.ForwardSorted(dst, img)
	t.t.add(&t.t.fwd, &t.t.nfwd, time.Since(t0))
}

func (t timedSorted) AdjointSorted(dst []float64, vis []complex128) {
	t0 := time.Now()
	t.st.AdjointSorted(dst, vis)
	t.t.add(&t.t.adj, &t.t.nadj, time.Since(t0))
}

// timed wraps tr so that its calls are timed in t, keeping its sorted calls when it has them.
func timed(tr Transform, t *transformTimes) Transform {
	if st, ok := tr.(sortedTransform); ok {
		return timedSorted{timedTransform{tr, t}, st}
	}
	return timedTransform{tr, t}
}

// pairTimes times reps interleaved pairs of the public Forward and Adjoint of tr, which
// permute the visibilities between the caller's order and the transform's, and (when tr has
// them) of ForwardSorted and AdjointSorted, with m points and img as the image. It returns
// the mean time of one pair of each (0 for the sorted pair when tr has no sorted calls).
func pairTimes(tr Transform, m int, img []float64, reps int) (public, sorted time.Duration) {
	vis := make([]complex128, m)
	adj := make([]float64, len(img))
	st, _ := tr.(sortedTransform)
	for range reps {
		t0 := time.Now()
		tr.Forward(vis, img)
		tr.Adjoint(adj, vis)
		public += time.Since(t0)
		if st != nil {
			t0 = time.Now()
			st.ForwardSorted(vis, img)
			st.AdjointSorted(adj, vis)
			sorted += time.Since(t0)
		}
	}
	return public / time.Duration(reps), sorted / time.Duration(reps)
}

// perPair returns the mean time of one Forward plus one Adjoint.
func (t *transformTimes) perPair() time.Duration {
	if t.nfwd == 0 || t.nadj == 0 {
		return 0
	}
	return t.fwd/time.Duration(t.nfwd) + t.adj/time.Duration(t.nadj)
}

// nightData is one night of a 48-channel instrument on 6 telescopes over 20 hour angles:
// 15 baselines × 48 × 20 = 14 400 V² and 20 triangles × 48 × 20 = 19 200 closure phases, of a
// uniform disc of 4 mas with a companion of 30 % at 6 mas (the disc formula of Born & Wolf,
// sect. 8.5.2, plus a point source).
func nightData() *dataset.Data {
	rng := rand.New(rand.NewPCG(11, 11))
	a := newSynthArray(rng, 6, 60)
	theta, f := 4*Mas, 0.3
	x, y := 6*Mas*math.Sin(1), 6*Mas*math.Cos(1)
	vis := func(u, v float64) complex128 {
		d := complex(UniformDiscV(theta, math.Hypot(u, v)), 0)
		return (d + complex(f, 0)*cmplx.Exp(complex(0, -2*math.Pi*(u*x+v*y)))) / complex(1+f, 0)
	}
	return observe(rng, a, vis, synthOpts{nchan: 48, nha: 20, lmin: 1.5e-6, lmax: 2.4e-6, hspan: 1.5,
		sigV2: 0.02, sigPhi: 0.05, t3: true, noise: true})
}

// BenchmarkImageNight is a whole reconstruction of one night (V² + closure phases, maximum
// entropy, automatic weight) on a 128 × 128 grid. Reported: seconds per run, iterations of all
// runs, evaluations per iteration, the share of time spent in the transform, the set-up time
// before the first iteration (grid reasons, the size fit, the plan and the start image) and
// iter/(F+A), the cost of an iteration in units of one Forward plus one Adjoint: the time of
// the runs after their set-up per iteration, over the mean time of a Forward plus that of an
// Adjoint, both measured in the same runs, so that the ratio holds on a loaded machine too.
// At least evals/iter: an iteration costs that many evaluations of the objective. The runs'
// transform calls are those the reconstruction makes, in the transform's own order of the
// points (ForwardSorted, AdjointSorted); iter/(F+A)pub compares the same iteration time with a
// pair of the public Forward and Adjoint, which permute the visibilities, timed after each run
// (outside the timed part) in 50 pairs interleaved with 50 sorted pairs; sorted/pub is the
// ratio of those two pairs.
func BenchmarkImageNight(b *testing.B) {
	d := nightData()
	s := d.Summarize()
	g := Grid{N: 128, Pixel: s.Resolution / 4}
	m, err := NewForwardModel(d, g, true, nil)
	if err != nil {
		b.Fatal(err)
	}
	distinct, _ := m.Points()
	b.Logf("%d V², %d closure phases, %d distinct (u,v) points", d.Vis2.Len(), d.T3.Len(), distinct)

	b.ReportAllocs()
	b.ResetTimer()
	var tt transformTimes
	var setup time.Duration
	iters := 0
	var res *Result
	var pub, sorted time.Duration
	for i := 0; i < b.N; i++ {
		var last Transform // the transform of the final grid
		lastM := 0
		p := Problem{Data: d, Grid: g, Reg: maxentReg,
			Transform: func(n int, pixel float64, u, v []float64) (Transform, error) {
				tr, err := NewTransform(0)(n, pixel, u, v)
				last, lastM = tr, len(u)
				return timed(tr, &tt), err
			}}
		t0 := time.Now()
		first := true
		st := Settings{Seed: 1, Progress: func(Progress) bool {
			if first {
				setup += time.Since(t0)
				first = false
			}
			return true
		}}
		res, err = Solve(p, st)
		if err != nil {
			b.Fatal(err)
		}
		iters += res.TotalIter
		b.StopTimer()
		tp, ts := pairTimes(last, lastM, res.Image, 50)
		pub += tp
		sorted += ts
		b.StartTimer()
	}
	el := b.Elapsed().Seconds()
	b.ReportMetric(el/float64(b.N), "s/run")
	b.ReportMetric(float64(iters)/float64(b.N), "iter/run")
	b.ReportMetric((tt.fwd+tt.adj).Seconds()/el, "nufft-share")
	b.ReportMetric((el-setup.Seconds())/float64(iters)/tt.perPair().Seconds(), "iter/(F+A)")
	iterTime := (el - setup.Seconds()) / float64(iters)
	b.ReportMetric(iterTime/(pub.Seconds()/float64(b.N)), "iter/(F+A)pub")
	if sorted > 0 {
		b.ReportMetric(sorted.Seconds()/pub.Seconds(), "sorted/pub")
	}
	b.ReportMetric(setup.Seconds()/float64(b.N), "setup-s")
	b.ReportMetric(float64(tt.nfwd)/float64(iters), "evals/iter")
	var ms runtime.MemStats
	runtime.ReadMemStats(&ms)
	b.ReportMetric(float64(ms.HeapSys)/1e6, "heap-MB")
	b.Logf("Forward %.3f ms, Adjoint %.3f ms per call in the runs; after the runs, public pair %.3f ms, sorted pair %.3f ms",
		tt.fwd.Seconds()/float64(tt.nfwd)*1e3, tt.adj.Seconds()/float64(tt.nadj)*1e3,
		pub.Seconds()/float64(b.N)*1e3, sorted.Seconds()/float64(b.N)*1e3)
	b.Logf("χ²ᵣ %.3f at weight %.3g, %d weight steps, final run %d iterations (%s)", res.Chi2r, res.Weight, len(res.Path), res.Iter, res.StopReason)
	for _, st := range res.Path {
		b.Logf("  weight %.4g: χ²ᵣ %.4f, R %.4g, %d iterations", st.Weight, st.Chi2r, st.Reg, st.Iter)
	}
}

func BenchmarkObjective(b *testing.B) {
	d := nightData()
	s := d.Summarize()
	for _, n := range []int{64, 128} {
		b.Run(map[int]string{64: "64", 128: "128"}[n], func(b *testing.B) {
			g := Grid{N: n, Pixel: s.Resolution / 4}
			m, err := NewForwardModel(d, g, true, nil)
			if err != nil {
				b.Fatal(err)
			}
			o := NewObjective(d, m, TermOptions{})
			img, _ := StartImageFor(Start{}, g, GridChoice{}, 1)
			grad := make([]float64, len(img))
			b.ReportAllocs()
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				o.Eval(grad, img)
			}
		})
	}
}

// BenchmarkTerms evaluates each data term of the night alone (value and gradient with
// respect to the model visibilities, in one part) at the model visibilities of the start
// image, and reports the time per datum.
func BenchmarkTerms(b *testing.B) {
	d := nightData()
	s := d.Summarize()
	g := Grid{N: 128, Pixel: s.Resolution / 4}
	m, err := NewForwardModel(d, g, true, nil)
	if err != nil {
		b.Fatal(err)
	}
	img, _ := StartImageFor(Start{}, g, GridChoice{}, 1)
	m.Forward(img)
	o := NewObjective(d, m, TermOptions{})
	for i, t := range o.terms {
		if t.len() == 0 {
			continue
		}
		for _, smooth := range []float64{0, DefaultPhaseSmoothing} {
			if smooth > 0 && typeList[i] != dataset.T3Phi {
				continue
			}
			name := typeList[i].String()
			if smooth > 0 {
				name += "-smoothed"
			}
			b.Run(name, func(b *testing.B) {
				c := &evalCtx{s: &m.sampling, vis: m.vis, grad: m.gvis, w: 1, smooth: smooth}
				b.ReportAllocs()
				b.ResetTimer()
				for range b.N {
					t.eval(c, 0, 1)
				}
				b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(t.len()), "ns/datum")
			})
		}
	}
}
