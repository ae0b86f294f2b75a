package recon

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"time"

	"vcz/recon/optim"
)

// StarEnvObjective is the objective of a star with a power-law spectrum plus one image of
// its environment with its own power-law spectrum, fitted to the planes of a cube. In
// plane k, at wavelength λ_k, the sky is
//
//	x_k = a_k·s + (1 − a_k)·e/Σe,  a_k = f0·r^α / (f0·r^α + (1 − f0)·r^d),  r = λ_k/λ0,
//
// with s the star's image (flux 1), e the environment's, f0 the star's share of the flux at
// the reference wavelength λ0, α the star's spectral index and d the environment's: the
// flux of each component is its share at λ0 times (λ/λ0) to its index, and the
// visibility is their flux-weighted mean, V_k = a_k·V_s + (1 − a_k)·V_e (Kluska et al.
// 2014, A&A 564, A80, sect. 2, there with α = −4 for a star in the Rayleigh–Jeans regime).
// The objective is
//
//	F(e, f0, d) = Σ_k J_k(x_k) + μ·R(e/Σe) + ρ(Σe − 1)²,
//
// J_k the χ² of plane k's data (an Objective each), R the spatial regularizer and ρ the
// number of data. Its variable is the environment's N² pixels followed by f0 and d.
// Each plane's data should span a narrow band (one channel per plane is exact): a_k is
// taken at the plane's wavelength Coord.
type StarEnvObjective struct {
	Planes         []*Objective
	Waves          []float64 // λ_k (m)
	Star           []float64 // s, flux 1
	Lambda0, Alpha float64
	Reg            Regularizer
	Mu, Rho        float64
	// Workers is the largest number of planes evaluated at once, each on its own goroutine
	// (their objectives should then be serial: Objective.setSerial); 0 or 1 evaluates them
	// one after the other. The planes' results are added in their order, so the value and
	// gradient do not depend on it.
	Workers int

	xs, gs    [][]float64 // each plane's image x_k and gradient
	vals      []float64   // each plane's J_k
	cost      []time.Duration
	h, en, rg []float64
	// refits counts the refits of the profiles since the last resetRefits and capped
	// those stopped at their iteration limit; lastTail is the decrease of the objective
	// over the last ftolWindow iterations of the latest refit when it was capped (+Inf
	// when it had fewer), 0 when it converged.
	refits, capped int
	lastTail       float64
}

// frac returns a_k and its derivatives with respect to f0 and d:
// ∂a/∂f0 = r^α r^d / D², ∂a/∂d = −a(1 − a) ln r, D = f0 r^α + (1 − f0) r^d.
func (o *StarEnvObjective) frac(k int, f0, d float64) (a, da0, dad float64) {
	r := o.Waves[k] / o.Lambda0
	A, B := math.Pow(r, o.Alpha), math.Pow(r, d)
	D := f0*A + (1-f0)*B
	a = f0 * A / D
	return a, A * B / (D * D), -a * (1 - a) * math.Log(r)
}

// Eval returns F(z) and, when grad is non-nil, overwrites grad with ∂F/∂z.
func (o *StarEnvObjective) Eval(grad, z []float64) float64 {
	n := len(o.Star)
	if len(z) != n+2 || (grad != nil && len(grad) != n+2) {
		panic(fmt.Sprintf("recon: StarEnvObjective: want %d values, have %d (gradient %d)", n+2, len(z), len(grad)))
	}
	P := len(o.Planes)
	if len(o.h) != n || len(o.xs) != P {
		o.h, o.en, o.rg = make([]float64, n), make([]float64, n), make([]float64, n)
		o.xs, o.gs = make([][]float64, P), make([][]float64, P)
		for k := range P {
			o.xs[k], o.gs[k] = make([]float64, n), make([]float64, n)
		}
		o.vals, o.cost = make([]float64, P), make([]time.Duration, P)
	}
	e, f0, d := z[:n], z[n], z[n+1]
	E := 0.0
	for _, v := range e {
		E += v
	}
	if !(E > 0) {
		for i := range grad {
			grad[i] = 0
			if i < n {
				grad[i] = -2 * o.Rho
			}
		}
		return noFluxObjective
	}
	for i, v := range e {
		o.en[i] = v / E
	}
	clear(o.h)
	var gf0, gd float64
	v := 0.0
	plane := func(k int) {
		a, _, _ := o.frac(k, f0, d)
		x := o.xs[k]
		for i := range x {
			x[i] = a*o.Star[i] + (1-a)*o.en[i]
		}
		var gk []float64
		if grad != nil {
			gk = o.gs[k]
		}
		o.vals[k] = o.Planes[k].Eval(gk, x)
	}
	if o.Workers > 1 {
		runSweep(P, nil, o.Workers, o.cost, plane)
	} else {
		for k := range P {
			plane(k)
		}
	}
	for k := range P {
		a, da0, dad := o.frac(k, f0, d)
		v += o.vals[k]
		if grad != nil {
			gk := o.gs[k]
			ga := 0.0
			for i, g := range gk {
				o.h[i] += (1 - a) * g
				ga += g * (o.Star[i] - o.en[i])
			}
			gf0 += ga * da0
			gd += ga * dad
		}
	}
	if o.Reg != nil && o.Mu != 0 {
		var rg []float64
		if grad != nil {
			rg = o.rg
		}
		v += o.Mu * o.Reg.Eval(rg, o.en)
		for i, g := range rg {
			o.h[i] += o.Mu * g
		}
	}
	if grad != nil {
		// ∂/∂e_p of a function of e/E: (h_p − Σ_q h_q e_q/E)/E.
		c := 0.0
		for i, hv := range o.h {
			c += hv * o.en[i]
		}
		for i, hv := range o.h {
			grad[i] = (hv - c) / E
		}
		grad[n], grad[n+1] = gf0, gd
	}
	df := E - 1
	v += o.Rho * df * df
	if grad != nil {
		for i := range grad[:n] {
			grad[i] += 2 * o.Rho * df
		}
	}
	return v
}

