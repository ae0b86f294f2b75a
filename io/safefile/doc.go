// Package safefile reads inputs that are regular files only, and writes
// files atomically.
//
// ReadFile checks a path's type before it opens it, so a named pipe or a
// device given as input is refused at once instead of blocking or reading
// without end.
//
// Write sends the content to a temporary file in the destination's directory, is flushed to stable storage, and is
// then renamed over the destination. A reader of the destination therefore
// sees either the old file or the complete new one, never a partial write,
// and an interrupted or failed write leaves no temporary file behind.
//
// The rename is atomic on POSIX file systems when source and destination are
// in the same directory, which is why the temporary file is created there and
// not in os.TempDir.
package safefile
