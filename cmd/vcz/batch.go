package main

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sync"
	"time"

	"vcz/dataset"
	"vcz/io/preview"
	"vcz/output"
	"vcz/recon/batch"
	"vcz/runspec"
	"vcz/workflow"
)

func runBatch(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("batch", "[options] (-job FILE | FILE...)", batchDoc, stderr)
	opts := runspec.RegisterFlags(fs, runspec.Select|runspec.Types|runspec.Recon|runspec.Cube)
	job := fs.String("job", "", "job file (TOML) listing the epochs and their settings")
	out := fs.String("o", "", "output folder (default: the job file's output, else batch)")
	fs.StringVar(out, "out", "", "earlier name of -o")
	gap := fs.Float64("gap", dataset.NightGap, "split FILE arguments into epochs at gaps in MJD longer than this (days)")
	force := fs.Bool("force", false, "redo epochs whose outputs are complete")
	shardS := fs.String("shard", "", "run only shard K/N: every N-th epoch starting at the K-th (default: from SLURM_ARRAY_TASK_ID, else all)")
	collect := fs.Bool("collect", false, "merge the shard summaries in -o (and any folders given) into one summary, montage and animation")
	joint := fs.Bool("joint", false, "also reconstruct all epochs together with a temporal regularizer λ·Σ‖x_t − x_{t−1}‖²")
	tweight := fs.String("temporal-weight", "auto", "temporal weight λ of -joint, or auto (the largest that raises no epoch's χ²ᵣ by more than 5%)")
	parallel := fs.Int("cpus", 0, "CPUs that all epochs together may keep busy: worker goroutines of the running epochs and of their transforms (default: number of CPUs)")
	fs.IntVar(parallel, "parallel", 0, "earlier name of -cpus (in compare, -parallel is the number of regularizers run at once)")
	stretch := registerStretch(fs)
	quiet := fs.Bool("quiet", false, quietUsage)
	strict := fs.Bool("strict", false, strictUsage+"; with -collect, any warning in the merged summary")
	asJSON := fs.Bool("json", false, "print the summary (as summary.json holds it) on stdout instead of the count line, the failed or warned epochs and the names of the summary files")
	if err := parseFlags(fs, args, stdout); err != nil {
		return err
	}
	st, err := output.ParseStretch(*stretch)
	if err != nil {
		return badInputf("batch: %v", err)
	}
	if *collect {
		dirs := fs.Args()
		if *out == "" && len(dirs) == 0 {
			return badInputf("batch: -collect: name the output folder with -o")
		}
		if *out == "" {
			*out = dirs[0]
		}
		return collectShards(*out, append([]string{*out}, dirs...), stdout, stderr, *quiet, *strict, *asJSON, st)
	}
	shared, err := opts.Spec()
	if err != nil {
		return badInputf("batch: %v", err)
	}
	plan, err := workflow.PlanBatch(workflow.BatchRequest{Job: *job, Files: fs.Args(), Gap: *gap, Shared: shared, Out: *out,
		Shard: *shardS, Joint: *joint, TemporalWeight: *tweight}, os.Getenv)
	if err != nil {
		return err
	}
	*out = plan.Out
	b := &workflow.Batch{Out: *out, Force: *force, Budget: *parallel, Stretch: st}
	disp := newBatchDisplay(stderr, *quiet)
	sr, err := b.RunShard(plan.Epochs, plan.Shard, *joint, disp.event)
	disp.finish()
	if err != nil {
		return err
	}
	sum, name := sr.Summary, sr.Name
	printMontageNote(stderr, sr, *quiet)
	printBatchSummary(stdout, sum, *out, name, *asJSON)
	// The verdict comes last, after the joint run's messages, whatever happens there.
	if *joint {
		if sum.Failed() > 0 {
			printBatchWarnings(stderr, sum)
			return failure(fmt.Errorf("%d of %d epochs failed; the joint reconstruction needs them all", sum.Failed(), len(sr.Epochs)))
		}
		jointOut := stdout
		if *asJSON {
			jointOut = stderr // stdout holds the JSON summary alone
		}
		jointWarnings, err := runJoint(b, sr.Epochs, sr.Results, plan.Lambda, jointOut, stderr, *quiet)
		if err != nil {
			printBatchWarnings(stderr, sum)
			return err
		}
		nwarn := printBatchWarnings(stderr, sum)
		printWarnings(stderr, "joint", jointWarnings)
		return strictFailure(*strict, "batch", nwarn+len(jointWarnings))
	}
	nwarn := printBatchWarnings(stderr, sum)
	if n := sum.Failed(); n > 0 {
		return failure(fmt.Errorf("%d of %d epochs failed (see %s)", n, len(sr.Epochs), filepath.Join(*out, name+".csv")))
	}
	return strictFailure(*strict, "batch", nwarn)
}

