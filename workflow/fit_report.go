package workflow

import (
	"os"

	"vcz/dataset"
	"vcz/io/oifits"
	"vcz/output"
	"vcz/runspec"
)

// FitFiles are the files 'vcz fit' writes beside its report; "" writes none of that kind.
type FitFiles struct {
	Plots  string // prefix of the data-fit plots (output.FitPlots)
	Limits string // prefix of the detection limits (WriteLimits)
	// Image receives the fitted model as an N × N FITS image of Pixel (an angle with its
	// unit; "": a quarter of the resolution).
	Image string
	N     int
	Pixel string
	Model string   // the fitted model as a TOML model file (SaveModel)
	Data  []string // the data files as the user named them, for the model file's header
}

// Report is the summary of o, the fit of s to the data d of files, after writing the files
// f names. A -write-pixel that is no angle is an *InputError. When any file fails, the files
// this call wrote are removed, so that a failed run leaves no complete-looking part of its
// results.
func (o *FitOutcome) Report(s FitSettings, f FitFiles, files []*oifits.File, d *dataset.Data) (sum output.FitSummary, err error) {
	defer func() {
		if err != nil {
			for _, p := range fitWritten(sum) {
				os.Remove(p)
			}
		}
	}()
	res, g := o.Result, o.Grid
	shown, _, box := o.userModel()
	sum = output.NewFitSummary(shown, o.Starts)
	if b := o.Boot; b != nil {
		sum.AddBootstrap(output.FitBootJ{K: b.K, Done: b.Done, Unit: b.Unit.String(), Seed: b.Seed}, b.Params, b.Sep, b.PA, b.Ratio)
	}
	sum.Detections = output.FitDetections(res, o.Detections)
	if g != nil {
		sum.Grid = &output.FitGridJ{Ratio: s.Grid.Ratio, BestSep: g.BestSep, BestPA: g.BestPA, BestX: g.BestX, BestY: g.BestY,
			BestChi2: g.BestChi2, Chi2Primary: g.Chi2Primary, N: g.N, Comp: box.Comp + 1, BoxX: box.X, BoxY: box.Y}
	}
	if f.Limits != "" {
		if sum.Limits, err = o.WriteLimits(f.Limits, d); err != nil {
			return sum, err
		}
	}
	if f.Plots != "" {
		written, err := output.FitPlots(files, d, res, g, f.Plots)
		sum.Plots = append(sum.Plots, written...)
		if err != nil {
			return sum, err
		}
	}
	if f.Image != "" {
		px := 0.0
		if f.Pixel != "" {
			if px, err = runspec.ParseAngle(f.Pixel); err != nil || !(px > 0) {
				return sum, inputErrorf("fit: -write-pixel %q: want a positive angle such as 0.1mas", f.Pixel)
			}
		}
		if err := o.WriteImage(f.Image, f.N, px, files, d); err != nil {
			return sum, err
		}
		sum.Image = f.Image
	}
	if f.Model != "" {
		if err := o.SaveModel(f.Model, f.Data); err != nil {
			return sum, err
		}
		sum.ModelFile = f.Model
	}
	return sum, nil
}

// fitWritten lists the files that sum says were written.
func fitWritten(sum output.FitSummary) []string {
	paths := append([]string(nil), sum.Plots...)
	if sum.Limits != nil {
		paths = append(paths, sum.Limits.CSV, sum.Limits.Plot)
	}
	for _, p := range []string{sum.Image, sum.ModelFile} {
		if p != "" {
			paths = append(paths, p)
		}
	}
	return paths
}
