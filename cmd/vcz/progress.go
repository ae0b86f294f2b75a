package main

import (
	"fmt"
	"io"
	"os"
	"strings"
	"sync"
	"time"

	"golang.org/x/term"

	"vcz/recon"
)

// isTerminal reports whether w is a terminal.
func isTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	return ok && term.IsTerminal(int(f.Fd()))
}

// terminalWidth returns the number of columns of the terminal w, asked at each call so that
// a resized window is followed; 0 when w is not a terminal or does not say.
func terminalWidth(w io.Writer) int {
	f, ok := w.(*os.File)
	if !ok {
		return 0
	}
	cols, _, err := term.GetSize(int(f.Fd()))
	if err != nil || cols <= 0 {
		return 0
	}
	return cols
}

// clip shortens s to fewer than cols columns (one character a column: the progress text
// has no wide characters), ending it with "…" when cut, so that a line rewritten in place
// never wraps onto a second one. cols ≤ 1 leaves s as it is.
func clip(s string, cols int) string {
	if cols <= 1 {
		return s
	}
	r := []rune(s)
	if len(r) < cols {
		return s
	}
	return string(r[:cols-2]) + "…"
}

// plainEvery is the least time between two plain progress lines of one stage when the
// output is not a terminal (a log file or a pipe): a new stage always prints.
const plainEvery = 5 * time.Second

// progressLine shows the state of a running reconstruction on one line of a
// terminal, rewritten in place at most ten times a second and clipped to the
// terminal's width, or as plain lines when the output is not a terminal: the last
// state of each stage when it ends (its final iteration, objective and χ²ᵣ, which a
// log wants), and within a long stage at most one line every plainEvery. A nil
// *progressLine shows nothing.
type progressLine struct {
	mu      sync.Mutex
	w       io.Writer
	tty     bool
	last    time.Time
	stage   string
	started time.Time
	dirty   bool
	plain   stageLog
}

// stageLog decides what a plain progress log (a file or a pipe) shows of one run: the last
// state of each stage, written when the next stage begins or the run ends (flush), and
// within a long stage at most one line every plainEvery.
type stageLog struct {
	pending        string    // the stage's latest state, not written yet
	stageAt, wrote time.Time // when the stage began and when a line was last written
}

// update takes the state text of stage newStage or not, at now; write writes a line.
func (l *stageLog) update(now time.Time, newStage bool, text string, write func(string)) {
	if newStage {
		l.flush(write)
		l.stageAt = now
	}
	l.pending = text
	if now.Sub(l.stageAt) >= plainEvery && now.Sub(l.wrote) >= plainEvery {
		l.flush(write)
		l.wrote = now
	}
}

// flush writes the pending state, if any.
func (l *stageLog) flush(write func(string)) {
	if l.pending != "" {
		write(l.pending)
		l.pending = ""
	}
}

func newProgressLine(w io.Writer, quiet bool) *progressLine {
	if quiet {
		return nil
	}
	return &progressLine{w: w, tty: isTerminal(w), started: time.Now()}
}

// follow is report as a progress function of a run: it never stops the run.
func (p *progressLine) follow(pr recon.Progress) bool {
	p.report(pr)
	return true
}

// report shows the state after an iteration: stage, iteration, objective, total χ²ᵣ and
// χ²ᵣ of each data type fitted, weight and time. It is safe for concurrent use.
func (p *progressLine) report(pr recon.Progress) {
	if p == nil {
		return
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	now := time.Now()
	newStage := pr.Stage != p.stage
	p.stage = pr.Stage
	text := fmt.Sprintf("%-16s iter %4d  objective %-11.5g χ²ᵣ %.4g%s  μ %-9.3g %5.1fs",
		pr.Stage, pr.Iter, pr.Objective, pr.Chi2r, typesText(pr.Types), pr.Weight, now.Sub(p.started).Seconds())
	if p.tty {
		if !newStage && now.Sub(p.last) < 100*time.Millisecond {
			return
		}
		fmt.Fprintf(p.w, "\r\033[K%s", clip(text, terminalWidth(p.w)))
		p.dirty = true
		p.last = now
		return
	}
	p.plain.update(now, newStage, text, p.writeLine)
}

// writeLine writes one plain line.
func (p *progressLine) writeLine(s string) { fmt.Fprintln(p.w, s) }

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
	p.plain.flush(p.writeLine)
}

// typesText returns " (vis2 1.02 t3phi 0.98)", χ²ᵣ of each data type, or "" for fewer than
// two types.
func typesText(types []recon.TermChi2) string {
	if len(types) < 2 {
		return ""
	}
	var b strings.Builder
	b.WriteString(" (")
	for i, t := range types {
		if i > 0 {
			b.WriteByte(' ')
		}
		fmt.Fprintf(&b, "%s %.3g", t.Type, t.Chi2r)
	}
	b.WriteByte(')')
	return b.String()
}
