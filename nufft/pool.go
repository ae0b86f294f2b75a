package nufft

import "sync"

// job is one phase of a parallel transform. do(i) runs the share of
// worker i; shares must write disjoint memory.
type job interface {
	do(worker int)
}

type task struct {
	j  job
	i  int
	wg *sync.WaitGroup
}

// pool is a fixed set of helper goroutines, started once by a
// constructor, so that a parallel call allocates nothing. Helpers hold
// only the channel; they exit when it is closed, which the owning
// transform arranges with runtime.AddCleanup.
type pool struct {
	n  int // workers including the calling goroutine
	ch chan task
	wg sync.WaitGroup
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
		t.j.do(t.i)
		t.wg.Done()
	}
}

// run calls j.do(i) for i in [0, n) with n ≤ p.n, worker 0 on the
// calling goroutine, and returns when all have finished.
func (p *pool) run(j job, n int) {
	if n > p.n {
		n = p.n
	}
	if n <= 1 {
		j.do(0)
		return
	}
	p.wg.Add(n - 1)
	for i := 1; i < n; i++ {
		p.ch <- task{j: j, i: i, wg: &p.wg}
	}
	j.do(0)
	p.wg.Wait()
}

// stop ends the helpers; used as a cleanup.
func stopPool(ch chan task) {
	if ch != nil {
		close(ch)
	}
}

// span returns the share [lo, hi) of worker i of n in a range of length
// total, in contiguous blocks whose sizes differ by at most one.
func span(total, i, n int) (lo, hi int) {
	return total * i / n, total * (i + 1) / n
}