// printBatchWarnings prints the warnings of every epoch of s as "warning: epoch NAME: ..."
// lines and returns their number.
func printBatchWarnings(w io.Writer, s *batch.Summary) int {
	n := 0
	for _, r := range s.Rows {
		printWarnings(w, "epoch "+r.Epoch, r.Warnings)
		n += len(r.Warnings)
	}
	return n
}

// collectShards merges the shard summaries found in dirs into out/summary.json.
func collectShards(out string, dirs []string, stdout, stderr io.Writer, quiet, strict, asJSON bool, st preview.Stretch) error {
	sr, err := workflow.CollectShards(out, dirs, st)
	if err != nil {
		return err
	}
	sum := sr.Summary
	printMontageNote(stderr, sr, quiet)
	printBatchSummary(stdout, sum, out, "summary", asJSON)
	nwarn := printBatchWarnings(stderr, sum)
	if n := sum.Failed(); n > 0 {
		return failure(fmt.Errorf("%d of %d epochs failed", n, len(sum.Rows)))
	}
	return strictFailure(strict, "batch -collect", nwarn)
}

// printMontageNote says why the montage of sr could not be drawn, unless quiet.
func printMontageNote(w io.Writer, sr *workflow.ShardRun, quiet bool) {
	if sr.Montage != nil && !quiet {
		fmt.Fprintf(w, "note: montage: %v\n", sr.Montage)
	}
}

// printBatchSummary prints the counts of the summary, the epochs that failed or have
// warnings and the names of the summary files (output.WriteBatchText), or with asJSON the
// summary as summary.json holds it.
func printBatchSummary(w io.Writer, s *batch.Summary, dir, name string, asJSON bool) {
	if asJSON {
		writeJSONTo(w, s)
		return
	}
	output.WriteBatchText(w, s, dir, name)
}

// batchDisplay shows the state of a batch: one line redrawn in place on a terminal, a
// line per finished epoch otherwise.
type batchDisplay struct {
	mu    sync.Mutex
	w     io.Writer
	tty   bool
	quiet bool
	dirty bool
}

func newBatchDisplay(w io.Writer, quiet bool) *batchDisplay {
	return &batchDisplay{w: w, tty: isTerminal(w), quiet: quiet}
}

// event shows a start or end of an epoch; r is the epoch's result, filled at its end.
func (b *batchDisplay) event(ev workflow.Event, r *workflow.EpochResult) {
	if b.quiet {
		return
	}
	b.mu.Lock()
	defer b.mu.Unlock()
	left := "?"
	if ev.Left > 0 || ev.Done+ev.Failed > 0 {
		left = "~" + ev.Left.Round(time.Second).String()
	}
	state := fmt.Sprintf("%d done, %d failed, %d running, %d waiting; %s elapsed, %s left",
		ev.Done, ev.Failed, ev.Running, ev.Pending, ev.Elapsed.Round(time.Second), left)
	name := r.Row.Epoch // filled at the end, the only event that names the epoch
	if b.tty {
		if ev.Ended && ev.Err != nil {
			fmt.Fprintf(b.w, "\r\033[K%s failed: %v\n", name, ev.Err)
		}
		fmt.Fprintf(b.w, "\r\033[K%s", clip("batch: "+state, terminalWidth(b.w)))
		b.dirty = true
		return
	}
	if ev.Ended {
		what := "done"
		switch {
		case ev.Err != nil:
			what = "FAILED: " + ev.Err.Error()
		case len(r.Row.Warnings) > 0:
			what = "finished with " + output.CountWarnings(len(r.Row.Warnings))
		}
		fmt.Fprintf(b.w, "%s %s (%s)\n", name, what, state)
	}
}

func (b *batchDisplay) finish() {
	b.mu.Lock()
	defer b.mu.Unlock()
	if b.tty && b.dirty {
		fmt.Fprint(b.w, "\r\033[K")
	}
}
