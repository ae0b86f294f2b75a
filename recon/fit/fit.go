package fit

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/mat"

	"vcz/dataset"
	"vcz/recon"
	"vcz/recon/model"
)

// ErrNotConverged is wrapped by the error Fit returns when no start met
// the convergence tests within the iteration limit. The Result is still
// returned, holding the best point reached.
var ErrNotConverged = errors.New("fit did not converge")

// Options configure a fit. The zero value fits every data type present
// with one start, at most 200 iterations and the default tolerances.
type Options struct {
	// Use is the set of data types fitted; 0 means every type with data.
	Use dataset.DataType
	// MaxIter bounds the Levenberg–Marquardt iterations of each start;
	// 0 means 200.
	MaxIter int
	// Starts is the number of starts (0 or 1: the model's own values only).
	// Starts after the first move the position (x, y) of every component
	// whose x and y are both free. They are first seeded from a coarse χ²
	// map of that position (the other parameters at their start values):
	// the component is placed at the lowest local minima of the map, at
	// least one fringe spacing apart (the package documentation gives the
	// grid). Starts
	// beyond the minima found, and every extra start when NoScan is set,
	// draw the position at random: uniformly within the bounds when both
	// are bounded, otherwise at a separation uniform in [0.5, 1.5] times
	// the start's and a position angle uniform in [0°, 360°).
	Starts int
	// NoScan draws every extra start at random, without the χ² map.
	NoScan bool
	// Seed seeds the random draws of the extra starts; equal seeds give
	// equal results.
	Seed uint64
	// FTol stops when both the actual and the predicted relative
	// reductions of χ² in a step are below it (0 means 1e-12). XTol stops
	// when the relative step in the scaled parameters is below it (0
	// means 1e-10). GTol stops when the largest cosine between the
	// residual vector and a Jacobian column is below it (0 means 1e-10).
	FTol, XTol, GTol float64
	// Smearing says whether the model's visibilities are averaged over each
	// channel's band, as for images (recon.ResidualOptions); the zero value,
	// recon.SmearAuto, is the default of 'vcz fit' and of images: averaged
	// where that exceeds the noise. recon.SmearOff takes the band centres.
	Smearing recon.Smearing
	// SmearTol, when positive, is the largest quadrature error of a smeared
	// visibility (recon.ResidualOptions.SmearTol); 0 means the default, a
	// tenth of the data's smallest relative error within [1e-8, 1e-3].
	SmearTol float64
}

func (o Options) withDefaults() Options {
	if o.MaxIter <= 0 {
		o.MaxIter = 200
	}
	if o.Starts < 1 {
		o.Starts = 1
	}
	if o.FTol <= 0 {
		o.FTol = 1e-12
	}
	if o.XTol <= 0 {
		o.XTol = 1e-10
	}
	if o.GTol <= 0 {
		o.GTol = 1e-10
	}
	return o
}

// Param is the result for one free parameter, in user units (mas,
// degrees, flux units).
type Param struct {
	Ref   model.Ref
	Value float64
	// Err is the 1σ uncertainty from the covariance matrix (NaN when the
	// parameter is Undetermined, or when no parameter is determined).
	Err float64
	// Undetermined is set when the data do not constrain the parameter at
	// the best fit (flatParams): Value is where the fit stopped, Err is
	// NaN, and the errors of the other parameters hold it fixed.
	Undetermined bool
	// AtBound is set when the value lies on one of its bounds, within
	// BoundTol (see there), where the uncertainty is not meaningful.
	AtBound bool
}

// BoundTol is how close to a bound a fitted value counts as on it, as a
// fraction of the range between the bounds, or of one unit of the
// parameter (mas, degrees, flux) when only one bound is finite (the scale
// of the change of variables there, see problem). The change of
// variables is stationary on every bound, so a fit whose minimum lies
// beyond a bound creeps towards it and may stop short of it by an amount
// set by where the iteration ended, not by the data; its 1σ from the
// covariance then describes that stop (common practice, no source).
const BoundTol = 1e-4

// TypeChi2 is the χ² of one data type at the best fit.
type TypeChi2 struct {
	Type  dataset.DataType
	N     int
	Chi2  float64
	Chi2r float64 // Chi2/N
}

