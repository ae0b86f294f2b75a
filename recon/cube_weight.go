package recon

import (
	"fmt"
	"math"
)

// CubeWeightStep is one common factor α of the planes' spatial weights tried by SolveCube
// (CubeResult.WeightPath).
type CubeWeightStep struct {
	Factor    float64 // α: plane k's weight is α·μ·N_k/N
	Chi2r     float64 // Σχ²/ΣN of all planes after the sweeps at α
	Iter      int     // iterations of the planes' runs at α, summed over the sweeps
	Converged bool    // the sweeps at α settled (CubeSweepTol)
}

// Bounds of the search for the factor α of the planes' spatial weights (chooseCubeFactor):
// at most CubeWeightSteps factors in all, α = 1 included; at most cubeFactorDecadesDown
// decades below 1 to find the floor; up from the first factor up in steps of
// cubeFactorUpStep decades, at most cubeFactorDecadesUp decades above it, to pass the target
// (common practice, no source: each factor costs one cube of sweeps, so the search stays
// within a few cubes). The first factor up is the gray search's first weight over the gray
// weight, and at least 10^cubeFactorUpStep: the gray weight of a chromatic object is small,
// as its search aims just above the floor that the chromatic misfit sets, where the
// regularizer barely weighs (measured on a 2 mas disc with spectral index −3 and a 6 mas
// Gaussian with +1, six telescopes, 8 channels: the planes' Σχ²/ΣN was 0.556, 0.557, 0.557
// and 0.575 at α = 0.1, 10, 100 and 1000 against an aim of 0.707), and it can lie anywhere
// in the gray search's range of 14 decades.
const (
	CubeWeightSteps       = 6
	cubeFactorDecadesDown = 2
	cubeFactorUpStep      = 2
	cubeFactorDecadesUp   = 6
)

// cubeFactorSearch is the outcome of chooseCubeFactor.
type cubeFactorSearch struct {
	path []CubeWeightStep
	// best is the index in path of the chosen factor.
	best int
	// floor is the χ²ᵣ of the least-regularized cubes tried, target the χ²ᵣ aimed at.
	floor, target float64
	// edge is "lower" or "upper" when no factor within the searched range reached the
	// target.
	edge string
}

// cubeFactorRun fits the cube at factor α, starting from the cube of step from of the
// path (−1: from the cube as it is), and returns its Σχ²/ΣN, its iterations and whether
// its sweeps settled. label names the run for progress reports.
type cubeFactorRun func(alpha float64, from int, label string) (chi2r float64, iter int, converged bool, err error)

