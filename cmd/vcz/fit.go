package main

import (
	"errors"
	"fmt"
	"io"
	"strings"

	"vcz/recon"
	"vcz/recon/fit"
	"vcz/recon/model"
	"vcz/runspec"
	"vcz/workflow"
)

func runFit(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("fit", "-model SPEC [options] FILE...", fitDoc, stderr)
	selFlags := runspec.RegisterFlags(fs, runspec.Select|runspec.Types)
	spec := fs.String("model", "", "model to fit: a TOML model file or the inline form, e.g. \"ud:diameter~3(0.5..10)\"")
	starts := fs.Int("starts", 0, "number of starts (default: 16 when a component's x and y are both free, else 1)")
	seed := fs.Uint64("seed", 1, "seed of the extra starts")
	maxIter := fs.Int("iter", 200, "iteration limit of each start")
	fs.IntVar(maxIter, "max-iter", 200, "earlier name of -iter")
	helpModel := fs.Bool("help-model", false, "describe the model forms and components and exit")
	asJSON := fs.Bool("json", false, "print the result as one JSON object on stdout")
	plotPrefix := fs.String("o", "", "write PNG plots PREFIX-<type>.png of each fitted data type (vis2, t3phi, ...), PREFIX-residuals.png (and PREFIX-grid.png)")
	fs.StringVar(plotPrefix, "plot", "", "earlier name of -o")
	grid := fs.Bool("grid-search", false, "map χ² of a point companion over separation and position angle, then fit it")
	gridSep := fs.String("grid-sep", "", "separations searched, MIN:MAX with units, e.g. 1mas:20mas (default: 0 to 3/4 of the largest constrained scale)")
	gridRatio := fs.Float64("grid-ratio", 0.01, "flux ratio of the companion searched (companion / model flux)")
	gridNSep := fs.Int("grid-nsep", 60, "number of separations of the grid")
	gridNPA := fs.Int("grid-npa", 120, "number of position angles of the grid (over 360°)")
	gridRefit := fs.Bool("grid-refit", false, "refit the model's free parameters at every grid cell (slower)")
	writeImage := fs.String("write-image", "", "write the fitted model as a FITS image to this file")
	saveModel := fs.String("save-model", "", "write the fitted model as a TOML model file (for -model and 'vcz image -from-model')")
	n := fs.Int("write-n", 128, "grid size in pixels of -write-image")
	fs.IntVar(n, "n", 128, "earlier name of -write-n (in image, -n is the reconstruction's grid)")
	pixel := fs.String("write-pixel", "", "pixel size of -write-image, e.g. 0.1mas (default: a quarter of the resolution λmin/(2·Bmax))")
	fs.StringVar(pixel, "pixel", "", "earlier name of -write-pixel (in image, -pixel is the reconstruction's pixel)")
	limits := fs.String("limits", "", "write detection limits of a further point companion: PREFIX.csv and PREFIX.png (3σ and 5σ Δmag against separation)")
	limNSep := fs.Int("limits-nsep", 50, "number of separations of the -limits grid (over -grid-sep)")
	limNPA := fs.Int("limits-npa", 50, "number of position angles of the -limits grid (over 360°)")
	limInj := fs.Bool("limits-injection", false, "also give the -limits by injection–recovery of fake companions into the data")
	strict := registerStrict(fs)
	boot := registerResampling(fs, "also give each parameter's bootstrap error: this many refits of the data resampled with replacement (0: none)")
	bootK := boot.k
	smearing := fs.String("smearing", "auto", "bandwidth smearing of the model: auto (averaged over each band where that exceeds the noise for a source as large as λ/B_min), on, or off (each channel at its centre)")
	noSig := fs.Bool("no-significance", false, "skip the significance of each component (one more fit per component)")
	searchDraws := fs.Int("search-draws", 1000, "simulated searches that give the field-wide significance of a searched companion (0: local figures only)")
	fs.Bool("quiet", false, quietUsage+"; fit prints nothing else there")
	if err := parseFlags(fs, args, stdout); err != nil {
		return err
	}
	if *helpModel {
		fmt.Fprint(stdout, model.Help())
		return errHelp
	}
	if *spec == "" {
		return badInputf("fit: -model is required (run 'vcz fit --help')")
	}
	if fs.NArg() == 0 {
		return badInputf("fit: no OIFITS file given (run 'vcz fit --help')")
	}
	if *starts < 0 || *maxIter < 1 {
		return badInputf("fit: -starts must be ≥ 0 and -iter ≥ 1")
	}
	plotFile := ""
	if *plotPrefix != "" {
		plotFile = *plotPrefix + "-vis2.png"
	}
	limitsFile := ""
	if *limits != "" {
		limitsFile = *limits + ".csv"
		if *limNSep < 2 || *limNPA < 1 {
			return badInputf("fit: -limits-nsep must be ≥ 2 and -limits-npa ≥ 1")
		}
	}
	if err := workflow.CheckOutputs(*writeImage, *saveModel, plotFile, limitsFile); err != nil {
		return err
	}
	if err := workflow.CheckNotInputs(fs.Args(), *writeImage, *saveModel); err != nil {
		return err
	}
	if *writeImage != "" && (*n < 2 || *n%2 != 0 || *n > 4096) {
		return badInputf("fit: -write-n %d must be an even number from 2 to 4096", *n)
	}
	if *writeImage != "" && *pixel != "" {
		// Read before the fit, so that a bad pixel does not stop the run after its plots.
		if px, err := runspec.ParseAngle(*pixel); err != nil || !(px > 0) {
			return badInputf("fit: -write-pixel %q: want a positive angle such as 0.1mas", *pixel)
		}
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
	fitSet := workflow.FitSettings{Fit: fit.Options{Use: sel.Types, MaxIter: *maxIter, Starts: *starts, Seed: *seed}, SkipSignificance: *noSig}
	if fitSet.Fit.Smearing, err = recon.ParseSmearing(*smearing); err != nil {
		return badInputf("fit: -smearing: %v", err)
	}
	if fitSet.SearchDraws = *searchDraws; *searchDraws == 0 {
		fitSet.SearchDraws = -1
	} else if *searchDraws < 0 {
		return badInputf("fit: -search-draws %d must not be negative", *searchDraws)
	}
	if *bootK < 0 {
		return badInputf("fit: -bootstrap %d must not be negative", *bootK)
	}
	if *bootK > 0 {
		unit, err := boot.parseUnit("fit")
		if err != nil {
			return err
		}
		fitSet.Bootstrap = workflow.FitBootstrap{K: *bootK, Unit: unit, Seed: *boot.seed}
	}
	sepMin, sepMax := 0.0, 0.0 // the separations of -grid-search and -limits (mas; 0, 0: the default)
	if *gridSep != "" {
		lo, hi, err := runspec.ParseRange(*gridSep, runspec.ParseAngle)
		if err != nil {
			return badInputf("fit: -grid-sep %q: %v", *gridSep, err)
		}
		sepMin, sepMax = lo/recon.Mas, hi/recon.Mas
	}
	if *limits != "" {
		fitSet.Limits = &fit.LimitOptions{SepMin: sepMin, SepMax: sepMax, NSep: *limNSep, NPA: *limNPA, Injection: *limInj}
	}
	if *grid {
		fitSet.Grid = &fit.GridOptions{NSep: *gridNSep, NPA: *gridNPA, Ratio: *gridRatio, Refit: *gridRefit, SepMin: sepMin, SepMax: sepMax}
		if *gridNSep < 2 || *gridNPA < 1 || !(*gridRatio > 0) {
			return badInputf("fit: -grid-nsep must be ≥ 2, -grid-npa ≥ 1 and -grid-ratio > 0")
		}
	}
	fo, fitErr := workflow.FitModel(d, m, fitSet)
	if fo == nil {
		var ie *workflow.InputError
		if errors.As(fitErr, &ie) {
			return badInputf("fit: %s", strings.TrimPrefix(fitErr.Error(), "fit: "))
		}
		return failure(fitErr)
	}
	sum, err := fo.Report(fitSet, workflow.FitFiles{Plots: *plotPrefix, Limits: *limits, Image: *writeImage, N: *n, Pixel: *pixel,
		Model: *saveModel, Data: fs.Args()}, files, d)
	if err != nil {
		return err // an *InputError exits 2, any other error 1
	}
	if *asJSON {
		if err := writeJSON(stdout, sum); err != nil {
			return err
		}
	} else {
		sum.WriteText(stdout, *n)
	}
	// As image does: the quality verdict (χ²ᵣ far from its expected value, a fit that did not
	// converge) is a warning each, the result is still given, and -strict makes it a failure.
	printWarnings(stderr, "", sum.Warnings)
	if fitErr != nil && !errors.Is(fitErr, fit.ErrNotConverged) {
		return failure(fitErr)
	}
	return strictFailure(*strict, "fit", len(sum.Warnings))
}