// Result is the outcome of Fit.
type Result struct {
	// Model is the fitted model (a copy of the input with the best values).
	Model  *model.Model
	Params []Param
	// Cov is the covariance matrix of the free parameters, (JᵀJ)⁻¹ χ²ᵣ
	// with J the Jacobian of the normalised residuals in user units and
	// χ²ᵣ = χ²/(N − P); Corr the correlation matrix. When some parameters
	// are undetermined (Param.Undetermined) their rows and columns are NaN
	// and the rest is the covariance with them held fixed; both are nil
	// when no parameter is determined.
	Cov, Corr *mat.SymDense
	// Chi2 is the total χ², N the number of data, DOF = N − P and Chi2r =
	// Chi2/DOF.
	Chi2   float64
	N, DOF int
	Chi2r  float64
	// Chi2rExpected is the expected value of Chi2r when the model is right
	// and the data scatter by their stated errors: the residuals of a
	// linear least-squares fit of P parameters to N data of covariance Σ
	// have E[χ²] = tr((I − H)Σ), H the projection onto the columns of the
	// Jacobian, which is N − P for Gaussian residuals of unit variance
	// (χ² with N − P degrees of freedom; Press et al., Numerical Recipes,
	// 3rd ed., sect. 15.1, recalled from memory), so 1 for Chi2r = χ²/DOF;
	// residuals of smaller variance (wrap-safe phases of large errors,
	// recon.Residuals.ExpectedChi2r) take tr(HΣ) ≈ P·tr(Σ)/N, and the
	// expectation is tr(Σ)/N, that of the images' χ²ᵣ
	// (recon.Objective.ExpectedChi2r; the approximation is common practice,
	// no source). NaN without data.
	Chi2rExpected float64
	// Warnings is the quality verdict of the fit (verdict): one sentence for
	// each reason to doubt it, each saying what to try; empty when none.
	Warnings []string

	PerType    []TypeChi2 // types with data, in the order of dataset.DataTypes()
	Iterations int        // iterations of the best start
	Evals      int        // residual evaluations over all starts
	Converged  bool
	Reason     string    // why the best start stopped, in words
	Start      int       // index of the best start (0 = the model's own values)
	StartChi2  []float64 // final χ² of every start
	// Scanned is the number of extra starts seeded from the χ² map of the
	// free positions (starts 1 to Scanned); the rest were drawn at random.
	Scanned int
	Use     dataset.DataType
	// Smearing and SmearTol are the bandwidth-smearing settings of the fit
	// (Options).
	Smearing recon.Smearing
	SmearTol float64
	Notices  []string
	// Pairs gives every component with a position relative to the
	// primary (the brightest): separation, position angle, flux ratio and
	// Δmag with their propagated 1σ errors (see Pairs).
	Pairs []Pair
}

// Fit fits the free parameters of m to d by Levenberg–Marquardt and
// returns the best of Options.Starts starts. m is not changed. Errors:
// no free parameter, no data of the chosen types, fewer data than free
// parameters, a start outside the parameter bounds; when no start
// converges the Result is returned with an error wrapping
// ErrNotConverged.
func Fit(d *dataset.Data, m *model.Model, opt Options) (*Result, error) {
	opt = opt.withDefaults()
	if err := m.Validate(); err != nil {
		return nil, err
	}
	t := newTerms(d, opt.Use, 1, smearing{opt.Smearing, opt.SmearTol})
	pr, err := newProblem(t, m)
	if err != nil {
		return nil, err
	}
	rng := rand.New(rand.NewPCG(opt.Seed, 0x9e3779b97f4a7c15))
	var best *run
	res := &Result{Use: t.Use(), Smearing: opt.Smearing, SmearTol: opt.SmearTol, Notices: t.Notices()}
	var seeds [][]float64
	if !opt.NoScan {
		seeds = pr.scanSeeds(pr.x0, opt.Starts-1)
	}
	res.Scanned = len(seeds)
	for s := 0; s < opt.Starts; s++ {
		x0 := append([]float64(nil), pr.x0...)
		switch {
		case s > 0 && s <= len(seeds):
			x0 = seeds[s-1]
		case s > 0:
			pr.perturb(x0, rng)
		}
		r := pr.lm(x0, opt)
		res.Evals += r.evals
		res.StartChi2 = append(res.StartChi2, r.chi2)
		if best == nil || r.chi2 < best.chi2 || (math.IsNaN(best.chi2) && !math.IsNaN(r.chi2)) {
			best = &r
			res.Start = s
		}
	}
	pr.finish(res, best)
	atBound := make([]bool, len(res.Params))
	for i, p := range res.Params {
		atBound[i] = p.AtBound
	}
	res.Pairs = Pairs(res.Model, pr.refs, res.Cov, atBound)
	res.Chi2rExpected = t.ExpectedChi2r()
	res.Warnings = verdict(res)
	if !res.Converged {
		return res, fmt.Errorf("fit: %w after %d iterations: %s", ErrNotConverged, res.Iterations, res.Reason)
	}
	return res, nil
}

