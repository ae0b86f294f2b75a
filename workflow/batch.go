package workflow

import (
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"time"
	"vcz/dataset"

	"vcz/io/fitsimage"
	"vcz/io/preview"
	"vcz/output"
	"vcz/recon"
	"vcz/recon/batch"
)

// Batch images epochs independently into one folder, resumably (package doc of
// recon/batch): an epoch whose status file records the same input hash and whose outputs
// exist is found complete and not redone, unless Force.
type Batch struct {
	Out   string // output folder; it must exist
	Force bool   // redo epochs found complete
	// Budget is the number of worker goroutines of all epochs together; 0 means
	// GOMAXPROCS. An epoch whose Spec.Workers is 0 gets an equal part of it.
	Budget int
	// Stretch is the display stretch of the previews, the montage and the animation; the
	// zero value, preview.Auto, chooses it from the images.
	Stretch preview.Stretch
}

// EpochResult is the outcome of one epoch of a batch.
type EpochResult struct {
	Row batch.Row
	// Image is the image written (its FITS file's content), nil when the epoch failed or
	// was found complete.
	Image *fitsimage.Image
}

// Run images the epochs, concurrently within the budget (RunTasks), and returns their
// results in the order of epochs. events, when non-nil, is called at every start and end
// of an epoch with the epoch's index in epochs and, at its end, its result. A failed epoch
// (its Row.Status batch.StateFailed) does not stop the others; a panic fails only its
// epoch, with a *PanicError's text.
func (b *Batch) Run(epochs []*Epoch, events func(Event, *EpochResult)) []EpochResult {
	budget := b.Budget
	if budget <= 0 {
		budget = max(1, runtime.GOMAXPROCS(0))
	}
	conc := min(len(epochs), budget)
	for _, e := range epochs {
		if e.Spec.Workers == 0 {
			e.Spec.Workers = max(1, budget/max(conc, 1))
		}
	}
	results := make([]EpochResult, len(epochs))
	tasks := make([]Task, len(epochs))
	for i, e := range epochs {
		tasks[i] = Task{Name: "epoch " + e.Name, Workers: e.Spec.Workers, Do: func() error {
			t0 := time.Now()
			err := Safely("epoch "+e.Name, func() error {
				results[i] = b.runEpoch(e)
				return nil
			})
			if err != nil {
				results[i] = EpochResult{Row: b.failed(e, newRow(e), t0, err)}
			}
			if r := results[i].Row; r.Status != batch.StateDone {
				return errors.New(r.Error)
			}
			return nil
		}}
	}
	var ev func(Event)
	if events != nil {
		ev = func(e Event) { events(e, &results[e.Task]) }
	}
	RunTasks(tasks, PoolOptions{Budget: budget, Events: ev})
	return results
}

// newRow is the summary row of e before it ran: failed until it succeeds.
func newRow(e *Epoch) batch.Row {
	return batch.Row{Index: e.Index, Epoch: e.Name, MJDMin: e.MJDMin, MJDMax: e.MJDMax, Status: batch.StateFailed,
		Points: map[string]int{}, Chi2r: map[string]float64{}, Warnings: []string{}}
}

// failed records err in row and removes e's status file, so that no status file can pass
// for a finished epoch.
func (b *Batch) failed(e *Epoch, row batch.Row, t0 time.Time, err error) batch.Row {
	row.Error = output.OneLine(err.Error())
	row.Seconds = time.Since(t0).Seconds()
	os.Remove(epochFile(b.Out, e.Name, "", extStatus))
	return row
}

