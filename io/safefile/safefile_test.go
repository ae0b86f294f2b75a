package safefile

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func listDir(t *testing.T, dir string) []string {
	t.Helper()
	ents, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	var names []string
	for _, e := range ents {
		names = append(names, e.Name())
	}
	return names
}

func TestWriteCreatesAndReplaces(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "out.fits")
	for _, content := range []string{"first", "second, longer content"} {
		if err := Write(path, func(w io.Writer) error {
			_, err := io.WriteString(w, content)
			return err
		}); err != nil {
			t.Fatal(err)
		}
		got, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		if string(got) != content {
			t.Errorf("content = %q, want %q", got, content)
		}
		if names := listDir(t, dir); len(names) != 1 || names[0] != "out.fits" {
			t.Errorf("directory holds %v, want only out.fits", names)
		}
	}
	st, err := os.Stat(path)
	if err != nil {
		t.Fatal(err)
	}
	if st.Mode().Perm()&0o444 != 0o444 {
		t.Errorf("mode %v is not readable by all", st.Mode().Perm())
	}
}

func TestWriteFailureKeepsOldFileAndRemovesTemp(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "keep.txt")
	if err := WriteBytes(path, []byte("old")); err != nil {
		t.Fatal(err)
	}
	boom := errors.New("boom")
	err := Write(path, func(w io.Writer) error {
		// Write more than the buffer so part of it reaches the temp file.
		for i := 0; i < 100000; i++ {
			fmt.Fprintf(w, "line %d\n", i)
		}
		return boom
	})
	if !errors.Is(err, boom) {
		t.Fatalf("err = %v, want %v", err, boom)
	}
	got, _ := os.ReadFile(path)
	if string(got) != "old" {
		t.Errorf("old file changed to %d bytes", len(got))
	}
	if names := listDir(t, dir); len(names) != 1 {
		t.Errorf("temporary file left behind: %v", names)
	}
}

// A panic in fill (a defect of the caller) leaves the old file and no temporary file.
func TestWritePanicRemovesTemp(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "keep.txt")
	if err := WriteBytes(path, []byte("old")); err != nil {
		t.Fatal(err)
	}
	func() {
		defer func() {
			if recover() == nil {
				t.Error("the panic of fill did not reach the caller")
			}
		}()
		Write(path, func(w io.Writer) error {
			fmt.Fprintf(w, "partial")
			panic("boom")
		})
	}()
	if got, _ := os.ReadFile(path); string(got) != "old" {
		t.Errorf("old file changed to %q", got)
	}
	if names := listDir(t, dir); len(names) != 1 {
		t.Errorf("temporary file left behind: %v", names)
	}
}

func TestWriteMissingDirectory(t *testing.T) {
	path := filepath.Join(t.TempDir(), "no", "such", "dir", "f")
	err := WriteBytes(path, []byte("x"))
	if err == nil {
		t.Fatal("expected an error for a missing directory")
	}
	// The message names the file asked for and the missing folder, not the temporary file.
	want := path + ": cannot write: folder " + filepath.Dir(path) + " does not exist"
	if !strings.HasPrefix(err.Error(), want) || strings.Contains(err.Error(), ".tmp-") || !errors.Is(err, fs.ErrNotExist) {
		t.Errorf("error %q, want it to start with %q and wrap fs.ErrNotExist", err, want)
	}
	if err := Write(filepath.Join(t.TempDir(), "f"), nil); err == nil {
		t.Fatal("expected an error for a nil fill")
	}
}

// TestWriteOntoFolder checks that a folder where the file should go is named as such (the
// system's "file exists" from rename(2) misleads), that the folder is left as it was and
// that no temporary file is left beside it.
func TestWriteOntoFolder(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "plot.png")
	if err := os.Mkdir(path, 0o755); err != nil {
		t.Fatal(err)
	}
	err := WriteBytes(path, []byte("x"))
	want := path + ": cannot write: a folder of that name is in the way"
	if err == nil || err.Error() != want {
		t.Fatalf("error %v, want %q", err, want)
	}
	if st, err := os.Stat(path); err != nil || !st.IsDir() {
		t.Errorf("the folder was changed: %v", err)
	}
	if m, _ := filepath.Glob(filepath.Join(dir, ".plot.png.tmp-*")); len(m) > 0 {
		t.Errorf("temporaries left: %v", m)
	}
}