// StarEnvProblem is a star of power-law spectrum plus an environment image
// (StarEnvObjective) fitted to the planes of a cube.
type StarEnvProblem struct {
	// Problem is the gray problem over all the data: its gray image gives the grid, the
	// spatial weight μ and the start of the environment.
	Problem
	Planes []CubePlane
	// StarDiameter is the star's uniform-disc diameter (rad); 0 is an unresolved star at
	// the phase centre (one pixel, exact). A resolved star is drawn on the grid, each pixel
	// covering the disc's area share (8 × 8 samples per pixel).
	StarDiameter float64
	// StarIndex is the star's spectral index α (Kluska et al. 2014 take −4).
	StarIndex float64
	// Lambda0 is the reference wavelength (m); 0 means the mean of the planes'.
	Lambda0 float64
	// F0 and EnvIndex start the star's share at λ0 and the environment's index; F0 0
	// means 0.5.
	F0, EnvIndex float64
}

// StarEnvResult is the outcome of SolveStarEnv.
type StarEnvResult struct {
	Env      []float64 // the environment's image, flux 1
	Grid     GridChoice
	F0       float64 // the star's share of the flux at Lambda0
	EnvIndex float64 // the environment's spectral index d
	// F0Err and EnvIndexErr are the 1σ errors of F0 and EnvIndex from the profile of the
	// objective: each parameter is held at its value ± h while the environment image and
	// the other parameter are refitted, and σ² = 2h²/(F₊ + F₋ − 2F₀), the curvature of
	// the profile as that of χ² = −2 ln L (Δχ² = 1 at 1σ; Press et al. 2007, Numerical
	// Recipes, 3rd ed., sect. 15.6, recalled from memory), scaled by √χ²ᵣ when χ²ᵣ > 1
	// (common practice, no source). NaN when the profile has no positive curvature.
	F0Err, EnvIndexErr float64
	// F0Interval and EnvIndexInterval are the lower and upper 1σ errors of F0 and
	// EnvIndex from the profile itself, not its curvature: where it is not quadratic (a
	// parameter near its bound, an environment of little flux) the two sides differ.
	F0Interval, EnvIndexInterval ProfileInterval
	// F0ErrFixed and EnvIndexErrFixed are the errors from the curvature of χ² in (f0, d)
	// with the image held fixed, cov = 2·H⁻¹: they leave out the image's freedom and
	// underestimate (measured on a simulated star and environment: f0 lay 21 of them from
	// the truth, 0.006 away).
	F0ErrFixed, EnvIndexErrFixed float64
	Lambda0                      float64
	Chi2r                        float64 // Σχ²/ΣN over all planes
	// Chi2rTarget is the expected value of Chi2r (Objective.ExpectedChi2r over all planes).
	Chi2rTarget float64
	Gray        *Result
	Iter        int
	Status      optim.Status
	// Converged says that the fit stopped on its objective tolerance (or the optimizer's
	// own convergence test); StopReason says why it stopped in words.
	Converged  bool
	StopReason string
	// Warnings is the quality verdict: each names what is doubtful and what to try; empty
	// when none. Notices are facts about the run that do not doubt it.
	Warnings, Notices []string
}