// runEpoch images one epoch, or finds it complete. The FITS file carries the input hash
// (INHASH), written with the other cards; the status file is written last.
func (b *Batch) runEpoch(e *Epoch) EpochResult {
	t0 := time.Now()
	row := newRow(e)
	fail := func(err error) EpochResult { return EpochResult{Row: b.failed(e, row, t0, err)} }
	if Interrupted() {
		return fail(ErrInterrupted)
	}
	hash, err := batch.Hash(e.SettingsText(), e.Files)
	if err != nil {
		return fail(err)
	}
	statusPath := epochFile(b.Out, e.Name, "", extStatus)
	if !b.Force {
		if st, ok := batch.Complete(statusPath, hash); ok {
			r := st.Row
			r.Index, r.Skipped = e.Index, true
			r.Warnings = output.NonNil(r.Warnings)
			return EpochResult{Row: r}
		}
	}
	files, d, err := ReadData(e.Files, e.Spec.Selection())
	if err != nil {
		return fail(err)
	}
	if lo, hi, ok := dataMJDRange(d); ok {
		row.MJDMin, row.MJDMax = lo, hi
	}
	if cubeEpoch(e) {
		return b.runCubeEpoch(e, row, t0, hash, statusPath, files, d)
	}
	im, err := NewImage(files, d, e.Spec)
	if err != nil {
		return fail(err)
	}
	fitsPath, outs, err := b.epochOutputs(e, hash, statusPath)
	if err != nil {
		return fail(err)
	}
	run, paths, err := im.Run(outs, fitsPath, nil)
	if err != nil {
		return fail(err)
	}
	res := run.Result
	for _, t := range res.Chi2 {
		row.Points[t.Type.String()] = t.N
		row.Chi2r[t.Type.String()] = t.Chi2r
	}
	row.Chi2rTotal, row.Weight, row.Iterations = res.Chi2r, res.Weight, res.TotalIter
	row.Warnings = output.NonNil(res.Warnings)
	row.FITS = filepath.Base(fitsPath)
	if paths.PNG != "" {
		row.PNG = filepath.Base(paths.PNG)
	}
	if err := finishEpoch(e, &row, t0, hash, statusPath); err != nil {
		return fail(err)
	}
	return EpochResult{Row: row, Image: outs.Image(run)}
}

// finishEpoch marks row done, with its time since t0, and writes epoch e's status file
// (its outputs FITS and PNG, and the paths of any other files it wrote, listed by base
// name so that a rerun redoes the epoch when one is missing; the run's hash), the last
// output of the epoch.
func finishEpoch(e *Epoch, row *batch.Row, t0 time.Time, hash, statusPath string, others ...string) error {
	row.Status = batch.StateDone
	row.Seconds = time.Since(t0).Seconds()
	st := &batch.Status{Epoch: e.Name, Hash: hash, Outputs: []string{row.FITS}, Row: *row}
	if row.PNG != "" {
		st.Outputs = append(st.Outputs, row.PNG)
	}
	for _, o := range others {
		if o != "" {
			st.Outputs = append(st.Outputs, filepath.Base(o))
		}
	}
	return batch.WriteStatus(statusPath, st)
}

// dataMJDRange returns the range of MJD of the points of d.
func dataMJDRange(d *dataset.Data) (lo, hi float64, ok bool) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, s := range [][]float64{d.Vis2.MJD, d.T3.MJD, d.Vis.MJD} {
		for _, m := range s {
			lo, hi = min(lo, m), max(hi, m)
		}
	}
	return lo, hi, lo <= hi
}

// image returns the image of the done row r: the one in memory when there is one, else
// the FITS file NAME+suffix+.fits in dir (an epoch found complete, or one of another
// shard).
func image(dir, suffix string, r batch.Row, mem *fitsimage.Image) (*fitsimage.Image, error) {
	if mem != nil {
		return mem, nil
	}
	return fitsimage.ReadFile(epochFile(dir, r.Epoch, suffix, extFITS))
}

