package workflow

import (
	"errors"
	"sync/atomic"

	"vcz/recon"
)

// interrupted is set by Interrupt, from a command's signal handler.
var interrupted atomic.Bool

// ErrInterrupted is the error of a workflow step that Interrupt stopped
// before it finished; nothing of that step was written.
var ErrInterrupted = errors.New("interrupted before it finished; nothing of it was written")

// Interrupt asks every running workflow of the process to stop at its next
// iteration: reconstructions return ErrInterrupted without writing, and
// batches start no further epoch. A command calls it when it receives
// SIGINT or SIGTERM; it cannot be undone.
func Interrupt() { interrupted.Store(true) }

// Interrupted reports whether Interrupt was called.
func Interrupted() bool { return interrupted.Load() }

// orInterrupted returns ErrInterrupted in place of err when the process was
// interrupted (a solver stopped by the interrupt reports that it was
// stopped; the reason is the interrupt).
func orInterrupted(err error) error {
	if err != nil && Interrupted() {
		return ErrInterrupted
	}
	return err
}

// interruptible wraps a solver's progress callback (nil for none) so that the solver stops
// at its next iteration once Interrupt was called.
func interruptible(progress func(recon.Progress) bool) func(recon.Progress) bool {
	return func(pr recon.Progress) bool {
		return !Interrupted() && (progress == nil || progress(pr))
	}
}