// SolveStarEnv fits a star of power-law spectrum and an environment image with its own
// spectral index (StarEnvObjective) to the planes: the gray image of all data first
// (Solve: grid, weight μ, start), then the environment, f0 and d together by the
// bound-constrained quasi-Newton method (e ≥ 0, 0 ≤ f0 ≤ 1, |d| ≤ 20), the environment
// starting from the gray image with the star's share at the central pixel taken out, with
// the phase terms smoothed: a first pass as in Solve's (DefaultPhaseSmoothing), then the
// fit, its profiles and continuations at StarEnvPhaseSmoothing (exact terms throughout when
// Settings.PhaseSmoothing < 0). The
// errors come from the profiles of f0 and d (StarEnvResult.F0Err); when a refit of a
// profile lands lower than the fit by more than a tenth of the 1σ rise, the fit was not at
// its minimum: it is continued from the lowest refit (at most maxContinue times) and the
// errors are measured again there. StarEnvResult.Warnings says what remains doubtful (starEnvVerdict).
// Each evaluation evaluates up to Settings.Workers planes at once (StarEnvObjective.Workers),
// with the same result for any number.
func SolveStarEnv(p StarEnvProblem, s Settings) (*StarEnvResult, error) {
	if len(p.Planes) < 2 {
		return nil, errors.New("recon: a star with its own spectrum needs at least two channel groups")
	}
	if s.MaxIter <= 0 {
		s.MaxIter = DefaultMaxIter
	}
	gray, err := Solve(p.Problem, s)
	if err != nil {
		return nil, fmt.Errorf("recon: gray image: %w", err)
	}
	g := gray.Grid
	n := g.N * g.N
	o := &StarEnvObjective{Lambda0: p.Lambda0, Alpha: p.StarIndex, Mu: gray.Weight}
	if p.Reg != nil && gray.Weight != 0 {
		if o.Reg, err = p.Reg(g.Grid); err != nil {
			return nil, fmt.Errorf("recon: regularizer: %w", err)
		}
	}
	mk := p.Transform
	if mk == nil {
		mk = NewTransform(s.Workers)
	}
	nTot := 0
	for k, pl := range p.Planes {
		m, err := NewForwardModelWith(pl.Data, g.Grid, true, mk, ModelOptions{Smearing: p.Smearing})
		if err != nil {
			return nil, fmt.Errorf("recon: plane %d (%s): %w", k+1, pl.Label, err)
		}
		obj := NewObjective(pl.Data, m, p.Terms)
		if s.PhaseSmoothing >= 0 {
			obj.SetPhaseSmoothing(StarEnvPhaseSmoothing)
		}
		nTot += pl.Data.Len(obj.Use())
		o.Planes = append(o.Planes, obj)
		o.Waves = append(o.Waves, pl.Coord)
	}
	if o.Lambda0 == 0 {
		for _, w := range o.Waves {
			o.Lambda0 += w / float64(len(o.Waves))
		}
	}
	o.Rho = float64(max(nTot, 1))
	// The planes evaluated at once, one per processor, each serial (as the sweeps of
	// SolveCube fit them).
	if o.Workers = cubeWorkers(s); o.Workers > 1 {
		for _, obj := range o.Planes {
			obj.setSerial(true)
		}
	}
	o.Star = starImage(g.N, g.Pixel, p.StarDiameter)
	f0 := p.F0
	if f0 <= 0 || f0 >= 1 {
		f0 = 0.5
	}
	// Start: the gray image less the star's share, spread back to flux 1.
	z := make([]float64, n+2)
	for i, v := range gray.Image {
		z[i] = max(v-f0*o.Star[i], 0)
	}
	sum := 0.0
	for _, v := range z[:n] {
		sum += v
	}
	if !(sum > 0) {
		copy(z, gray.Image)
		sum = 1
	}
	for i := range z[:n] {
		z[i] /= sum
	}
	z[n], z[n+1] = f0, p.EnvIndex
	lower, upper := make([]float64, n+2), make([]float64, n+2)
	for i := range upper[:n] {
		upper[i] = math.Inf(1)
	}
	lower[n], upper[n] = 0, 1
	lower[n+1], upper[n+1] = -20, 20
	ftol := s.FTol
	if ftol == 0 {
		ftol = DefaultFTol
	}
	iter := 0
	// fit minimises from z0 with every variable free; ftolStop says that it stopped on
	// the objective tolerance.
	fit := func(z0 []float64) (r optim.Result, ftolStop bool, err error) {
		var hist []float64
		st := optim.Settings{MaxIter: s.MaxIter, FTol: -1, PGTol: s.PGTol, Memory: lbfgsMemory, Callback: func(it optim.Iter) bool {
			hist = append(hist, it.F)
			iter++
			if s.Progress != nil {
				if !s.Progress(Progress{Stage: "star + environment", Weight: gray.Weight, Iter: iter, Objective: it.F, Chi2r: o.planesChi2r()}) {
					return false
				}
			}
			k := len(hist) - 1
			ftolStop = k >= ftolWindow && hist[k-ftolWindow]-it.F <= ftol*ftolWindow*math.Max(math.Abs(it.F), 1)
			return !ftolStop
		}}
		r, err = optim.Minimize(optim.Problem{Func: o.Eval, Lower: lower, Upper: upper}, z0, st)
		if err != nil {
			return r, false, fmt.Errorf("recon: star + environment: %w", err)
		}
		return r, ftolStop, nil
	}
	if s.PhaseSmoothing >= 0 {
		// A first pass with the phase terms smoothed as in Solve's first pass
		// (DefaultPhaseSmoothing), then the fit at StarEnvPhaseSmoothing from there.
		for _, obj := range o.Planes {
			obj.SetPhaseSmoothing(DefaultPhaseSmoothing)
		}
		r, _, err := fit(z)
		if err != nil {
			return nil, err
		}
		z = r.X
		for _, obj := range o.Planes {
			obj.SetPhaseSmoothing(StarEnvPhaseSmoothing)
		}
	}
	r, ftolStop, err := fit(z)
	if err != nil {
		return nil, err
	}
	res := &StarEnvResult{Grid: g, Gray: gray, Lambda0: o.Lambda0}
	pathIter := min(s.MaxIter, DefaultPathIter)
	target := 1.0
	var diag [2]profileDiag
	for restart := 0; ; restart++ {
		res.Chi2r = o.chi2r(r.X)
		target = math.Max(1, res.Chi2r) // Δχ² = 1, scaled as the curvature errors are
		diag = o.profileSteps(res, r.X, lower, upper, pathIter, ftol)
		// A refit of the profiles below the fit by more than a tenth of the rise that
		// defines the errors (common practice, no source): the fit was not at its
		// minimum. Fit again from the lowest refit, at most maxContinue times, and
		// measure the errors there.
		low := -1
		for j, d := range diag {
			if d.pf.Low != nil && d.pf.LowF < r.F-0.1*target && (low < 0 || d.pf.LowF < diag[low].pf.LowF) {
				low = j
			}
		}
		if low < 0 || restart == maxContinue {
			break
		}
		from, fromF := o.walkProfile(r.X, n+low, diag[low].pf.Low, diag[low].pf.LowF, lower, upper, pathIter, ftol)
		r2, stop2, err := fit(from)
		if err != nil {
			return nil, err
		}
		res.Notices = append(res.Notices, fmt.Sprintf("the fit was continued from a point %.3g lower in objective that the profile of %s found, at %.4g (objective %.6g → %.6g); the errors are measured at the end",
			r.F-fromF, starEnvParams[low], from[n+low], r.F, r2.F))
		r, ftolStop = r2, stop2
	}
	o.profileIntervals(res, r.X, &diag, lower, upper, pathIter, ftol, target)
	res.Iter, res.Status, res.F0, res.EnvIndex = iter, r.Status, r.X[n], r.X[n+1]
	res.Converged = ftolStop || r.Status.Converged()
	res.StopReason = r.Status.String()
	if ftolStop {
		res.StopReason = fmt.Sprintf("converged: relative objective change below %g per iteration over %d iterations", ftol, ftolWindow)
	}
	res.Env = append([]float64(nil), r.X[:n]...)
	E := 0.0
	for _, v := range res.Env {
		E += v
	}
	for i := range res.Env {
		res.Env[i] /= E
	}
	res.Chi2rTarget = o.expectedChi2r()
	res.Warnings = starEnvVerdict(res, r, diag, nTot, s.MaxIter, pathIter, target)
	return res, nil
}