// problem maps the free parameters of a model onto the fit variables.
//
// Bounds are handled by a change of variables, so the Levenberg–Marquardt
// iteration itself is unconstrained (common practice, no source): with
// both bounds, x = lo + (hi − lo)(1 + sin t)/2; with a lower bound only,
// x = lo − 1 + √(t² + 1); with an upper bound only, x = hi + 1 − √(t² + 1);
// otherwise x = t. The uncertainties are computed in the user's variables
// x at the end, not in t.
type problem struct {
	t      *terms
	m      *model.Model // working copy
	refs   []model.Ref
	lo, hi []float64
	x0     []float64 // start values in user units
	xbuf   []float64
	evals  int
}

// domainLow gives the lowest value of parameters whose domain starts at
// zero, so that the change of variables keeps them there even when the
// user gives no bound.
var domainLow = map[string]float64{"diameter": 0, "fwhm": 0, "u_ld": 0, "alpha": 0, "ratio": 0, "inc": 0}

// domainHigh gives the highest value of parameters bounded above.
var domainHigh = map[string]float64{"u_ld": 1, "ratio": 1, "inc": 90}

func newProblem(t *terms, m *model.Model) (*problem, error) {
	pr := &problem{t: t, m: m.Clone(), refs: m.Refs(true)}
	if len(pr.refs) == 0 {
		return nil, errors.New("fit: the model has no free parameter (mark one with '~' or free = true)")
	}
	if t.Len() == 0 {
		return nil, fmt.Errorf("fit: no data of the types %v to fit", orAll(t.Use()))
	}
	if t.Len() < len(pr.refs) {
		return nil, fmt.Errorf("fit: %d data for %d free parameters", t.Len(), len(pr.refs))
	}
	for _, r := range pr.refs {
		p, err := m.Param(r)
		if err != nil {
			return nil, err
		}
		lo, hi := p.Min, p.Max
		if v, ok := domainLow[r.Name]; ok && lo < v {
			lo = v
		}
		if v, ok := domainHigh[r.Name]; ok && hi > v {
			hi = v
		}
		if p.Value < lo || p.Value > hi {
			return nil, fmt.Errorf("fit: %s starts at %g, outside its bounds [%g, %g]", r, p.Value, lo, hi)
		}
		pr.lo = append(pr.lo, lo)
		pr.hi = append(pr.hi, hi)
		pr.x0 = append(pr.x0, p.Value)
	}
	pr.xbuf = make([]float64, len(pr.refs))
	return pr, nil
}

func orAll(t dataset.DataType) string {
	if t == 0 {
		return "selected"
	}
	return t.String()
}

// toUser maps fit variables to parameter values.
func (pr *problem) toUser(dst, t []float64) {
	for i, ti := range t {
		lo, hi := pr.lo[i], pr.hi[i]
		switch {
		case !math.IsInf(lo, 0) && !math.IsInf(hi, 0):
			dst[i] = lo + (hi-lo)*(1+math.Sin(ti))/2
		case !math.IsInf(lo, 0):
			dst[i] = lo - 1 + math.Sqrt(ti*ti+1)
		case !math.IsInf(hi, 0):
			dst[i] = hi + 1 - math.Sqrt(ti*ti+1)
		default:
			dst[i] = ti
		}
		dst[i] = math.Min(math.Max(dst[i], lo), hi) // rounding
	}
}

