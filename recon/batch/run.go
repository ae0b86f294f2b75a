package batch

import (
	"fmt"
	"runtime"
	"sync"
	"time"
)

// Job is one unit of a batch: Do runs it with Workers goroutines of its own.
type Job struct {
	Workers int // 0 means 1
	Do      func() error
}

// Event reports a change of state of a running batch to a progress display.
type Event struct {
	Job              int // index of the job that started or ended
	Started, Ended   bool
	Err              error // of an ended job
	Done, Failed     int
	Running, Pending int
	Elapsed          time.Duration
	// Left estimates the remaining time: the mean time per finished job times the pending
	// and running jobs, divided by the number running at once; 0 until one job ended.
	Left time.Duration
}

// RunOptions configure Run. The zero value works.
type RunOptions struct {
	// Budget is the total number of worker goroutines; 0 means GOMAXPROCS.
	Budget int
	// Events, when non-nil, is called (from one goroutine at a time) at every start and end.
	Events func(Event)
}

// Run executes the jobs and returns their errors in job order. Jobs start in order, each as
// soon as its workers fit in the budget beside the running ones (a job asking for more than
// the budget gets the whole budget), so at no time do more than Budget workers run. A job
// that panics is recorded as failed with the panic's message; the others go on.
func Run(jobs []Job, opt RunOptions) []error {
	budget := opt.Budget
	if budget <= 0 {
		budget = runtime.GOMAXPROCS(0)
	}
	errs := make([]error, len(jobs))
	var (
		mu      sync.Mutex
		cond    = sync.NewCond(&mu)
		free    = budget
		running int
		done    int
		failed  int
		busy    time.Duration
		wg      sync.WaitGroup
		t0      = time.Now()
	)
	event := func(ev Event) {
		// Called with mu held.
		ev.Done, ev.Failed, ev.Running = done, failed, running
		ev.Pending = len(jobs) - done - failed - running
		ev.Elapsed = time.Since(t0)
		if n := done + failed; n > 0 {
			par := max(running, 1)
			ev.Left = time.Duration(float64(busy) / float64(n) * float64(ev.Pending+running) / float64(par))
		}
		if opt.Events != nil {
			opt.Events(ev)
		}
	}
	for i, j := range jobs {
		w := min(max(j.Workers, 1), budget)
		mu.Lock()
		for free < w {
			cond.Wait()
		}
		free -= w
		running++
		event(Event{Job: i, Started: true})
		mu.Unlock()
		wg.Add(1)
		go func(i int, j Job, w int) {
			defer wg.Done()
			start := time.Now()
			err := safeDo(j.Do)
			mu.Lock()
			errs[i] = err
			free += w
			running--
			if err != nil {
				failed++
			} else {
				done++
			}
			busy += time.Since(start)
			event(Event{Job: i, Ended: true, Err: err})
			cond.Broadcast()
			mu.Unlock()
		}(i, j, w)
	}
	wg.Wait()
	return errs
}

func safeDo(f func() error) (err error) {
	defer func() {
		if r := recover(); r != nil {
			err = fmt.Errorf("panic: %v", r)
		}
	}()
	return f()
}
