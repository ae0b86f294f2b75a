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
	for _, n := range []int{1000, 1003, 11} {
		acceptLowerOnly(t, n)
	}
}

func acceptLowerOnly(t *testing.T, n int) {
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

// trialSetup returns a run on n variables with lower bounds (and upper bounds of +Inf when
// inf is set, which hold nothing), a third of x at its bound and a direction d that pushes
// half of those into it.
func trialSetup(n int, inf bool, seed uint64) *run {
	rnd := rand.New(rand.NewPCG(seed, 5))
	lower := make([]float64, n)
	var upper []float64
	if inf {
		upper = make([]float64, n)
	}
	r := &run{p: Problem{Lower: lower, Upper: upper}, w: newWorkspace(n, DefaultMemory)}
	w := r.w
	for i := range n {
		lower[i] = float64(rnd.IntN(3)) - 1
		if inf {
			upper[i] = math.Inf(1)
		}
		w.x[i] = lower[i]
		if rnd.IntN(3) > 0 {
			w.x[i] += rnd.Float64()
		}
		w.d[i] = rnd.Float64() - 0.5
		w.g[i] = rnd.Float64() - 0.4
	}
	return r
}

// BenchmarkTrial measures the trial point's pass of the line search on 96² variables:
// "lower" with lower bounds alone (the loop for images), "general" with upper bounds of
// +Inf added, which run the general loop on the same numbers.
func BenchmarkTrial(b *testing.B) {
	for _, inf := range []bool{false, true} {
		name := "lower"
		if inf {
			name = "general"
		}
		b.Run(name, func(b *testing.B) {
			r := trialSetup(96*96, inf, 1)
			for b.Loop() {
				if moved, _ := r.trial(0.5); !moved {
					b.Fatal("nothing moved")
				}
			}
		})
	}
}

// TestTrialLowerOnly checks that the trial pass for lower bounds alone gives the bits of its
// general loop, run with upper bounds of +Inf: the trial point, whether it moved and the
// linear decrease, for steps that move variables, and for a zero step and a step into the
// bounds that move none.
func TestTrialLowerOnly(t *testing.T) {
	for _, n := range []int{1000, 1003} {
		trialLowerOnly(t, n)
	}
}

func trialLowerOnly(t *testing.T, n int) {
	for _, alpha := range []float64{0.7, 1e-3, 0, 1e300} {
		a, b := trialSetup(n, false, 9), trialSetup(n, true, 9)
		if alpha == 1e300 {
			// Every variable at its bound, every direction into it: nothing moves.
			for _, r := range []*run{a, b} {
				copy(r.w.x, r.p.Lower)
				for i := range r.w.d {
					r.w.d[i] = -math.Abs(r.w.d[i]) - 1
				}
			}
		}
		ma, da := a.trial(alpha)
		mb, db := b.trial(alpha)
		if ma != mb || math.Float64bits(da) != math.Float64bits(db) {
			t.Fatalf("%d variables, step %g: lower only moved %v, decrease %g; general %v, %g", n, alpha, ma, da, mb, db)
		}
		if want := alpha == 0.7 || alpha == 1e-3; ma != want {
			t.Fatalf("step %g: moved %v, want %v", alpha, ma, want)
		}
		for i := range n {
			if math.Float64bits(a.w.xt[i]) != math.Float64bits(b.w.xt[i]) {
				t.Fatalf("step %g: trial point differs at %d: %g vs %g", alpha, i, a.w.xt[i], b.w.xt[i])
			}
		}
	}
}