// toInternal maps parameter values to fit variables (inverse of toUser).
func (pr *problem) toInternal(dst, x []float64) {
	for i, xi := range x {
		lo, hi := pr.lo[i], pr.hi[i]
		switch {
		case !math.IsInf(lo, 0) && !math.IsInf(hi, 0):
			if hi == lo {
				dst[i] = 0
			} else {
				dst[i] = math.Asin(math.Min(1, math.Max(-1, 2*(xi-lo)/(hi-lo)-1)))
			}
		case !math.IsInf(lo, 0):
			a := xi - lo + 1
			dst[i] = math.Sqrt(math.Max(0, a*a-1))
		case !math.IsInf(hi, 0):
			a := hi - xi + 1
			dst[i] = math.Sqrt(math.Max(0, a*a-1))
		default:
			dst[i] = xi
		}
	}
}

// residualsUser evaluates the residuals at user values x. It returns +Inf
// when the model rejects a value (outside a component's domain) or a
// residual is not finite.
func (pr *problem) residualsUser(dst, x []float64) float64 {
	pr.evals++
	if err := pr.m.Set(pr.refs, x); err != nil {
		return math.Inf(1)
	}
	if !(pr.m.TotalFlux() > 0) {
		return math.Inf(1)
	}
	s := pr.t.eval(dst, pr.m)
	if math.IsNaN(s) || math.IsInf(s, 0) {
		return math.Inf(1)
	}
	return s
}

func (pr *problem) residuals(dst, t []float64) float64 {
	pr.toUser(pr.xbuf, t)
	return pr.residualsUser(dst, pr.xbuf)
}

// perturb draws new positions for the components whose x and y are both
// free (see Options.Starts).
func (pr *problem) perturb(x []float64, rng *rand.Rand) {
	for c := range pr.m.Components {
		ix, iy := -1, -1
		for i, r := range pr.refs {
			if r.Comp == c && r.Name == "x" {
				ix = i
			}
			if r.Comp == c && r.Name == "y" {
				iy = i
			}
		}
		if ix < 0 || iy < 0 {
			continue
		}
		if bounded(pr.lo[ix], pr.hi[ix]) && bounded(pr.lo[iy], pr.hi[iy]) {
			x[ix] = pr.lo[ix] + rng.Float64()*(pr.hi[ix]-pr.lo[ix])
			x[iy] = pr.lo[iy] + rng.Float64()*(pr.hi[iy]-pr.lo[iy])
			continue
		}
		sep := math.Hypot(x[ix], x[iy]) * (0.5 + rng.Float64())
		pa := 2 * math.Pi * rng.Float64()
		x[ix] = clamp(sep*math.Sin(pa), pr.lo[ix], pr.hi[ix])
		x[iy] = clamp(sep*math.Cos(pa), pr.lo[iy], pr.hi[iy])
	}
}

// offBounds moves fit variables whose parameter starts on a finite bound
// a step inside. The change of variables is stationary there (dx/dt = 0
// on every bound), so Jᵀr = 0 and the gradient test would end the fit at
// once, "converged" at the start. The step is 0.5 in t: (1 − cos 0.5)/2
// ≈ 6 % of the range inside a parameter with both bounds, and
// √(1 + 0.5²) − 1 ≈ 0.12 (user units: mas for sizes) inside a single
// bound. Much smaller steps leave a start that is still nearly
// stationary (a disc's V² departs from 1 as d², so the Gauss–Newton step
// from d ≈ 0.001 mas overshoots to a far minimum in the tests). A
// parameter with no room between its bounds is left alone.
func (pr *problem) offBounds(t []float64) {
	const step = 0.5
	for i, ti := range t {
		lo, hi := pr.lo[i], pr.hi[i]
		switch {
		case bounded(lo, hi):
			if hi > lo && math.Abs(math.Cos(ti)) < math.Sin(step) {
				t[i] = math.Copysign(math.Pi/2-step, ti)
			}
		case !math.IsInf(lo, 0) || !math.IsInf(hi, 0):
			if math.Abs(ti) < step {
				t[i] = step
			}
		}
	}
}

// atBound reports whether the value x of parameter i lies on one of its
// finite bounds within BoundTol.
func (pr *problem) atBound(i int, x float64) bool {
	lo, hi := pr.lo[i], pr.hi[i]
	scale := 1.0
	if bounded(lo, hi) {
		scale = hi - lo
	}
	tol := BoundTol * scale
	return !math.IsInf(lo, 0) && x-lo <= tol || !math.IsInf(hi, 0) && hi-x <= tol
}

