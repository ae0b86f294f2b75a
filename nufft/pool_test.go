package nufft

import (
	"sync/atomic"
	"testing"
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
