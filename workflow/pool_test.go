package workflow

import (
	"errors"
	"fmt"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"
)

// RunTasks never has more workers running than the budget, records every task's error in
// task order and survives a panicking task, whose error is a *PanicError naming it.
func TestRunTasksBudget(t *testing.T) {
	var cur, peak atomic.Int64
	var mu sync.Mutex
	tasks := make([]Task, 12)
	for i := range tasks {
		w := 1 + i%3
		tasks[i] = Task{Name: fmt.Sprintf("task %d", i), Workers: w, Do: func() error {
			c := cur.Add(int64(w))
			mu.Lock()
			peak.Store(max(peak.Load(), c))
			mu.Unlock()
			time.Sleep(2 * time.Millisecond)
			cur.Add(-int64(w))
			switch i {
			case 4:
				return fmt.Errorf("task %d failed", i)
			case 7:
				panic("boom")
			}
			return nil
		}}
	}
	var last Event
	errs := RunTasks(tasks, PoolOptions{Budget: 3, Events: func(e Event) { last = e }})
	if peak.Load() > 3 {
		t.Fatalf("peak of %d workers with a budget of 3", peak.Load())
	}
	for i, err := range errs {
		if (err != nil) != (i == 4 || i == 7) {
			t.Fatalf("task %d: %v", i, err)
		}
	}
	var pe *PanicError
	if !errors.As(errs[7], &pe) || pe.Task != "task 7" || !strings.Contains(errs[7].Error(), "task 7: boom") || len(pe.Stack) == 0 {
		t.Fatalf("panic of task 7: %v", errs[7])
	}
	if last.Done != 10 || last.Failed != 2 || last.Running != 0 || last.Pending != 0 {
		t.Fatalf("last event %+v", last)
	}
}

// Results written by each task into its own slot are the same for any budget: the
// scheduler chooses when, not what.
func TestRunTasksOrder(t *testing.T) {
	want := ""
	for _, budget := range []int{1, 2, 5} {
		out := make([]string, 9)
		tasks := make([]Task, len(out))
		for i := range tasks {
			tasks[i] = Task{Workers: 1 + i%2, Do: func() error {
				time.Sleep(time.Duration(9-i) * 100 * time.Microsecond)
				out[i] = fmt.Sprint(i * i)
				return nil
			}}
		}
		RunTasks(tasks, PoolOptions{Budget: budget})
		got := strings.Join(out, ",")
		if want == "" {
			want = got
		}
		if got != want || got != "0,1,4,9,16,25,36,49,64" {
			t.Fatalf("budget %d: %s, want %s", budget, got, want)
		}
	}
}
