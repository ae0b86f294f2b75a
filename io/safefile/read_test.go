package safefile

import (
	"errors"
	"os"
	"path/filepath"
	"syscall"
	"testing"
)

// TestReadFileSpecial checks that inputs which are not regular files are
// refused before they are opened: a named pipe would block open(2) until a
// writer appears and /dev/zero never ends (POSIX.1-2017, open(): "O_RDONLY
// ... an open() for reading-only shall block the calling thread until a
// thread opens the file for writing", from memory).
func TestReadFileSpecial(t *testing.T) {
	dir := t.TempDir()
	fifo := filepath.Join(dir, "pipe.oifits")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Skipf("mkfifo: %v", err)
	}
	zero := filepath.Join(dir, "zero.oifits")
	if err := os.Symlink("/dev/zero", zero); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct{ path, kind string }{
		{fifo, "named pipe"},
		{zero, "device"},
		{dir, "directory"},
	} {
		_, err := ReadFile(tc.path)
		var nr *NotRegularError
		if !errors.As(err, &nr) || nr.Kind != tc.kind {
			t.Errorf("%s: error %v, want a %s refused", tc.path, err, tc.kind)
		}
	}
}

// TestReadFileRegular reads a regular file, also through a link, byte for
// byte, and an empty file as empty.
func TestReadFileRegular(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "a.fits")
	want := []byte("SIMPLE  =                    T")
	if err := os.WriteFile(p, want, 0o644); err != nil {
		t.Fatal(err)
	}
	link := filepath.Join(dir, "b.fits")
	if err := os.Symlink(p, link); err != nil {
		t.Fatal(err)
	}
	for _, q := range []string{p, link} {
		got, err := ReadFile(q)
		if err != nil || string(got) != string(want) {
			t.Errorf("%s: %q, %v", q, got, err)
		}
	}
	empty := filepath.Join(dir, "empty")
	os.WriteFile(empty, nil, 0o644)
	if got, err := ReadFile(empty); err != nil || len(got) != 0 {
		t.Errorf("empty: %q, %v", got, err)
	}
	if _, err := ReadFile(filepath.Join(dir, "missing")); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("missing: %v", err)
	}
}