func bounded(lo, hi float64) bool { return !math.IsInf(lo, 0) && !math.IsInf(hi, 0) }

func clamp(x, lo, hi float64) float64 { return math.Min(math.Max(x, lo), hi) }

// jacobian fills J (n × p) with central differences of the residuals at
// t, with steps h_j = ε^(1/3) max(|t_j|, 1), ε the float64 epsilon, which
// balances truncation (O(h²)) and rounding (O(ε/h)) errors (Press et al.,
// Numerical Recipes, 3rd ed., sect. 5.7). It uses rp and rm as scratch.
// Steps whose residuals are not finite fall back to one-sided
// differences.
func (pr *problem) jacobian(J *mat.Dense, t, r0, rp, rm []float64, user bool) {
	n, p := J.Dims()
	const rel = 6.055454e-06 // cbrt(2.22e-16)
	eval := pr.residuals
	if user {
		eval = pr.residualsUser
	}
	tt := append([]float64(nil), t...)
	for j := 0; j < p; j++ {
		h := rel * math.Max(math.Abs(t[j]), 1)
		if user {
			// Stay inside the bounds, where the model is defined.
			if t[j]+h > pr.hi[j] || t[j]-h < pr.lo[j] {
				h = math.Min(h, math.Max(pr.hi[j]-t[j], t[j]-pr.lo[j]))
			}
		}
		tt[j] = t[j] + h
		fp := eval(rp, tt)
		if user && t[j]+h > pr.hi[j] {
			fp = math.Inf(1)
		}
		tt[j] = t[j] - h
		fm := eval(rm, tt)
		if user && t[j]-h < pr.lo[j] {
			fm = math.Inf(1)
		}
		tt[j] = t[j]
		for i := 0; i < n; i++ {
			var g float64
			switch {
			case !math.IsInf(fp, 0) && !math.IsInf(fm, 0):
				g = (rp[i] - rm[i]) / (2 * h)
			case !math.IsInf(fp, 0):
				g = (rp[i] - r0[i]) / h
			case !math.IsInf(fm, 0):
				g = (r0[i] - rm[i]) / h
			}
			J.Set(i, j, g)
		}
	}
}

// run is the outcome of one start.
type run struct {
	t         []float64 // fit variables
	chi2      float64
	iter      int
	evals     int
	converged bool
	reason    string
}