// WriteMontage draws the done rows' images on one colour scale with the display stretch s
// (preview.Auto chooses it from all of them) as montage+suffix.png and epochs+suffix.gif in
// dir, labelled with the epochs' names and dates. images, when not nil, holds the images in
// memory by row (nil entries are read from NAME+suffix+.fits in dir). title "" says "N
// epochs".
func WriteMontage(dir, suffix string, rows []batch.Row, images []*fitsimage.Image, title string, s preview.Stretch) error {
	var frames []preview.Frame
	pix := 0.0
	for i, r := range rows {
		if r.Status != batch.StateDone {
			continue
		}
		var mem *fitsimage.Image
		if images != nil {
			mem = images[i]
		}
		im, err := image(dir, suffix, r, mem)
		if err != nil {
			return err
		}
		data := im.Data[:im.NX*im.NY]
		pix = im.Pixel / recon.Mas
		// The dates, unless the epoch's name already gives them (epoch-01-2026-06-12).
		label := r.Epoch
		if ml := mjdLabel(r); ml != "" && !strings.Contains(r.Epoch, ml) {
			label += "\n" + ml
		}
		frames = append(frames, preview.Frame{Data: data, NX: im.NX, NY: im.NY, Pixel: pix, Label: label})
	}
	if len(frames) == 0 {
		return errors.New("no finished epoch to draw")
	}
	if title == "" {
		title = fmt.Sprintf("%d epochs", len(frames))
	}
	opt := preview.Options{Title: title, Pixel: pix, ColorbarLabel: "flux per pixel", Stretch: s}
	if err := preview.WriteMontage(montageFile(dir, suffix), frames, opt); err != nil {
		return err
	}
	return preview.WriteGIF(animationFile(dir, suffix), frames, opt)
}

// mjdLabel gives the dates of a row, or "" when its MJD range is unknown (0).
func mjdLabel(r batch.Row) string {
	if r.MJDMin == 0 {
		return ""
	}
	return preview.FormatMJDRange(r.MJDMin, r.MJDMax)
}

// Collect merges the shard summaries (summary-K-of-N.json) found in dirs into the summary
// of the whole batch (batch.Collect); a file found twice is read once. Errors are
// *InputError.
func Collect(dirs []string) (*batch.Summary, error) {
	sum, _, err := collect(dirs)
	return sum, err
}

// collect is Collect, also returning the folder of the summary that holds each epoch, by
// the epoch's index: its FITS file is there.
func collect(dirs []string) (*batch.Summary, map[int]string, error) {
	var parts []*batch.Summary
	from := map[int]string{}
	seen := map[string]bool{}
	for _, d := range dirs {
		m, _ := filepath.Glob(filepath.Join(d, shardSummaries))
		for _, p := range m {
			if abs, _ := filepath.Abs(p); seen[abs] {
				continue
			} else {
				seen[abs] = true
			}
			s, err := batch.ReadJSON(p)
			if err != nil {
				return nil, nil, inputError(p, err)
			}
			parts = append(parts, s)
			for _, r := range s.Rows {
				from[r.Index] = d
			}
		}
	}
	if len(parts) == 0 {
		return nil, nil, inputErrorf("-collect: no summary-K-of-N.json in %s", strings.Join(dirs, ", "))
	}
	sum, err := batch.Collect(parts)
	if err != nil {
		return nil, nil, inputErrorf("-collect: %v", err)
	}
	if err := checkCollected(sum); err != nil {
		return nil, nil, inputErrorf("-collect: %v", err)
	}
	return sum, from, nil
}

// CollectShards merges the shard summaries found in dirs (Collect) into out/summary.json and
// .csv and draws the montage and animation of the merged epochs from their files, each read
// from the folder of the summary that lists it. It makes the folder out when it does not
// exist; its errors there are *InputError.
func CollectShards(out string, dirs []string, st preview.Stretch) (*ShardRun, error) {
	sum, from, err := collect(dirs)
	if err != nil {
		return nil, err
	}
	if err := OutputFolder(out); err != nil {
		return nil, inputErrorf("-o: %v", err)
	}
	if err := WriteSummary(out, summaryName, sum); err != nil {
		return nil, err
	}
	return &ShardRun{Summary: sum, Name: summaryName, Montage: collectedMontage(out, sum, from, st)}, nil
}

