package main

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"sort"
	"strings"

	"vcz/io/plots"
	"vcz/io/safefile"
	"vcz/recon"
	"vcz/recon/fit"
	"vcz/recon/model"
	"vcz/runspec"
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
type. Every other component is then given relative to the brightest (the
primary): separation (mas), position angle (degrees east of north), flux
ratio and Δmag = −2.5 log10(ratio), with 1σ errors propagated to first order
from the covariance; the same lines head the -save-model file and go in
-json as "pairs".

The significance of each component with free parameters compares the χ²
of the model without it (refitted) with the χ² with it, both divided by the
χ²ᵣ with it so that it is 1; the difference is referred to the χ²
distribution with as many degrees of freedom as the component has free
parameters and given as a p-value and a Gaussian-equivalent σ (3σ: p =
0.27 %). It is calibrated for a component at a given position; when its
position was searched (free x and y, -grid-search), chance alone reaches a
given σ far more often, and calibration errors outside the error bars
inflate it too. -no-significance skips it.

Binaries are multi-modal in separation and position angle: when a
component's x and y are both free, the fit makes 16 starts (-starts) and
keeps the best. The extra starts are seeded from a quick χ² map of that
position over the field (a few trial fluxes, the other parameters at their
start values): the companion is placed at the lowest well-separated minima
of the map, so a poor start guess still finds it without -grid-search.

-grid-search maps χ² of a point companion of fixed flux ratio over
separation and position angle (east of north) next to the model, reports the
best cell, then fits the model plus a companion started there (its x, y and
flux free).

-limits PREFIX gives detection limits of a further point companion next to
the fitted model, taken as the truth with its errors scaled to χ²ᵣ = 1: at
each of -limits-nsep × -limits-npa positions (separations over -grid-sep),
the flux ratio whose companion would change χ² by the Δχ² of a 3σ and a 5σ
detection (3 degrees of freedom: its position and flux), the model's free
parameters refitted to first order. PREFIX.csv gives the mean and worst
ratio and Δmag over position angle at each separation, PREFIX.png plots Δmag
against separation.

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

// fitSummary is the JSON form of a fit.
type fitSummary struct {
	Model        string           `json:"model"`
	Params       []fitParamJ      `json:"params"`
	Correlations []fitCorrJ       `json:"correlations"`
	CorrMatrix   [][]jfloat       `json:"correlation_matrix"`
	Chi2         jfloat           `json:"chi2"`
	N            int              `json:"n"`
	DOF          int              `json:"dof"`
	Chi2r        jfloat           `json:"chi2r"`
	Chi2ByType   map[string]chi2J `json:"chi2r_by_type"`
	Iterations   int              `json:"iterations"`
	Evals        int              `json:"evaluations"`
	Converged    bool             `json:"converged"`
	Status       string           `json:"status"`
	Starts       int              `json:"starts"`
	BestStart    int              `json:"best_start"`
	Pairs        []fitPairJ       `json:"pairs"`
	Detections   []fitDetectJ     `json:"significance"`
	Grid         *fitGridJ        `json:"grid_search,omitempty"`
	Limits       *fitLimitsJ      `json:"detection_limits,omitempty"`
	Plots        []string         `json:"plots"`
	Image        string           `json:"image,omitempty"`
	ModelFile    string           `json:"model_file,omitempty"`
	Seeded       int              `json:"seeded_starts"`
	Notices      []string         `json:"notices"`
}

type fitParamJ struct {
	Name      string `json:"name"`
	Component int    `json:"component"`
	Kind      string `json:"kind"`
	Param     string `json:"param"`
	Value     jfloat `json:"value"`
	Error     jfloat `json:"error"`
	Unit      string `json:"unit"`
	AtBound   bool   `json:"at_bound"`
}

// fitPairJ is one component relative to the primary (fit.Pair);
// components are counted from 1.
type fitPairJ struct {
	Primary   int    `json:"primary"`
	Component int    `json:"component"`
	Sep       jfloat `json:"separation_mas"`
	SepErr    jfloat `json:"separation_error_mas"`
	PA        jfloat `json:"pa_deg"`
	PAErr     jfloat `json:"pa_error_deg"`
	Ratio     jfloat `json:"flux_ratio"`
	RatioErr  jfloat `json:"flux_ratio_error"`
	DMag      jfloat `json:"dmag"`
	DMagErr   jfloat `json:"dmag_error"`
	AtBound   bool   `json:"at_bound"`
}

