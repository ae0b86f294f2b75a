package main

import (
	"bytes"
	"strings"
	"testing"

	"vcz/recon"
	"vcz/workflow"
)

// TestClip checks that a progress line rewritten in place fits the terminal: fewer
// characters than columns, so the cursor never wraps (a wrapped line leaves a stale copy
// at every update: common practice, no source), with "…" where it was cut.
func TestClip(t *testing.T) {
	for _, c := range []struct {
		in   string
		cols int
		want string
	}{
		{"final  χ²ᵣ 0.98  μ 12", 80, "final  χ²ᵣ 0.98  μ 12"},
		{"final  χ²ᵣ 0.98  μ 12", 10, "final  χ…"},
		{"abcdef", 7, "abcdef"},
		{"abcdef", 6, "abcd…"},
		{"abcdef", 0, "abcdef"}, // not a terminal, or it did not say
		{"abcdef", 1, "abcdef"},
	} {
		got := clip(c.in, c.cols)
		if got != c.want {
			t.Errorf("clip(%q, %d) = %q, want %q", c.in, c.cols, got, c.want)
		}
		if c.cols > 1 && len([]rune(got)) >= c.cols {
			t.Errorf("clip(%q, %d) = %q has %d characters", c.in, c.cols, got, len([]rune(got)))
		}
	}
}

// TestPlainProgressRate checks that progress written to a file or pipe gives one line per
// stage while iterations follow quickly (at most one every plainEvery), and that this line
// is the stage's last state (its final iteration), not its first.
func TestPlainProgressRate(t *testing.T) {
	var b bytes.Buffer
	p := newProgressLine(&b, false)
	for _, stage := range []string{"amplitudes", recon.WeightStage(1, 14), "final"} {
		for it := 1; it <= 300; it++ {
			p.report(recon.Progress{Stage: stage, Iter: it, Objective: 1, Chi2r: 1, Weight: 1})
		}
	}
	p.done()
	lines := strings.Split(strings.TrimSpace(b.String()), "\n")
	if len(lines) != 3 {
		t.Fatalf("%d lines, want one per stage:\n%s", len(lines), b.String())
	}
	for i, stage := range []string{"amplitudes", recon.WeightStage(1, 14), "final"} {
		if !strings.HasPrefix(lines[i], stage) {
			t.Errorf("line %d = %q, want stage %q", i, lines[i], stage)
		}
		if !strings.Contains(lines[i], "iter  300") {
			t.Errorf("line %d = %q, want the stage's last iteration, 300", i, lines[i])
		}
	}
}

// TestPlainCompareProgress checks the plain progress of a comparison (a log or a pipe): for
// each run a line when it starts, its stages' last states (their final iterations, not their
// first) while iterations follow quickly, and its end.
func TestPlainCompareProgress(t *testing.T) {
	var b bytes.Buffer
	runs := []*workflow.CompareRun{{Name: "tv"}, {Name: "mem"}}
	p := newMultiProgress(&b, runs)
	for i := range runs {
		p.start(i)
	}
	for _, stage := range []string{recon.WeightStage(1, 14), "final"} {
		for it := 1; it <= 300; it++ {
			for i := range runs {
				p.update(i, recon.Progress{Stage: stage, Iter: it, Objective: 1, Chi2r: 1, Weight: 1})
			}
		}
	}
	for i, r := range runs {
		r.Result = &recon.Result{Chi2r: 1, TotalIter: 600}
		p.end(i, r)
	}
	lines := strings.Split(strings.TrimSpace(b.String()), "\n")
	// waiting ×2, running ×2, two stages ×2, done ×2.
	if len(lines) != 10 {
		t.Fatalf("%d lines, want 10:\n%s", len(lines), b.String())
	}
	stages := 0
	for _, l := range lines {
		if strings.Contains(l, "iter ") {
			stages++
			if !strings.Contains(l, "iter  300") {
				t.Errorf("%q: want the stage's last iteration, 300", l)
			}
		}
	}
	if stages != 4 || !strings.Contains(lines[9], "done") {
		t.Errorf("%d stage lines (want 4), last line %q:\n%s", stages, lines[9], b.String())
	}
}