// chooseCubeFactor chooses the common factor α of the planes' spatial weights μ_k = α·μ·N_k/N
// by the discrepancy aim of Solve's weight choice (chooseWeight), measured on the cube's Σχ²/ΣN
// over all planes: the target lies between the floor, the χ²ᵣ of the least-regularized cubes,
// and the expected χ²ᵣ τ of all the planes' data,
//
//	χ²_target = χ²_min + max(FloorShare·(τ − χ²_min), FloorMargin·χ²_min, FloorNoise·τ·√(2/N)),
//
// with N the planes' data in all and scatter = τ·√(2/N), and a factor is on target within a
// quarter of the margin (the tolerances of chooseWeight). The cube at α = 1, which run has made
// already and whose Σχ²/ΣN is chi1, is the first step. The search goes down from α = 1 by
// decades until χ²ᵣ falls by less than FloorFlat·τ over a decade (the floor) or
// cubeFactorDecadesDown decades are done, each run from the last cube; then up by
// cubeFactorUpStep decades at a time from up0 (or 10^cubeFactorUpStep if larger) to at most
// cubeFactorDecadesUp decades above it, the first run from the cube at α = 1 and each other
// from the last cube, while no factor fits worse than the target; then it refines log α between
// the factors that bracket the target by regula falsi (Illinois variant; Dowell & Jarratt 1971)
// on log(χ²ᵣ − χ²_min + tol), the rise above the floor (softened by the tolerance tol so that
// the floor itself has a finite value), which grows about as a power of the weight once the
// regularizer starts to weigh (common practice, no source; on such a curve regula falsi on χ²ᵣ
// itself spent its steps creeping along the flat side of a two-decade bracket,
// TestChooseCubeFactor). Each refining run starts from the cube of the factor tried nearest in
// log α, until χ²ᵣ is on target or CubeWeightSteps factors were tried. (Solve's weight search
// refines from the image of the bracketing larger weight; the cube's runs are fewer and
// shorter, and from a cube smoothed by a factor 100 too large they did not come back: a disc
// growing 20 % across the band, 8 planes, gave Σχ²/ΣN 1.276 at α = 100 and 4.78 at α = 120
// started from α = 10⁴.) The factor chosen is that of the step nearest the target, one at or
// below it preferred, as in chooseWeight.
func chooseCubeFactor(chi1 float64, iter1 int, conv1 bool, up0, tau, scatter float64, run cubeFactorRun) (cubeFactorSearch, error) {
	var fs cubeFactorSearch
	fs.path = append(fs.path, CubeWeightStep{Factor: 1, Chi2r: chi1, Iter: iter1, Converged: conv1})
	step := func(alpha float64, from int) (int, error) {
		label := fmt.Sprintf("factor %d/%d (%.3g), ", len(fs.path)+1, CubeWeightSteps, alpha)
		c, it, conv, err := run(alpha, from, label)
		if err != nil {
			return -1, err
		}
		fs.path = append(fs.path, CubeWeightStep{Factor: alpha, Chi2r: c, Iter: it, Converged: conv})
		return len(fs.path) - 1, nil
	}
	usable := func(k int) bool { return finite(fs.path[k].Chi2r) }
	// Down from α = 1 to the floor.
	last := 0
	for d := 1; d <= cubeFactorDecadesDown && len(fs.path) < CubeWeightSteps; d++ {
		k, err := step(math.Pow(10, -float64(d)), last)
		if err != nil {
			return fs, err
		}
		if !usable(k) {
			break
		}
		drop := fs.path[last].Chi2r - fs.path[k].Chi2r
		last = k
		if drop < FloorFlat*tau {
			break
		}
	}
	fs.floor = math.Inf(1)
	for k, st := range fs.path {
		if usable(k) {
			fs.floor = math.Min(fs.floor, st.Chi2r)
		}
	}
	if math.IsInf(fs.floor, 1) {
		fs.edge = "stalled"
		return fs, nil
	}
	fs.target = fs.floor + max(FloorShare*(tau-fs.floor), FloorMargin*fs.floor, FloorNoise*scatter)
	tol := 0.25 * (fs.target - fs.floor)
	bracket := func() (above, below int) {
		return bracketSteps(len(fs.path), usable, func(k int) (float64, float64) { return fs.path[k].Factor, fs.path[k].Chi2r }, fs.target)
	}
	// Up from α = 1 while no factor fits worse than the target.
	above, below := bracket()
	last = 0
	up0 = max(up0, math.Pow(10, cubeFactorUpStep))
	for d := 0; above < 0 && d <= cubeFactorDecadesUp && len(fs.path) < CubeWeightSteps; d += cubeFactorUpStep {
		k, err := step(up0*math.Pow(10, float64(d)), last)
		if err != nil {
			return fs, err
		}
		if !usable(k) {
			break
		}
		last = k
		above, below = bracket()
	}
	// Refine between the brackets, on the rise above the floor in log–log, softened by tol
	// so that the floor itself, a usual lower bracket, has a finite value.
	rise := func(c float64) float64 {
		return math.Log(math.Max(c-fs.floor+tol, 0.1*tol) / (fs.target - fs.floor + tol))
	}
	// nearest returns the usable step whose log α is nearest lm, the larger factor on a tie.
	nearest := func(lm float64) int {
		n := -1
		for k, st := range fs.path {
			if !usable(k) {
				continue
			}
			d := math.Abs(math.Log(st.Factor) - lm)
			if n < 0 {
				n = k
				continue
			}
			dn := math.Abs(math.Log(fs.path[n].Factor) - lm)
			if d < dn || (d == dn && st.Factor > fs.path[n].Factor) {
				n = k
			}
		}
		return n
	}
	if above >= 0 && below >= 0 {
		r := illinois{la: math.Log(fs.path[above].Factor), fa: rise(fs.path[above].Chi2r),
			lb: math.Log(fs.path[below].Factor), fb: rise(fs.path[below].Chi2r)}
		for len(fs.path) < CubeWeightSteps && math.Min(fs.path[above].Chi2r-fs.target, fs.target-fs.path[below].Chi2r) > tol {
			lm := r.next()
			k, err := step(math.Exp(lm), nearest(lm))
			if err != nil {
				return fs, err
			}
			if !usable(k) {
				break
			}
			if r.update(lm, rise(fs.path[k].Chi2r), fs.path[k].Chi2r > fs.target) {
				above = k
			} else {
				below = k
			}
		}
	}
	// The usable step nearest the target, one at or below it within tol preferred.
	dist := func(k int) float64 {
		d := fs.path[k].Chi2r - fs.target
		if d > tol {
			d *= 4 // above the target by more than the tolerance: fits worse than wanted
		}
		return math.Abs(d)
	}
	fs.best = -1
	for k := range fs.path {
		if usable(k) && (fs.best < 0 || dist(k) < dist(fs.best)) {
			fs.best = k
		}
	}
	switch c := fs.path[fs.best].Chi2r; {
	case above < 0 && c < fs.target-tol:
		fs.edge = "upper"
	case below < 0 && c > fs.target+tol:
		fs.edge = "lower"
	}
	return fs, nil
}

