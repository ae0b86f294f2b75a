package nufft

import (
	"runtime"
	"sync/atomic"
	"time"
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

// pool is a fixed set of helper goroutines, started once by a
// constructor, so that a parallel call allocates nothing. Idle helpers
// wait on the channel; they exit when it is closed, which the owning
// transform arranges with runtime.AddCleanup.
//
// A call is a sequence of steps (the phases of a transform), each a
// number of shards. The shards of all steps are numbered in one
// sequence; a shard of step k starts only once every shard of the steps
// before it has finished. So the helpers are woken once per call, not
// once per step, and a helper that wakes late joins whatever step is
// running; the caller never waits for a helper that has taken no shard.
//
// The shards still to take in step k are the range left[k]: worker 0
// takes them from the front and the others from the back. The phases of
// a transform that divide the grid by rows (the spreading, the x
// transforms, the interpolation) number their shards in the same order
// of rows, so with two workers each keeps working on the same half of
// the grid from phase to phase, in its own cache, as far as the speeds
// of the two allow (who runs a shard never changes what it computes).
type pool struct {
	n  int // workers including the calling goroutine
	ch chan struct{}
	// serial runs every shard on the calling goroutine (Plan.SetSerial).
	serial bool

	// The running call, written by the caller before it publishes the
	// call in left, read by a worker only after it has taken a shard.
	j     job
	start []int // shards of step k are [start[k], start[k+1])
	one   [1]int

	// left[k] packs the shards of step k not yet taken, [lo, hi), as lo
	// (low 32 bits) and hi (high 32 bits); empty (lo ≥ hi) while a call
	// is being set up or none is running, so that nothing can be taken.
	left [maxSteps]paddedWord
	done atomic.Int64
	_    [56]byte

	// Helpers blocked on ch.
	parked atomic.Int64

	// The first panic of a shard of the running call (do).
	panicked atomic.Pointer[panicValue]

	// Workers blocked in wait, and the wake-ups of each worker: one
	// channel per worker, so that a worker can take only its own
	// wake-ups (with one shared channel, a worker whose thread was
	// descheduled between its check and its receive could find the
	// wake-ups taken by another waiter and block for ever).
	sleepers atomic.Int64
	wake     []chan struct{}
}

// maxSteps is the largest number of steps of a call.
const maxSteps = nPhases

// paddedWord is an atomic word alone on its cache line.
type paddedWord struct {
	atomic.Uint64
	_ [56]byte
}

func newPool(n int) *pool {
	p := &pool{n: n, start: make([]int, 0, nPhases+1), wake: make([]chan struct{}, n)}
	for i := range p.wake {
		p.wake[i] = make(chan struct{}, 1)
	}
	if n > 1 {
		p.ch = make(chan struct{}, n)
		for i := 1; i < n; i++ {
			go helper(p, p.ch, i)
		}
	}
	return p
}

// helperSpin is how long a helper keeps looking for work after its last
// shard before it blocks on the channel: calls that follow each other
// closely then find it awake, without the wake-up of a parked thread
// (tens of microseconds on a virtual machine whose idle processor has
// halted) at each call. A minimisation calls its transforms 0.1–1 ms
// apart (the data terms, the regularizer and the optimizer run between
// them): at 50 µs the helpers of a 96² cube parked between most calls and
// its transforms took 20 % longer; at 1 ms they stay awake through a
// minimisation and park within a millisecond of its end. Measured in
// interleaved runs on a machine whose speed varied: BenchmarkImageNight
// faster in each of 7 pairs (by 6–20 %), the cube's planes 450 → 393 µs
// per iteration (common practice, no source).
const helperSpin = 1000 * time.Microsecond

func helper(p *pool, ch chan struct{}, w int) {
	for {
		p.work(w)
		for t0 := time.Now(); time.Since(t0) < helperSpin; {
			if p.pending() {
				p.work(w)
				t0 = time.Now()
			}
			runtime.Gosched()
		}
		// Announce the sleep before looking once more, so that a call
		// published meanwhile either is seen here or sees the sleeper
		// and sends a wake-up; a wake-up left over only makes the
		// helper look again.
		p.parked.Add(1)
		if !p.pending() {
			if _, ok := <-ch; !ok {
				return
			}
		}
		p.parked.Add(-1)
	}
}

// pending reports whether the running call has shards left to take.
func (p *pool) pending() bool {
	for k := range p.left {
		v := p.left[k].Load()
		if uint32(v) < uint32(v>>32) {
			return true
		}
	}
	return false
}

// take returns a shard of step k not yet taken, the first if front is
// set and the last otherwise, or false when none is left.
func (p *pool) take(k int, front bool) (int, bool) {
	for {
		v := p.left[k].Load()
		lo, hi := uint32(v), uint32(v>>32)
		if lo >= hi {
			return 0, false
		}
		g, nv := lo, v+1
		if !front {
			g, nv = hi-1, uint64(lo)|uint64(hi-1)<<32
		}
		if p.left[k].CompareAndSwap(v, nv) {
			return int(g), true
		}
	}
}

// work runs shards on worker w until none is left.
func (p *pool) work(w int) {
	for k := range p.left {
		for {
			g, ok := p.take(k, w == 0)
			if !ok {
				break
			}
			// A helper's loop may run into the next call, whose setup
			// finished before its shards could be taken: start is read
			// afresh.
			if k > 0 {
				p.wait(w, int64(p.start[k]))
			}
			// Read before the shard is counted done, after which the
			// caller may set up its next call.
			end := int64(p.start[k+1])
			p.do(w, g)
			// At the end of a step, wake the workers blocked in wait; a
			// full channel already holds a wake-up its worker will take.
			if p.done.Add(1) == end && p.sleepers.Load() > 0 {
				for _, c := range p.wake {
					select {
					case c <- struct{}{}:
					default:
					}
				}
			}
		}
	}
}

// do runs shard g on worker w. A panic in it is kept, and the shard counts as done, so that
// the call ends and runSteps raises the panic again on the caller's goroutine, where a
// recover can see it: on a helper's goroutine it would end the process.
func (p *pool) do(w, g int) {
	defer func() {
		if v := recover(); v != nil {
			p.panicked.CompareAndSwap(nil, &panicValue{v})
		}
	}()
	p.j.do(w, g)
}

// panicValue is a panic kept by do.
type panicValue struct{ v any }

// spinWaits is the number of times wait yields before it blocks: about
// the time of a shard (common practice, no source). Short waits, the
// common case at a step's end, then cost no wake-up of a parked thread,
// and a worker whose thread the system has descheduled does not keep
// the other spinning.
const spinWaits = 200

// testHookSleep, when set by a test, runs in wait between a worker's
// last check and its receive of a wake-up, as a descheduled thread would
// pause there.
var testHookSleep func(w int)

// wait returns once done has reached target; w is the waiting worker.
func (p *pool) wait(w int, target int64) {
	for i := 0; p.done.Load() < target; i++ {
		if i < spinWaits {
			runtime.Gosched()
			continue
		}
		// Announce the wait before checking again, so that the worker
		// finishing the step either is seen to have finished here or
		// sees the sleeper; a wake-up left over from an earlier wait
		// only makes this loop check again.
		p.sleepers.Add(1)
		if p.done.Load() < target {
			if testHookSleep != nil {
				testHookSleep(w)
			}
			<-p.wake[w]
		}
		p.sleepers.Add(-1)
	}
}

// run calls j.do for shards 0 … shards−1 on at most p.n workers, worker
// 0 on the calling goroutine, and returns when all have finished.
func (p *pool) run(j job, shards int) {
	p.one[0] = shards
	p.runSteps(j, p.one[:])
}

// runSteps runs steps of counts[k] shards in order, calling j.do(w, g)
// for g = counts[0] + … + counts[k−1] + s, shard s of step k. All shards
// of a step finish before any of the next starts.
func (p *pool) runSteps(j job, counts []int) {
	total := 0
	for _, c := range counts {
		total += c
	}
	if p.serial || min(p.n, total) <= 1 {
		for g := range total {
			j.do(0, g)
		}
		return
	}
	if total >= 1<<32 || len(counts) > maxSteps {
		panic("nufft: too many shards")
	}
	// Every range is empty at the end of a call, so nothing can be
	// taken until the stores below publish the call.
	p.j = j
	p.start = append(p.start[:0], 0)
	for _, c := range counts {
		p.start = append(p.start, p.start[len(p.start)-1]+c)
	}
	p.done.Store(0)
	for k := range counts {
		if counts[k] > 0 {
			p.left[k].Store(uint64(p.start[k]) | uint64(p.start[k+1])<<32)
		}
	}
	for range min(p.parked.Load(), int64(total)-1) {
		select {
		case p.ch <- struct{}{}:
		default: // the helpers have wake-ups pending already
		}
	}
	p.work(0)
	p.wait(0, int64(total))
	p.j = nil
	if v := p.panicked.Swap(nil); v != nil {
		panic(v.v)
	}
}

// Job is work that a transform's workers can run besides the transform (Plan.Parallel):
// Do(w, s) runs shard s on worker w, 0 ≤ w < the plan's Workers(). Shards must write disjoint
// memory, and what a shard computes must not depend on which worker runs it nor when.
type Job interface {
	Do(worker, shard int)
}

// extJob runs a Job as a job of the pool.
type extJob struct{ j Job }

func (e *extJob) do(w, s int) { e.j.Do(w, s) }

// parallel runs shards 0 … n−1 of j on the pool's workers, the caller's goroutine among them,
// and returns when all have finished; e holds j for the pool, so that a call allocates
// nothing.
func (p *pool) parallel(e *extJob, j Job, n int) {
	e.j = j
	p.run(e, n)
	e.j = nil
}

// stop ends the helpers; used as a cleanup.
func stopPool(ch chan struct{}) {
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
