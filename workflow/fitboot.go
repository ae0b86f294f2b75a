package workflow

import (
	"errors"
	"math"

	"gonum.org/v1/gonum/stat"

	"vcz/dataset"
	"vcz/recon/fit"
)

// FitBootstrap asks FitModel for bootstrap errors: K refits of the data resampled with
// replacement by whole units (exposures by default: the points of one exposure share its
// calibration and atmosphere, so they are resampled together; Efron & Tibshirani 1993, An
// Introduction to the Bootstrap, ch. 6 and 8), each started from the best fit; the spread of
// each quantity over the refits is its bootstrap error. Replicate k depends only on (Seed, k).
type FitBootstrap struct {
	K    int
	Unit dataset.Unit
	Seed uint64
}

// FitBootErrors are the bootstrap errors of a fit: for each free parameter (in the order
// of fit.Result.Params) and each pair (fit.Result.Pairs: separation, position angle in
// degrees, flux ratio) the standard deviation over the refits that gave a result.
type FitBootErrors struct {
	K, Done int // replicates asked for and replicates that gave a result
	Unit    dataset.Unit
	Seed    uint64
	Params  []float64
	Sep     []float64
	PA      []float64
	Ratio   []float64
}

// fitBootstrap refits K resamplings of d from the best fit res with the options opt (one
// start) and returns the spread of each quantity. A refit that fails is left out; with fewer
// than two results the errors are NaN.
func fitBootstrap(d *dataset.Data, res *fit.Result, opt fit.Options, b FitBootstrap) *FitBootErrors {
	g := d.Group(b.Unit)
	out := &FitBootErrors{K: b.K, Unit: b.Unit, Seed: b.Seed}
	params := make([][]float64, len(res.Params))
	sep := make([][]float64, len(res.Pairs))
	pa := make([][]float64, len(res.Pairs))
	ratio := make([][]float64, len(res.Pairs))
	opt.Starts = 1
	for k := range b.K {
		rd := d.Resample(&g, g.Draw(b.Seed, k))
		r, err := fit.Fit(rd, res.Model, opt)
		if r == nil || err != nil && !errors.Is(err, fit.ErrNotConverged) || len(r.Params) != len(res.Params) || len(r.Pairs) != len(res.Pairs) {
			continue
		}
		out.Done++
		for i, p := range r.Params {
			params[i] = append(params[i], p.Value)
		}
		for i, p := range r.Pairs {
			sep[i] = append(sep[i], p.Sep)
			// Angles as their difference from the best fit's, in (−180°, 180°], so that a
			// position angle near 0° does not spread over 360°.
			pa[i] = append(pa[i], math.Remainder(p.PA-res.Pairs[i].PA, 360))
			ratio[i] = append(ratio[i], p.Ratio)
		}
	}
	spread := func(v [][]float64) []float64 {
		s := make([]float64, len(v))
		for i, x := range v {
			s[i] = math.NaN()
			if len(x) >= 2 {
				s[i] = stat.StdDev(x, nil)
			}
		}
		return s
	}
	out.Params, out.Sep, out.PA, out.Ratio = spread(params), spread(sep), spread(pa), spread(ratio)
	return out
}
