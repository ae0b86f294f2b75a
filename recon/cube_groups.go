package recon

import (
	"runtime"
	"sync"
	"time"
)

// planeDeps returns, for each plane, the planes whose run in the same sweep of SolveCube must
// end before its own starts, and whether they form a chain (each plane after the one before,
// so that one plane runs at a time). Each plane is fitted with the others held at their latest
// images (Gauss–Seidel, so that every plane's run lowers the cube objective); a plane's run
// reads only the planes its objective holds, so any order that keeps these dependencies gives
// the same cube, whatever the number of workers and whichever plane ends first:
//   - SpectralSmoothness ties each plane to its neighbours only: the even planes depend on
//     nothing in the sweep and the odd ones on their even neighbours (the red–black ordering
//     of Gauss–Seidel for a chain: Young 1971, Iterative Solution of Large Linear Systems,
//     ch. 5, from memory), so an odd plane starts as soon as its neighbours are fitted;
//   - without a spectral term the planes are independent;
//   - any other spectral term ties every plane to every other: the planes in order, a chain.
func planeDeps(p int, spectral Regularizer) (deps [][]int, chain bool) {
	deps = make([][]int, p)
	switch spectral.(type) {
	case *SpectralSmoothness:
		for k := 1; k < p; k += 2 {
			deps[k] = []int{k - 1}
			if k+1 < p {
				deps[k] = append(deps[k], k+1)
			}
		}
	case nil:
	default:
		for k := 1; k < p; k++ {
			deps[k] = []int{k - 1}
		}
		chain = true
	}
	return deps, chain
}

// planeClone returns a spectral term of the same kind and settings as s with buffers of its
// own, for plane runs that go at once (planeSpectral keeps the plane's neighbours), or s
// itself when it keeps none.
func planeClone(s Regularizer) Regularizer {
	switch s := s.(type) {
	case *SpectralSmoothness:
		return &SpectralSmoothness{Planes: s.Planes, NPix: s.NPix}
	case *JointSparsity:
		return &JointSparsity{Planes: s.Planes, NPix: s.NPix, Eps: s.Eps}
	}
	return s
}

// runSweep calls fit(k) once for every plane k < p on up to workers goroutines (the caller's
// among them), starting a plane once the planes it depends on (deps[k]; nil deps: none) have
// ended. Among the
// planes ready to start, each goroutine takes the one that took longest in the sweep before
// (cost, the durations of the planes' last runs, which runSweep updates; the lowest plane
// first when equal), so that the longest runs do not come last and leave processors idle
// (longest processing time first: Graham 1969, SIAM J. Appl. Math. 17, 416). What fit
// computes must not depend on which goroutine runs it nor on when. A panic in fit stops the
// sweep and is raised again on the caller's goroutine, where a caller's recover sees it.
func runSweep(p int, deps [][]int, workers int, cost []time.Duration, fit func(k int)) {
	waiting := make([]int, p)  // planes that k still waits for
	after := make([][]int, p)  // planes that wait for k
	started := make([]bool, p) // taken by a goroutine
	for k, d := range deps {
		waiting[k] = len(d)
		for _, j := range d {
			after[j] = append(after[j], k)
		}
	}
	var mu sync.Mutex
	ready := sync.NewCond(&mu)
	unstarted := p
	var panicked any // the first panic of a plane's run, raised again on the caller
	failed := false
	run := func(k int) {
		defer func() {
			if v := recover(); v != nil {
				mu.Lock()
				if !failed {
					failed, panicked = true, v
				}
				ready.Broadcast()
				mu.Unlock()
			}
		}()
		fit(k)
	}
	work := func() {
		mu.Lock()
		defer mu.Unlock()
		for unstarted > 0 && !failed {
			k := -1
			for j := range p {
				if !started[j] && waiting[j] == 0 && (k < 0 || cost[j] > cost[k]) {
					k = j
				}
			}
			if k < 0 {
				ready.Wait() // until a running plane ends
				continue
			}
			started[k] = true
			unstarted--
			mu.Unlock()
			t0 := time.Now()
			run(k)
			d := time.Since(t0)
			mu.Lock()
			cost[k] = d
			for _, j := range after[k] {
				waiting[j]--
			}
			ready.Broadcast()
		}
	}
	var wg sync.WaitGroup
	for range min(workers, p) - 1 {
		wg.Go(work)
	}
	work()
	wg.Wait()
	if failed {
		panic(panicked)
	}
}

// cubeWorkers returns the number of planes a sweep fits at once: Settings.Workers, or
// GOMAXPROCS when it is 0.
func cubeWorkers(s Settings) int {
	if s.Workers > 0 {
		return s.Workers
	}
	return runtime.GOMAXPROCS(0)
}

// planeReporter passes the progress of plane runs that go at once to one progress function,
// one call at a time: the reports of the lowest-numbered plane still running as they come,
// and the last report of every other plane when its run ends, so that a log shows one stage
// at a time and each plane's final state. Once the function has asked to stop, every plane
// is told to stop.
type planeReporter struct {
	mu      sync.Mutex
	to      func(Progress) bool
	running []bool
	last    []Progress
	pending []bool // last[k] not passed on yet
	stop    bool
}

func newPlaneReporter(p int, to func(Progress) bool) *planeReporter {
	return &planeReporter{to: to, running: make([]bool, p), last: make([]Progress, p), pending: make([]bool, p)}
}

// start marks plane k as running.
func (r *planeReporter) start(k int) {
	r.mu.Lock()
	r.running[k] = true
	r.mu.Unlock()
}

// report takes a report of plane k and returns whether its run goes on.
func (r *planeReporter) report(k int, pr Progress) bool {
	r.mu.Lock()
	defer r.mu.Unlock()
	if r.stop {
		return false
	}
	for j := range k {
		if r.running[j] {
			// A lower plane is running: keep this report for the end of the run.
			r.last[k], r.pending[k] = pr, true
			return true
		}
	}
	r.pending[k] = false
	r.stop = !r.to(pr)
	return !r.stop
}

// end marks plane k's run as ended and passes on its last report if it was kept.
func (r *planeReporter) end(k int) {
	r.mu.Lock()
	defer r.mu.Unlock()
	r.running[k] = false
	if r.pending[k] && !r.stop {
		r.pending[k] = false
		r.stop = !r.to(r.last[k])
	}
}
