package workflow

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"vcz/dataset"

	"vcz/io/oifits"
	"vcz/io/safefile"
	"vcz/output"
	"vcz/recon"
	"vcz/recon/fit"
	"vcz/recon/model"
)

// FitSettings control FitModel.
type FitSettings struct {
	// Fit configures the fit; Fit.Starts = 0 chooses the number of starts: 16 when a
	// component's x and y are both free, else 1 (after a companion search, 1).
	Fit fit.Options
	// Grid, when non-nil, first maps χ² of a point companion over separation and position
	// angle (fit.GridSearch; SepMax = 0 means 3/4 of the largest constrained scale) and adds
	// the companion at the best cell to the model, free within three grid steps.
	Grid *fit.GridOptions
	// SkipSignificance leaves out the significance of each component (fit.Significance, one
	// more fit per component with free parameters).
	SkipSignificance bool
	// SearchDraws is the number of simulated searches that calibrate the field-wide
	// significance of a component whose position was searched (by Grid, or by the seeded
	// starts of a free x and y): fit.Detection.Calibrate over the field searched. 0 means
	// 1000; a negative value leaves the calibration out (the local figures only).
	SearchDraws int
	// Limits, when non-nil, computes detection limits of a further point companion next to
	// the fitted model (fit.DetectionLimits; SepMax = 0 means 3/4 of the largest constrained
	// scale, as for Grid).
	Limits *fit.LimitOptions
	// Bootstrap, when K > 0, adds bootstrap errors beside the covariance errors.
	Bootstrap FitBootstrap
}

// FitOutcome is the outcome of FitModel.
type FitOutcome struct {
	Result *fit.Result
	Grid   *fit.GridResult // of the companion search; nil without one
	Start  *model.Model    // the model fitted from: the given one, with the companion when searched
	Starts int             // the number of starts used
	// Detections are the significances of the components of Result.Pairs that have free
	// parameters, in that order; none with FitSettings.SkipSignificance.
	Detections []*fit.Detection
	Limits     *fit.Limits // the detection limits; nil unless asked for
	// Boot holds the bootstrap errors; nil unless asked for.
	Boot *FitBootErrors
}

// FitModel fits the model m to d, then gives the significance of its components and the
// detection limits as s asks. An error of the companion search or of the detection limits,
// or a fit that gave no result, is an *InputError with no outcome. A fit that gave a result
// but did not end well returns the outcome (significances and limits included) and
// fit.Fit's error together.
func FitModel(d *dataset.Data, m *model.Model, s FitSettings) (*FitOutcome, error) {
	// One target at a time, as image asks: a fit to two targets' data
	// mixes two objects.
	if err := checkData(nil, d); err != nil {
		return nil, err
	}
	opt := s.Fit
	var g *fit.GridResult
	if s.Grid != nil {
		gopt := *s.Grid
		gopt.Fit = opt
		if gopt.SepMax == 0 {
			gopt.SepMax = 0.75 * d.Summarize().LargestScale / recon.Mas
		}
		var err error
		if g, err = fit.GridSearch(d, m, gopt); err != nil {
			return nil, inputErrorf("grid search: %v", err)
		}
		comp, err := model.New(model.Point, map[string]float64{"flux": gopt.Ratio * m.TotalFlux(), "x": g.BestX, "y": g.BestY})
		if err != nil {
			return nil, err
		}
		step := (gopt.SepMax - gopt.SepMin) / float64(gopt.NSep-1)
		comp.SetFit("x", true, g.BestX-3*step, g.BestX+3*step)
		comp.SetFit("y", true, g.BestY-3*step, g.BestY+3*step)
		comp.SetFit("flux", true, 0, math.Inf(1))
		m = m.Clone()
		m.Components = append(m.Components, comp)
		if opt.Starts == 0 {
			opt.Starts = 1 // the grid has found the start
		}
	} else if opt.Starts == 0 {
		opt.Starts = 1
		if hasFreePosition(m) {
			opt.Starts = 16
		}
	}
	res, fitErr := fit.Fit(d, m, opt)
	if res == nil {
		return nil, inputError("", fitErr)
	}
	if fitErr == nil && len(res.Params) > 0 && res.Cov == nil {
		// Baselines of 1e-300 wavelengths, or errors of 1e300, leave every
		// derivative at zero: the optimizer stops at once and "converges".
		return nil, fmt.Errorf("the fit is degenerate: the data do not constrain its %d free parameters (JᵀJ is singular), so neither values nor errors can be given; check the (u,v) coordinates, the wavelengths and the error bars", len(res.Params))
	}
	o := &FitOutcome{Result: res, Grid: g, Start: m, Starts: opt.Starts}
	if !s.SkipSignificance {
		for _, p := range res.Pairs {
			det, err := fit.Significance(d, res, p.Comp, opt)
			if err != nil {
				continue // a fixed component has no significance to give
			}
			if s.SearchDraws >= 0 {
				if err := calibrateSearch(d, m, det, p.Comp, s, opt); err != nil {
					return nil, inputErrorf("significance of component %d: %v", p.Comp+1, err)
				}
			}
			o.Detections = append(o.Detections, det)
		}
	}
	if s.Bootstrap.K > 0 {
		o.Boot = fitBootstrap(d, res, opt, s.Bootstrap)
	}
	if s.Limits != nil {
		lopt := *s.Limits
		if lopt.SepMax == 0 {
			lopt.SepMax = 0.75 * d.Summarize().LargestScale / recon.Mas
		}
		var err error
		if o.Limits, err = fit.DetectionLimits(d, res, lopt); err != nil {
			return nil, inputErrorf("detection limits: %v", err)
		}
	}
	return o, fitErr
}

