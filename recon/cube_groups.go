package recon

import (
	"runtime"
	"sync"
	"sync/atomic"
)

// planeGroups returns the groups in which a sweep of SolveCube fits the planes: the planes of
// a group are fitted at once, each with the planes of the other groups held, and the groups
// one after the other. The order is Gauss–Seidel's in every case, so that each plane's run
// lowers the cube objective; it is fixed by the spectral term alone, never by the number of
// workers:
//   - SpectralSmoothness couples each plane to its neighbours only: the even planes, then the
//     odd ones (the red–black ordering of Gauss–Seidel for a chain: Young 1971, Iterative
//     Solution of Large Linear Systems, ch. 5, from memory);
//   - without a spectral term the planes are independent: one group;
//   - any other spectral term couples every plane to every other: one plane per group, in
//     order.
func planeGroups(p int, spectral Regularizer) [][]int {
	switch spectral.(type) {
	case *SpectralSmoothness:
		var even, odd []int
		for k := range p {
			if k%2 == 0 {
				even = append(even, k)
			} else {
				odd = append(odd, k)
			}
		}
		if len(odd) == 0 {
			return [][]int{even}
		}
		return [][]int{even, odd}
	case nil:
		all := make([]int, p)
		for k := range all {
			all[k] = k
		}
		return [][]int{all}
	}
	g := make([][]int, p)
	for k := range g {
		g[k] = []int{k}
	}
	return g
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

// runGroup calls fit(k) for every plane k of group on up to workers goroutines (the caller's
// among them), each taking the next plane in order when it is free. What fit computes must
// not depend on which goroutine runs it.
func runGroup(group []int, workers int, fit func(k int)) {
	workers = min(workers, len(group))
	if workers <= 1 {
		for _, k := range group {
			fit(k)
		}
		return
	}
	var next atomic.Int64
	work := func() {
		for {
			i := int(next.Add(1)) - 1
			if i >= len(group) {
				return
			}
			fit(group[i])
		}
	}
	var wg sync.WaitGroup
	for range workers - 1 {
		wg.Go(work)
	}
	work()
	wg.Wait()
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
