package main

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"sort"

	"vcz/output"
	"vcz/recon"
	"vcz/recon/fit"
	"vcz/recon/model"
	"vcz/runspec"
	"vcz/workflow"
)

const fitDoc = `Fit a parametric model (discs, limb-darkened discs, Gaussians, rings, point
companions, a resolved background) to OIFITS data by least squares
(Levenberg–Marquardt), with the same χ² per data type as 'vcz image'.

The model is a TOML model file or the inline form; '~' marks a free
parameter, '=' a fixed one, and bounds go in parentheses:
  vcz fit -model "ld:diameter~3(1..6),u_ld=0.3" star.oifits
  vcz fit -model "ud:diameter~1;point:x~4,y~-2,flux~0.1(0..1)" -starts 20 binary.oifits
  vcz fit -model "ud:diameter~1" -grid-search -grid-sep 1:20 -grid-ratio 0.02 star.oifits
Run 'vcz simulate -help-model' for every component and parameter.

The table gives each free parameter with its 1σ uncertainty from the
covariance matrix scaled by χ²ᵣ, the correlations above 0.5 and χ²ᵣ per data
type. Binaries are multi-modal in separation and position angle: when a
component's x and y are both free, the fit makes 16 starts (-starts) and
keeps the best. The extra starts are seeded from a quick χ² map of that
position over the field (a few trial fluxes, the other parameters at their
start values): the companion is placed at the lowest well-separated minima
of the map, so a poor start guess still finds it without -grid-search.

-grid-search maps χ² of a point companion of fixed flux ratio over
separation and position angle (east of north) next to the model, reports the
best cell, then fits the model plus a companion started there (its x, y and
flux free).

Outputs with -plot PREFIX: PREFIX-vis2.png (V² data and model), PREFIX-t3phi.png
(closure phases), PREFIX-residuals.png (normalised residuals) and, with
-grid-search, PREFIX-grid.png (the χ² map). -write-image writes the fitted
model as a FITS image, usable as a prior or start image of 'vcz image'.
-save-model FILE.toml writes the fitted model as a model file (best-fit
values, free parameters still free, 1σ in comments): 'vcz fit -model
FILE.toml' refits from it, and 'vcz image -from-model FILE.toml' takes its
grid and start image from it.

Exit status: 0 on success, 1 when the fit did not converge (results are
still printed), 2 for bad options, files or model.`

func init() {
	register(&command{name: "fit", summary: "fit parametric models (discs, limb darkening, binaries) to the data", run: runFit})
}

