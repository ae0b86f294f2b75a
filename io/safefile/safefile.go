package safefile

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
)

// Write creates or replaces the file at path with the bytes that fill writes.
// fill receives a buffered writer; Write flushes it, syncs the temporary file,
// closes it and renames it to path. When fill or any later step fails, the
// temporary file is removed, path is left untouched, and the error is
// returned (wrapped with the path); a panic in fill removes it too. The new file gets mode 0644 (before the
// umask), like os.Create would give it, rather than os.CreateTemp's 0600.
func Write(path string, fill func(w io.Writer) error) (err error) {
	if fill == nil {
		return errors.New("safefile: nil fill function")
	}
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	tmp, err := os.CreateTemp(dir, "."+base+".tmp-*")
	if err != nil {
		// Name the file asked for, not the temporary one, and say why in words.
		var why error = err
		var pe *fs.PathError
		if errors.As(err, &pe) {
			why = pe.Err
		}
		switch {
		case errors.Is(err, fs.ErrNotExist):
			return &writeError{fmt.Sprintf("%s: cannot write: folder %s does not exist", path, filepath.Clean(dir)), err}
		case errors.Is(err, fs.ErrPermission):
			return &writeError{fmt.Sprintf("%s: cannot write in folder %s: permission denied", path, filepath.Clean(dir)), err}
		}
		return fmt.Errorf("%s: cannot write: %w", path, why)
	}
	tmpName := tmp.Name()
	active.Store(tmpName, struct{}{})
	// renamed is set once the file is in place: any other end, a panic in fill
	// included, removes the temporary file.
	renamed := false
	defer func() {
		if !renamed {
			tmp.Close()
			os.Remove(tmpName)
		}
		active.Delete(tmpName)
	}()
	// failed names the file asked for, never the temporary one, in errors
	// of the steps that touch the file.
	failed := func(err error) error {
		return &writeError{fmt.Sprintf("%s: cannot write: %v", path, cause(err)), err}
	}
	bw := bufio.NewWriterSize(tmp, 64<<10)
	if err = fill(bw); err != nil {
		var pe *fs.PathError
		if errors.As(err, &pe) && pe.Path == tmpName {
			return failed(err)
		}
		return err
	}
	if err = bw.Flush(); err != nil {
		return failed(err)
	}
	if err = tmp.Chmod(0o644 &^ umask()); err != nil {
		return failed(err)
	}
	if err = tmp.Sync(); err != nil {
		return failed(err)
	}
	if err = tmp.Close(); err != nil {
		return failed(err)
	}
	if err = os.Rename(tmpName, path); err != nil {
		if st, serr := os.Stat(path); serr == nil && st.IsDir() {
			// rename(2) says "file exists" or "is a directory" here; say which name is in the way.
			return &writeError{fmt.Sprintf("%s: cannot write: a folder of that name is in the way", path), err}
		}
		return failed(err)
	}
	renamed = true
	return nil
}

// cause strips the path and operation that *fs.PathError and
// *os.LinkError add, leaving the system's reason ("no space left on
// device").
func cause(err error) error {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		return pe.Err
	}
	var le *os.LinkError
	if errors.As(err, &le) {
		return le.Err
	}
	return err
}

// writeError is an error with a message of its own that still wraps the cause, so that
// errors.Is(err, fs.ErrNotExist) holds.
type writeError struct {
	msg string
	err error
}

func (e *writeError) Error() string { return e.msg }
func (e *writeError) Unwrap() error { return e.err }

// umask returns a conservative process umask. Reading the real umask needs
// syscall.Umask, which changes it momentarily and races with other
// goroutines, so the common default 022 is assumed (common practice, no
// source); group and other write bits are never granted.
func umask() os.FileMode { return 0o022 }

// WriteBytes writes data to path atomically, as Write does.
func WriteBytes(path string, data []byte) error {
	if data == nil {
		data = []byte{}
	}
	return Write(path, func(w io.Writer) error {
		_, err := w.Write(data)
		return err
	})
}
