package safefile

import (
	"errors"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"syscall"
	"testing"
	"time"
)

// tempIn returns the one temporary file in dir.
func tempIn(t *testing.T, dir string) string {
	t.Helper()
	m, _ := filepath.Glob(filepath.Join(dir, ".*.tmp-*"))
	if len(m) != 1 {
		t.Fatalf("temporaries %v", m)
	}
	return m[0]
}

// TestWriteErrorNamesDestination checks that an error of the file system
// on the temporary file is reported with the user's file name and the
// system's reason, not the hidden temporary name.
func TestWriteErrorNamesDestination(t *testing.T) {
	dir := t.TempDir()
	dst := filepath.Join(dir, "star.png")
	err := Write(dst, func(w io.Writer) error {
		return &fs.PathError{Op: "write", Path: tempIn(t, dir), Err: syscall.ENOSPC}
	})
	if err == nil || err.Error() != dst+": cannot write: no space left on device" || !errors.Is(err, syscall.ENOSPC) {
		t.Errorf("error %v", err)
	}
	if m, _ := filepath.Glob(filepath.Join(dir, "*")); len(m) != 0 {
		t.Errorf("left %v", m)
	}
}

// TestRemoveTemporaries checks that the temporaries of writes under way are
// removed, as a signal handler needs, and that the destination is not
// created.
func TestRemoveTemporaries(t *testing.T) {
	dir := t.TempDir()
	dst := filepath.Join(dir, "out.fits")
	var n int
	err := Write(dst, func(w io.Writer) error {
		tempIn(t, dir)
		n = RemoveTemporaries()
		return errors.New("interrupted")
	})
	if n != 1 || err == nil {
		t.Errorf("removed %d, error %v", n, err)
	}
	if m, _ := filepath.Glob(filepath.Join(dir, "*")); len(m) != 0 {
		t.Errorf("left %v", m)
	}
}

// TestSweepStale checks that only files of Write's naming pattern older
// than the given time are removed.
func TestSweepStale(t *testing.T) {
	dir := t.TempDir()
	start := time.Now()
	old := start.Add(-time.Hour)
	files := map[string]time.Time{
		".star.fits.tmp-123456": old,                    // stale: removed
		".star.png.tmp-9":       old,                    // stale: removed
		".star.fits.tmp-777":    start.Add(time.Second), // newer than the start: a write under way
		"star.fits":             old,
		".hidden":               old,
		".x.tmp-abc":            old, // not os.CreateTemp's digits
		"x.tmp-123":             old, // no leading dot
	}
	for name, mt := range files {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte("x"), 0o644); err != nil {
			t.Fatal(err)
		}
		if err := os.Chtimes(p, mt, mt); err != nil {
			t.Fatal(err)
		}
	}
	got := SweepStale(dir, start)
	for i := range got {
		got[i] = filepath.Base(got[i])
	}
	sort.Strings(got)
	if strings.Join(got, " ") != ".star.fits.tmp-123456 .star.png.tmp-9" {
		t.Errorf("removed %v", got)
	}
	left, _ := os.ReadDir(dir)
	if len(left) != len(files)-2 {
		t.Errorf("%d files left", len(left))
	}
}
