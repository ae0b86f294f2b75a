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

func init() {
	register(&command{name: "batch", summary: "image many epochs of one target: in parallel, resumable, sharded for job arrays, optionally jointly", run: runBatch})
}

const batchDoc = `Reconstruct one image per epoch with one set of settings.

The epochs come from a job file (-job) or from OIFITS files given as
arguments, split into epochs wherever consecutive observations are more than
-gap days apart (default half a day: one epoch per night). Every 'vcz image'
option applies to all epochs; a job file may override them per epoch.

Epochs run concurrently; the worker goroutines of all running epochs (their
transforms' workers included) never exceed the number of CPUs. An epoch that
fails is recorded with its error and the others go on; the exit status is 1
when any failed. Each epoch's FITS header (INHASH) and its status file record
a SHA-256 of its input files and the canonical text of its options (the
options that differ from the defaults, the worker count left out, also in
the FITS header as "option:" HISTORY cards); a rerun skips the epochs whose
outputs are complete with the same hash (-force redoes them). Every file is
written to a temporary name and renamed, and the status file last, so a run
killed at any moment loses no finished epoch.

The quality verdict of each epoch's image is printed after the summary as
"warning: epoch NAME: ..." lines on stderr, and kept in its FITS header
(NWARN, WARNn) and the summary; -strict makes any warning exit 1 once every
output is written. Neither changes the hash.

-shard K/N takes every N-th epoch starting at the K-th; inside a SLURM job
array the shard follows SLURM_ARRAY_TASK_ID and SLURM_ARRAY_TASK_COUNT (or
_MIN and _MAX) unless -shard is given. Shards write summary-K-of-N.json;
'vcz batch -collect -o DIR' merges them into DIR/summary.json and .csv and
draws the montage and animation.

Job file (TOML; paths relative to the job file):
  output = "epochs"              output folder (-o overrides)
  [image]                        shared settings: the 'vcz image' options,
                                 each key the flag's name without the dash:
    target, wave, mjd, ins, use, n, pixel, fov, reg, weight, prior, start,
    support, tv-eps, data-weights, iter, seed, starts, coarse, no-amp-first,
    smearing, workers (e.g. n = 64, reg = "mem,compact:0.1", coarse = true)
  [[epoch]]
    name = "night-1"             used for the output names (default epoch-NN)
    files = ["a.oifits", "b.oifits"]
    ...                          any [image] key, overriding it for this epoch

Outputs in the folder (-o, default "batch"):
  EPOCH.fits, EPOCH.png        image and preview of each epoch
  EPOCH.status.json            hash, outputs and summary row of each epoch
  summary.json, summary.csv    epoch, MJD range, points and χ²ᵣ per data type,
                               weight, iterations, seconds, status, warnings
                               (a list in JSON, their number in CSV), error
  montage.png, epochs.gif      all epochs on one colour scale, with dates

Every epoch is imaged on one grid, the finest pixel and widest field that any
epoch's data call for (or -n and -pixel when given), so the images compare
pixel for pixel; adding an epoch may change that grid and redo the others.
-stretch sets the display stretch of the previews, montage and animation.
With -joint also:
  joint.fits                   the jointly reconstructed cube (axis 3 = time:
                               CTYPE3 TIME or TIME-TAB in MJD, each plane at the
                               middle of its epoch; MJDnnn keys instead when the
                               epochs are not in time order)
  EPOCH-joint.fits/.png        its planes as images`

func runBatch(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("batch", "[options] (-job FILE | FILE...)", batchDoc, stderr)
	opts := runspec.RegisterFlags(fs, runspec.Select|runspec.Types|runspec.Recon)
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
	asJSON := fs.Bool("json", false, "print the summary (as summary.json holds it) on stdout instead of the table")
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
			return badInputf("batch -collect: name the output folder with -o")
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
		if err := runJoint(b, sr.Epochs, sr.Results, plan.Lambda, jointOut, stderr, *quiet); err != nil {
			printBatchWarnings(stderr, sum)
			return err
		}
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

// printBatchSummary prints the summary as a table, or with asJSON as summary.json holds it.
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
