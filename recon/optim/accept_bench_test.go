package optim

import (
	"math"
	"math/rand/v2"
	"testing"
)

// BenchmarkAccept measures accept's pass alone on 96² variables with lower bounds of 0, as
// in an image reconstruction, with a third of the variables held at the bound.
func BenchmarkAccept(b *testing.B) {
	const n = 96 * 96
	rnd := rand.New(rand.NewPCG(1, 2))
	r := &run{p: Problem{Lower: make([]float64, n)}, w: newWorkspace(n, DefaultMemory)}
	w := r.w
	for i := range n {
		at := rnd.IntN(3) == 0
		for _, v := range [][]float64{w.x, w.xt} {
			if !at {
				v[i] = rnd.Float64()
			}
		}
		w.g[i], w.gt[i] = rnd.Float64()-0.3, rnd.Float64()-0.3
	}
	b.ReportAllocs()
	for b.Loop() {
		if _, err := r.accept(1); err != nil {
			b.Fatal(err)
		}
	}
}

// TestAcceptLowerOnly checks that accept's loop for lower bounds alone gives the bits of its
// general loop, run with upper bounds of +Inf, which hold nothing: the pair, the step, the
// projected-gradient norm and the free runs.
func TestAcceptLowerOnly(t *testing.T) {
	const n = 1000
	rnd := rand.New(rand.NewPCG(3, 4))
	lower := make([]float64, n)
	upper := make([]float64, n)
	x, xt, g, gt := make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
	for i := range n {
		lower[i] = float64(rnd.IntN(3)) - 1
		upper[i] = math.Inf(1)
		x[i], xt[i] = lower[i], lower[i]
		if rnd.IntN(3) > 0 {
			x[i] += rnd.Float64()
		}
		if rnd.IntN(3) > 0 {
			xt[i] += rnd.Float64()
		}
		g[i], gt[i] = rnd.Float64()-0.4, rnd.Float64()-0.4
	}
	type out struct {
		step, pg, sy float64
		s, y         []float64
		runs         []int
		nf           int
	}
	accepted := func(hi []float64) out {
		r := &run{p: Problem{Lower: lower, Upper: hi}, w: newWorkspace(n, 2)}
		copy(r.w.x, x)
		copy(r.w.xt, xt)
		copy(r.w.g, g)
		copy(r.w.gt, gt)
		step, err := r.accept(1)
		if err != nil {
			t.Fatal(err)
		}
		if r.w.k != 1 {
			t.Fatalf("pair not stored (%d pairs)", r.w.k)
		}
		var sy float64
		for i := range n {
			sy += r.w.s[0][i] * r.w.y[0][i]
		}
		return out{step, r.pgnorm, sy, r.w.s[0], r.w.y[0], r.w.runs, r.nfree}
	}
	a, b := accepted(nil), accepted(upper)
	if math.Float64bits(a.step) != math.Float64bits(b.step) || math.Float64bits(a.pg) != math.Float64bits(b.pg) ||
		math.Float64bits(a.sy) != math.Float64bits(b.sy) || a.nf != b.nf || len(a.runs) != len(b.runs) {
		t.Fatalf("lower only: step %g, pg %g, s.y %g, %d free in %d runs; general: %g, %g, %g, %d in %d",
			a.step, a.pg, a.sy, a.nf, len(a.runs), b.step, b.pg, b.sy, b.nf, len(b.runs))
	}
	if a.nf == 0 || a.nf == n {
		t.Fatalf("%d of %d variables free: the bounds are not exercised", a.nf, n)
	}
	for i := range a.runs {
		if a.runs[i] != b.runs[i] {
			t.Fatalf("runs differ at %d: %v vs %v", i, a.runs, b.runs)
		}
	}
	for i := range n {
		if math.Float64bits(a.s[i]) != math.Float64bits(b.s[i]) || math.Float64bits(a.y[i]) != math.Float64bits(b.y[i]) {
			t.Fatalf("pair differs at %d", i)
		}
	}
}