func runFit(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("fit", "-model SPEC [options] FILE...", fitDoc, stderr)
	selFlags := runspec.RegisterFlags(fs, runspec.Select|runspec.Types)
	spec := fs.String("model", "", "model to fit: a TOML model file or the inline form, e.g. \"ud:diameter~3(0.5..10)\"")
	starts := fs.Int("starts", 0, "number of starts (default: 16 when a component's x and y are both free, else 1)")
	seed := fs.Uint64("seed", 1, "seed of the extra starts")
	maxIter := fs.Int("max-iter", 200, "iteration limit of each start")
	asJSON := fs.Bool("json", false, "print the result as one JSON object on stdout")
	plotPrefix := fs.String("plot", "", "write PNG plots PREFIX-vis2.png, PREFIX-t3phi.png, PREFIX-residuals.png (and PREFIX-grid.png)")
	grid := fs.Bool("grid-search", false, "map χ² of a point companion over separation and position angle, then fit it")
	gridSep := fs.String("grid-sep", "", "separations searched, MIN:MAX (default unit mas; default: 0 to 3/4 of the largest constrained scale)")
	gridRatio := fs.Float64("grid-ratio", 0.01, "flux ratio of the companion searched (companion / model flux)")
	gridNSep := fs.Int("grid-nsep", 60, "number of separations of the grid")
	gridNPA := fs.Int("grid-npa", 120, "number of position angles of the grid (over 360°)")
	gridRefit := fs.Bool("grid-refit", false, "refit the model's free parameters at every grid cell (slower)")
	writeImage := fs.String("write-image", "", "write the fitted model as a FITS image to this file")
	saveModel := fs.String("save-model", "", "write the fitted model as a TOML model file (for -model and 'vcz image -from-model')")
	n := fs.Int("n", 128, "grid size in pixels of -write-image")
	pixel := fs.String("pixel", "", "pixel size of -write-image, e.g. 0.1mas (default: a quarter of the resolution λmin/(2·Bmax))")
	quiet := fs.Bool("quiet", false, "print nothing but errors (and -json)")
	if err := parseFlags(fs, args, stdout); err != nil {
		return err
	}
	if *spec == "" {
		return badInputf("fit: -model is required (run 'vcz fit --help')")
	}
	if fs.NArg() == 0 {
		return badInputf("fit: no OIFITS file given (run 'vcz fit --help')")
	}
	if *starts < 0 || *maxIter < 1 {
		return badInputf("fit: -starts must be ≥ 0 and -max-iter ≥ 1")
	}
	plotFile := ""
	if *plotPrefix != "" {
		plotFile = *plotPrefix + "-vis2.png"
	}
	if err := workflow.CheckOutputs(*writeImage, *saveModel, plotFile); err != nil {
		return err
	}
	if *writeImage != "" && (*n < 2 || *n%2 != 0 || *n > 4096) {
		return badInputf("fit: -n %d must be an even number from 2 to 4096", *n)
	}
	m, err := model.Load(*spec)
	if err != nil {
		return badInputf("fit: -model: %v", err)
	}
	selSpec, err := selFlags.Spec()
	if err != nil {
		return badInputf("fit: %v", err)
	}
	sel := selSpec.Selection()
	files, d, err := workflow.ReadData(fs.Args(), sel)
	if err != nil {
		return err
	}
	fitSet := workflow.FitSettings{Fit: fit.Options{Use: sel.Types, MaxIter: *maxIter, Starts: *starts, Seed: *seed}}
	if *grid {
		fitSet.Grid = &fit.GridOptions{NSep: *gridNSep, NPA: *gridNPA, Ratio: *gridRatio, Refit: *gridRefit}
		if *gridSep != "" {
			lo, hi, err := runspec.ParseRange(*gridSep, runspec.ParseAngle)
			if err != nil {
				return badInputf("fit: -grid-sep %q: %v", *gridSep, err)
			}
			fitSet.Grid.SepMin, fitSet.Grid.SepMax = lo/recon.Mas, hi/recon.Mas
		}
		if *gridNSep < 2 || *gridNPA < 1 || !(*gridRatio > 0) {
			return badInputf("fit: -grid-nsep must be ≥ 2, -grid-npa ≥ 1 and -grid-ratio > 0")
		}
	}
	fo, fitErr := workflow.FitModel(d, m, fitSet)
	if fo == nil {
		var ie *workflow.InputError
		if errors.As(fitErr, &ie) {
			return badInputf("fit: %v", fitErr)
		}
		return failure(fitErr)
	}
	res, g := fo.Result, fo.Grid
	sum := output.NewFitSummary(res, fo.Starts)
	if g != nil {
		sum.Grid = &output.FitGridJ{Ratio: *gridRatio, BestSep: g.BestSep, BestPA: g.BestPA, BestX: g.BestX, BestY: g.BestY,
			BestChi2: g.BestChi2, Chi2Primary: g.Chi2Primary, N: g.N}
	}
	if *plotPrefix != "" {
		written, err := output.FitPlots(d, res, g, *plotPrefix)
		sum.Plots = append(sum.Plots, written...)
		if err != nil {
			return failure(err)
		}
	}
	if *writeImage != "" {
		px := 0.0
		if *pixel != "" {
			if px, err = runspec.ParseAngle(*pixel); err != nil || !(px > 0) {
				return badInputf("fit: -pixel %q: want a positive angle such as 0.1mas", *pixel)
			}
		}
		if err := fo.WriteImage(*writeImage, *n, px, files, d); err != nil {
			return err // an *InputError exits 2, any other error 1
		}
		sum.Image = *writeImage
	}
	if *saveModel != "" {
		if err := fo.SaveModel(*saveModel, fs.Args()); err != nil {
			return failure(err)
		}
		sum.ModelFile = *saveModel
	}
	if *asJSON {
		enc := json.NewEncoder(stdout)
		enc.SetIndent("", "  ")
		if err := enc.Encode(sum); err != nil {
			return failure(err)
		}
	} else if !*quiet {
		printFit(stdout, sum, d, *n)
	}
	if fitErr != nil {
		return failure(fitErr)
	}
	return nil
}

