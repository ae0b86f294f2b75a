// Package safefile writes files atomically: the content goes to a temporary
// file in the destination's directory, is flushed to stable storage, and is
// then renamed over the destination. A reader of the destination therefore
// sees either the old file or the complete new one, never a partial write,
// and an interrupted or failed write leaves no temporary file behind.
//
// The rename is atomic on POSIX file systems when source and destination are
// in the same directory, which is why the temporary file is created there and
// not in os.TempDir.
package safefile