// lm minimises the sum of squared residuals from x0 (user units) by the
// Levenberg–Marquardt method with the scaling of Moré (1978, "The
// Levenberg-Marquardt algorithm: implementation and theory", Lecture Notes
// in Mathematics 630, 105): the damping acts on D = diag(d_j), d_j the
// largest norm of column j of J met so far, so the method is invariant to
// the units of the parameters. Each step solves
//
//	(JᵀJ + λ D²) δ = −Jᵀr
//
// by Cholesky factorisation, and λ is adapted from the gain ratio ρ of
// actual to predicted reduction: λ ← λ·max(1/3, 1 − (2ρ − 1)³) on success,
// λ ← λ·ν, ν ← 2ν on failure (Madsen, Nielsen & Tingleff 2004, "Methods
// for non-linear least squares problems", IMM DTU, eq. 3.16). The tests
// for convergence are those of Moré (1978, sect. 8): relative reduction
// (FTol), relative step (XTol) and orthogonality of r to the columns of J
// (GTol).
func (pr *problem) lm(x0 []float64, opt Options) run {
	p := len(x0)
	n := pr.t.Len()
	ev0 := pr.evals
	t := make([]float64, p)
	pr.toInternal(t, x0)
	r := make([]float64, n)
	rp := make([]float64, n)
	rm := make([]float64, n)
	rt := make([]float64, n)
	trial := make([]float64, p)
	D := make([]float64, p)
	J := mat.NewDense(n, p, nil)
	var JtJ mat.SymDense
	A := mat.NewSymDense(p, nil)
	g := mat.NewVecDense(p, nil)
	delta := mat.NewVecDense(p, nil)
	var chol mat.Cholesky

	pr.offBounds(t)
	f := pr.residuals(r, t)
	out := run{t: t, chi2: f}
	if math.IsInf(f, 0) {
		out.reason = "the model is not defined at the start values"
		out.evals = pr.evals - ev0
		return out
	}
	lambda, nu := 0.0, 2.0
	needJ := true
	for out.iter = 0; out.iter < opt.MaxIter; {
		if f == 0 {
			out.converged, out.reason = true, "χ² is zero"
			break
		}
		if needJ {
			pr.jacobian(J, t, r, rp, rm, false)
			JtJ.SymOuterK(1, J.T())
			g.MulVec(J.T(), mat.NewVecDense(n, r))
			// Orthogonality test (Moré 1978, sect. 8, gtol).
			rn := math.Sqrt(f)
			gmax := 0.0
			for j := 0; j < p; j++ {
				cn := math.Sqrt(JtJ.At(j, j))
				D[j] = math.Max(D[j], cn)
				if cn > 0 {
					gmax = math.Max(gmax, math.Abs(g.AtVec(j))/(cn*rn))
				}
			}
			if gmax <= opt.GTol {
				out.converged, out.reason = true, "the residuals are orthogonal to the Jacobian (gradient test)"
				break
			}
			if lambda == 0 {
				// Start with a damping of 1e-3 of the largest diagonal
				// element of JᵀJ relative to D² (Madsen et al. 2004, eq. 3.14).
				for j := 0; j < p; j++ {
					if D[j] > 0 {
						lambda = math.Max(lambda, JtJ.At(j, j)/(D[j]*D[j]))
					}
				}
				lambda *= 1e-3
				if lambda == 0 {
					lambda = 1e-3
				}
			}
			needJ = false
		}
		out.iter++
		for i := 0; i < p; i++ {
			for j := i; j < p; j++ {
				a := JtJ.At(i, j)
				if i == j {
					dd := D[i]
					if dd == 0 {
						dd = 1
					}
					a += lambda * dd * dd
				}
				A.SetSym(i, j, a)
			}
		}
		if !chol.Factorize(A) {
			lambda *= nu
			nu *= 2
			continue
		}
		if err := chol.SolveVecTo(delta, g); err != nil {
			lambda *= nu
			nu *= 2
			continue
		}
		dn, xn := 0.0, 0.0
		for j := 0; j < p; j++ {
			dj := -delta.AtVec(j)
			trial[j] = t[j] + dj
			dd := D[j]
			dn += dd * dd * dj * dj
			xn += dd * dd * t[j] * t[j]
		}
		dn, xn = math.Sqrt(dn), math.Sqrt(xn)
		ft := pr.residuals(rt, trial)
		// Predicted reduction of the linear model: δᵀ(λD²δ − g) with δ = −step,
		// computed as −2δᵀg − δᵀJᵀJδ.
		pred := 0.0
		for j := 0; j < p; j++ {
			dj := -delta.AtVec(j)
			pred -= 2 * dj * g.AtVec(j)
			for k := 0; k < p; k++ {
				pred -= dj * JtJ.At(j, k) * (-delta.AtVec(k))
			}
		}
		actual := f - ft
		rho := -1.0
		if pred > 0 && !math.IsInf(ft, 0) {
			rho = actual / pred
		}
		fOld := f
		if rho > 0 {
			copy(t, trial)
			r, rt = rt, r
			f = ft
			lambda *= math.Max(1.0/3, 1-math.Pow(2*rho-1, 3))
			nu = 2
			needJ = true
		} else {
			lambda *= nu
			nu *= 2
		}
		// Convergence tests of Moré (1978, sect. 8), made whether or not the
		// step was taken: a reduction below FTol, actual and predicted, or a
		// step below XTol.
		if !math.IsInf(ft, 0) && math.Abs(actual) <= opt.FTol*fOld && pred <= opt.FTol*fOld {
			out.converged, out.reason = true, "the relative reduction of χ² is below the tolerance"
			break
		}
		if dn <= opt.XTol*math.Max(xn, opt.XTol) {
			out.converged, out.reason = true, "the relative step is below the tolerance"
			break
		}
		if lambda > 1e30 {
			out.reason = "the damping grew without bound: no step reduces χ²"
			break
		}
	}
	if !out.converged && out.reason == "" {
		out.reason = fmt.Sprintf("the iteration limit (%d) was reached", opt.MaxIter)
	}
	out.t, out.chi2 = t, f
	out.evals = pr.evals - ev0
	return out
}

