package safefile

import (
	"os"
	"path/filepath"
	"regexp"
	"sync"
	"time"
)

// active holds the names of the temporary files Write has open.
var active sync.Map

// RemoveTemporaries removes the temporary files of the writes under way, for
// a program that is about to exit on a signal: their destinations keep
// their old content (or stay absent). It returns how many it removed.
func RemoveTemporaries() int {
	n := 0
	active.Range(func(k, _ any) bool {
		if os.Remove(k.(string)) == nil {
			n++
		}
		active.Delete(k)
		return true
	})
	return n
}

// tempName matches the names Write gives its temporary files: a dot, the
// destination's base name, ".tmp-" and the digits os.CreateTemp adds.
var tempName = regexp.MustCompile(`^\..+\.tmp-[0-9]+$`)

// SweepStale removes from dir the temporary files an earlier, killed run of
// Write left behind: regular files whose names match Write's pattern and
// that were last modified before the given time (the start of the running
// process, so that no write under way is touched). It returns the names it
// removed.
func SweepStale(dir string, before time.Time) []string {
	entries, err := os.ReadDir(dir)
	if err != nil {
		return nil
	}
	var removed []string
	for _, e := range entries {
		if !e.Type().IsRegular() || !tempName.MatchString(e.Name()) {
			continue
		}
		info, err := e.Info()
		if err != nil || !info.ModTime().Before(before) {
			continue
		}
		p := filepath.Join(dir, e.Name())
		if _, mine := active.Load(p); mine {
			continue
		}
		if os.Remove(p) == nil {
			removed = append(removed, p)
		}
	}
	return removed
}
