package workflow

import (
	"runtime"
	"sync"
	"time"
)

// Task is one unit of the work of RunTasks: Do runs it with Workers goroutines of its own
// (the transform workers of a reconstruction). Name identifies it in the error of a panic.
type Task struct {
	Name    string
	Workers int // 0 means 1
	Do      func() error
}

// Event reports a change of state of RunTasks to a progress display.
type Event struct {
	Task             int // index of the task that started or ended
	Started, Ended   bool
	Err              error // of an ended task
	Done, Failed     int
	Running, Pending int
	Elapsed          time.Duration
	// Left estimates the remaining time: the mean time per finished task times the pending
	// and running tasks, divided by the number running at once; 0 until one task ended.
	Left time.Duration
}

// PoolOptions configure RunTasks. The zero value works.
type PoolOptions struct {
	// Budget is the total number of worker goroutines; 0 means GOMAXPROCS.
	Budget int
	// Events, when non-nil, is called (from one goroutine at a time) at every start and end.
	Events func(Event)
}

// RunTasks executes the tasks and returns their errors in task order. Tasks start in order,
// each as soon as its workers fit in the budget beside the running ones (a task asking for
// more than the budget gets the whole budget), so at no time do more than Budget workers
// run. A task that panics is recorded as failed with a *PanicError naming it; the others go
// on.
//
// The scheduler decides only when a task runs, never what it computes: each task writes
// its own results, so they are the same for any budget and any order of completion.
func RunTasks(tasks []Task, opt PoolOptions) []error {
	budget := opt.Budget
	if budget <= 0 {
		budget = runtime.GOMAXPROCS(0)
	}
	errs := make([]error, len(tasks))
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
		ev.Pending = len(tasks) - done - failed - running
		ev.Elapsed = time.Since(t0)
		if n := done + failed; n > 0 {
			par := max(running, 1)
			ev.Left = time.Duration(float64(busy) / float64(n) * float64(ev.Pending+running) / float64(par))
		}
		if opt.Events != nil {
			opt.Events(ev)
		}
	}
	for i, j := range tasks {
		w := min(max(j.Workers, 1), budget)
		mu.Lock()
		for free < w {
			cond.Wait()
		}
		free -= w
		running++
		event(Event{Task: i, Started: true})
		mu.Unlock()
		wg.Add(1)
		go func(i int, j Task, w int) {
			defer wg.Done()
			start := time.Now()
			err := Safely(j.Name, j.Do)
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
			event(Event{Task: i, Ended: true, Err: err})
			cond.Broadcast()
			mu.Unlock()
		}(i, j, w)
	}
	wg.Wait()
	return errs
}