// StarEnvPhaseSmoothing is the smoothing of the phase terms in the star + environment fit,
// its profiles and its continuations (Objective.SetPhaseSmoothing: η is a hundredth of the
// typical model amplitude); Settings.PhaseSmoothing < 0 fits the exact terms instead. The
// exact term is discontinuous where a model bispectrum or visibility vanishes: its phase
// turns through a full circle within any neighbourhood of the null, and its gradient grows
// as one over the amplitude. A fit that moves a model visibility onto a null and turns its
// phase to the data's sits in a pit as narrow as the remaining amplitude, from which no
// step of f0 or d descends (measured on a 2 mas star with a 6 mas environment over eight
// channels: one plane's model visibility at 10⁻⁸, its closure-phase χ² rising by 0.003 for
// steps of 10⁻⁶ in f0 either way; the exact fit stopped there at an objective of 3117.4,
// 3115.1 after three continuations from its profiles, while the smoothed fit ends where the
// exact objective is 3094.8). Smoothed, the term is continuous, its gradient at most about
// 2/(ησ²), and it differs from the exact one by a factor 1 − (η/|z|)²/2 where |z| ≫ η. The
// χ² reported are still those of the exact terms (Objective.Chi2).
const StarEnvPhaseSmoothing = 0.01

// starEnvParams names f0 and d, the variables after the image, in messages.
var starEnvParams = [2]string{"the star's share f0", "the environment's index d"}

// profileDiag is what the verdict needs of the profile of one parameter: its last step
// (profileError's) and the counts of its refits (StarEnvObjective.refits, capped).
type profileDiag struct {
	pf             profileFit
	sigma          float64 // the curvature error, unscaled; NaN without positive curvature
	refits, capped int
}

// drift returns how much the rises of the profile's last step were still changing when
// its refits stopped: the largest difference between the decrease of the refit at ± H
// and that of the refit at the value over their last ftolWindow iterations (0 for
// converged refits, +Inf when a capped one ran fewer).
func (d profileDiag) drift() float64 {
	t := d.pf.Tails
	if math.IsInf(t[0], 1) || math.IsInf(t[1], 1) || math.IsInf(t[2], 1) {
		return math.Inf(1)
	}
	return math.Max(math.Abs(t[1]-t[0]), math.Abs(t[2]-t[0]))
}

// walkProfile returns the lowest point found along the profile of variable j from the fit
// z, given its lowest refit low (objective lowF) at a step h from z_j: the refits at steps
// 2h, 4h, … on the same side (each from the previous one, the step within the bounds, at
// most 8) while they keep falling. A fit that stalled along j is then continued from where
// the profile is lower, not only one step away.
func (o *StarEnvObjective) walkProfile(z []float64, j int, low []float64, lowF float64, lower, upper []float64, maxIter int, ftol float64) ([]float64, float64) {
	h := low[j] - z[j]
	for range 8 {
		if h == 0 {
			break
		}
		h *= 2
		v := math.Min(math.Max(z[j]+h, lower[j]), upper[j])
		if v == low[j] {
			break
		}
		f, x := o.refitX(low, j, v, lower, upper, maxIter, ftol)
		if x == nil || !(f < lowF) {
			break
		}
		low, lowF = x, f
	}
	return low, lowF
}

