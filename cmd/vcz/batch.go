package main

import (
	"errors"
	"fmt"
	"io"
	"maps"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"sync"
	"time"

	"github.com/BurntSushi/toml"

	"vcz/io/fitsimage"
	"vcz/io/oifits"
	"vcz/io/preview"
	"vcz/output"
	"vcz/recon"
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
'vcz batch -collect -out DIR' merges them into DIR/summary.json and .csv and
draws the montage and animation.

Job file (TOML; paths relative to the job file):
  output = "epochs"              output folder (-out overrides)
  [image]                        shared settings: the 'vcz image' options,
                                 each key the flag's name without the dash:
    target, wave, mjd, ins, use, n, pixel, fov, reg, weight, prior, start,
    support, tv-eps, data-weights, iter, seed, starts, coarse, no-amp-first,
    workers (e.g. n = 64, reg = "mem,compact:0.1", coarse = true)
  [[epoch]]
    name = "night-1"             used for the output names (default epoch-NN)
    files = ["a.oifits", "b.oifits"]
    ...                          any [image] key, overriding it for this epoch

Outputs in the folder (-out, default "batch"):
  EPOCH.fits, EPOCH.png        image and preview of each epoch
  EPOCH.status.json            hash, outputs and summary row of each epoch
  summary.json, summary.csv    epoch, MJD range, points and χ²ᵣ per data type,
                               weight, iterations, seconds, status, warnings
                               (a list in JSON, their number in CSV), error
  montage.png, epochs.gif      all epochs on one colour scale, with dates
With -joint also:
  joint.fits                   the jointly reconstructed cube (axis 3 = epoch,
                               MJD of each plane in keys MJDnnn)
  EPOCH-joint.fits/.png        its planes as images`

// jobFile is a job file. The option tables [image] and [[epoch]] are decoded as TOML
// tables whose keys are the flag names (runspec.Spec.SetTable); an epoch also has its name
// and files.
type jobFile struct {
	Output string           `toml:"output"`
	Image  map[string]any   `toml:"image"`
	Epoch  []map[string]any `toml:"epoch"`
}

// renamedKeys are the job-file keys of earlier versions, which named some options
// differently from their flags, with a hint for the message of an unknown key.
var renamedKeys = map[string]string{
	"regularizer": "reg", "grid": "n", "iterations": "iter", "tv_eps": "tv-eps",
	"data_weights": "data-weights", "instruments": "ins",
	"amplitudes_first": "no-amp-first (true skips the first pass on amplitudes)",
}

// batchEpoch is one epoch to image.
type batchEpoch struct {
	index  int
	name   string
	files  []string
	spec   runspec.Spec
	mjdMin float64 // of the split, or of the data once read; 0 when unknown
	mjdMax float64
}

// settingsText is the text hashed with an epoch's files: the canonical text of its
// options, which leaves out the worker count (the image does not depend on it).
func (e *batchEpoch) settingsText() string {
	return "vcz batch v2\n" + e.spec.String()
}

func runBatch(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("batch", "[options] (-job FILE | FILE...)", batchDoc, stderr)
	opts := runspec.RegisterFlags(fs, runspec.Select|runspec.Types|runspec.Recon)
	job := fs.String("job", "", "job file (TOML) listing the epochs and their settings")
	out := fs.String("out", "", "output folder (default: the job file's output, else batch)")
	gap := fs.Float64("gap", recon.NightGap, "split FILE arguments into epochs at gaps in MJD longer than this (days)")
	force := fs.Bool("force", false, "redo epochs whose outputs are complete")
	shardS := fs.String("shard", "", "run only shard K/N: every N-th epoch starting at the K-th (default: from SLURM_ARRAY_TASK_ID, else all)")
	collect := fs.Bool("collect", false, "merge the shard summaries in -out (and any folders given) into one summary, montage and animation")
	joint := fs.Bool("joint", false, "also reconstruct all epochs together with a temporal regularizer λ·Σ‖x_t − x_{t−1}‖²")
	tweight := fs.String("temporal-weight", "auto", "temporal weight λ of -joint, or auto (the largest that raises no epoch's χ²ᵣ by more than 5%)")
	parallel := fs.Int("parallel", 0, "worker goroutines of all epochs together (default: number of CPUs)")
	quiet := fs.Bool("quiet", false, quietUsage)
	strict := fs.Bool("strict", false, strictUsage+"; with -collect, any warning in the merged summary")
	if err := parseFlags(fs, args, stdout); err != nil {
		return err
	}
	if *collect {
		dirs := fs.Args()
		if *out == "" && len(dirs) == 0 {
			return badInputf("batch -collect: name the output folder with -out")
		}
		if *out == "" {
			*out = dirs[0]
		}
		return collectShards(*out, append([]string{*out}, dirs...), stdout, stderr, *quiet, *strict)
	}
	shared, err := opts.Spec()
	if err != nil {
		return badInputf("batch: %v", err)
	}
	epochs, jobOut, err := batchEpochs(*job, fs.Args(), shared, *gap)
	if err != nil {
		return err
	}
	if *out == "" {
		*out = jobOut
	}
	if *out == "" {
		*out = "batch"
	}
	shard := batch.Shard{K: 1, N: 1}
	if *shardS != "" {
		if shard, err = batch.ParseShard(*shardS); err != nil {
			return badInputf("batch: -shard: %v", err)
		}
	} else if sh, ok, err := batch.ShardFromEnv(os.Getenv); err != nil {
		return badInputf("batch: %v", err)
	} else if ok {
		shard = sh
	}
	if *joint && shard.N > 1 {
		return badInputf("batch: -joint needs all epochs in one run, not shard %s", shard)
	}
	lambda := 0.0
	if *joint && strings.ToLower(*tweight) != "auto" {
		if _, err := fmt.Sscanf(*tweight, "%g", &lambda); err != nil || !(lambda > 0) {
			return badInputf("batch: -temporal-weight %q: want a positive number or auto", *tweight)
		}
	}
	if err := os.MkdirAll(*out, 0o755); err != nil {
		return failure(err)
	}
	budget := *parallel
	if budget <= 0 {
		budget = max(1, runtimeProcs())
	}
	var mine []*batchEpoch
	for _, e := range epochs {
		if shard.Take(e.index) {
			mine = append(mine, e)
		}
	}
	if *joint {
		if err := commonGrid(mine); err != nil {
			return err
		}
	}
	// Each epoch gets an equal part of the budget when the user did not fix its workers.
	conc := min(len(mine), budget)
	for _, e := range mine {
		if e.spec.Workers == 0 {
			e.spec.Workers = max(1, budget/max(conc, 1))
		}
	}
	rows := make([]batch.Row, len(mine))
	disp := newBatchDisplay(stderr, *quiet, mine, rows)
	jobs := make([]workflow.Task, len(mine))
	for i, e := range mine {
		jobs[i] = workflow.Task{Name: "epoch " + e.name, Workers: e.spec.Workers, Do: func() error {
			r := runEpoch(e, *out, *force)
			rows[i] = r
			if r.Status != batch.StateDone {
				return errors.New(r.Error)
			}
			return nil
		}}
	}
	workflow.RunTasks(jobs, workflow.PoolOptions{Budget: budget, Events: disp.event})
	disp.finish()
	sum := &batch.Summary{Shard: shard.String(), Epochs: len(epochs), Rows: rows}
	name := "summary"
	if shard.N > 1 {
		name = fmt.Sprintf("summary-%d-of-%d", shard.K, shard.N)
	}
	if err := batch.WriteJSON(filepath.Join(*out, name+".json"), sum); err != nil {
		return failure(err)
	}
	if err := batch.WriteCSV(filepath.Join(*out, name+".csv"), sum); err != nil {
		return failure(err)
	}
	if shard.N == 1 {
		if err := writeMontage(*out, "", sum.Rows, ""); err != nil && !*quiet {
			fmt.Fprintf(stderr, "note: montage: %v\n", err)
		}
	}
	if !*quiet {
		printBatchSummary(stdout, sum, *out, name)
	}
	// The verdict comes last, after the joint run's messages, whatever happens there.
	if *joint {
		if sum.Failed() > 0 {
			printBatchWarnings(stderr, sum)
			return failure(fmt.Errorf("%d of %d epochs failed; the joint reconstruction needs them all", sum.Failed(), len(mine)))
		}
		if err := runJoint(mine, rows, *out, lambda, stdout, stderr, *quiet); err != nil {
			printBatchWarnings(stderr, sum)
			return err
		}
	}
	nwarn := printBatchWarnings(stderr, sum)
	if n := sum.Failed(); n > 0 {
		return failure(fmt.Errorf("%d of %d epochs failed (see %s)", n, len(mine), filepath.Join(*out, name+".csv")))
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

// batchEpochs builds the epoch list from a job file or from files split at gaps.
func batchEpochs(job string, files []string, shared runspec.Spec, gap float64) ([]*batchEpoch, string, error) {
	if job != "" {
		if len(files) > 0 {
			return nil, "", badInputf("batch: give either -job or OIFITS files, not both")
		}
		return readJobFile(job, shared)
	}
	if len(files) == 0 {
		return nil, "", badInputf("batch: no job file or OIFITS file given (run 'vcz batch --help')")
	}
	if !(gap > 0) {
		return nil, "", badInputf("batch: -gap %g must be positive", gap)
	}
	// Read the times of every file; a file that cannot be read becomes an epoch of its own
	// that fails with the reader's message.
	type span struct {
		mjd []float64
		err error
	}
	spans := make([]span, len(files))
	var all []float64
	for i, p := range files {
		f, err := oifits.ReadFile(p)
		if err != nil {
			spans[i].err = err
			continue
		}
		spans[i].mjd = fileMJDs(f)
		all = append(all, spans[i].mjd...)
	}
	var epochs []*batchEpoch
	for _, r := range batch.Clusters(all, gap) {
		e := &batchEpoch{spec: shared, mjdMin: r.Min, mjdMax: r.Max}
		for i, s := range spans {
			for _, m := range s.mjd {
				if m >= r.Min && m <= r.Max {
					e.files = append(e.files, files[i])
					break
				}
			}
		}
		// Select the epoch's rows of files that span several epochs; the margin keeps rows
		// at the ends whatever the rounding of the MJD column.
		if e.spec.MJDMin == 0 && e.spec.MJDMax == 0 {
			e.spec.MJDMin, e.spec.MJDMax = roundMJD(r.Min-1e-5), roundMJD(r.Max+1e-5)
		}
		epochs = append(epochs, e)
	}
	for i, s := range spans {
		if s.err != nil {
			epochs = append(epochs, &batchEpoch{spec: shared, files: []string{files[i]}, mjdMin: math.Inf(1), mjdMax: math.Inf(1)})
		}
	}
	sort.SliceStable(epochs, func(a, b int) bool { return epochs[a].mjdMin < epochs[b].mjdMin })
	for i, e := range epochs {
		e.index = i
		if math.IsInf(e.mjdMin, 0) {
			e.mjdMin, e.mjdMax = 0, 0 // unknown
			base := filepath.Base(e.files[0])
			e.name = fmt.Sprintf("epoch-%02d-%s", i+1, strings.TrimSuffix(base, filepath.Ext(base)))
		} else {
			e.name = fmt.Sprintf("epoch-%02d-%s", i+1, preview.FormatMJD(e.mjdMin))
		}
	}
	return epochs, "", nil
}

// fileMJDs returns the MJD of every data row of f.
func fileMJDs(f *oifits.File) []float64 {
	var m []float64
	for _, t := range f.Vis2 {
		for _, r := range t.Rows {
			m = append(m, r.MJD)
		}
	}
	for _, t := range f.T3 {
		for _, r := range t.Rows {
			m = append(m, r.MJD)
		}
	}
	for _, t := range f.Vis {
		for _, r := range t.Rows {
			m = append(m, r.MJD)
		}
	}
	return m
}

// roundMJD rounds an MJD to 6 decimals (0.09 s), as the epochs' selections are written.
func roundMJD(m float64) float64 {
	r, _ := strconv.ParseFloat(strconv.FormatFloat(m, 'f', 6, 64), 64)
	return r
}

// readJobFile reads a job file; the options of each epoch start from shared. Unknown keys
// are errors naming the key and its line.
func readJobFile(path string, shared runspec.Spec) ([]*batchEpoch, string, error) {
	src, err := os.ReadFile(path)
	if err != nil {
		return nil, "", badInput(err)
	}
	var jf jobFile
	md, err := tomlDecode(src, &jf)
	if err != nil {
		return nil, "", badInputf("%s: %v", path, err)
	}
	if und := md.Undecoded(); len(und) > 0 {
		k := und[0]
		return nil, "", badInputf("%s:%d: unknown key %s (see 'vcz batch --help')", path, keyLine(src, k, -1), k.String())
	}
	// optionErr reports a bad key of the table (image, or the index-th epoch) as the
	// others: an unknown key with its line, a bad value after where.
	optionErr := func(err error, table string, index int, where string) error {
		var oe *runspec.OptionError
		if errors.As(err, &oe) && errors.Is(err, runspec.ErrUnknownOption) {
			hint := ""
			if h, ok := renamedKeys[oe.Option]; ok {
				hint = "; job keys are the flag names: " + h
			}
			return badInputf("%s:%d: unknown key %s.%s (see 'vcz batch --help'%s)", path, keyLine(src, toml.Key{table, oe.Option}, index), table, oe.Option, hint)
		}
		return badInputf("%s: %s %v", path, where, err)
	}
	if err := shared.SetTable(jf.Image, runspec.Select|runspec.Types|runspec.Recon); err != nil {
		return nil, "", optionErr(err, "image", -1, "[image]")
	}
	if len(jf.Epoch) == 0 {
		return nil, "", badInputf("%s: no [[epoch]] listed", path)
	}
	dir := filepath.Dir(path)
	seen := map[string]bool{}
	var epochs []*batchEpoch
	for i, tbl := range jf.Epoch {
		opts := maps.Clone(tbl)
		delete(opts, "name")
		delete(opts, "files")
		name := ""
		if v, ok := tbl["name"]; ok {
			if name, ok = v.(string); !ok {
				return nil, "", badInputf("%s: epoch %d: name %v: want a string", path, i+1, v)
			}
		}
		e := &batchEpoch{index: i, name: strings.TrimSpace(name), spec: shared}
		if e.name == "" {
			e.name = fmt.Sprintf("epoch-%02d", i+1)
		}
		if strings.ContainsAny(e.name, `/\`) || e.name == "." || e.name == ".." {
			return nil, "", badInputf("%s: epoch %d: name %q must not contain a path separator", path, i+1, e.name)
		}
		if seen[e.name] {
			return nil, "", badInputf("%s: epoch %d: name %q is used twice", path, i+1, e.name)
		}
		seen[e.name] = true
		list, _ := tbl["files"].([]any)
		if len(list) == 0 {
			return nil, "", badInputf("%s: epoch %q lists no files", path, e.name)
		}
		for _, v := range list {
			p, ok := v.(string)
			if !ok {
				return nil, "", badInputf("%s: epoch %q: files: %v is not a file name", path, e.name, v)
			}
			if !filepath.IsAbs(p) {
				p = filepath.Join(dir, p)
			}
			e.files = append(e.files, p)
		}
		if err := e.spec.SetTable(opts, runspec.Select|runspec.Types|runspec.Recon); err != nil {
			return nil, "", optionErr(err, "epoch", i, fmt.Sprintf("epoch %q:", e.name))
		}
		epochs = append(epochs, e)
	}
	out := jf.Output
	if out != "" && !filepath.IsAbs(out) {
		out = filepath.Join(dir, out)
	}
	return epochs, out, nil
}

// runEpoch images one epoch, or finds it complete, and returns its summary row.
func runEpoch(e *batchEpoch, out string, force bool) batch.Row {
	t0 := time.Now()
	row := batch.Row{Index: e.index, Epoch: e.name, MJDMin: e.mjdMin, MJDMax: e.mjdMax, Status: batch.StateFailed,
		Points: map[string]int{}, Chi2r: map[string]float64{}, Warnings: []string{}}
	fail := func(err error) batch.Row {
		row.Error = strings.ReplaceAll(strings.TrimSpace(err.Error()), "\n", "; ")
		row.Seconds = time.Since(t0).Seconds()
		// A failed epoch leaves no status file that could pass for a finished one.
		os.Remove(filepath.Join(out, e.name+".status.json"))
		return row
	}
	hash, err := batch.Hash(e.settingsText(), e.files)
	if err != nil {
		return fail(err)
	}
	statusPath := filepath.Join(out, e.name+".status.json")
	if !force {
		if st, ok := batch.Complete(statusPath, hash); ok {
			r := st.Row
			r.Index, r.Skipped = e.index, true
			r.Warnings = nonNil(r.Warnings)
			return r
		}
	}
	files, d, err := workflow.ReadData(e.files, e.spec.Selection())
	if err != nil {
		return fail(err)
	}
	if lo, hi, ok := dataMJDRange(d); ok {
		row.MJDMin, row.MJDMax = lo, hi
	}
	fitsPath := filepath.Join(out, e.name+".fits")
	sum, _, err := reconstruct(files, d, e.spec, output.Outputs{NoPlots: true}, fitsPath, true, io.Discard)
	if err != nil {
		return fail(err)
	}
	if err := stampHash(fitsPath, hash); err != nil {
		return fail(err)
	}
	for name, c := range sum.Chi2ByType {
		row.Points[name] = c.N
		row.Chi2r[name] = c.Chi2r
	}
	row.Chi2rTotal, row.Weight, row.Iterations = sum.Chi2r, sum.Weight, sum.TotalIter
	row.Warnings = nonNil(sum.Warnings)
	row.FITS = filepath.Base(fitsPath)
	if sum.Outputs.PNG != "" {
		row.PNG = filepath.Base(sum.Outputs.PNG)
	}
	row.Status = batch.StateDone
	row.Seconds = time.Since(t0).Seconds()
	st := &batch.Status{Epoch: e.name, Hash: hash, Outputs: []string{row.FITS}, Row: row}
	if row.PNG != "" {
		st.Outputs = append(st.Outputs, row.PNG)
	}
	if err := batch.WriteStatus(statusPath, st); err != nil {
		return fail(err)
	}
	return row
}

// stampHash rewrites the FITS file with the input hash in key INHASH.
func stampHash(path, hash string) error {
	im, err := fitsimage.ReadFile(path)
	if err != nil {
		return err
	}
	im.Cards = append(im.Cards, fitsimage.Card{Key: "INHASH", Value: hash, Comment: "SHA-256 of inputs"})
	return fitsimage.WriteFile(path, im)
}

// dataMJDRange returns the range of MJD of the points of d.
func dataMJDRange(d *recon.Data) (lo, hi float64, ok bool) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, s := range [][]float64{d.Vis2.MJD, d.T3.MJD, d.Vis.MJD} {
		for _, m := range s {
			lo, hi = min(lo, m), max(hi, m)
		}
	}
	return lo, hi, lo <= hi
}

// writeMontage draws the done rows' images (FITS files NAME+suffix+.fits in dir) on one
// colour scale as montage+suffix.png and epochs+suffix.gif.
func writeMontage(dir, suffix string, rows []batch.Row, title string) error {
	var frames []preview.Frame
	pix := 0.0
	for _, r := range rows {
		if r.Status != batch.StateDone {
			continue
		}
		im, err := fitsimage.ReadFile(filepath.Join(dir, r.Epoch+suffix+".fits"))
		if err != nil {
			return err
		}
		data := im.Data[:im.NX*im.NY]
		pix = im.Pixel / recon.Mas
		frames = append(frames, preview.Frame{Data: data, NX: im.NX, NY: im.NY, Pixel: pix,
			Label: r.Epoch + "\n" + mjdLabel(r)})
	}
	if len(frames) == 0 {
		return errors.New("no finished epoch to draw")
	}
	if title == "" {
		title = fmt.Sprintf("%d epochs", len(frames))
	}
	opt := preview.Options{Title: title, Pixel: pix, ColorbarLabel: "flux per pixel"}
	if err := preview.WriteMontage(filepath.Join(dir, "montage"+suffix+".png"), frames, opt); err != nil {
		return err
	}
	return preview.WriteGIF(filepath.Join(dir, "epochs"+suffix+".gif"), frames, opt)
}

// collectShards merges the shard summaries found in dirs into out/summary.json.
func collectShards(out string, dirs []string, stdout, stderr io.Writer, quiet, strict bool) error {
	var parts []*batch.Summary
	seen := map[string]bool{}
	for _, d := range dirs {
		m, _ := filepath.Glob(filepath.Join(d, "summary-*-of-*.json"))
		for _, p := range m {
			if abs, _ := filepath.Abs(p); seen[abs] {
				continue
			} else {
				seen[abs] = true
			}
			s, err := batch.ReadJSON(p)
			if err != nil {
				return badInput(err)
			}
			parts = append(parts, s)
		}
	}
	if len(parts) == 0 {
		return badInputf("batch -collect: no summary-K-of-N.json in %s", strings.Join(dirs, ", "))
	}
	sum, err := batch.Collect(parts)
	if err != nil {
		return badInputf("batch -collect: %v", err)
	}
	if err := batch.WriteJSON(filepath.Join(out, "summary.json"), sum); err != nil {
		return failure(err)
	}
	if err := batch.WriteCSV(filepath.Join(out, "summary.csv"), sum); err != nil {
		return failure(err)
	}
	if err := writeMontage(out, "", sum.Rows, ""); err != nil && !quiet {
		fmt.Fprintf(stdout, "note: montage: %v\n", err)
	}
	if !quiet {
		printBatchSummary(stdout, sum, out, "summary")
	}
	nwarn := printBatchWarnings(stderr, sum)
	if n := sum.Failed(); n > 0 {
		return failure(fmt.Errorf("%d of %d epochs failed", n, len(sum.Rows)))
	}
	return strictFailure(strict, "batch -collect", nwarn)
}

func printBatchSummary(w io.Writer, s *batch.Summary, dir, name string) {
	skipped, warned := 0, 0
	for _, r := range s.Rows {
		if r.Skipped {
			skipped++
		}
		if len(r.Warnings) > 0 {
			warned++
		}
	}
	fmt.Fprintf(w, "%d of %d epochs (shard %s): %d done (%d of them found complete, %d with warnings), %d failed\n",
		len(s.Rows), s.Epochs, s.Shard, len(s.Rows)-s.Failed(), skipped, warned, s.Failed())
	for _, r := range s.Rows {
		switch {
		case r.Status != batch.StateDone:
			fmt.Fprintf(w, "  %s FAILED: %s\n", r.Epoch, r.Error)
		case len(r.Warnings) > 0:
			fmt.Fprintf(w, "  %s finished with %s\n", r.Epoch, countWarnings(len(r.Warnings)))
		}
	}
	fmt.Fprintf(w, "Wrote %s and %s\n", filepath.Join(dir, name+".json"), filepath.Join(dir, name+".csv"))
}

// batchDisplay shows the state of a batch: one line redrawn in place on a terminal, a
// line per finished epoch otherwise.
type batchDisplay struct {
	mu     sync.Mutex
	w      io.Writer
	tty    bool
	quiet  bool
	epochs []*batchEpoch
	// rows are the epochs' summary rows, each filled by its job before its end event.
	rows  []batch.Row
	dirty bool
}

func newBatchDisplay(w io.Writer, quiet bool, epochs []*batchEpoch, rows []batch.Row) *batchDisplay {
	return &batchDisplay{w: w, tty: isTerminal(w), quiet: quiet, epochs: epochs, rows: rows}
}

func (b *batchDisplay) event(ev workflow.Event) {
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
	name := b.epochs[ev.Task].name
	if b.tty {
		if ev.Ended && ev.Err != nil {
			fmt.Fprintf(b.w, "\r\033[K%s failed: %v\n", name, ev.Err)
		}
		fmt.Fprintf(b.w, "\r\033[Kbatch: %s", state)
		b.dirty = true
		return
	}
	if ev.Ended {
		what := "done"
		switch {
		case ev.Err != nil:
			what = "FAILED: " + ev.Err.Error()
		case len(b.rows[ev.Task].Warnings) > 0:
			what = "finished with " + countWarnings(len(b.rows[ev.Task].Warnings))
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

// mjdLabel gives the dates of a row, or "" when its MJD range is unknown (0).
func mjdLabel(r batch.Row) string {
	if r.MJDMin == 0 {
		return ""
	}
	return preview.FormatMJDRange(r.MJDMin, r.MJDMax)
}
