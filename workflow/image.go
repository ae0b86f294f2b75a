package workflow

import (
	"fmt"
	"strings"
	"time"
	"vcz/dataset"

	"vcz/io/oifits"
	"vcz/output"
	"vcz/recon"
	"vcz/runspec"
)

// Image is one reconstruction, `vcz image`, ready to run: the data, the options, and the
// problem and settings they give.
type Image struct {
	Files    []*oifits.File
	Data     *dataset.Data
	Spec     runspec.Spec
	Problem  recon.Problem
	Settings recon.Settings
}

// NewImage checks that d can be reconstructed as spec says (one target, some points, options
// that fit the data) and builds the problem. Its errors are *InputError.
func NewImage(files []*oifits.File, d *dataset.Data, spec runspec.Spec) (*Image, error) {
	if err := checkData(files, d); err != nil {
		return nil, err
	}
	p, s, err := spec.Problem(d)
	if err != nil {
		return nil, inputError("", err)
	}
	return &Image{Files: files, Data: d, Spec: spec, Problem: p, Settings: s}, nil
}

// checkData refuses data of several targets, or without a point to fit.
func checkData(files []*oifits.File, d *dataset.Data) error {
	if len(d.Targets) > 1 {
		return inputErrorf("the data hold %d targets (%s); choose one with -target", len(d.Targets), strings.Join(d.Targets, ", "))
	}
	names := "the data"
	if len(d.Files) > 0 {
		names = strings.Join(d.Files, ", ")
	}
	if d.Len(dataset.AllTypes) == 0 {
		return inputErrorf("%s: no usable data points after selection (%s)%s", names, dropped(d), available(files))
	}
	if !(d.Summarize().BaselineMax > 0) {
		return inputErrorf("%s: every (u,v) point is at zero baseline: the data hold no spatial information", names)
	}
	return nil
}

// Run solves the problem and writes the files outs says to out (output.Outputs.Write),
// dated now (output.Run.Date).
// progress, when non-nil, is called after every iteration (recon.Settings.Progress). The
// run is returned with the paths written; an error of the solver or of writing is not an
// *InputError.
func (im *Image) Run(outs output.Outputs, out string, progress func(recon.Progress) bool) (output.Run, output.Paths, error) {
	s := im.Settings
	s.Progress = interruptible(progress)
	t0 := time.Now()
	res, err := recon.Solve(im.Problem, s)
	if err != nil {
		return output.Run{}, output.Paths{}, orInterrupted(err)
	}
	if Interrupted() {
		return output.Run{}, output.Paths{}, ErrInterrupted
	}
	run := output.Run{Files: im.Files, Data: im.Data, Spec: im.Spec, Result: res, Seconds: time.Since(t0).Seconds(), Date: time.Now()}
	paths, err := outs.Write(out, run)
	return run, paths, err
}

// dropped says why a data set without points has none: how many points were flagged,
// not finite, or none was selected at all.
func dropped(d *dataset.Data) string {
	var flagged, nonFinite int
	for _, c := range []dataset.Counts{d.Vis2Count, d.T3Count, d.VisCount} {
		flagged += c.Flagged
		nonFinite += c.NonFinite
	}
	if flagged+nonFinite == 0 {
		return "no row matches the selection of target, wavelength, MJD, instrument and data types"
	}
	return fmt.Sprintf("%d flagged, %d with a NaN or infinite value or error", flagged, nonFinite)
}

// available lists the targets and instruments (INSNAME) the files hold, for a selection
// that left nothing: "; the files hold targets A, B and instruments X, Y".
func available(files []*oifits.File) string {
	var targets, ins []string
	seen := map[string]bool{}
	for _, f := range files {
		for _, t := range f.Targets {
			if n := strings.TrimSpace(t.Name); !seen["t"+n] {
				seen["t"+n] = true
				targets = append(targets, n)
			}
		}
		for _, w := range f.Wavelengths {
			if n := strings.TrimSpace(w.InsName); !seen["i"+n] {
				seen["i"+n] = true
				ins = append(ins, n)
			}
		}
	}
	if len(targets)+len(ins) == 0 {
		return ""
	}
	return fmt.Sprintf("; the files hold targets %s and instruments %s", strings.Join(targets, ", "), strings.Join(ins, ", "))
}
