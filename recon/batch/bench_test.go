package batch

import (
	"runtime"
	"testing"
	"time"

	"vcz/recon"
	"vcz/regularizers"
)

// BenchmarkEpochs images 8 epochs on a 64² grid with a budget of 2 workers, once one epoch
// after the other (each with 2 transform workers) and once concurrently (two epochs at a
// time with 1 worker each), and reports the ratio of the wall times (goal ≤ 0.6).
func BenchmarkEpochs(b *testing.B) {
	data := simEpochs(b, 8, 0.2, []float64{-2, 0, 2}, 2)
	g := recon.Grid{N: 64, Pixel: 0.1 * recon.Mas}
	jobs := func(workers int) []Job {
		js := make([]Job, len(data))
		for k, d := range data {
			js[k] = Job{Workers: workers, Do: func() error {
				p := recon.Problem{Data: d, Grid: g, Weight: 1e-3,
					Reg: func(g recon.Grid) (recon.Regularizer, error) { return &regularizers.TV{NX: g.N, NY: g.N}, nil }}
				_, err := recon.Solve(p, recon.Settings{MaxIter: 60, Starts: 1, Workers: workers})
				return err
			}}
		}
		return js
	}
	prev := runtime.GOMAXPROCS(2)
	defer runtime.GOMAXPROCS(prev)
	b.ReportAllocs()
	var seq, conc time.Duration
	for b.Loop() {
		t0 := time.Now()
		for _, err := range Run(jobs(2), RunOptions{Budget: 2}) {
			if err != nil {
				b.Fatal(err)
			}
		}
		t1 := time.Now()
		for _, err := range Run(jobs(1), RunOptions{Budget: 2}) {
			if err != nil {
				b.Fatal(err)
			}
		}
		seq += t1.Sub(t0)
		conc += time.Since(t1)
	}
	b.ReportMetric(seq.Seconds()/float64(b.N), "s-sequential/op")
	b.ReportMetric(conc.Seconds()/float64(b.N), "s-concurrent/op")
	b.ReportMetric(conc.Seconds()/seq.Seconds(), "ratio")
}

// BenchmarkJointEval is one evaluation of the joint objective with its gradient over 4
// epochs of 64² pixels.
func BenchmarkJointEval(b *testing.B) {
	data := simEpochs(b, 4, 0.2, []float64{-2, 0, 2}, 2)
	g := recon.Grid{N: 64, Pixel: 0.1 * recon.Mas}
	j := jointOf(b, data, g, 1e-3)
	j.Lambda = 1e5
	x := make([]float64, 4*g.N*g.N)
	for i := range x {
		x[i] = 1.0 / float64(g.N*g.N)
	}
	grad := make([]float64, len(x))
	b.ReportAllocs()
	for b.Loop() {
		j.Eval(grad, x)
	}
}