// fitDetectJ is the significance of one component (fit.Detection);
// components are counted from 1.
type fitDetectJ struct {
	Component int    `json:"component"`
	Chi2Null  jfloat `json:"chi2_without"`
	Chi2Alt   jfloat `json:"chi2_with"`
	Scale     jfloat `json:"chi2r_scale"`
	Extra     int    `json:"extra_parameters"`
	DeltaChi2 jfloat `json:"delta_chi2"`
	PValue    jfloat `json:"p_value"`
	Sigma     jfloat `json:"sigma"`
	Searched  bool   `json:"position_searched"`
}

// fitLimitsJ gives the detection limits: the files written and the
// azimuthal mean Δmag against separation at each significance (null
// where no ratio up to 1 is detected).
type fitLimitsJ struct {
	CSV      string              `json:"csv"`
	Plot     string              `json:"plot"`
	Sep      []float64           `json:"separation_mas"`
	MeanDMag map[string][]jfloat `json:"dmag_mean"`
	Worst    map[string][]jfloat `json:"dmag_worst"`
	Scale    jfloat              `json:"chi2r_scale"`
}

type fitCorrJ struct {
	A string `json:"a"`
	B string `json:"b"`
	R jfloat `json:"r"`
}

type fitGridJ struct {
	Ratio       float64 `json:"flux_ratio"`
	BestSep     float64 `json:"best_separation_mas"`
	BestPA      float64 `json:"best_pa_deg"`
	BestX       float64 `json:"best_east_mas"`
	BestY       float64 `json:"best_north_mas"`
	BestChi2    float64 `json:"best_chi2"`
	Chi2Primary float64 `json:"chi2_without_companion"`
	N           int     `json:"n"`
}

// jfloat is a float64 that is written as null in JSON when not finite.
type jfloat float64