// grayFits reports whether the gray image's least-regularized fit reaches the expected
// χ²ᵣ within twice the scatter of χ²ᵣ (the bound of Solve's rescue starts): the gray object
// fits all channels, its weight μ was aimed between that floor and the expected value, and
// its share μ·N_k/N suits the planes as it is, so SolveCube keeps α = 1 without a search.
func grayFits(gray *Result) bool {
	if gray == nil || !(gray.Chi2rFloor > 0) || !(gray.Chi2rTarget > 0) {
		return false
	}
	n := 0
	for _, c := range gray.Chi2 {
		n += c.N
	}
	scatter := gray.Chi2rTarget * math.Sqrt(2/float64(max(n, 1)))
	return gray.Chi2rFloor <= gray.Chi2rTarget+2*scatter
}

// overfitWarning returns the warning for plane k of a cube that fits its data far below
// its expected χ²ᵣ τ, or below the cube's aim when the factor search aimed lower (aim > 0,
// CubeResult.Chi2rAim: the least-regularized cubes fit below τ, and the aim lies between
// them and τ as the gray image's does): below that level over VerdictChi2Ratio and below it
// by more than three times the scatter of χ²ᵣ for the plane's N data, level·√(2/N) (the
// mirror of the warning above VerdictChi2Ratio·τ; common practice, no source). It returns ""
// otherwise.
func overfitWarning(k int, p *PlaneResult, aim float64) string {
	ref := p.Chi2rTarget
	if !(ref > 0) || p.N == 0 {
		return ""
	}
	what := "expected"
	if aim > 0 && aim < ref {
		ref, what = aim, "aimed at"
	}
	if Chi2rFar(p.Chi2r, ref, p.N) < 0 {
		return fmt.Sprintf("plane %d (%s) fits its data at χ²ᵣ %.3g, far below the %.3g %s: it may fit the noise; try a larger -weight", k+1, p.Label, p.Chi2r, ref, what)
	}
	return ""
}

// planeCount returns the number of data the objective fits (its used types).
func planeCount(o *Objective) int {
	n := 0
	for _, t := range typeList {
		if o.Use()&t != 0 {
			n += o.N(t)
		}
	}
	return n
}