// calibrateSearch sets the field-wide significance of det, the significance of component c
// of a fit started from m, when that component's position was searched: over the grid's
// annulus when s.Grid is set and c is the companion it added (the last component), over the
// box of the seeded starts when its x and y were free and several starts were made. It does
// nothing for a position that was not searched.
func calibrateSearch(d *dataset.Data, m *model.Model, det *fit.Detection, c int, s FitSettings, opt fit.Options) error {
	var field fit.Field
	switch {
	case s.Grid != nil && c == len(m.Components)-1:
		field = fit.Field{SepMin: s.Grid.SepMin, SepMax: s.Grid.SepMax}
		if field.SepMax == 0 {
			field.SepMax = 0.75 * d.Summarize().LargestScale / recon.Mas
		}
	case opt.Starts > 1 && hasFreePositionOf(m, c):
		var err error
		if field, err = fit.StartsField(d, m, opt.Use, c); err != nil {
			return err
		}
	default:
		return nil
	}
	_, err := det.Calibrate(d, fit.SearchOptions{Field: field, Draws: s.SearchDraws, Seed: opt.Seed})
	return err
}

// hasFreePositionOf reports whether component c of m has both x and y free.
func hasFreePositionOf(m *model.Model, c int) bool {
	one := &model.Model{Components: m.Components[c : c+1]}
	return hasFreePosition(one)
}

// hasFreePosition reports whether a component of m has both x and y free.
func hasFreePosition(m *model.Model) bool {
	for _, c := range m.Components {
		nfree := 0
		for _, p := range c.Params() {
			if p.Free && (p.Name == "x" || p.Name == "y") {
				nfree++
			}
		}
		if nfree == 2 {
			return true
		}
	}
	return false
}

// WriteImage writes the fitted model as an n×n FITS image with pixels of pixel rad (0: a
// quarter of the resolution of d), with the world coordinates of the reconstructions of
// files. An error choosing the pixel is an *InputError.
func (o *FitOutcome) WriteImage(path string, n int, pixel float64, files []*oifits.File, d *dataset.Data) error {
	if pixel == 0 {
		if pixel = d.Summarize().Resolution / 4; !(pixel > 0) {
			return inputErrorf("fit: -write-image: no baseline to choose a pixel from; give -pixel")
		}
	}
	m := o.Result.Model
	shown, _, _ := o.userModel()
	target := ""
	if len(d.Targets) == 1 {
		target = d.Targets[0]
	}
	return output.WriteModel(path, m.Image(n, n, pixel), n, pixel, files, target, "fitted model: "+shown.Model.String())
}