func (f jfloat) MarshalJSON() ([]byte, error) {
	x := float64(f)
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return []byte("null"), nil
	}
	return json.Marshal(x)
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
	limits := fs.String("limits", "", "write detection limits of a further point companion: PREFIX.csv and PREFIX.png (3σ and 5σ Δmag against separation)")
	limNSep := fs.Int("limits-nsep", 50, "number of separations of the -limits grid (over -grid-sep)")
	limNPA := fs.Int("limits-npa", 50, "number of position angles of the -limits grid (over 360°)")
	noSig := fs.Bool("no-significance", false, "skip the significance of each component (one more fit per component)")
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
	limitsFile := ""
	if *limits != "" {
		limitsFile = *limits + ".csv"
		if *limNSep < 2 || *limNPA < 1 {
			return badInputf("fit: -limits-nsep must be ≥ 2 and -limits-npa ≥ 1")
		}
	}
	if err := checkOutputs(*writeImage, *saveModel, plotFile, limitsFile); err != nil {
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
	files, d, err := readData(fs.Args(), sel)
	if err != nil {
		return err
	}
	opt := fit.Options{Use: sel.Types, MaxIter: *maxIter, Starts: *starts, Seed: *seed}

	// The separations of -grid-search and -limits, in mas.
	sepMin, sepMax := 0.0, 0.75*d.Summarize().LargestScale/recon.Mas
	if *gridSep != "" {
		lo, hi, err := runspec.ParseRange(*gridSep, runspec.ParseAngle)
		if err != nil {
			return badInputf("fit: -grid-sep %q: %v", *gridSep, err)
		}
		sepMin, sepMax = lo/recon.Mas, hi/recon.Mas
	}
	var g *fit.GridResult
	if *grid {
		gopt := fit.GridOptions{NSep: *gridNSep, NPA: *gridNPA, Ratio: *gridRatio, Refit: *gridRefit, Fit: opt,
			SepMin: sepMin, SepMax: sepMax}
		if *gridNSep < 2 || *gridNPA < 1 || !(*gridRatio > 0) {
			return badInputf("fit: -grid-nsep must be ≥ 2, -grid-npa ≥ 1 and -grid-ratio > 0")
		}
		g, err = fit.GridSearch(d, m, gopt)
		if err != nil {
			return badInputf("fit: grid search: %v", err)
		}
		comp, err := model.New(model.Point, map[string]float64{"flux": *gridRatio * m.TotalFlux(), "x": g.BestX, "y": g.BestY})
		if err != nil {
			return failure(err)
		}
		step := (gopt.SepMax - gopt.SepMin) / float64(gopt.NSep-1)
		comp.SetFit("x", true, g.BestX-3*step, g.BestX+3*step)
		comp.SetFit("y", true, g.BestY-3*step, g.BestY+3*step)
		comp.SetFit("flux", true, 0, math.Inf(1))
		m = m.Clone()
		m.Components = append(m.Components, comp)
		if *starts == 0 {
			opt.Starts = 1 // the grid has found the start
		}
	} else if *starts == 0 {
		opt.Starts = 1
		if hasFreePosition(m) {
			opt.Starts = 16
		}
	}

	res, fitErr := fit.Fit(d, m, opt)
	if res == nil {
		return badInputf("fit: %v", fitErr)
	}
	sum := makeFitSummary(res, opt.Starts)
	sum.Detections = []fitDetectJ{}
	if !*noSig {
		for _, p := range res.Pairs {
			det, err := fit.Significance(d, res, p.Comp, opt)
			if err != nil {
				continue // a fixed component has no significance to give
			}
			searched := false
			for _, q := range res.Params {
				searched = searched || (q.Ref.Comp == p.Comp && (q.Ref.Name == "x" || q.Ref.Name == "y"))
			}
			sum.Detections = append(sum.Detections, fitDetectJ{Component: p.Comp + 1, Chi2Null: jfloat(det.Chi2Null),
				Chi2Alt: jfloat(det.Chi2Alt), Scale: jfloat(det.Scale), Extra: det.Extra, DeltaChi2: jfloat(det.DeltaChi2),
				PValue: jfloat(det.PValue), Sigma: jfloat(det.Sigma), Searched: searched})
		}
	}
	if g != nil {
		sum.Grid = &fitGridJ{Ratio: *gridRatio, BestSep: g.BestSep, BestPA: g.BestPA, BestX: g.BestX, BestY: g.BestY,
			BestChi2: g.BestChi2, Chi2Primary: g.Chi2Primary, N: g.N}
	}
	if *limits != "" {
		L, err := fit.DetectionLimits(d, res, fit.LimitOptions{SepMin: sepMin, SepMax: sepMax, NSep: *limNSep, NPA: *limNPA})
		if err != nil {
			return badInputf("fit: -limits: %v", err)
		}
		lj, err := writeLimits(L, *limits, strings.Join(d.Targets, ", "))
		if err != nil {
			return failure(err)
		}
		sum.Limits = lj
	}
	if *plotPrefix != "" {
		written, err := fitPlots(d, res, g, *plotPrefix)
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
		} else if px = d.Summarize().Resolution / 4; !(px > 0) {
			return badInputf("fit: -write-image: no baseline to choose a pixel from; give -pixel")
		}
		img := res.Model.Image(*n, *n, px)
		target := ""
		if len(d.Targets) == 1 {
			target = d.Targets[0]
		}
		if err := writeModelFITS(*writeImage, img, *n, px, files, target, "fitted model: "+res.Model.String()); err != nil {
			return failure(err)
		}
		sum.Image = *writeImage
	}
	if *saveModel != "" {
		header := []string{
			"Model fitted by vcz fit " + version + " to " + strings.Join(baseNames(fs.Args()), ", "),
			"start model: " + m.String(),
		}
		for _, det := range sum.Detections {
			header = append(header, detectionLine(det))
		}
		if !res.Converged {
			header = append(header, "WARNING: the fit did not converge: "+res.Reason)
		}
		if err := safefile.WriteBytes(*saveModel, res.ModelTOML(header...)); err != nil {
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

func makeFitSummary(res *fit.Result, starts int) fitSummary {
	s := fitSummary{
		Model: res.Model.String(), Chi2: jfloat(res.Chi2), N: res.N, DOF: res.DOF, Chi2r: jfloat(res.Chi2r),
		Chi2ByType: map[string]chi2J{}, Iterations: res.Iterations, Evals: res.Evals, Converged: res.Converged,
		Status: res.Reason, Starts: starts, BestStart: res.Start, Seeded: res.Scanned, Plots: []string{},
		Notices: append([]string{}, res.Notices...), Correlations: []fitCorrJ{},
	}
	for _, p := range res.Params {
		c := res.Model.Components[p.Ref.Comp]
		s.Params = append(s.Params, fitParamJ{Name: p.Ref.String(), Component: p.Ref.Comp + 1, Kind: string(c.Kind()),
			Param: p.Ref.Name, Value: jfloat(p.Value), Error: jfloat(p.Err), Unit: fit.ParamUnit(p.Ref.Name), AtBound: p.AtBound})
	}
	s.Pairs = []fitPairJ{}
	for _, p := range res.Pairs {
		s.Pairs = append(s.Pairs, fitPairJ{Primary: p.Primary + 1, Component: p.Comp + 1, Sep: jfloat(p.Sep), SepErr: jfloat(p.SepErr),
			PA: jfloat(p.PA), PAErr: jfloat(p.PAErr), Ratio: jfloat(p.Ratio), RatioErr: jfloat(p.RatioErr),
			DMag: jfloat(p.DMag), DMagErr: jfloat(p.DMagErr), AtBound: p.AtBound})
	}
	for _, t := range res.PerType {
		s.Chi2ByType[t.Type.String()] = chi2J{N: t.N, Chi2r: t.Chi2r}
	}
	if res.Corr != nil {
		k := len(res.Params)
		for i := 0; i < k; i++ {
			row := make([]jfloat, k)
			for j := 0; j < k; j++ {
				row[j] = jfloat(res.Corr.At(i, j))
				if j > i && math.Abs(res.Corr.At(i, j)) > 0.5 {
					s.Correlations = append(s.Correlations, fitCorrJ{A: res.Params[i].Ref.String(), B: res.Params[j].Ref.String(), R: jfloat(res.Corr.At(i, j))})
				}
			}
			s.CorrMatrix = append(s.CorrMatrix, row)
		}
	}
	return s
}

func printFit(w io.Writer, s fitSummary, d *recon.Data, n int) {
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
	if len(s.Pairs) > 0 {
		fmt.Fprintf(w, "\nRelative to component %d (the brightest), 1σ propagated from the covariance:\n", s.Pairs[0].Primary)
		fmt.Fprintf(w, "  %-9s %-22s %-22s %-24s %s\n", "component", "separation (mas)", "PA (° east of north)", "flux ratio", "Δmag")
		for _, p := range s.Pairs {
			note := ""
			if p.AtBound {
				note = "  (a parameter at a bound: errors not meaningful)"
			}
			fmt.Fprintf(w, "  %-9d %-22s %-22s %-24s %s%s\n", p.Component, pm(p.Sep, p.SepErr), pm(p.PA, p.PAErr),
				pm(p.Ratio, p.RatioErr), pm(p.DMag, p.DMagErr), note)
		}
	}
	if len(s.Detections) > 0 {
		fmt.Fprintln(w, "\nSignificance (χ² without against with the component, both divided by the χ²ᵣ with it):")
		searched := false
		for _, det := range s.Detections {
			fmt.Fprintf(w, "  %s\n", detectionLine(det))
			searched = searched || det.Searched
		}
		fmt.Fprintln(w, "  Caution: calibration errors outside the error bars inflate these figures.")
		if searched {
			fmt.Fprintln(w, "  A position that was searched raises the chance of a spurious companion: the figure")
			fmt.Fprintln(w, "  holds at one position, and a search over the field reaches it by chance far more often.")
		}
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
	if l := s.Limits; l != nil {
		fmt.Fprintf(w, "\nDetection limits of a further point companion (Δmag, mean over position angle; errors scaled by χ²ᵣ %.3g):\n", float64(l.Scale))
		var names []string
		for name := range l.MeanDMag {
			names = append(names, name)
		}
		sort.Strings(names)
		fmt.Fprintf(w, "  %-16s", "separation (mas)")
		for _, name := range names {
			fmt.Fprintf(w, " %8s", name)
		}
		fmt.Fprintln(w)
		step := max(1, len(l.Sep)/10)
		for i := 0; i < len(l.Sep); i += step {
			fmt.Fprintf(w, "  %-16.4g", l.Sep[i])
			for _, name := range names {
				fmt.Fprintf(w, " %8s", pm(l.MeanDMag[name][i], 0))
			}
			fmt.Fprintln(w)
		}
		fmt.Fprintf(w, "Wrote %s and %s\n", l.CSV, l.Plot)
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

// writeLimits writes the CSV and the plot of detection limits and returns
// their summary.
func writeLimits(L *fit.Limits, prefix, target string) (*fitLimitsJ, error) {
	j := &fitLimitsJ{CSV: prefix + ".csv", Plot: prefix + ".png", Sep: L.Sep, Scale: jfloat(L.Scale),
		MeanDMag: map[string][]jfloat{}, Worst: map[string][]jfloat{}}
	var lines []plots.ContrastLine
	for k, s := range L.Sigmas {
		name := fmt.Sprintf("%gσ", s)
		mean, worst := make([]float64, len(L.Sep)), make([]float64, len(L.Sep))
		for i := range L.Sep {
			mean[i], worst[i] = fit.DMag(L.Mean[k][i]), fit.DMag(L.Worst[k][i])
			j.MeanDMag[name] = append(j.MeanDMag[name], jfloat(mean[i]))
			j.Worst[name] = append(j.Worst[name], jfloat(worst[i]))
		}
		lines = append(lines, plots.ContrastLine{Name: name + ", mean over position angle", Sep: L.Sep, DMag: mean},
			plots.ContrastLine{Name: name + ", worst position angle", Sep: L.Sep, DMag: worst, Dashed: true})
	}
	// Colours by significance: both lines of one significance share one.
	for k := range lines {
		lines[k].Series = k / 2
	}
	if err := safefile.Write(j.CSV, L.WriteCSV); err != nil {
		return nil, err
	}
	fig, err := plots.Contrast(lines, plots.Options{Title: titled("Detection limits of a point companion", target)})
	if err != nil {
		return nil, err
	}
	if err := fig.WriteFile(j.Plot); err != nil {
		return nil, err
	}
	return j, nil
}

// detectionLine gives the significance of a component in one line.
func detectionLine(d fitDetectJ) string {
	sig := "n/a"
	if x := float64(d.Sigma); !math.IsNaN(x) {
		sig = fmt.Sprintf("%.1fσ", x)
	}
	p := fmt.Sprintf("p = %.2g", float64(d.PValue))
	if d.PValue == 0 {
		p = "p < 1e-300"
	}
	return fmt.Sprintf("component %d: Δχ² %.5g for %d parameters, %s, %s", d.Component, float64(d.DeltaChi2), d.Extra, p, sig)
}

// pm writes a value and its 1σ error with five significant digits of the
// value ("n/a" for a value that is not finite, no error when it is not
// available or zero because nothing it depends on is free).
func pm(v, e jfloat) string {
	x, err := float64(v), float64(e)
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return "n/a"
	}
	s := fmt.Sprintf("%.5g", x)
	if err > 0 && !math.IsInf(err, 0) {
		s += fmt.Sprintf(" ± %.2g", err)
	}
	return s
}

func typeOrder(name string) int {
	for i, t := range recon.DataTypes() {
		if t.String() == name {
			return i
		}
	}
	return len(recon.DataTypes())
}

// circular reports whether every component of m is centred and circularly
// symmetric, so that V² depends on the spatial frequency only and a model
// curve against it is meaningful.
func circular(m *model.Model) bool {
	for _, c := range m.Components {
		get := func(name string) float64 { v, _ := c.Get(name); return v }
		switch c.Kind() {
		case model.Background:
			continue
		case model.Point, model.UniformDisc, model.LinearLD, model.PowerLD, model.Gaussian:
		case model.EllGaussian:
			if get("ratio") != 1 {
				return false
			}
		case model.Ring:
			if get("inc") != 0 {
				return false
			}
		default:
			return false
		}
		if get("x") != 0 || get("y") != 0 {
			return false
		}
	}
	return true
}

// fitPlots writes the plots of a fit and returns the files written.
func fitPlots(d *recon.Data, res *fit.Result, g *fit.GridResult, prefix string) ([]string, error) {
	m := res.Model
	var written []string
	save := func(fig *plots.Figure, err error, suffix string) error {
		if err != nil {
			if errors.Is(err, plots.ErrNoData) {
				return nil
			}
			return err
		}
		p := prefix + suffix
		if err := fig.WriteFile(p); err != nil {
			return err
		}
		written = append(written, p)
		return nil
	}
	title := strings.Join(d.Targets, ", ")
	obs := recon.PredictVis(d, m.VisMany)
	var sets []plots.Residuals
	if nv := d.Vis2.Len(); nv > 0 && res.Use&recon.Vis2 != 0 {
		mv := obs.Of(recon.Vis2)
		fq := make([]float64, nv)
		fmax := 0.0
		for i := range mv {
			fq[i] = math.Hypot(d.Vis2.U[i], d.Vis2.V[i])
			fmax = math.Max(fmax, fq[i])
		}
		var curves []plots.Curve
		if circular(m) {
			c := plots.Curve{Name: "fitted model"}
			for k := 0; k <= 400; k++ {
				q := 1.05 * fmax * float64(k) / 400
				w := m.Vis(q, 0)
				c.Freq = append(c.Freq, q)
				c.Value = append(c.Value, real(w)*real(w)+imag(w)*imag(w))
			}
			curves = append(curves, c)
		}
		fig, err := plots.V2(plots.V2Data{U: d.Vis2.U, V: d.Vis2.V, Value: d.Vis2.Value, Err: d.Vis2.Err},
			[]plots.ModelValues{{Name: "fitted model", Value: mv}}, curves, plots.Options{Title: titled("V² and fitted model", title)})
		if err := save(fig, err, "-"+recon.Vis2.String()+".png"); err != nil {
			return written, err
		}
		sets = append(sets, plots.Residuals{Name: recon.Vis2.Info().Label, Freq: fq, Value: plots.NormalizedResiduals(nil, d.Vis2.Value, mv, d.Vis2.Err)})
	}
	if res.Use&recon.T3Phi != 0 {
		t := &d.T3
		var td plots.T3Data
		var mp, fq []float64
		for i := range t.Lambda {
			if !t.PhiOK[i] {
				continue
			}
			td.U1 = append(td.U1, t.U1[i])
			td.V1 = append(td.V1, t.V1[i])
			td.U2 = append(td.U2, t.U2[i])
			td.V2 = append(td.V2, t.V2[i])
			td.Phi = append(td.Phi, t.Phi[i]*180/math.Pi)
			td.Err = append(td.Err, t.PhiErr[i]*180/math.Pi)
			mp = append(mp, obs.Of(recon.T3Phi)[i]*180/math.Pi)
			fq = append(fq, plots.LongestBaseline(t.U1[i], t.V1[i], t.U2[i], t.V2[i]))
		}
		if len(mp) > 0 {
			fig, err := plots.ClosurePhase(td, []plots.ModelValues{{Name: "fitted model", Value: mp}}, plots.Options{Title: titled("Closure phases and fitted model", title)})
			if err := save(fig, err, "-"+recon.T3Phi.String()+".png"); err != nil {
				return written, err
			}
			sets = append(sets, plots.Residuals{Name: recon.T3Phi.Info().Label, Freq: fq, Value: plots.PhaseResiduals(nil, td.Phi, mp, td.Err)})
		}
	}
	if len(sets) > 0 {
		fig, err := plots.ResidualPlot(sets, plots.Options{Title: titled("Normalised residuals of the fit", title)})
		if err := save(fig, err, "-residuals.png"); err != nil {
			return written, err
		}
	}
	if g != nil {
		fig, err := plots.Chi2Map(plots.Grid{X: g.Sep, Y: g.PA, Values: g.Chi2, XLabel: "separation (mas)", YLabel: "position angle, east of north (°)", ZLabel: "χ²"},
			plots.Options{Title: titled("Companion search χ²", title)})
		if err := save(fig, err, "-grid.png"); err != nil {
			return written, err
		}
	}
	return written, nil
}

// baseNames returns the file names of paths without their folders, so that
// written files carry no machine-specific paths.
func baseNames(paths []string) []string {
	out := make([]string, len(paths))
	for i, p := range paths {
		out[i] = filepath.Base(p)
	}
	return out
}