// maxContinue is the largest number of times SolveStarEnv continues its fit from a lower
// point that the profiles found (measured on a star and environment whose fit stopped on its
// objective tolerance in a shallow valley: 3 continuations, each lower by a quarter of
// the previous gain, brought it to its minimum).
const maxContinue = 3

// profileSteps fills the curvature errors of res (F0Err, EnvIndexErr, unscaled) and the
// fixed-image errors from the fit z, and returns the profiles' last steps
// (profileError's) with the counts of their refits.
func (o *StarEnvObjective) profileSteps(res *StarEnvResult, z, lower, upper []float64, pathIter int, ftol float64) [2]profileDiag {
	n := len(o.Star)
	var diag [2]profileDiag
	res.F0ErrFixed, res.EnvIndexErrFixed = o.paramErrors(z)
	for j, e := range []struct {
		sigma *float64
		fixed float64
		hmin  float64
	}{{&res.F0Err, res.F0ErrFixed, 1e-3}, {&res.EnvIndexErr, res.EnvIndexErrFixed, 1e-2}} {
		o.resetRefits()
		sigma, pf := o.profileError(z, n+j, e.fixed, e.hmin, lower, upper, pathIter, ftol)
		*e.sigma = sigma
		diag[j] = profileDiag{pf: pf, sigma: sigma, refits: o.refits, capped: o.capped}
	}
	return diag
}

// profileIntervals fills the intervals of res from the profiles' last steps diag at z
// (profileSteps') and scales the curvature errors by √target; it adds the refits to the
// counts of diag.
func (o *StarEnvObjective) profileIntervals(res *StarEnvResult, z []float64, diag *[2]profileDiag, lower, upper []float64, pathIter int, ftol, target float64) {
	n := len(o.Star)
	for j, e := range []struct {
		sigma    *float64
		interval *ProfileInterval
	}{{&res.F0Err, &res.F0Interval}, {&res.EnvIndexErr, &res.EnvIndexInterval}} {
		o.resetRefits()
		d := &diag[j]
		*e.interval = o.profileInterval(z, n+j, d.sigma, d.pf, target, lower, upper, pathIter, ftol)
		*e.sigma = d.sigma * math.Sqrt(target)
		d.refits += o.refits
		d.capped += o.capped
	}
}

// expectedChi2r returns the expected value of Σχ²/ΣN over the planes
// (Objective.ExpectedChi2r of each, weighted by its number of data).
func (o *StarEnvObjective) expectedChi2r() float64 {
	e, nn := 0.0, 0
	for _, obj := range o.Planes {
		if k := planeCount(obj); k > 0 {
			e += obj.ExpectedChi2r() * float64(k)
			nn += k
		}
	}
	if nn == 0 {
		return math.NaN()
	}
	return e / float64(nn)
}

// starEnvVerdict returns the warnings of a star + environment fit res whose final run is
// r, with diag the profiles of f0 and d, nData the number of data, maxIter the fit's
// iteration limit, pathIter the refits' and target the rise of the profile at 1σ.
func starEnvVerdict(res *StarEnvResult, r optim.Result, diag [2]profileDiag, nData, maxIter, pathIter int, target float64) []string {
	var w []string
	far := Chi2rFar(res.Chi2r, res.Chi2rTarget, nData)
	if far > 0 {
		w = append(w, fmt.Sprintf("χ²ᵣ = %.3g is %.2g times its expected value %.3g: the star + environment model does not fit the data; try another -star diameter or -star-index, a lower -weight, a larger -fov, or check the error bars", res.Chi2r, res.Chi2r/res.Chi2rTarget, res.Chi2rTarget))
	}
	// Far below: beyond 3 times the scatter √(2/N) of χ²ᵣ as well (as overfitWarning).
	if far < 0 {
		w = append(w, fmt.Sprintf("χ²ᵣ = %.3g is far below its expected value %.3g: the environment image may fit the noise; try a larger -weight", res.Chi2r, res.Chi2rTarget))
	}
	switch {
	case res.Converged:
	case r.Status == optim.IterationLimit:
		w = append(w, fmt.Sprintf("the star + environment fit stopped at its limit of %d iterations before converging; its values and errors are those of an unfinished fit; raise -iter", maxIter))
	case r.Status == optim.LineSearchFailure:
		w = append(w, fmt.Sprintf("the star + environment fit stalled after %d iterations (no step lowered the objective) before converging; try another -reg or -star diameter", res.Iter))
	default:
		w = append(w, fmt.Sprintf("the star + environment fit did not converge (%s)", r.Status))
	}
	if !res.Converged {
		return w // the errors are those of an unfinished fit, as the warning says
	}
	for j, d := range diag {
		name := starEnvParams[j]
		switch {
		case d.pf.Low != nil && d.pf.LowF < r.F-0.1*target:
			w = append(w, fmt.Sprintf("the fit is not at its minimum along %s: a refit of its profile reached an objective %.3g lower, and continuing the fit from there did not settle it; its value and errors are unreliable; try another -reg, -weight or -star-index", name, r.F-d.pf.LowF))
		case math.IsNaN(d.sigma) && d.pf.H > 0:
			w = append(w, fmt.Sprintf("the profile of %s has no positive curvature (the refits at ± %.3g rose by %.3g and %.3g): the fit is not at its minimum along it, or the refits are too loose to measure it; its errors are unreliable; try another -reg, -weight or -star-index", name, d.pf.H, d.pf.Down, d.pf.Up))
		}
		// Refits stopped at their limit cancel in the rises as far as they were falling at
		// the same pace; when their decreases over the last iterations differ by more than
		// a tenth of the rise that defines the errors, the rises were still moving by that
		// much (common practice, no source).
		if dr := d.drift(); d.capped > 0 && dr > 0.1*target {
			fall := fmt.Sprintf("their decreases over the last %d iterations differing by %.2g", ftolWindow, dr)
			if math.IsInf(dr, 1) {
				fall = "too few iterations to tell whether they converged"
			}
			try := "treat the errors as rough"
			if pathIter < DefaultPathIter {
				try = "raise -iter"
			}
			w = append(w, fmt.Sprintf("%d of the %d refits of the profile of %s stopped at their limit of %d iterations, %s: its errors are uncertain by that much in χ²; %s", d.capped, d.refits, name, pathIter, fall, try))
		}
	}
	return w
}

