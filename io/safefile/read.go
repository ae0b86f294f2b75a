package safefile

import (
	"fmt"
	"io"
	"io/fs"
	"os"
)

// NotRegularError reports an input that is not a regular file: a named
// pipe, whose open blocks until a writer appears, or a device such as
// /dev/zero, which never ends.
type NotRegularError struct {
	Kind string // "directory", "named pipe", "device", "socket" or "special file"
}

func (e *NotRegularError) Error() string {
	return "not a regular file but a " + e.Kind
}

// ReadFile reads the regular file at path, following symbolic links. It
// checks the file's type before opening it, so a named pipe or a device is
// refused at once with a *NotRegularError (wrapped in an *fs.PathError)
// instead of blocking or reading without end, and it reads no more than
// the size the file had when it was checked.
func ReadFile(path string) ([]byte, error) {
	st, err := os.Stat(path)
	if err != nil {
		return nil, err
	}
	if kind := specialKind(st.Mode()); kind != "" {
		return nil, &fs.PathError{Op: "read", Path: path, Err: &NotRegularError{Kind: kind}}
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	size := st.Size()
	data := make([]byte, 0, size)
	data, err = readUpTo(f, data, size)
	if err != nil {
		return nil, &fs.PathError{Op: "read", Path: path, Err: err}
	}
	return data, nil
}

// readUpTo appends at most n bytes of r to dst.
func readUpTo(r io.Reader, dst []byte, n int64) ([]byte, error) {
	buf := dst[len(dst):cap(dst)]
	if int64(len(buf)) > n {
		buf = buf[:n]
	}
	k, err := io.ReadFull(r, buf)
	if err == io.ErrUnexpectedEOF || err == io.EOF {
		err = nil // the file shrank while it was read; the decoder reports the truncation
	}
	if err != nil {
		return nil, fmt.Errorf("reading: %w", err)
	}
	return dst[:len(dst)+k], nil
}

// specialKind names the kind of a file that is not regular, or "".
func specialKind(m fs.FileMode) string {
	switch {
	case m.IsRegular():
		return ""
	case m.IsDir():
		return "directory"
	case m&fs.ModeNamedPipe != 0:
		return "named pipe"
	case m&fs.ModeDevice != 0, m&fs.ModeCharDevice != 0:
		return "device"
	case m&fs.ModeSocket != 0:
		return "socket"
	}
	return "special file"
}
