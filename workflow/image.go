package workflow

import (
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
	if err := checkData(d); err != nil {
		return nil, err
	}
	p, s, err := spec.Problem(d)
	if err != nil {
		return nil, inputError("", err)
	}
	return &Image{Files: files, Data: d, Spec: spec, Problem: p, Settings: s}, nil
}

// checkData refuses data of several targets, or without a point to fit.
func checkData(d *dataset.Data) error {
	if len(d.Targets) > 1 {
		return inputErrorf("the data hold %d targets (%s); choose one with -target", len(d.Targets), strings.Join(d.Targets, ", "))
	}
	if d.Len(dataset.AllTypes) == 0 {
		return inputErrorf("no usable data points after selection")
	}
	if !(d.Summarize().BaselineMax > 0) {
		return inputErrorf("every (u,v) point is at zero baseline: the data hold no spatial information")
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
	s.Progress = func(pr recon.Progress) bool {
		if Interrupted() {
			return false
		}
		return progress == nil || progress(pr)
	}
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
