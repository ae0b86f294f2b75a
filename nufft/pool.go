package nufft

import (
	"sync"
	"sync/atomic"
)

// job is one phase of a parallel transform, divided into shards fixed by
// the problem (sizes and points), never by the number of workers.
// do(w, s) runs shard s on worker w; w only selects scratch buffers.
// Shards must write disjoint memory, and what a shard computes must not
// depend on which worker runs it or when, so a call gives the same bits
// for any number of workers.
type job interface {
	do(worker, shard int)
}

type task struct {
	p *pool
	w int
}

// pool is a fixed set of helper goroutines, started once by a
// constructor, so that a parallel call allocates nothing. Idle helpers
// hold only the channel; they exit when it is closed, which the owning
// transform arranges with runtime.AddCleanup.
type pool struct {
	n  int // workers including the calling goroutine
	ch chan task
	wg sync.WaitGroup

	// The running phase: workers take shards in turn from next until
	// shards are exhausted.
	j      job
	shards int
	next   atomic.Int64
}

func newPool(n int) *pool {
	p := &pool{n: n}
	if n > 1 {
		p.ch = make(chan task, n)
		for i := 1; i < n; i++ {
			go helper(p.ch)
		}
	}
	return p
}

func helper(ch chan task) {
	for t := range ch {
		t.p.work(t.w)
		t.p.wg.Done()
	}
}

// work runs shards on worker w until none is left.
func (p *pool) work(w int) {
	for {
		s := int(p.next.Add(1) - 1)
		if s >= p.shards {
			return
		}
		p.j.do(w, s)
	}
}

// run calls j.do for shards 0 … shards−1 on at most p.n workers, worker
// 0 on the calling goroutine, and returns when all have finished.
func (p *pool) run(j job, shards int) {
	n := min(p.n, shards)
	if n <= 1 {
		for s := range shards {
			j.do(0, s)
		}
		return
	}
	p.j, p.shards = j, shards
	p.next.Store(0)
	p.wg.Add(n - 1)
	for i := 1; i < n; i++ {
		p.ch <- task{p: p, w: i}
	}
	p.work(0)
	p.wg.Wait()
	p.j = nil
}

// stop ends the helpers; used as a cleanup.
func stopPool(ch chan task) {
	if ch != nil {
		close(ch)
	}
}

// span returns part i of n of a range of length total, in contiguous
// blocks whose sizes differ by at most one.
func span(total, i, n int) (lo, hi int) {
	return total * i / n, total * (i + 1) / n
}

// chunk returns block i of size b of a range of length total.
func chunk(total, i, b int) (lo, hi int) {
	return min(i*b, total), min((i+1)*b, total)
}

// chunks returns the number of blocks of size b that cover total.
func chunks(total, b int) int {
	return (total + b - 1) / b
}
