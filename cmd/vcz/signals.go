package main

import (
	"fmt"
	"io"
	"os"
	"os/signal"
	"sync"
	"syscall"

	"vcz/io/safefile"
	"vcz/workflow"
)

// Exit statuses after a signal: 128 plus the signal's number, the shell's
// convention (POSIX.1-2017, Shell Command Language, sect. 2.8.2).
const (
	exitInterrupt = 128 + int(syscall.SIGINT)  // 130
	exitTerminate = 128 + int(syscall.SIGTERM) // 143
)

// signalWatch turns SIGINT and SIGTERM into an orderly stop: the first
// asks every running reconstruction to stop at its next iteration
// (workflow.Interrupt), so that finished outputs are kept and unfinished
// ones are not written; a second removes the temporary files of the writes
// under way and exits at once.
type signalWatch struct {
	ch     chan os.Signal
	mu     sync.Mutex
	got    os.Signal
	stderr io.Writer
	done   chan struct{}
}

// watchSignals starts watching; stop ends it.
func watchSignals(stderr io.Writer) *signalWatch {
	w := &signalWatch{ch: make(chan os.Signal, 2), stderr: stderr, done: make(chan struct{})}
	signal.Notify(w.ch, os.Interrupt, syscall.SIGTERM)
	go w.loop()
	return w
}

func (w *signalWatch) loop() {
	for {
		select {
		case <-w.done:
			return
		case s := <-w.ch:
			w.mu.Lock()
			first := w.got == nil
			if first {
				w.got = s
			}
			w.mu.Unlock()
			if first {
				workflow.Interrupt()
				fmt.Fprintf(w.stderr, "\nvcz: %s received: stopping at the next iteration (again to stop at once)\n", signalName(s))
				continue
			}
			safefile.RemoveTemporaries()
			fmt.Fprintf(w.stderr, "vcz: %s received again: stopped at once\n", signalName(s))
			os.Exit(exitCodeOf(s))
		}
	}
}

// stop ends the watch and returns the signal received, or nil.
func (w *signalWatch) stop() os.Signal {
	signal.Stop(w.ch)
	close(w.done)
	w.mu.Lock()
	defer w.mu.Unlock()
	return w.got
}

func signalName(s os.Signal) string {
	if s == syscall.SIGTERM {
		return "SIGTERM"
	}
	return "SIGINT"
}

func exitCodeOf(s os.Signal) int {
	if s == syscall.SIGTERM {
		return exitTerminate
	}
	return exitInterrupt
}
