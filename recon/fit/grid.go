package fit

import (
	"errors"
	"fmt"
	"math"

	"vcz/dataset"
	"vcz/recon/model"
)

// GridOptions configure a companion search. SepMax must be set; the other
// zero values mean: SepMin 0, 40 separations, 72 position angles (5°
// steps), flux ratio 0.01, the primary held fixed.
type GridOptions struct {
	// SepMin and SepMax bound the separations searched, in mas.
	SepMin, SepMax float64
	// NSep and NPA are the numbers of grid separations (from SepMin to
	// SepMax inclusive) and position angles (0° to 360° exclusive, east of
	// north).
	NSep, NPA int
	// Ratio is the companion's flux as a fraction of the primary's total
	// flux.
	Ratio float64
	// Refit refits the primary's free parameters at every cell (with the
	// companion fixed); otherwise they keep their values.
	Refit bool
	// Fit configures the refits and selects the data types (Fit.Use).
	Fit Options
}

// GridResult is a χ² map of a point companion added to a primary model.
type GridResult struct {
	// Sep (mas) and PA (degrees east of north) are the grid axes; Chi2 is
	// row-major, Chi2[ipa*len(Sep)+isep].
	Sep, PA []float64
	Chi2    []float64
	// Chi2Primary is the χ² of the primary alone (after its fit when Refit
	// is set); N the number of data.
	Chi2Primary float64
	N           int
	// Best is the cell of lowest χ²: separation, position angle, its east
	// and north offsets (mas) and χ².
	BestSep, BestPA, BestX, BestY, BestChi2 float64
}

// GridSearch maps χ² over the separation and position angle of a point
// companion of flux Ratio × (primary flux) added to primary, x = sep·sin PA
// towards east and y = sep·cos PA towards north (CONVENTIONS.md). It is the
// usual way to find a faint companion without a start guess: the map is
// multi-modal, a local fit is not.
func GridSearch(d *dataset.Data, primary *model.Model, opt GridOptions) (*GridResult, error) {
	var err error
	if opt.NSep, opt.NPA, err = checkPolarGrid("grid search", opt.SepMin, opt.SepMax, opt.NSep, opt.NPA, 40, 72); err != nil {
		return nil, err
	}
	if opt.Ratio == 0 {
		opt.Ratio = 0.01
	}
	if !(opt.Ratio > 0) {
		return nil, fmt.Errorf("fit: grid search: flux ratio %g must be positive", opt.Ratio)
	}
	if err := primary.Validate(); err != nil {
		return nil, err
	}
	t := newTerms(d, opt.Fit.Use, 1, smearing{opt.Fit.Smearing, opt.Fit.SmearTol})
	if t.Len() == 0 {
		return nil, errors.New("fit: grid search: no data of the selected types")
	}
	g := &GridResult{N: t.Len(), BestChi2: math.Inf(1)}
	base := primary.Clone()
	if opt.Refit && len(base.Refs(true)) > 0 {
		res, err := Fit(d, base, opt.Fit)
		if err != nil && !errors.Is(err, ErrNotConverged) {
			return nil, err
		}
		base = res.Model
	}
	r := make([]float64, t.Len())
	g.Chi2Primary = t.eval(r, base)

	comp, err := model.New(model.Point, map[string]float64{"flux": opt.Ratio * base.TotalFlux()})
	if err != nil {
		return nil, err
	}
	m := base.Clone()
	m.Components = append(m.Components, comp)
	// The companion stays fixed during refits.
	for _, name := range comp.ParamNames() {
		comp.SetFit(name, false, math.Inf(-1), math.Inf(1))
	}
	g.Sep, g.PA = polarGrid(opt.SepMin, opt.SepMax, opt.NSep, opt.NPA)
	g.Chi2 = make([]float64, opt.NSep*opt.NPA)
	refit := opt.Refit && len(base.Refs(true)) > 0
	fo := opt.Fit
	fo.Starts = 1
	for ip, pa := range g.PA {
		s, c := math.Sincos(pa * math.Pi / 180)
		for is, sep := range g.Sep {
			x, y := sep*s, sep*c
			comp.Set("x", x)
			comp.Set("y", y)
			var chi2 float64
			if refit {
				res, err := Fit(d, m, fo)
				if res == nil {
					return nil, err
				}
				chi2 = res.Chi2
			} else {
				chi2 = t.eval(r, m)
			}
			g.Chi2[ip*opt.NSep+is] = chi2
			if chi2 < g.BestChi2 {
				g.BestChi2, g.BestSep, g.BestPA, g.BestX, g.BestY = chi2, sep, pa, x, y
			}
		}
	}
	return g, nil
}

// checkPolarGrid checks the separation range (mas) of a grid of companion positions for
// what (a message word) and returns the numbers of separations and position angles with the
// defaults dsep and dpa put in for zero or negative values.
func checkPolarGrid(what string, sepMin, sepMax float64, nsep, npa, dsep, dpa int) (int, int, error) {
	if !(sepMax > 0) || sepMin < 0 || sepMin >= sepMax {
		return 0, 0, fmt.Errorf("fit: %s: separations %g to %g mas; want 0 ≤ min < max", what, sepMin, sepMax)
	}
	if nsep <= 0 {
		nsep = dsep
	}
	if npa <= 0 {
		npa = dpa
	}
	if nsep < 2 {
		return 0, 0, fmt.Errorf("fit: %s: at least 2 separations needed", what)
	}
	return nsep, npa, nil
}

// polarGrid returns nsep separations from sepMin to sepMax inclusive and npa position angles
// from 0° in steps of 360°/npa.
func polarGrid(sepMin, sepMax float64, nsep, npa int) (sep, pa []float64) {
	sep = make([]float64, nsep)
	for i := range sep {
		sep[i] = sepMin + (sepMax-sepMin)*float64(i)/float64(nsep-1)
	}
	pa = make([]float64, npa)
	for i := range pa {
		pa[i] = 360 * float64(i) / float64(npa)
	}
	return sep, pa
}
