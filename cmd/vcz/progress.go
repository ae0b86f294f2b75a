package main

import (
	"fmt"
	"io"
	"os"
	"sync"
	"time"

	"golang.org/x/term"
)

// isTerminal reports whether w is a terminal.
func isTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	return ok && term.IsTerminal(int(f.Fd()))
}

// progressLine shows the state of a running reconstruction on one line of a
// terminal, rewritten in place at most ten times a second, or as plain lines
// (at each new stage and every 50 iterations) when the output is not a
// terminal. A nil *progressLine shows nothing.
type progressLine struct {
	mu      sync.Mutex
	w       io.Writer
	tty     bool
	last    time.Time
	stage   string
	started time.Time
	dirty   bool
}

func newProgressLine(w io.Writer, quiet bool) *progressLine {
	if quiet {
		return nil
	}
	return &progressLine{w: w, tty: isTerminal(w), started: time.Now()}
}

// update shows one state; it is safe for concurrent use.
func (p *progressLine) update(stage string, iter int, objective, chi2r, weight float64) {
	if p == nil {
		return
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	now := time.Now()
	newStage := stage != p.stage
	p.stage = stage
	text := fmt.Sprintf("%-16s iter %4d  objective %-11.5g χ²ᵣ %-9.4g μ %-9.3g %5.1fs", stage, iter, objective, chi2r, weight, now.Sub(p.started).Seconds())
	if p.tty {
		if !newStage && now.Sub(p.last) < 100*time.Millisecond {
			return
		}
		fmt.Fprintf(p.w, "\r\033[K%s", text)
		p.dirty = true
	} else {
		if !newStage && iter%50 != 0 {
			return
		}
		fmt.Fprintln(p.w, text)
	}
	p.last = now
}

// done ends the display, leaving the cursor on a fresh line.
func (p *progressLine) done() {
	if p == nil {
		return
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.tty && p.dirty {
		fmt.Fprint(p.w, "\r\033[K")
	}
	p.dirty = false
}
