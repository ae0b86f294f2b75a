package batch

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"
)

// Range is a closed interval of MJD (days).
type Range struct {
	Min, Max float64
}

// Clusters groups the times mjd into epochs separated by gaps of more than gap days and
// returns their ranges in increasing order. Non-finite times are ignored; gap must be
// positive.
func Clusters(mjd []float64, gap float64) []Range {
	if !(gap > 0) {
		panic("batch: Clusters: gap must be positive")
	}
	t := make([]float64, 0, len(mjd))
	for _, m := range mjd {
		if !math.IsNaN(m) && !math.IsInf(m, 0) {
			t = append(t, m)
		}
	}
	sort.Float64s(t)
	var out []Range
	for i, m := range t {
		if i == 0 || m-t[i-1] > gap {
			out = append(out, Range{m, m})
			continue
		}
		out[len(out)-1].Max = m
	}
	return out
}

// Shard selects every N-th item starting at the K-th (1-based). The zero value and
// Shard{1, 1} take everything.
type Shard struct {
	K, N int
}

// Take reports whether the item of 0-based index i belongs to the shard.
func (s Shard) Take(i int) bool {
	if s.N <= 1 {
		return true
	}
	return i%s.N == s.K-1
}

// String returns "K/N".
func (s Shard) String() string {
	if s.N == 0 {
		return "1/1"
	}
	return fmt.Sprintf("%d/%d", s.K, s.N)
}

// ParseShard reads "K/N" with 1 ≤ K ≤ N.
func ParseShard(s string) (Shard, error) {
	a, b, ok := strings.Cut(strings.TrimSpace(s), "/")
	k, err1 := strconv.Atoi(strings.TrimSpace(a))
	n, err2 := strconv.Atoi(strings.TrimSpace(b))
	if !ok || err1 != nil || err2 != nil {
		return Shard{}, fmt.Errorf("shard %q: want K/N, e.g. 2/8", s)
	}
	if n < 1 || k < 1 || k > n {
		return Shard{}, fmt.Errorf("shard %q: want 1 ≤ K ≤ N", s)
	}
	return Shard{k, n}, nil
}

// ShardFromEnv derives the shard of a SLURM job-array task from getenv (os.Getenv in a
// program), with the variables SLURM documents for array jobs (sbatch manual, "OUTPUT
// ENVIRONMENT VARIABLES": SLURM_ARRAY_TASK_ID, _MIN, _MAX, _STEP, _COUNT). It returns ok
// false when SLURM_ARRAY_TASK_ID is unset or empty. The tasks are numbered MIN, MIN+STEP,
// ..., up to MAX (STEP 1 when unset); without MIN and MAX they are SLURM_ARRAY_TASK_COUNT
// tasks from MIN (0 when unset). Task ID is shard (ID − MIN)/STEP + 1 of their number.
func ShardFromEnv(getenv func(string) string) (sh Shard, ok bool, err error) {
	id := strings.TrimSpace(getenv("SLURM_ARRAY_TASK_ID"))
	if id == "" {
		return Shard{}, false, nil
	}
	num := func(name string) (int, bool, error) {
		v := strings.TrimSpace(getenv(name))
		if v == "" {
			return 0, false, nil
		}
		x, err := strconv.Atoi(v)
		if err != nil {
			return 0, false, fmt.Errorf("%s=%q is not an integer", name, v)
		}
		return x, true, nil
	}
	task, _, err := num("SLURM_ARRAY_TASK_ID")
	if err != nil {
		return Shard{}, false, err
	}
	lo, hasLo, err := num("SLURM_ARRAY_TASK_MIN")
	if err != nil {
		return Shard{}, false, err
	}
	count, hasCount, err := num("SLURM_ARRAY_TASK_COUNT")
	if err != nil {
		return Shard{}, false, err
	}
	hi, hasHi, err := num("SLURM_ARRAY_TASK_MAX")
	if err != nil {
		return Shard{}, false, err
	}
	step, hasStep, err := num("SLURM_ARRAY_TASK_STEP")
	if err != nil {
		return Shard{}, false, err
	}
	if !hasStep {
		step = 1
	}
	if step < 1 {
		return Shard{}, false, fmt.Errorf("SLURM_ARRAY_TASK_STEP=%d must be positive", step)
	}
	switch {
	case hasLo && hasHi:
		if hi < lo {
			return Shard{}, false, fmt.Errorf("SLURM_ARRAY_TASK_MAX=%d is below SLURM_ARRAY_TASK_MIN=%d", hi, lo)
		}
		count = (hi-lo)/step + 1
	case hasCount:
		if !hasLo {
			lo = 0
			if hasHi {
				lo = hi - (count-1)*step
			}
		}
	default:
		return Shard{}, false, fmt.Errorf("SLURM_ARRAY_TASK_ID is set but neither SLURM_ARRAY_TASK_COUNT nor SLURM_ARRAY_TASK_MIN and _MAX are")
	}
	if (task-lo)%step != 0 {
		return Shard{}, false, fmt.Errorf("SLURM array task %d is not on the steps of %d from %d", task, step, lo)
	}
	k := (task-lo)/step + 1
	if count < 1 || k < 1 || k > count {
		return Shard{}, false, fmt.Errorf("SLURM array task %d is outside %d tasks starting at %d", task, count, lo)
	}
	return Shard{k, count}, true, nil
}