// finish fills res from the best run: values, covariance in user units,
// χ² per type.
func (pr *problem) finish(res *Result, best *run) {
	p := len(pr.refs)
	n := pr.t.Len()
	x := make([]float64, p)
	pr.toUser(x, best.t)
	r := make([]float64, n)
	f := pr.residualsUser(r, x)
	res.Model = pr.m.Clone()
	res.Chi2 = f
	res.N = n
	res.DOF = n - p
	res.Chi2r = math.NaN()
	if res.DOF > 0 {
		res.Chi2r = f / float64(res.DOF)
	}
	res.Iterations = best.iter
	res.Converged = best.converged
	res.Reason = best.reason
	for _, ty := range dataset.DataTypes() {
		if n := pr.t.N(ty); n > 0 {
			c := pr.t.Chi2Of(ty, r)
			res.PerType = append(res.PerType, TypeChi2{Type: ty, N: n, Chi2: c, Chi2r: c / float64(n)})
		}
	}
	res.Params = make([]Param, p)
	for i, ref := range pr.refs {
		res.Params[i] = Param{Ref: ref, Value: x[i], Err: math.NaN(), AtBound: pr.atBound(i, x[i])}
	}
	J := mat.NewDense(n, p, nil)
	pr.jacobian(J, x, r, make([]float64, n), make([]float64, n), true)
	pr.m.Set(pr.refs, x) // the Jacobian moved the working model
	var JtJ mat.SymDense
	JtJ.SymOuterK(1, J.T())
	if flat := flatParams(&JtJ); flat != nil {
		pr.covarianceFixing(res, &JtJ, flat)
		return
	}
	var chol mat.Cholesky
	var cov mat.SymDense
	if !chol.Factorize(&JtJ) || chol.InverseTo(&cov) != nil {
		// Parameters of very different scales (the position of a faint
		// companion beside its flux) can defeat the plain inverse although
		// the normalised JᵀJ is far from singular.
		pr.covarianceFixing(res, &JtJ, make([]bool, p))
		return
	}
	cov.ScaleSym(covScale(res.Chi2r), &cov)
	corr := mat.NewSymDense(p, nil)
	for i := 0; i < p; i++ {
		res.Params[i].Err = math.Sqrt(cov.At(i, i))
		for j := i; j < p; j++ {
			corr.SetSym(i, j, cov.At(i, j)/math.Sqrt(cov.At(i, i)*cov.At(j, j)))
		}
	}
	res.Cov, res.Corr = &cov, corr
}

// covScale is the factor of (JᵀJ)⁻¹ in the covariance: χ²ᵣ, or 1 when χ²ᵣ is not a
// positive finite number.
func covScale(chi2r float64) float64 {
	if !(chi2r > 0) || math.IsInf(chi2r, 0) {
		return 1
	}
	return chi2r
}

// flatRcond is the smallest eigenvalue of the normalised JᵀJ (unit
// diagonal), relative to its largest, below which a direction of the
// parameters counts as unconstrained by the data: the square of a
// relative singular value of 10⁻⁶ of the column-scaled Jacobian, about
// the accuracy of its central differences (common practice, no source).
// flatShare is the share of such a direction a parameter must carry to
// be undetermined: its variance then exceeds 10⁶ times that of a
// parameter the data pin best (common practice, no source).
const (
	flatRcond = 1e-12
	flatShare = 1e-6
)

