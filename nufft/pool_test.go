package nufft

import (
	"sync/atomic"
	"testing"
	"time"
)

// stepCheck records, for each global shard, how often it ran and how
// many shards had finished when it started.
type stepCheck struct {
	ran      []atomic.Int32
	seenDone []int64
	finished atomic.Int64
}

func (c *stepCheck) do(_, g int) {
	c.seenDone[g] = c.finished.Load()
	c.ran[g].Add(1)
	c.finished.Add(1)
}

// TestPoolSteps checks the contract of pool.runSteps over many calls in
// a row, with empty steps among them: every shard runs exactly once, and
// none starts before every shard of the steps before its own has
// finished.
func TestPoolSteps(t *testing.T) {
	counts := []int{3, 0, 17, 1, 0, 8}
	start := []int{0}
	for _, c := range counts {
		start = append(start, start[len(start)-1]+c)
	}
	total := start[len(start)-1]
	for _, w := range []int{1, 2, 3, 5} {
		p := newPool(w)
		for call := range 2000 {
			c := &stepCheck{ran: make([]atomic.Int32, total), seenDone: make([]int64, total)}
			p.runSteps(c, counts)
			for k := range counts {
				for g := start[k]; g < start[k+1]; g++ {
					if n := c.ran[g].Load(); n != 1 {
						t.Fatalf("%d workers, call %d: shard %d ran %d times", w, call, g, n)
					}
					if c.seenDone[g] < int64(start[k]) {
						t.Fatalf("%d workers, call %d: shard %d of step %d started when %d shards had finished, want ≥ %d",
							w, call, g, k, c.seenDone[g], start[k])
					}
				}
			}
		}
		stopPool(p.ch)
	}
}

// slowFirst is a job whose first shard takes a millisecond.
type slowFirst struct{}

func (slowFirst) do(_, g int) {
	if g == 0 {
		time.Sleep(time.Millisecond)
	}
}

// TestPoolWakeups checks that a worker descheduled between its last
// look at the finished shards and its wait for a wake-up is still woken:
// the helper, waiting for the first step to end, pauses there (a test
// hook) while the caller ends that step, runs the rest and waits for
// the end of the call. With one wake-up channel for all workers the
// caller took the helper's wake-ups too and both blocked for ever.
func TestPoolWakeups(t *testing.T) {
	defer func() { testHookSleep = nil }()
	testHookSleep = func(w int) {
		if w != 0 {
			time.Sleep(2 * time.Millisecond)
		}
	}
	p := newPool(2)
	defer stopPool(p.ch)
	finished := make(chan struct{})
	go func() {
		for range 20 {
			p.runSteps(slowFirst{}, []int{1, 6})
		}
		close(finished)
	}()
	select {
	case <-finished:
	case <-time.After(20 * time.Second):
		t.Fatal("20 calls of two steps did not finish in 20 s: a worker missed its wake-up")
	}
}

// shardLog records which worker ran each shard of a Job, and how often.
type shardLog struct {
	ran    []atomic.Int32
	worker []atomic.Int32
}

func (l *shardLog) Do(w, s int) {
	l.ran[s].Add(1)
	l.worker[s].Store(int32(w))
}

// TestPlanParallel checks Plan.Parallel and Exact.Parallel: every shard of the job runs once,
// on a worker of the transform, and only on the caller (worker 0) after SetSerial(true).
func TestPlanParallel(t *testing.T) {
	u, v := []float64{1e6, -2e6, 3e5}, []float64{2e5, 1e6, -4e6}
	p, err := NewPlan(32, 32, 1e-9, u, v, Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	e, err := NewExact(32, 32, 1e-9, u, v, Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		name    string
		workers int
		tr      interface {
			Parallel(int, Job)
			SetSerial(bool)
		}
	}{{"Plan", p.Workers(), p}, {"Exact", e.pool.n, e}} {
		for _, serial := range []bool{false, true} {
			c.tr.SetSerial(serial)
			const n = 64
			l := &shardLog{ran: make([]atomic.Int32, n), worker: make([]atomic.Int32, n)}
			c.tr.Parallel(n, l)
			for s := range n {
				w := int(l.worker[s].Load())
				if r := l.ran[s].Load(); r != 1 {
					t.Errorf("%s, serial %v: shard %d ran %d times", c.name, serial, s, r)
				}
				if w < 0 || w >= c.workers || (serial && w != 0) {
					t.Errorf("%s, serial %v: shard %d ran on worker %d of %d", c.name, serial, s, w, c.workers)
				}
			}
		}
	}
}

// panicJob panics in one shard and sleeps in the others.
type panicJob struct{ bad int }

func (j panicJob) do(w, s int) {
	if s == j.bad {
		panic("shard failed")
	}
	time.Sleep(50 * time.Microsecond)
}

// TestPoolPanic checks that a panic in a shard, whichever worker runs it, reaches the caller of
// the call, where a recover sees it, instead of ending the process from a helper's goroutine;
// and that the pool serves the next call.
func TestPoolPanic(t *testing.T) {
	p := newPool(2)
	defer stopPool(p.ch)
	for _, bad := range []int{0, 39} { // the first shard, which the caller takes, and the last
		func() {
			defer func() {
				if v := recover(); v != "shard failed" {
					t.Errorf("shard %d: recovered %v", bad, v)
				}
			}()
			p.run(panicJob{bad: bad}, 40)
		}()
	}
	c := &stepCheck{ran: make([]atomic.Int32, 8), seenDone: make([]int64, 8)}
	p.run(c, 8)
	for g := range 8 {
		if n := c.ran[g].Load(); n != 1 {
			t.Errorf("the call after the panics: shard %d ran %d times", g, n)
		}
	}
}