// ProfileInterval is the 1σ interval of a parameter from the profile of the objective, the
// parameter held at each value while everything else is refitted: Low and High are the
// distances from the fitted value down and up to where the profile has risen by Δ = 1
// above its minimum (Δχ² = 1 for one parameter of interest: Press et al. 2007, Numerical
// Recipes, 3rd ed., sect. 15.6, recalled from memory), Δ = χ²ᵣ when χ²ᵣ > 1, which
// scales the errors by √χ²ᵣ as the curvature errors are (common practice, no source).
// For a quadratic profile both equal the curvature error.
type ProfileInterval struct {
	Low, High float64
	// LowBound and HighBound say that the profile stays below Δ all the way to the
	// parameter's bound on that side (f0 in [0, 1], the index in [−20, 20]): the error is
	// then the distance to the bound, and the interval is open there (one-sided).
	LowBound, HighBound bool
}

// profileFit holds the refits of profileError's last step: the objective refitted at the
// value (F) and its rises at the value + H (Up) and − H (Down), with the decreases of
// these three refits over their last iterations (Tails, StarEnvObjective.lastTail); and
// the point of the lowest objective any of its refits reached (Low, nil when none
// finished) and that objective (LowF).
type profileFit struct {
	F, H, Up, Down float64
	Tails          [3]float64
	Low            []float64
	LowF           float64
}

// keep makes (f, x) the lowest refit of pf when it is lower than the one held.
func (pf *profileFit) keep(f float64, x []float64) {
	if x != nil && (pf.Low == nil || f < pf.LowF) {
		pf.Low, pf.LowF = x, f
	}
}

// profileInterval returns the interval of variable j from its profile at z: on each side,
// the step h at which the refitted objective (as profileError's, from z) has risen by
// target, found by profileCrossing from the steps that pf tried and, first, the curvature
// error sigma (profileError's, unscaled) times √target.
func (o *StarEnvObjective) profileInterval(z []float64, j int, sigma float64, pf profileFit, target float64, lower, upper []float64, maxIter int, ftol float64) ProfileInterval {
	var iv ProfileInterval
	for _, side := range []struct {
		dir       float64
		room      float64
		rise      float64
		err       *float64
		openBound *bool
	}{{-1, z[j] - lower[j], pf.Down, &iv.Low, &iv.LowBound}, {1, upper[j] - z[j], pf.Up, &iv.High, &iv.HighBound}} {
		rise := func(h float64) float64 {
			return o.refit(z, j, z[j]+side.dir*h, lower, upper, maxIter, ftol) - pf.F
		}
		*side.err, *side.openBound = profileCrossing(rise, target, side.room, sigma*math.Sqrt(target), [2]float64{pf.H, side.rise})
	}
	return iv
}