// flatParams returns, for each free parameter, whether the data leave it
// undetermined, or nil when JᵀJ has no flat direction. A parameter is
// undetermined when its column of J is zero or not finite, or when it
// carries more than flatShare of an eigenvector of the normalised JᵀJ
// whose eigenvalue is below flatRcond times the largest. The
// eigen-decomposition of the normalised JᵀJ is the singular value
// decomposition of the column-scaled J, whose small singular values mark
// the combinations of parameters the data do not constrain (Press et
// al., Numerical Recipes, 3rd ed., sect. 15.4.2, recalled from memory).
func flatParams(JtJ *mat.SymDense) []bool {
	p := JtJ.SymmetricDim()
	flat := make([]bool, p)
	found := false
	var keep []int
	for j := 0; j < p; j++ {
		d := JtJ.At(j, j)
		if !(d > 0) || math.IsInf(d, 0) {
			flat[j], found = true, true
			continue
		}
		keep = append(keep, j)
	}
	if len(keep) > 0 {
		c := mat.NewSymDense(len(keep), nil)
		for a, ja := range keep {
			for b := a; b < len(keep); b++ {
				jb := keep[b]
				c.SetSym(a, b, JtJ.At(ja, jb)/math.Sqrt(JtJ.At(ja, ja)*JtJ.At(jb, jb)))
			}
		}
		var eig mat.EigenSym
		if !eig.Factorize(c, true) {
			for _, j := range keep {
				flat[j] = true
			}
			return flat
		}
		vals := eig.Values(nil) // ascending
		var vecs mat.Dense
		eig.VectorsTo(&vecs)
		top := vals[len(vals)-1]
		for i, v := range vals {
			if v > flatRcond*top {
				break
			}
			for a, j := range keep {
				if e := vecs.At(a, i); e*e > flatShare {
					flat[j], found = true, true
				}
			}
		}
	}
	if !found {
		return nil
	}
	return flat
}

// covarianceFixing fills the errors, Cov and Corr of res when flat marks
// undetermined parameters, or when the plain inverse of JᵀJ failed. The
// parameters marked, and those whose 1σ exceeds the range between their
// bounds, are undetermined: they are held at their values, the
// covariance of the others is the inverse of their block of JᵀJ (scaled
// by χ²ᵣ as in finish), and the rows and columns of the undetermined ones
// are NaN, as are their errors. When every parameter is undetermined, Cov
// and Corr stay nil.
func (pr *problem) covarianceFixing(res *Result, JtJ *mat.SymDense, flat []bool) {
	p := len(flat)
	var det []int
	for j := 0; j < p; j++ {
		res.Params[j].Undetermined = flat[j]
		if !flat[j] {
			det = append(det, j)
		}
	}
	if len(det) == 0 {
		res.Notices = append(res.Notices, "JᵀJ is singular: some parameters are degenerate, uncertainties are not available")
		return
	}
	// The block is inverted normalised to a unit diagonal, so that the
	// parameters' units do not enter its condition (common practice, no
	// source): (JᵀJ)⁻¹ = S (S JᵀJ S)⁻¹ S with S = diag(JᵀJ)^(−1/2).
	sc := make([]float64, len(det))
	for a, ja := range det {
		sc[a] = 1 / math.Sqrt(JtJ.At(ja, ja))
	}
	sub := mat.NewSymDense(len(det), nil)
	for a, ja := range det {
		for b := a; b < len(det); b++ {
			sub.SetSym(a, b, sc[a]*JtJ.At(ja, det[b])*sc[b])
		}
	}
	var chol mat.Cholesky
	var inv mat.SymDense
	if !chol.Factorize(sub) || chol.InverseTo(&inv) != nil {
		res.Notices = append(res.Notices, "JᵀJ is singular: uncertainties are not available")
		return
	}
	scale := covScale(res.Chi2r)
	cov := mat.NewSymDense(p, nil)
	corr := mat.NewSymDense(p, nil)
	for i := 0; i < p; i++ {
		for j := i; j < p; j++ {
			cov.SetSym(i, j, math.NaN())
			corr.SetSym(i, j, math.NaN())
		}
	}
	for a, ja := range det {
		for b := a; b < len(det); b++ {
			cov.SetSym(ja, det[b], scale*sc[a]*inv.At(a, b)*sc[b])
		}
	}
	for _, i := range det {
		res.Params[i].Err = math.Sqrt(cov.At(i, i))
		for _, j := range det {
			if j >= i {
				corr.SetSym(i, j, cov.At(i, j)/math.Sqrt(cov.At(i, i)*cov.At(j, j)))
			}
		}
	}
	// A 1σ wider than the range the bounds allow is no constraint either:
	// such parameters are held fixed too and the rest is recomputed
	// (common practice, no source).
	again := false
	for _, i := range det {
		if w := pr.hi[i] - pr.lo[i]; !math.IsInf(w, 0) && res.Params[i].Err > w {
			flat[i], again = true, true
		}
	}
	if again {
		for _, i := range det {
			res.Params[i].Err = math.NaN()
		}
		pr.covarianceFixing(res, JtJ, flat)
		return
	}
	res.Cov, res.Corr = cov, corr
}