func printFit(w io.Writer, s output.FitSummary, d *recon.Data, n int) {
	fmt.Fprintf(w, "Fitted model: %s\n\n", s.Model)
	fmt.Fprintf(w, "  %-14s %-9s %16s   %-12s\n", "parameter", "kind", "value", "1σ")
	for _, p := range s.Params {
		e := "n/a"
		if !math.IsNaN(float64(p.Error)) {
			e = fmt.Sprintf("± %.4g", float64(p.Error))
		}
		note := ""
		if p.AtBound {
			note = "  (at a bound)"
		}
		fmt.Fprintf(w, "  %-14s %-9s %16.8g   %-12s %s%s\n", p.Name, p.Kind, float64(p.Value), e, p.Unit, note)
	}
	if len(s.Correlations) > 0 {
		fmt.Fprintln(w, "\nCorrelations above 0.5:")
		for _, c := range s.Correlations {
			fmt.Fprintf(w, "  %s – %s  %+.3f\n", c.A, c.B, float64(c.R))
		}
	}
	fmt.Fprintf(w, "\nχ²ᵣ %.4g (χ² %.6g, N = %d, %d free, DOF = %d)\n", float64(s.Chi2r), float64(s.Chi2), s.N, len(s.Params), s.DOF)
	var types []string
	for t := range s.Chi2ByType {
		types = append(types, t)
	}
	sort.Slice(types, func(i, j int) bool { return typeOrder(types[i]) < typeOrder(types[j]) })
	for _, t := range types {
		fmt.Fprintf(w, "  %-7s χ²ᵣ %-10.4g N = %d\n", t, s.Chi2ByType[t].Chi2r, s.Chi2ByType[t].N)
	}
	conv := "converged"
	if !s.Converged {
		conv = "DID NOT CONVERGE"
	}
	fmt.Fprintf(w, "%s after %d iterations: %s", conv, s.Iterations, s.Status)
	if s.Starts > 1 {
		fmt.Fprintf(w, " (best of %d starts: start %d", s.Starts, s.BestStart+1)
		if s.Seeded > 0 {
			fmt.Fprintf(w, "; starts 2 to %d seeded from a χ² map of the free position", s.Seeded+1)
		}
		fmt.Fprint(w, ")")
	}
	fmt.Fprintln(w)
	if g := s.Grid; g != nil {
		fmt.Fprintf(w, "Grid search (flux ratio %g): best separation %.4g mas, PA %.4g° (east %.4g, north %.4g mas), χ² %.6g vs %.6g without a companion\n",
			g.Ratio, g.BestSep, g.BestPA, g.BestX, g.BestY, g.BestChi2, g.Chi2Primary)
	}
	for _, p := range s.Plots {
		fmt.Fprintf(w, "Wrote %s\n", p)
	}
	if s.Image != "" {
		fmt.Fprintf(w, "Wrote %s (%d × %d pixels)\n", s.Image, n, n)
	}
	if s.ModelFile != "" {
		fmt.Fprintf(w, "Wrote %s (model file)\n", s.ModelFile)
	}
	for _, msg := range s.Notices {
		fmt.Fprintf(w, "note: %s\n", msg)
	}
}

func typeOrder(name string) int {
	for i, t := range recon.DataTypes() {
		if t.String() == name {
			return i
		}
	}
	return len(recon.DataTypes())
}