// profileCrossing returns the step h in (0, hmax] at which rise(h), the rise of a profile
// at a distance h from its minimum towards one side (rise(0) = 0), reaches target, and
// atBound = true with h = hmax when the rise stays below target up to hmax. known holds
// steps whose rises are known already (h, rise(h)); guess, when positive, is the step
// tried first (for profileInterval the curvature's). It is a bracketing root search of
// g(h) = √max(rise, 0) − √target, which is linear in h for a quadratic profile: the
// known points and the guess bracket the root, or the step grows from the largest one
// below it (5 % beyond the step at which a quadratic profile would reach target, 1.1 to 4
// times; from hmax/2 without any) until g ≥ 0 or the bound is reached; then the bracket
// shrinks by regula falsi in its Illinois form (Dowell & Jarratt 1971, BIT 11, 168,
// recalled from memory) until the rise is within 3 % of target (for a quadratic profile,
// the step within 1.5 %) or the bracket within 0.1 % of h; at most 16 evaluations of rise. NaN when a rise
// is not a number or no bracket is found. A near-quadratic profile with a good guess takes
// one evaluation.
func profileCrossing(rise func(h float64) float64, target, hmax, guess float64, known ...[2]float64) (h float64, atBound bool) {
	if !(hmax > 0) {
		return 0, true // the value sits on its bound
	}
	const tol = 0.03 // of target
	st := math.Sqrt(target)
	g := func(r float64) float64 { return math.Sqrt(math.Max(r, 0)) - st }
	a, ga, ra := 0.0, -st, 0.0 // the largest step below the root; rise(0) = 0
	b, gb := math.NaN(), 0.0   // the smallest step at or above it
	add := func(h, r float64) {
		if gh := g(r); gh < 0 {
			if h > a {
				a, ga, ra = h, gh, r
			}
		} else if math.IsNaN(b) || h < b {
			b, gb = h, gh
		}
	}
	close := func(r float64) bool { return math.Abs(r-target) <= tol*target }
	for _, k := range known {
		if k[0] > 0 && k[0] <= hmax && !math.IsNaN(k[1]) {
			if close(k[1]) {
				return k[0], false
			}
			add(k[0], k[1])
		}
	}
	evals := 0
	try := func(h float64) (float64, bool) {
		evals++
		r := rise(h)
		if math.IsNaN(r) {
			return r, false
		}
		add(h, r)
		return r, close(r)
	}
	if guess > 0 {
		guess = math.Min(guess, hmax)
		if guess > a && (math.IsNaN(b) || guess < b) {
			if r, done := try(guess); math.IsNaN(r) {
				return math.NaN(), false
			} else if done {
				return guess, false
			}
		}
	}
	for math.IsNaN(b) {
		if a >= hmax {
			return hmax, true
		}
		if evals >= 16 {
			return math.NaN(), false
		}
		next := hmax / 2
		if a > 0 {
			grow := 4.0
			if ra > 0 {
				grow = math.Min(math.Max(1.05*math.Sqrt(target/ra), 1.1), 4)
			}
			next = math.Min(a*grow, hmax)
		}
		if r, done := try(next); math.IsNaN(r) {
			return math.NaN(), false
		} else if done {
			return next, false
		}
	}
	side := 0
	for evals < 16 {
		c := (a*gb - b*ga) / (gb - ga)
		if !(c > a && c < b) {
			c = (a + b) / 2
		}
		evals++
		rc := rise(c)
		if math.IsNaN(rc) {
			return math.NaN(), false
		}
		if close(rc) || b-a <= 1e-3*c {
			return c, false
		}
		if gc := g(rc); gc >= 0 {
			b, gb = c, gc
			if side == 1 {
				ga /= 2
			}
			side = 1
		} else {
			a, ga = c, gc
			if side == -1 {
				gb /= 2
			}
			side = -1
		}
	}
	return (a*gb - b*ga) / (gb - ga), false
}

// refit minimises the objective from z with variable j held at value v (the other bounds
// as given) for at most maxIter iterations, stopping as SolveStarEnv does, and returns the
// objective reached.
func (o *StarEnvObjective) refit(z []float64, j int, v float64, lower, upper []float64, maxIter int, ftol float64) float64 {
	f, _ := o.refitX(z, j, v, lower, upper, maxIter, ftol)
	return f
}

// refitX is refit that also returns the point reached (nil with a NaN objective), and
// counts the refit in o.refits, o.capped and o.lastTail.
func (o *StarEnvObjective) refitX(z []float64, j int, v float64, lower, upper []float64, maxIter int, ftol float64) (float64, []float64) {
	lo, hi := slices.Clone(lower), slices.Clone(upper)
	lo[j], hi[j] = v, v
	x0 := slices.Clone(z)
	x0[j] = v
	var hist []float64
	st := optim.Settings{MaxIter: maxIter, FTol: -1, Memory: lbfgsMemory, Callback: func(it optim.Iter) bool {
		hist = append(hist, it.F)
		k := len(hist) - 1
		return !(k >= ftolWindow && hist[k-ftolWindow]-it.F <= ftol*ftolWindow*math.Max(math.Abs(it.F), 1))
	}}
	r, err := optim.Minimize(optim.Problem{Func: o.Eval, Lower: lo, Upper: hi}, x0, st)
	o.refits++
	o.lastTail = 0
	if err != nil || r.X == nil {
		return math.NaN(), nil
	}
	if r.Status == optim.IterationLimit {
		o.capped++
		tail := math.Inf(1) // too few iterations to tell
		if k := len(hist) - 1; k >= ftolWindow {
			tail = hist[k-ftolWindow] - hist[k]
		}
		o.lastTail = tail
	}
	return r.F, r.X
}

// resetRefits clears the counts of refitX.
func (o *StarEnvObjective) resetRefits() { o.refits, o.capped = 0, 0 }