// SaveModel writes the fitted model as a TOML model file (fit.Result.ModelTOML) whose
// header names the data files (without their folders, so that the file carries no
// machine-specific paths), the start model, the significance of each component and the
// warnings of the quality verdict (fit.Result.Warnings). The box of ±3 grid steps within
// which a companion search fits the companion it added (FitModel) is a limit of the search,
// not of the user's model: the file gives it in a header line and writes that companion's
// x and y free without bounds, so that a fit from the file is not held in the box.
func (o *FitOutcome) SaveModel(path string, dataFiles []string) error {
	names := make([]string, len(dataFiles))
	for i, p := range dataFiles {
		names[i] = filepath.Base(p)
	}
	res, start, box := o.userModel()
	var boxLine string
	if box != nil {
		boxLine = fmt.Sprintf("component %d was added by the companion search and fitted within x %.6g..%.6g mas, y %.6g..%.6g mas, the search's box (not bounds of the model below)",
			box.Comp+1, box.X[0], box.X[1], box.Y[0], box.Y[1])
	}
	header := []string{
		"Model fitted by vcz fit " + output.Version + " to " + strings.Join(names, ", "),
		"start model: " + start.String(),
	}
	if boxLine != "" {
		header = append(header, boxLine)
	}
	for _, det := range output.FitDetections(res, o.Detections) {
		header = append(header, det.Line())
	}
	for _, w := range res.Warnings {
		header = append(header, "WARNING: "+output.OneLine(w))
	}
	return safefile.WriteBytes(path, res.ModelTOML(header...))
}

// searchBox is the box of ±3 grid steps, in mas, within which a companion search fitted
// the companion it added as component Comp (0-based).
type searchBox struct {
	Comp int
	X, Y [2]float64
}

// userModel is the fit as the user would give it back to 'vcz fit': the result and the start
// model with the x and y of the companion that a search added (FitModel) free without the
// search's box, which it returns apart (nil without a search). The model line of the report,
// its JSON and the -save-model file all show the fit this way, so that a model copied from
// any of them is not held in the box; the values are those of o.Result.
func (o *FitOutcome) userModel() (*fit.Result, *model.Model, *searchBox) {
	if o.Grid == nil {
		return o.Result, o.Start, nil
	}
	res := *o.Result
	c := len(res.Model.Components) - 1
	x, _ := res.Model.Param(model.Ref{Comp: c, Name: "x"})
	y, _ := res.Model.Param(model.Ref{Comp: c, Name: "y"})
	box := &searchBox{Comp: c, X: [2]float64{x.Min, x.Max}, Y: [2]float64{y.Min, y.Max}}
	res.Model = withoutBox(res.Model, c)
	return &res, withoutBox(o.Start, c), box
}

// withoutBox returns a copy of m whose component c has its x and y without bounds (free as
// they were).
func withoutBox(m *model.Model, c int) *model.Model {
	m = m.Clone()
	for _, name := range []string{"x", "y"} {
		if p, err := m.Param(model.Ref{Comp: c, Name: name}); err == nil {
			m.Components[c].SetFit(name, p.Free, math.Inf(-1), math.Inf(1))
		}
	}
	return m
}

// WriteLimits writes the detection limits as PREFIX.csv (fit.Limits.WriteCSV) and
// PREFIX.png (output.LimitsPlot, titled with the targets of d) and returns their summary.
// It panics without limits (FitSettings.Limits nil).
func (o *FitOutcome) WriteLimits(prefix string, d *dataset.Data) (*output.FitLimitsJ, error) {
	if o.Limits == nil {
		panic("workflow: WriteLimits without detection limits")
	}
	csv, png := prefix+".csv", prefix+".png"
	if err := safefile.Write(csv, o.Limits.WriteCSV); err != nil {
		return nil, err
	}
	if err := output.LimitsPlot(o.Limits, png, strings.Join(d.Targets, ", ")); err != nil {
		os.Remove(csv) // the table without its plot is half the limits
		return nil, err
	}
	return output.NewFitLimits(o.Limits, csv, png), nil
}
