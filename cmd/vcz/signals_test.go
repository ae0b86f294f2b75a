package main

import (
	"bytes"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"

	"vcz/recon/batch"
)

// lockedBuffer is a bytes.Buffer safe for the child's writer and the test.
type lockedBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (l *lockedBuffer) Write(p []byte) (int, error) {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.Write(p)
}

func (l *lockedBuffer) String() string {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.String()
}

// startChild runs vcz with args in a child process (TestBatchChild).
func startChild(t *testing.T, args ...string) (*exec.Cmd, *lockedBuffer) {
	t.Helper()
	cmd := exec.Command(os.Args[0], "-test.run=^TestBatchChild$")
	cmd.Env = append(os.Environ(), "VCZ_BATCH_ARGS="+strings.Join(args, "\x1f"))
	var errb lockedBuffer
	cmd.Stderr = &errb
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	return cmd, &errb
}

// waitFor polls until ok holds, failing the test after a minute.
func waitFor(t *testing.T, cmd *exec.Cmd, what string, ok func() bool) {
	t.Helper()
	deadline := time.Now().Add(60 * time.Second)
	for !ok() {
		if time.Now().After(deadline) {
			cmd.Process.Kill()
			t.Fatalf("no %s within 60 s", what)
		}
		time.Sleep(20 * time.Millisecond)
	}
}

// temporaries lists the hidden temporary files of safefile in dir.
func temporaries(dir string) []string {
	m, _ := filepath.Glob(filepath.Join(dir, ".*.tmp-*"))
	return m
}

// TestSignalStopsImage checks that SIGINT and SIGTERM stop a reconstruction at its next
// iteration with a message, exit 128 + the signal number (130, 143: the shell's
// convention, POSIX.1-2017 sect. 2.8.2), no output written and no temporary file left.
func TestSignalStopsImage(t *testing.T) {
	for _, sig := range []syscall.Signal{syscall.SIGINT, syscall.SIGTERM} {
		dir := t.TempDir()
		data := writeDemoData(t, dir)
		out := filepath.Join(dir, "star.fits")
		cmd, errb := startChild(t, "image", "-iter", "5000", "-o", out, data)
		waitFor(t, cmd, "progress line", func() bool { return strings.Contains(errb.String(), "iter") })
		cmd.Process.Signal(sig)
		err := cmd.Wait()
		code := cmd.ProcessState.ExitCode()
		want := 128 + int(sig)
		name := map[syscall.Signal]string{syscall.SIGINT: "SIGINT", syscall.SIGTERM: "SIGTERM"}[sig]
		if code != want || !strings.Contains(errb.String(), "stopped by "+name) {
			t.Errorf("%v: exit %d (%v), want %d; stderr %q", sig, code, err, want, errb.String())
		}
		if left, _ := filepath.Glob(filepath.Join(dir, "star*")); len(left) != 0 {
			t.Errorf("%v: outputs left: %v", sig, left)
		}
		if tmp := temporaries(dir); len(tmp) != 0 {
			t.Errorf("%v: temporaries left: %v", sig, tmp)
		}
	}
}

// TestSignalCompareMessage: a compare stopped by SIGINT reports its unfinished
// regularizers in one line of the form "vcz compare: …", without the command named twice,
// then that it was stopped (common practice, no source).
func TestSignalCompareMessage(t *testing.T) {
	dir := t.TempDir()
	data := writeDemoData(t, dir)
	cmd, errb := startChild(t, "compare", "-reg", "tv,mem", "-iter", "5000", "-weight", "1000", "-o", filepath.Join(dir, "cmp"), data)
	waitFor(t, cmd, "progress line", func() bool { return strings.Contains(errb.String(), "iter") })
	cmd.Process.Signal(syscall.SIGINT)
	cmd.Wait()
	s := errb.String()
	if code := cmd.ProcessState.ExitCode(); code != exitInterrupt || !strings.Contains(s, "stopped by SIGINT") {
		t.Fatalf("exit %d, want %d; stderr %q", code, exitInterrupt, s)
	}
	if !strings.Contains(s, "vcz compare: 2 of 2 regularizers failed") || strings.Contains(s, "vcz compare: compare:") {
		t.Errorf("stderr %q: want one \"vcz compare: 2 of 2 regularizers failed\" line, the command named once", s)
	}
}

// TestSignalStopsBatch checks that SIGINT during a batch keeps the epochs finished
// before it, starts no further one, exits 130, leaves no temporary, and that a rerun
// finds the finished epochs complete and does the rest.
func TestSignalStopsBatch(t *testing.T) {
	dir := t.TempDir()
	files := writeEpochs(t, dir, 4)
	out := filepath.Join(dir, "out")
	args := append(append([]string{"batch", "-out", out, "-parallel", "1"}, batchFast...), "-iter", "400", "-weight", "auto")
	args = append(args, files...)
	cmd, errb := startChild(t, args...)
	waitFor(t, cmd, "finished epoch", func() bool {
		m, _ := filepath.Glob(filepath.Join(out, "*.status.json"))
		return len(m) > 0
	})
	cmd.Process.Signal(syscall.SIGINT)
	cmd.Wait()
	if code := cmd.ProcessState.ExitCode(); code != exitInterrupt {
		t.Fatalf("exit %d, want %d; stderr %q", code, exitInterrupt, errb.String())
	}
	if tmp := temporaries(out); len(tmp) != 0 {
		t.Errorf("temporaries left: %v", tmp)
	}
	m, _ := filepath.Glob(filepath.Join(out, "*.status.json"))
	finished := len(m)
	if finished == 4 {
		t.Log("all epochs finished before the signal took effect")
	}
	if _, errs, code := runCmd(t, args...); code != exitOK {
		t.Fatalf("rerun: exit %d: %s", code, errs)
	}
	s := readSummary(t, filepath.Join(out, "summary.json"))
	skipped := 0
	for _, r := range s.Rows {
		if r.Status != batch.StateDone {
			t.Fatalf("row %+v", r)
		}
		if r.Skipped {
			skipped++
		}
	}
	if len(s.Rows) != 4 || skipped != finished {
		t.Fatalf("%d rows, %d skipped, %d finished before the signal", len(s.Rows), skipped, finished)
	}
}