// cubeFactor runs chooseCubeFactor for SolveCube once the sweeps at α = 1 are done: x, cube
// and last hold that cube (the planes as the engines hold them, the normalised planes and
// the runs of the last sweep), sweeps fits the cube at a spectral weight from x and cube as
// they are, and chi2r measures Σχ²/ΣN at x; iter1 is the iterations of the sweeps at α = 1.
// Plane k's weight at factor α is α·mu0[k], and the spectral weight α·c.Eta when etaFollows
// (an automatic weight proportional to the spatial ones, JointSparsity's), c.Eta otherwise.
// On return x, cube, last, the planes' weights, the spectral weight and res.Converged are
// those of the chosen factor, and res holds the factor and the path.
func cubeFactor(res *CubeResult, x, cube []float64, last *[]runOut, c *CubeObjective, regs []*planeReg, mu0 []float64, etaFollows bool, iter1 int,
	chi2r func() ([]float64, float64), sweeps func(eta float64, label string) error) error {
	P := len(regs)
	npix := len(x) / P
	eta1 := c.Eta
	etaAt := func(a float64) float64 {
		if etaFollows {
			return a * eta1
		}
		return eta1
	}
	type state struct {
		x    []float64
		last []runOut
		conv bool
	}
	states := []state{{append([]float64(nil), x...), append([]runOut(nil), *last...), res.Converged}}
	setFactor := func(a float64) {
		for k, r := range regs {
			r.mu = a * mu0[k]
			c.Planes[k].Mu = r.mu
		}
	}
	restore := func(k int) {
		copy(x, states[k].x)
		*last = append((*last)[:0], states[k].last...)
		res.Converged = states[k].conv
		for p := range P {
			xk := x[p*npix : (p+1)*npix]
			fl := 0.0
			for _, v := range xk {
				fl += v
			}
			for i, v := range xk {
				cube[p*npix+i] = v / fl
			}
		}
	}
	// τ and the scatter of χ²ᵣ over all the planes' data.
	var ex float64
	n := 0
	for _, t := range c.Planes {
		nk := planeCount(t.Obj)
		ex += t.Obj.ExpectedChi2r() * float64(nk)
		n += nk
	}
	tau := ex / float64(max(n, 1))
	scatter := tau * math.Sqrt(2/float64(max(n, 1)))
	_, chi1 := chi2r()
	run := func(alpha float64, from int, label string) (float64, int, bool, error) {
		if from >= 0 {
			restore(from)
		}
		setFactor(alpha)
		before := res.TotalIter
		if err := sweeps(etaAt(alpha), label); err != nil {
			return 0, 0, false, err
		}
		_, ch := chi2r()
		states = append(states, state{append([]float64(nil), x...), append([]runOut(nil), *last...), res.Converged})
		return ch, res.TotalIter - before, res.Converged, nil
	}
	// The first factor up: the gray search's first weight, at which the regularizer
	// weighs a tenth of the data at the start (Solve's initialWeight), shared the same way.
	up0 := 0.0
	if g := res.Gray; g != nil && len(g.Path) > 0 && g.Weight > 0 {
		up0 = g.Path[0].Weight / g.Weight
	}
	fs, err := chooseCubeFactor(chi1, iter1, res.Converged, up0, tau, scatter, run)
	if err != nil {
		return err
	}
	res.WeightPath = fs.path
	res.Chi2rFloor, res.Chi2rAim = fs.floor, fs.target
	best := max(fs.best, 0)
	restore(best)
	res.WeightFactor = fs.path[best].Factor
	setFactor(res.WeightFactor)
	c.Eta = etaAt(res.WeightFactor)
	for _, r := range regs {
		r.eta = c.Eta
	}
	if fs.edge == "upper" || fs.edge == "lower" {
		res.Warnings = append(res.Warnings, fmt.Sprintf("the factor %.3g of the planes' spatial weights is at the %s edge of the searched range: no factor there gave the aimed χ²ᵣ %.3g; set -weight by hand and compare", res.WeightFactor, fs.edge, fs.target))
	}
	return nil
}