// profileError returns the 1σ error of variable j from the profile of the objective at z
// (StarEnvResult.F0Err): the refits at z_j − h, z_j and z_j + h, all from z and for the
// same iterations, so that what they leave unconverged cancels in the second difference.
// The step starts at 10 times the fixed-image error sigma (at least hmin); when the
// profile rises by less than 0.1 (a fall of less than 0.1 included) or more than 20 over it
// (summed over both sides), it is rescaled once to a rise of about 2 (1σ each side; 10
// times larger after a fall): well above what the refits leave unconverged, and near
// enough for the quadratic form. Steps are kept within the bounds.
// The error is symmetric: a bound that becomes active within 1σ (a pixel of the
// environment reaching zero) makes the true interval one-sided, which it does not show;
// profileInterval does, from the refits returned in pf.
func (o *StarEnvObjective) profileError(z []float64, j int, sigma, hmin float64, lower, upper []float64, maxIter int, ftol float64) (float64, profileFit) {
	h := 10 * sigma
	if !(h > hmin) {
		h = hmin
	}
	f, x := o.refitX(z, j, z[j], lower, upper, maxIter, ftol)
	pf := profileFit{F: f, Up: math.NaN(), Down: math.NaN(), Tails: [3]float64{o.lastTail}}
	pf.keep(f, x)
	var curv float64
	for round := range 2 {
		h = math.Min(h, 0.999*math.Min(z[j]-lower[j], upper[j]-z[j]))
		if !(h > 0) {
			return math.NaN(), pf
		}
		fp, xp := o.refitX(z, j, z[j]+h, lower, upper, maxIter, ftol)
		pf.Tails[1] = o.lastTail
		fm, xm := o.refitX(z, j, z[j]-h, lower, upper, maxIter, ftol)
		pf.Tails[2] = o.lastTail
		pf.keep(fp, xp)
		pf.keep(fm, xm)
		pf.H, pf.Up, pf.Down = h, fp-pf.F, fm-pf.F
		rise := fp + fm - 2*pf.F
		curv = rise / (h * h)
		if round == 1 || (rise > 0.1 && rise < 20) || math.IsNaN(rise) || rise <= -0.1 {
			break
		}
		// A rise below 0.1, or a fall as small (within what the refits leave
		// unconverged), measures nothing: the step grows, 10 times after a fall.
		if rise > 0 {
			h *= math.Sqrt(2 / rise)
		} else {
			h *= 10
		}
	}
	if !(curv > 0) {
		return math.NaN(), pf
	}
	return math.Sqrt(2 / curv), pf
}

// chi2r returns Σχ²/ΣN over the planes at z.
func (o *StarEnvObjective) chi2r(z []float64) float64 {
	save := o.Mu
	o.Mu = 0
	o.Eval(nil, z)
	o.Mu = save
	return o.planesChi2r()
}

// planesChi2r returns Σχ²/ΣN over the planes at their last evaluation.
func (o *StarEnvObjective) planesChi2r() float64 {
	c, nn := 0.0, 0
	for _, obj := range o.Planes {
		for _, t := range typeList {
			if obj.Use()&t != 0 {
				c += obj.Chi2(t)
				nn += obj.N(t)
			}
		}
	}
	return c / float64(max(nn, 1))
}

// paramErrors returns the 1σ errors of f0 and d from the Hessian H of χ² in (f0, d) at z
// with the image fixed, by central differences of the analytic gradient: cov = 2·H⁻¹.
func (o *StarEnvObjective) paramErrors(z []float64) (ef0, ed float64) {
	n := len(o.Star)
	save := o.Mu
	o.Mu = 0
	defer func() { o.Mu = save }()
	zz := append([]float64(nil), z...)
	g := make([]float64, len(z))
	var H [2][2]float64
	for j := range 2 {
		h := 1e-4 * math.Max(math.Abs(z[n+j]), 0.1)
		zz[n+j] = z[n+j] + h
		o.Eval(g, zz)
		gp := [2]float64{g[n], g[n+1]}
		zz[n+j] = z[n+j] - h
		o.Eval(g, zz)
		zz[n+j] = z[n+j]
		for i := range 2 {
			H[i][j] = (gp[i] - g[n+i]) / (2 * h)
		}
	}
	H[0][1] = 0.5 * (H[0][1] + H[1][0])
	H[1][0] = H[0][1]
	det := H[0][0]*H[1][1] - H[0][1]*H[1][0]
	if !(det > 0) || !(H[0][0] > 0) {
		return math.NaN(), math.NaN()
	}
	return math.Sqrt(2 * H[1][1] / det), math.Sqrt(2 * H[0][0] / det)
}

// starImage returns the star's image of flux 1 on an n × n grid of the given pixel (rad):
// one pixel at the phase centre for diameter 0, else a uniform disc of that diameter, each
// pixel holding the share of 8 × 8 samples that fall inside it.
func starImage(n int, pixel, diameter float64) []float64 {
	img := make([]float64, n*n)
	if diameter <= 0 {
		img[(n/2)*n+n/2] = 1
		return img
	}
	const ss = 8
	sum := 0.0
	r2 := diameter * diameter / 4
	for iy := range n {
		for ix := range n {
			c := 0
			for a := range ss {
				for b := range ss {
					x := (float64(ix-n/2) + (float64(a)+0.5)/ss - 0.5) * pixel
					y := (float64(iy-n/2) + (float64(b)+0.5)/ss - 0.5) * pixel
					if x*x+y*y < r2 {
						c++
					}
				}
			}
			img[iy*n+ix] = float64(c)
			sum += float64(c)
		}
	}
	for i := range img {
		img[i] /= sum
	}
	return img
}
