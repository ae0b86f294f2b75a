package workflow

import (
	"path/filepath"
	"strings"
	"time"

	"vcz/dataset"
	"vcz/io/fitsimage"
	"vcz/io/oifits"
	"vcz/output"
	"vcz/recon/batch"
	"vcz/runspec"
)

// cubeEpoch reports whether the epoch is imaged as a cube (-channels) or as a star with an
// environment (-star) rather than as one gray image.
func cubeEpoch(e *Epoch) bool { return !e.Spec.Channels.Single() || e.Spec.Star != nil }

// CheckJoint refuses a joint reconstruction of epochs that are not imaged as one gray image
// each: the joint run starts from the epochs' images and fits all their channels to one
// image per epoch, with the first epoch's data terms and regularizers, so epochs that
// differ there are refused too. Its error is an *InputError.
func CheckJoint(epochs []*Epoch) error {
	for _, e := range epochs {
		if cubeEpoch(e) {
			return inputErrorf("batch: -joint needs one gray image per epoch; epoch %s is imaged with -channels %s or -star, drop them for -joint", e.Name, e.Spec.Channels)
		}
	}
	for _, e := range epochs[min(1, len(epochs)):] {
		if a, b := jointTerms(epochs[0].Spec), jointTerms(e.Spec); a != b {
			return inputErrorf("batch: -joint fits every epoch with the same data terms and regularizers; epoch %s has %s, epoch %s %s", epochs[0].Name, termsText(a), e.Name, termsText(b))
		}
	}
	return nil
}

// termsText shows the canonical text of jointTerms on one line: its options joined by "; ",
// or "the defaults".
func termsText(canonical string) string {
	lines := strings.FieldsFunc(canonical, func(r rune) bool { return r == '\n' })
	if len(lines) == 0 {
		return "the defaults"
	}
	return strings.Join(lines, "; ")
}

// jointTerms is the canonical text of the options the joint run takes from the first
// epoch for all: data types and their weights, regularizers, prior, support, tv's
// threshold and smearing.
func jointTerms(s runspec.Spec) string {
	return runspec.Spec{Use: s.Use, DataWeights: s.DataWeights, Regularizers: s.Regularizers, Prior: s.Prior,
		Support: s.Support, TVEps: s.TVEps, Smearing: s.Smearing}.String()
}

// runCubeEpoch is runEpoch for an epoch imaged as a cube or a star with its environment
// (workflow.Cube): NAME.fits is the cube (one plane per channel group; the batch's
// montage shows its first plane) or the environment image, NAME.png its montage or
// preview; the row holds the χ² of all planes and the gray run's spatial weight.
func (b *Batch) runCubeEpoch(e *Epoch, row batch.Row, t0 time.Time, hash, statusPath string, files []*oifits.File, d *dataset.Data) EpochResult {
	fail := func(err error) EpochResult { return EpochResult{Row: b.failed(e, row, t0, err)} }
	c, err := NewCube(files, d, e.Spec)
	if err != nil {
		return fail(err)
	}
	fitsPath, outs, err := b.epochOutputs(e, hash, statusPath)
	if err != nil {
		return fail(err)
	}
	var img *fitsimage.Image
	var others []string // files written beside the FITS file and the PNG
	if e.Spec.Star != nil {
		run, paths, err := c.RunStarEnv(outs, fitsPath, interruptible(nil))
		if err == nil && Interrupted() {
			err = ErrInterrupted
		}
		if err != nil {
			return fail(orInterrupted(err))
		}
		res := run.Result
		row.Chi2rTotal, row.Weight, row.Iterations = res.Chi2r, res.Gray.Weight, res.Iter
		row.Warnings = output.NonNil(res.Warnings)
		row.PNG = filepath.Base(paths.PNG)
	} else {
		run, paths, err := c.Run(outs, fitsPath, nil)
		if err != nil {
			return fail(err)
		}
		res := run.Result
		chi2, n := map[string]float64{}, map[string]int{}
		for _, p := range res.Planes {
			for _, t := range p.Chi2 {
				chi2[t.Type.String()] += t.Chi2
				n[t.Type.String()] += t.N
			}
		}
		for k, nk := range n {
			row.Points[k] = nk
			row.Chi2r[k] = chi2[k] / float64(max(nk, 1))
		}
		row.Chi2rTotal, row.Weight, row.Iterations = res.Chi2r, res.Weight, res.TotalIter
		row.Warnings = output.NonNil(res.Warnings)
		row.PNG = filepath.Base(paths.Montage)
		img = outs.CubeImage(run)
		others = []string{paths.CSV, paths.Moments, paths.Spectrum}
	}
	if row.PNG == "." {
		row.PNG = ""
	}
	row.FITS = filepath.Base(fitsPath)
	if err := finishEpoch(e, &row, t0, hash, statusPath, others...); err != nil {
		return fail(err)
	}
	return EpochResult{Row: row, Image: img}
}
