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
	Grid         *fitGridJ        `json:"grid_search,omitempty"`
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
	if err := checkOutputs(*writeImage, *saveModel, plotFile); err != nil {
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
	opt := fit.Options{Use: sel.Types, MaxIter: *maxIter, Starts: *starts, Seed: *seed}

	var g *fit.GridResult
	if *grid {
		gopt := fit.GridOptions{NSep: *gridNSep, NPA: *gridNPA, Ratio: *gridRatio, Refit: *gridRefit, Fit: opt}
		if *gridSep != "" {
			lo, hi, err := runspec.ParseRange(*gridSep, runspec.ParseAngle)
			if err != nil {
				return badInputf("fit: -grid-sep %q: %v", *gridSep, err)
			}
			gopt.SepMin, gopt.SepMax = lo/recon.Mas, hi/recon.Mas
		} else {
			gopt.SepMax = 0.75 * d.Summarize().LargestScale / recon.Mas
		}
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
	if g != nil {
		sum.Grid = &fitGridJ{Ratio: *gridRatio, BestSep: g.BestSep, BestPA: g.BestPA, BestX: g.BestX, BestY: g.BestY,
			BestChi2: g.BestChi2, Chi2Primary: g.Chi2Primary, N: g.N}
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
		if err := output.WriteModel(*writeImage, img, *n, px, files, target, "fitted model: "+res.Model.String()); err != nil {
			return failure(err)
		}
		sum.Image = *writeImage
	}
	if *saveModel != "" {
		header := []string{
			"Model fitted by vcz fit " + version + " to " + strings.Join(baseNames(fs.Args()), ", "),
			"start model: " + m.String(),
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
	var sets []plots.Residuals
	if nv := d.Vis2.Len(); nv > 0 && res.Use&recon.Vis2 != 0 {
		mv := make([]float64, nv)
		fq := make([]float64, nv)
		fmax := 0.0
		for i := range mv {
			w := m.Vis(d.Vis2.U[i], d.Vis2.V[i])
			mv[i] = real(w)*real(w) + imag(w)*imag(w)
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
		if err := save(fig, err, "-vis2.png"); err != nil {
			return written, err
		}
		sets = append(sets, plots.Residuals{Name: "V²", Freq: fq, Value: plots.NormalizedResiduals(nil, d.Vis2.Value, mv, d.Vis2.Err)})
	}
	if res.Use&recon.T3Phi != 0 {
		t := &d.T3
		var td plots.T3Data
		var mp, fq []float64
		for i := range t.Lambda {
			if !t.PhiOK[i] {
				continue
			}
			b := m.Vis(t.U1[i], t.V1[i]) * m.Vis(t.U2[i], t.V2[i]) * conjC(m.Vis(t.U1[i]+t.U2[i], t.V1[i]+t.V2[i]))
			td.U1 = append(td.U1, t.U1[i])
			td.V1 = append(td.V1, t.V1[i])
			td.U2 = append(td.U2, t.U2[i])
			td.V2 = append(td.V2, t.V2[i])
			td.Phi = append(td.Phi, t.Phi[i]*180/math.Pi)
			td.Err = append(td.Err, t.PhiErr[i]*180/math.Pi)
			mp = append(mp, math.Atan2(imag(b), real(b))*180/math.Pi)
			fq = append(fq, plots.LongestBaseline(t.U1[i], t.V1[i], t.U2[i], t.V2[i]))
		}
		if len(mp) > 0 {
			fig, err := plots.ClosurePhase(td, []plots.ModelValues{{Name: "fitted model", Value: mp}}, plots.Options{Title: titled("Closure phases and fitted model", title)})
			if err := save(fig, err, "-t3phi.png"); err != nil {
				return written, err
			}
			sets = append(sets, plots.Residuals{Name: "closure phase", Freq: fq, Value: plots.PhaseResiduals(nil, td.Phi, mp, td.Err)})
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

func conjC(z complex128) complex128 { return complex(real(z), -imag(z)) }

// baseNames returns the file names of paths without their folders, so that
// written files carry no machine-specific paths.
func baseNames(paths []string) []string {
	out := make([]string, len(paths))
	for i, p := range paths {
		out[i] = filepath.Base(p)
	}
	return out
}