// collectedMontage draws the montage and animation of the collected summary sum in out,
// each done epoch's image read from its folder from[index].
func collectedMontage(out string, sum *batch.Summary, from map[int]string, st preview.Stretch) error {
	images := make([]*fitsimage.Image, len(sum.Rows))
	for i, r := range sum.Rows {
		if r.Status != batch.StateDone {
			continue
		}
		im, err := image(from[r.Index], "", r, nil)
		if err != nil {
			return err
		}
		images[i] = im
	}
	return WriteMontage(out, "", sum.Rows, images, "", st)
}

// WriteSummary writes s as NAME.json and NAME.csv in dir.
func WriteSummary(dir, name string, s *batch.Summary) error {
	if err := batch.WriteJSON(filepath.Join(dir, name+".json"), s); err != nil {
		return err
	}
	return batch.WriteCSV(filepath.Join(dir, name+".csv"), s)
}

// ShardRun is the outcome of Batch.RunShard.
type ShardRun struct {
	Epochs  []*Epoch      // the epochs of the shard, in order
	Results []EpochResult // theirs, in the same order
	Summary *batch.Summary
	Name    string // of the summary files: "summary", or "summary-K-of-N" for a shard
	// Montage says why montage.png and epochs.gif could not be drawn; nil when they were,
	// and for a shard, which draws none. It does not fail the batch.
	Montage error
}

// epochOutputs returns the path of epoch e's FITS file and its outputs (no plots; the
// batch's stretch; INHASH carrying hash), after removing the epoch's old status file: the
// old status goes before any output of the epoch is rewritten, so that a run killed
// between the new FITS and the new status cannot pass the old one's check.
func (b *Batch) epochOutputs(e *Epoch, hash, statusPath string) (string, output.Outputs, error) {
	if err := os.Remove(statusPath); err != nil && !os.IsNotExist(err) {
		return "", output.Outputs{}, err
	}
	outs := output.Outputs{NoPlots: true, Stretch: b.Stretch, Cards: []fitsimage.Card{{Key: "INHASH", Value: hash, Comment: "SHA-256 of inputs"}}}
	return epochFile(b.Out, e.Name, "", extFITS), outs, nil
}

// RunShard images the epochs of shard sh of all (Run), all of them on one common grid chosen
// from every epoch of all (CommonGrid; so a shard chooses the grid the others do), and writes
// the summary NAME.json and NAME.csv and, for a whole batch, the montage. events is as for
// Run. Its error is that of the common grid of a joint reconstruction (an *InputError) or
// of writing the summary; an epoch that failed is a row of the summary. Without joint, an
// epoch set from which no grid can be chosen keeps each epoch's own choice, and each epoch
// then fails on its own.
func (b *Batch) RunShard(all []*Epoch, sh batch.Shard, joint bool, events func(Event, *EpochResult)) (*ShardRun, error) {
	sr := &ShardRun{Name: summaryName}
	for _, e := range all {
		if sh.Take(e.Index) {
			sr.Epochs = append(sr.Epochs, e)
		}
	}
	if joint && len(sr.Epochs) < 2 {
		return nil, inputErrorf("batch: -joint needs at least two epochs")
	}
	if len(all) > 1 {
		if err := CommonGrid(all); err != nil && joint {
			return nil, err
		}
	}
	sr.Results = b.Run(sr.Epochs, events)
	rows := make([]batch.Row, len(sr.Results))
	images := make([]*fitsimage.Image, len(sr.Results))
	for i, r := range sr.Results {
		rows[i], images[i] = r.Row, r.Image
	}
	sr.Summary = &batch.Summary{Shard: sh.String(), Epochs: len(all), Rows: rows}
	if sh.N > 1 {
		sr.Name = shardSummary(sh)
	}
	if err := WriteSummary(b.Out, sr.Name, sr.Summary); err != nil {
		return nil, err
	}
	if sh.N <= 1 {
		sr.Montage = WriteMontage(b.Out, "", rows, images, "", b.Stretch)
	}
	return sr, nil
}
