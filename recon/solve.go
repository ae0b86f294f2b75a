package recon

import (
	"cmp"
	"errors"
	"fmt"
	"math"
	"slices"
	"sort"

	"vcz/dataset"
	"vcz/recon/optim"
	"vcz/regularizers"
)

// Regularizer is a penalty on the image to be minimised together with the data terms. Eval
// returns its value at x (row-major, x[iy*N+ix]) and, when grad is non-nil, overwrites grad
// with the gradient.
type Regularizer interface {
	Eval(grad, x []float64) float64
}

// RegularizerFunc builds the regularizer for a grid; Solve calls it for every grid it uses
// (the coarse grid of CoarseToFine as well).
type RegularizerFunc func(g Grid) (Regularizer, error)

// Problem is a reconstruction problem: data, grid, data terms, regularizer and start.
type Problem struct {
	Data *dataset.Data
	// Grid, when N > 0, is the grid; otherwise ChooseGrid(Data, GridOptions) picks it.
	Grid        Grid
	GridOptions GridOptions
	// Choice, when non-nil, is the grid with the reasons for it, as ChooseGrid gave it for
	// these data (a workflow that chose one grid for several runs); it takes precedence
	// over Grid and GridOptions, and Result.Grid is it.
	Choice *GridChoice
	Terms  TermOptions
	// Reg is the regularizer; nil means none.
	Reg RegularizerFunc
	// Weight is the regularization weight μ in J(x) + μ·R(x). Zero with Reg set means
	// automatic (chosen from the data; see chooseWeight).
	Weight float64
	// Support, when positive, holds the pixels farther than Support radians from the
	// centre at zero.
	Support float64
	Start   Start
	// Transform makes the transform; nil means NewTransform(Settings.Workers).
	Transform TransformFunc
	// Unnormalized fits Σ x exp(−2πi(u·x+v·y)) without division by the flux, for complex
	// visibilities of known flux; the image is then neither normalised nor tied to flux 1.
	Unnormalized bool
	// Smearing says whether the model averages each visibility over its channel's band
	// (smear.go); the zero value, SmearAuto, does where the smearing exceeds the noise.
	Smearing Smearing
}

// Settings control Solve. The zero value gives the documented defaults.
type Settings struct {
	// MaxIter is the iteration limit of the final reconstruction; 0 means DefaultMaxIter.
	MaxIter int
	// PathIter is the iteration limit of each step of the weight search and of the first
	// passes (amplitudes, smoothed phases); 0 means DefaultPathIter.
	PathIter int
	// FTol stops a run when the objective decreased by less than FTol·max(|f|, 1) per
	// iteration on average over the last 10 iterations and a restart without curvature
	// memory confirms it; 0 means DefaultFTol.
	FTol float64
	// PGTol is the projected-gradient norm that stops a run; 0 means the optim default.
	PGTol float64
	// Seed drives every random choice (random starts); the same seed gives the same image.
	Seed uint64
	// Starts is the number of starts at the final weight: the given start and Starts−1
	// seeded random images; the lowest objective is kept. 0 means 1, and 1 + RescueStarts
	// when that start fits worse than the noise allows (χ²ᵣ above the larger of its
	// expected value and the weight search's aim by more than twice its scatter √(2/N)).
	// Why one start by default: see the package's design notes.
	Starts int
	// CoarseToFine first reconstructs on a grid of half the pixels (rounded up to an even
	// number) over the same field (with the same settings, automatic weight included) and
	// starts the full grid from its resampled image. Grids under 32 pixels ignore it. Off
	// by default (design notes).
	CoarseToFine bool
	// NoAmplitudeFirst turns off the first pass on amplitude data (V², T3 and VIS
	// amplitudes) that precedes fitting the phases. The pass runs by default when the start
	// is a smooth blob (a Gaussian, also when StartAuto picks one, or the flat disc) and the
	// data have both amplitudes and phases (design notes).
	NoAmplitudeFirst bool
	// WeightSteps is the largest number of weights tried by the automatic choice; 0 means 14.
	WeightSteps int
	// PhaseSmoothing is the smoothing of the phase terms in the first pass and the weight
	// search (Objective.SetPhaseSmoothing); 0 means DefaultPhaseSmoothing, negative means the
	// exact terms throughout. The final run always fits the exact terms.
	PhaseSmoothing float64
	// Workers is passed to the default transform, and is the largest number of planes that
	// the sweeps of SolveCube fit at once (each then with its transform on one goroutine);
	// 0 means GOMAXPROCS. Results do not depend on it.
	Workers int
	// Progress, when non-nil, is called after every accepted iteration; false stops Solve.
	Progress func(Progress) bool
}

// WeightStage is the Stage of the k-th run (from 1) of the automatic weight choice, which
// makes at most steps runs (Settings.WeightSteps) and often stops sooner: "weight k (≤K)",
// so that a search that ends before K does not read as cut short.
func WeightStage(k, steps int) string { return fmt.Sprintf("weight %d (≤%d)", k, steps) }

// Progress describes the state after an iteration, for a progress display.
type Progress struct {
	// Stage is "amplitudes", "smoothed phases", "smoothed, turned" (the amplitude image
	// turned by 180°), WeightStage(k, K), "final", "start k/K" or "coarse".
	Stage     string
	Weight    float64 // regularization weight of the run
	Iter      int     // iteration of the run
	Objective float64
	Chi2r     float64 // total χ²ᵣ at the last evaluation
	// Types holds χ²ᵣ of each data type fitted in this run at the last evaluation, in the
	// order of DataTypes(). The slice is reused by the next call: copy it to keep it.
	Types []TermChi2
}

// TermChi2 is the χ² of one data type.
type TermChi2 struct {
	Type   dataset.DataType
	N      int
	Weight float64
	Chi2   float64
	Chi2r  float64 // Chi2/N
}

// WeightStep is one point of the weight search.
type WeightStep struct {
	Weight float64 // μ
	Chi2r  float64 // total χ²ᵣ at the end of the run
	Reg    float64 // R(x)
	Iter   int
	// Converged: the run ended by a convergence test, not at PathIter. Stalled: it moved
	// nothing (see Result.Warnings); a stalled step is neither used nor continued from.
	Converged, Stalled bool
}

// Result is the outcome of Solve.
type Result struct {
	Image []float64 // N² pixels, normalised to a total flux of 1 (unless Unnormalized)
	Grid  GridChoice
	// Smearing is the problem's bandwidth-smearing setting, for predictions of the image
	// at the data (PredictWith).
	Smearing Smearing

	Chi2  []TermChi2 // per used data type, in the order of dataset.DataTypes()
	Chi2r float64    // Σχ²/ΣN over the used types
	// Chi2rTarget is the expectation of Chi2r for data about the true model (ExpectedChi2r),
	// the target of the automatic weight.
	Chi2rTarget float64
	// Chi2rFloor and Chi2rAim are, for an automatic weight, the χ²ᵣ of the least-regularized
	// images and the χ²ᵣ the weight search aimed at (see chooseWeight); 0 otherwise.
	Chi2rFloor, Chi2rAim float64
	Reg                  float64 // R(x) of the final image (0 without regularizer)
	Weight               float64 // μ used in the final run
	Objective            float64 // J + μR (+ the flux term)
	FluxScale            float64 // scale of correlated-flux amplitudes, 0 without them

	Iter, Evals int          // of the final run
	Converged   bool         // the final run converged (Settings.FTol, confirmed, or optim's gradient test)
	TotalIter   int          // of all runs
	Status      optim.Status // of the final run, as optim reports it
	// StopReason says in words why the final run stopped: the relative-change test of
	// Settings.FTol (which optim reports as CallbackStop), or optim's Status.
	StopReason string
	Path       []WeightStep // the automatic weight search, empty for a given weight
	// Shift is the whole-pixel move (along the x and y indices) that put the centroid of the
	// image at the centre before the final run (recentre); zero when it was not moved.
	Shift [2]int
	// StartObjectives holds the final objective of every start when Starts > 1, the kept one
	// first; their spread says how much the start matters.
	StartObjectives []float64
	Notices         []string
	// Warnings is the quality verdict: one sentence for each reason to doubt the result
	// (χ²ᵣ well above its expected value, a stalled run or one stopped at its iteration limit
	// with the objective still falling, a weight at the edge of the searched range, starts
	// that disagree, one data type fitted far worse than the others), each saying what to
	// try. Empty when none applies. The image is returned all the same.
	Warnings []string
}

// ErrStopped is returned by Solve when Settings.Progress asked it to stop.
var ErrStopped = errors.New("recon: stopped by the progress callback")

// noFluxObjective is the objective of an image without flux (see engine.f).
const noFluxObjective = 1e300

// tailWindow is the number of final iterations over which a run that hit its iteration
// limit reports the decrease of its objective.
const tailWindow = 50

// ftolWindow is the number of iterations over which the relative objective change is
// measured for Settings.FTol.
const ftolWindow = 10

// Defaults of Settings.
const (
	DefaultMaxIter     = 1000
	DefaultPathIter    = 200
	DefaultFTol        = 1e-7
	DefaultWeightSteps = 14
)

// engine is a reconstruction on one grid.
type engine struct {
	p       Problem
	s       Settings
	grid    GridChoice
	obj     *Objective
	reg     Regularizer
	rgrad   []float64
	xn      []float64 // the normalised image x/Σx
	lower   []float64
	upper   []float64
	rho     float64 // weight of the flux term ρ(Σx − 1)²
	total   int     // iterations of all runs
	stopped bool    // Progress asked to stop
	// curv, when non-nil, is the curvature memory that run resumes from and leaves its own
	// in (SolveCube's sweeps); nil starts every run without memory.
	curv *optim.State
	// single, when set, ends a run at the relative-change test without the restarts that
	// confirm it (SolveCube, whose test across sweeps stands in for them).
	single bool
	// data is the value of the data terms at the last evaluation of the objective, dataOK
	// whether that evaluation reached them (SolveCube reuses it at a run's end).
	data   float64
	dataOK bool
}

func newEngine(p Problem, s Settings, g GridChoice) (*engine, error) {
	mk := p.Transform
	if mk == nil {
		mk = NewTransform(s.Workers)
	}
	m, err := NewForwardModelWith(p.Data, g.Grid, !p.Unnormalized, mk, ModelOptions{Smearing: p.Smearing})
	if err != nil {
		return nil, err
	}
	e := &engine{p: p, s: s, grid: g, obj: NewObjective(p.Data, m, p.Terms)}
	if e.obj.Use() == 0 {
		return nil, errors.New("recon: no data of the selected types to fit")
	}
	if p.Reg != nil {
		if e.reg, err = p.Reg(g.Grid); err != nil {
			return nil, fmt.Errorf("recon: regularizer: %w", err)
		}
	}
	n := g.N
	e.rgrad = make([]float64, n*n)
	e.xn = make([]float64, n*n)
	e.lower = make([]float64, n*n)
	if p.Support > 0 {
		_, e.upper = regularizers.SupportBounds(n, n, g.Pixel, p.Support)
	}
	if !p.Unnormalized {
		// Nothing else depends on the flux: the flux term fixes it at 1, with a weight of
		// the size of the data χ² so that it is well scaled against the rest.
		e.rho = float64(max(p.Data.Len(e.obj.Use()), 1))
	}
	return e, nil
}

// f is the total objective J(x/F) + μ·R(x/F) + ρ(F − 1)² with F = Σx; one Forward and one
// Adjoint. The data terms see the normalised image through the model; the regularizer is
// evaluated on the normalised image too, so that neither depends on the flux and a
// regularizer that grows with the flux cannot shrink the image. The flux term then only fixes
// the otherwise free scale. Without normalisation it is J(x) + μ·R(x).
func (e *engine) f(mu float64) func(grad, x []float64) float64 {
	return func(grad, x []float64) float64 {
		fl := 1.0
		e.dataOK = false
		if e.rho > 0 {
			// The flux, summed in the pass that gives the model its image (eval).
			fl = e.obj.m.shift(x)
			if !(fl > 0) {
				// A trial point of the line search with every pixel at its lower bound has no
				// normalised image. It gets a huge finite objective, so the search steps
				// back, and a gradient towards more flux.
				for i := range grad {
					grad[i] = -2 * e.rho
				}
				return noFluxObjective
			}
		}
		// The regularizer and the flux term come first, so that their gradients are added in
		// the pass that writes the data terms' gradient (ForwardModel.gradient).
		var ex gradExtra
		r := 0.0
		useReg := e.reg != nil && mu != 0
		if useReg {
			var rg []float64
			if grad != nil {
				rg = e.rgrad
			}
			xn := x
			if e.rho > 0 {
				xn = e.xn
				divide(xn, x, fl)
			}
			if dr, ok := e.reg.(dotRegularizer); ok && grad != nil && e.rho > 0 {
				var c float64
				r, c = dr.evalDot(rg, xn)
				ex.s, ex.c, ex.r = mu/fl, c, rg
			} else {
				r = e.reg.Eval(rg, xn)
				if grad != nil {
					// ∂R(x/F)/∂x_p = (g_p − Σ_q g_q x_q/F)/F.
					c := 0.0
					if e.rho > 0 {
						for i, g := range rg {
							c += g * xn[i]
						}
					}
					ex.s, ex.c, ex.r = mu/fl, c, rg
				}
			}
		}
		df := fl - 1
		if e.rho > 0 {
			ex.add = 2 * e.rho * df
		}
		var v float64
		if e.rho > 0 {
			v = e.obj.eval(grad, fl, &ex)
			e.data, e.dataOK = v, true
		} else {
			v = e.obj.Eval(grad, x) // the flux is not summed above
			if grad != nil && ex.r != nil {
				for i := range grad {
					grad[i] += ex.s * (ex.r[i] - ex.c)
				}
			}
		}
		if useReg {
			v += mu * r
		}
		if e.rho > 0 {
			v += e.rho * df * df
		}
		return v
	}
}

// dotRegularizer is a regularizer that returns with its value and gradient the sum
// Σ_i grad_i·x_i that the engine's objective needs, summed in the order of the pixels as the
// engine sums it, so the same bits, in the pass that writes the gradient (planeReg).
type dotRegularizer interface {
	evalDot(grad, x []float64) (v, dot float64)
}

// runOut is the outcome of one minimisation at a fixed weight.
type runOut struct {
	optim.Result
	// Converged: the run met the relative-change test, confirmed by a restart without
	// curvature memory, or optim's projected-gradient test.
	Converged bool
	// Stalled: the run ended, not at its iteration limit nor by the projected-gradient test,
	// having lowered the objective by less than stallDecrease relative: its steps were too
	// small to move the image (a stiff objective, or a quasi-Newton scale collapsed).
	Stalled bool
	// Tail is the relative decrease of the objective over the last tailWindow iterations,
	// NaN after fewer.
	Tail float64
	// Hist is the objective after each iteration.
	Hist []float64
}

// stallDecrease is the relative decrease of the objective below which a run that ended
// early moved nothing (common practice, no source).
const stallDecrease = 1e-6

// maxRestarts is the number of times a run that met the relative-change test is restarted
// without curvature memory to confirm it (common practice, no source).
const maxRestarts = 3

// run minimises from x0 at weight mu with the used types and the iteration limit given. Every
// run starts without curvature memory, unless e.curv holds some (SolveCube): a scale carried
// over from another weight or data term can be wrong by orders of magnitude (measured: a
// scale collapsed to 10⁻²⁰ near model nulls froze every following run of a weight search).
// The relative-change test (FTol over ftolWindow iterations) can be met by a quasi-Newton
// method creeping with tiny steps, so a run that meets it is restarted from where it is with
// fresh memory, whose first step moves the image by a few per cent; it has converged when the
// restarted run gains nothing either (unless e.single: then it ends at the test).
func (e *engine) run(x0 []float64, mu float64, use dataset.DataType, maxIter int, stage string) (runOut, error) {
	prev := e.obj.Use()
	e.obj.SetUse(use)
	defer e.obj.SetUse(prev)
	ftol := e.s.FTol
	if ftol == 0 {
		ftol = DefaultFTol
	}
	// The objective at the start is the value of optim's first evaluation, which is at x0
	// when x0 is within the bounds (optim projects it first), as every start of the engine
	// is: not a separate evaluation without gradient. The value does not depend on whether
	// the gradient is asked for.
	obj := e.f(mu)
	f0, first := math.NaN(), feasible(x0, e.lower, e.upper)
	f := obj
	if first {
		f = func(grad, x []float64) float64 {
			v := obj(grad, x)
			if first {
				f0, first = v, false
			}
			return v
		}
	} else {
		f0 = obj(nil, x0)
	}
	hist := make([]float64, 0, maxIter+1)
	var types []TermChi2
	var segStart int   // index in hist where the current segment starts
	var windowHit bool // the current segment met the relative-change test
	st := optim.Settings{FTol: -1, PGTol: e.s.PGTol, Memory: lbfgsMemory, Resume: e.curv}
	st.Callback = func(it optim.Iter) bool {
		hist = append(hist, it.F)
		if e.s.Progress != nil {
			types = types[:0]
			for i, t := range typeList {
				if use&t != 0 {
					types = append(types, TermChi2{Type: t, N: e.obj.N(t), Weight: e.obj.w[i], Chi2: e.obj.Chi2(t), Chi2r: e.obj.Chi2r(t)})
				}
			}
			if !e.s.Progress(Progress{Stage: stage, Weight: mu, Iter: len(hist), Objective: it.F, Chi2r: e.obj.TotalChi2r(), Types: types}) {
				e.stopped = true
				return false
			}
		}
		if k := len(hist) - 1; k-segStart >= ftolWindow {
			old := hist[k-ftolWindow]
			if old-it.F <= ftol*ftolWindow*math.Max(math.Abs(it.F), 1) {
				windowHit = true
				return false
			}
		}
		return true
	}
	x := x0
	var out runOut
	out.F = f0 // NaN until the first evaluation, where x0 is feasible; first read after it
	restarts := 0
	var stuck *runOut // the end of the run before an escape
	for {
		st.MaxIter = maxIter - len(hist)
		if st.MaxIter <= 0 {
			break
		}
		segStart, windowHit = len(hist), false
		fseg := out.F
		res, err := optim.Minimize(optim.Problem{Func: f, Lower: e.lower, Upper: e.upper}, x, st)
		e.total += res.Iter
		if res.X != nil {
			out.Result = res
			x = res.X
		}
		if e.stopped && err == nil {
			return out, ErrStopped
		}
		if err != nil {
			where := e.obj.Problem()
			if where == "" {
				where = "regularizer or flux term"
			}
			return out, fmt.Errorf("recon: %s (weight %g): %s: %w", stage, mu, where, err)
		}
		if res.Status == optim.GradientConvergence {
			out.Converged = true
			break
		}
		if res.Status == optim.IterationLimit || !(windowHit || res.Status == optim.LineSearchFailure) {
			break
		}
		if windowHit && e.single {
			out.Converged = true
			break
		}
		// Met the relative-change test or found no step: restart with fresh memory, unless a
		// restart already gained nothing.
		// A fresh start that finds no step at all, or gains nothing, is at a minimum to the
		// precision of the objective.
		gained := fseg - res.F
		if restarts > 0 && gained <= ftol*ftolWindow*math.Max(math.Abs(res.F), 1) {
			if res.Status == optim.LineSearchFailure && stuck == nil {
				// No step from a fresh start either: a minimum, or a point where a model
				// bispectrum or visibility is almost zero and the exact phase terms jump
				// (escape). Try to leave it once; the better of the two ends is kept.
				xe, err := e.escape(x, mu, use)
				if err != nil {
					return out, err
				}
				if xe != nil {
					stuck = &runOut{Result: out.Result}
					x, out.F = xe, f(nil, xe)
					restarts = 0
					e.curv.Reset()
					continue
				}
			}
			out.Converged = true
			break
		}
		if restarts == maxRestarts {
			out.Converged = windowHit
			break
		}
		restarts++
		e.curv.Reset()
	}
	if first {
		// No run of optim (no iterations left): evaluate the start here.
		f0, first = obj(nil, x0), false
		out.F = f0
	}
	if stuck != nil && !(out.F < stuck.F) {
		// The end before the escape is kept; the objective was evaluated elsewhere since.
		out.Result, out.Converged = stuck.Result, true
		out.LastAtX = false
	}
	out.Iter, out.Hist = len(hist), hist
	out.Tail = math.NaN()
	if k := len(hist) - 1; k >= tailWindow {
		out.Tail = (hist[k-tailWindow] - hist[k]) / math.Max(math.Abs(hist[k]), 1)
	}
	if out.X == nil {
		out.X = append([]float64(nil), x0...)
	}
	out.Stalled = out.Status != optim.IterationLimit && out.Status != optim.GradientConvergence &&
		!((f0 - out.F) > stallDecrease*math.Max(math.Abs(f0), 1))
	return out, nil
}

// escapeIter is the largest number of iterations of an escape run (common practice, no
// source).
const escapeIter = 50

// escape moves x off a point where the exact phase terms stop the optimizer: where a model
// bispectrum (or visibility) is almost zero, its phase jumps under any step and the
// gradient of 2(1 − cos φ)/σ² grows as 1/|b|, so every trial step of the line search raises
// the objective while the point is no minimum. A run stuck there reported convergence with
// no iteration, and in SolveCube a plane stayed at its first sweep's image through every
// later sweep and weight. escape runs up to escapeIter iterations with the smoothed phase
// terms (SetPhaseSmoothing, the smoothing of the first pass), which have no such jump, and
// returns their end; nil when the run fits no phases, already smooths them, sees no model
// visibility near zero (nearNull: the point is a minimum to the precision of the objective,
// which a line search may also fail to leave), or moved nothing.
func (e *engine) escape(x []float64, mu float64, use dataset.DataType) ([]float64, error) {
	sm := e.s.PhaseSmoothing
	if sm == 0 {
		sm = DefaultPhaseSmoothing
	}
	if use&(dataset.T3Phi|dataset.VisPhi) == 0 || e.obj.PhaseSmoothing() != 0 || !(sm > 0) || !e.nearNull(x, mu) {
		return nil, nil
	}
	e.obj.SetPhaseSmoothing(sm)
	defer e.obj.SetPhaseSmoothing(0)
	st := optim.Settings{FTol: -1, PGTol: e.s.PGTol, Memory: lbfgsMemory, MaxIter: escapeIter}
	res, err := optim.Minimize(optim.Problem{Func: e.f(mu), Lower: e.lower, Upper: e.upper}, x, st)
	e.total += res.Iter
	if err != nil {
		return nil, err
	}
	if res.Iter == 0 {
		return nil, nil
	}
	return res.X, nil
}

// nullRatio is the ratio of the smallest to the largest model visibility that phase data see
// below which escape takes a point for a null (common practice, no source). Measured: the
// points where runs stuck had ratios of 10⁻¹¹ to 10⁻¹³ (TestCubeGrowingDisc and the cube of a
// chromatic disc + Gaussian), and the line-search failures at minima in TestSolveWorkers 0.3,
// where the escape gained nothing and cost 28 of 263 iterations.
const nullRatio = 1e-6

// nearNull evaluates the objective at x and reports whether a closure-phase triangle or a
// visibility phase sees a model visibility below nullRatio times the largest they see.
func (e *engine) nearNull(x []float64, mu float64) bool {
	e.f(mu)(nil, x)
	m := e.obj.m
	lo, hi := math.Inf(1), 0.0
	see := func(r ref) {
		v := m.vis[r.i]
		a := real(v)*real(v) + imag(v)*imag(v)
		lo, hi = min(lo, a), max(hi, a)
	}
	for _, t := range m.t3 {
		see(t[0])
		see(t[1])
		see(t[2])
	}
	for _, r := range m.cvis {
		see(r)
	}
	return lo < nullRatio*nullRatio*hi
}

// feasible reports whether lower[i] <= x[i] <= upper[i] for every i; nil bounds hold
// nothing.
func feasible(x, lower, upper []float64) bool {
	for i, v := range x {
		if (lower != nil && v < lower[i]) || (upper != nil && v > upper[i]) {
			return false
		}
	}
	return true
}

// measure evaluates the objective at x and returns total χ²ᵣ and R(x).
func (e *engine) measure(x []float64, mu float64) (chi2r, reg float64) {
	e.f(mu)(nil, x)
	if e.reg != nil {
		reg = e.reg.Eval(nil, x)
	}
	return e.obj.TotalChi2r(), reg
}

// amplitudeTypes are the data types that do not depend on the position of the object.
const amplitudeTypes = dataset.Vis2 | dataset.T3Amp | dataset.VisAmp

// Solve reconstructs an image. The steps: choose the grid (unless given); make the start
// image; with CoarseToFine, reconstruct on the half grid first and start from its upsampled
// image; fit the amplitude data alone (unless NoAmplitudeFirst or the data lack either kind);
// choose the weight from the χ²ᵣ it gives when it is automatic; run the final
// reconstruction (with Starts > 1 from several starts, keeping the lowest objective). The
// image is normalised to flux 1. Non-finite values stop Solve with an error saying where.
func Solve(p Problem, s Settings) (*Result, error) {
	if p.Data == nil {
		return nil, errors.New("recon: no data")
	}
	if len(p.Data.Targets) > 1 {
		return nil, fmt.Errorf("recon: the data hold %d targets (%v); select one", len(p.Data.Targets), p.Data.Targets)
	}
	if s.MaxIter <= 0 {
		s.MaxIter = DefaultMaxIter
	}
	if s.PathIter <= 0 {
		s.PathIter = DefaultPathIter
	}
	if s.WeightSteps <= 0 {
		s.WeightSteps = DefaultWeightSteps
	}
	var g GridChoice
	var err error
	if p.Choice != nil {
		g = *p.Choice
		p.Grid = g.Grid
	} else if p.Grid.N > 0 {
		g = GridChoice{Grid: p.Grid, FOV: float64(p.Grid.N) * p.Grid.Pixel}
		geo := p.Data.Summarize()
		g.Resolution, g.LargestScale = geo.Resolution, geo.LargestScale
		if model, size, ok := fitSize(p.Data); ok {
			g.SizeModel, g.Size = model, size
		}
		g.Reasons = []string{"grid given"}
	} else if g, err = ChooseGrid(p.Data, p.GridOptions); err != nil {
		return nil, err
	}
	if p.Grid.N%2 != 0 {
		return nil, fmt.Errorf("recon: grid size %d must be even", p.Grid.N)
	}
	x0, err := StartImageFor(p.Start, g.Grid, g, s.Seed)
	if err != nil {
		return nil, err
	}
	res := &Result{Grid: g, Smearing: p.Smearing}
	if s.CoarseToFine && g.N >= 32 {
		cp := p
		// Half the pixels, rounded up to an even number, over the same field.
		nh := (g.N/2 + 1) &^ 1
		cp.Grid, cp.Choice = Grid{N: nh, Pixel: float64(g.N) * g.Pixel / float64(nh)}, nil
		cp.Support = p.Support
		cs := s
		cs.CoarseToFine, cs.Starts = false, 1
		cr, err := Solve(cp, cs)
		if err != nil {
			return nil, fmt.Errorf("recon: coarse grid: %w", err)
		}
		Resample(x0, g.N, g.Pixel, cr.Image, cp.Grid.N, cp.Grid.Pixel)
		res.TotalIter += cr.TotalIter
		res.Notices = append(res.Notices, fmt.Sprintf("started from a %d × %d reconstruction (%d iterations)", cp.Grid.N, cp.Grid.N, cr.TotalIter))
		p.Start = Start{Kind: StartImage}
	}
	e, err := newEngine(p, s, g)
	if err != nil {
		return nil, err
	}
	res.Notices = append(res.Notices, e.obj.Notices()...)
	if n := e.obj.m.Smearing().Notice(len(e.obj.m.U)); n != "" {
		res.Notices = append(res.Notices, n)
	}
	use := e.obj.Use()
	mu := p.Weight
	if e.reg == nil {
		mu = 0
	}
	auto := e.reg != nil && mu == 0
	if auto {
		mu = e.initialWeight(x0)
	}
	// The first pass and the weight search fit smoothed phase terms, the final runs the
	// exact ones (Objective.SetPhaseSmoothing).
	smoothing := s.PhaseSmoothing
	if smoothing == 0 {
		smoothing = DefaultPhaseSmoothing
	}
	if smoothing < 0 {
		smoothing = 0
	}
	e.obj.SetPhaseSmoothing(smoothing)
	var first *runOut // the smoothed-phase run at mu from x0, when done
	ampFirst := !s.NoAmplitudeFirst && use&amplitudeTypes != 0 && use&(dataset.T3Phi|dataset.VisPhi) != 0
	if ampFirst && !s.CoarseToFine && smoothStart(p.Start, g) {
		r, err := e.run(x0, mu, use&amplitudeTypes, s.PathIter, "amplitudes")
		if err != nil {
			return nil, err
		}
		x0 = r.X
		// The amplitudes fix the image only up to a turn by 180°, which changes the sign
		// of every closure phase. Where the phases are few or noisy, the phase fit does
		// not turn the image over by itself: fit the smoothed phases from both
		// orientations and go on from the lower objective.
		// The run from the chosen orientation is the first step of the weight search, or
		// the smoothed-phase run at a given weight.
		if use&dataset.T3Phi != 0 {
			a, err := e.run(x0, mu, use, s.PathIter, "smoothed phases")
			if err != nil {
				return nil, err
			}
			// The turned image runs a quarter of the iterations and is compared with the
			// given one after as many; when it is lower by more than the scatter of χ²
			// (τ√(2N): a smaller difference says nothing of the orientation), it runs on to
			// the full count.
			rot := reflect(x0, g.N)
			b, err := e.run(rot, mu, use, max(s.PathIter/4, 1), "smoothed, turned")
			if err != nil {
				return nil, err
			}
			first = &a
			fa := a.F
			if k := b.Iter; k > 0 && k <= len(a.Hist) {
				fa = a.Hist[k-1]
			}
			if n := float64(e.p.Data.Len(use)); b.F < fa-e.chi2rScatter()*n {
				b2, err := e.run(b.X, mu, use, s.PathIter-b.Iter, "smoothed, turned")
				if err != nil {
					return nil, err
				}
				// One run in two segments: it stalled only if neither moved the image.
				b2.Iter += b.Iter
				b2.Stalled = b2.Stalled && b.Stalled
				x0, first = rot, &b2
				res.Notices = append(res.Notices, fmt.Sprintf("the amplitude fit turned by 180° fitted the phases better (objective %.6g against %.6g after %d iterations): went on from it", b.F, fa, b.Iter))
			}
		}
	}
	var edge string
	var ws weightSearch
	if !auto && first != nil {
		x0 = first.X
	} else if !auto && smoothing > 0 && use&(dataset.T3Phi|dataset.VisPhi) != 0 {
		// The exact phase terms are stiff where the model amplitudes pass near zero: fit
		// the smoothed ones first, as the weight search does (measured: from the amplitude
		// pass straight to the exact terms, a fixed-weight binary stopped at χ²ᵣ = 253).
		r, err := e.run(x0, mu, use, s.PathIter, "smoothed phases")
		if err != nil {
			return nil, err
		}
		x0 = r.X
	}
	if auto {
		ws, err = e.chooseWeight(x0, mu, first)
		res.Path = ws.path
		if err != nil {
			return nil, err
		}
		x0, mu, edge = ws.image, ws.weight, ws.edge
		res.Chi2rFloor, res.Chi2rAim = ws.floor, ws.target
	}
	e.obj.SetPhaseSmoothing(0)
	if positionFree(p, use) {
		x0 = append([]float64(nil), x0...)
		if sh := recentre(x0, g.N); sh != [2]int{} {
			res.Shift = sh
			res.Notices = append(res.Notices, fmt.Sprintf("image moved by (%d, %d) pixels before the final run to put its centroid at the centre: V² and closure phases do not fix the position", sh[0], sh[1]))
		}
	}
	starts := max(s.Starts, 1) // one start unless asked: see Settings.Starts
	rescue := s.Starts <= 0    // rescue starts when the one start fits badly
	var best runOut
	for k := 0; k < starts; k++ {
		xs := x0
		stage := "final"
		if starts > 1 {
			stage = fmt.Sprintf("start %d/%d", k+1, starts)
		}
		if k > 0 {
			xs, err = StartImageFor(Start{Kind: StartRandom}, g.Grid, g, s.Seed+uint64(k))
			if err != nil {
				return nil, err
			}
			// A random start fits the smoothed phase terms first, like the given start
			// in the weight search.
			e.obj.SetPhaseSmoothing(smoothing)
			r, err := e.run(xs, mu, use, s.PathIter, stage+" smoothed")
			e.obj.SetPhaseSmoothing(0)
			if err != nil {
				return nil, err
			}
			xs = r.X
		}
		r, err := e.run(xs, mu, use, s.MaxIter, stage)
		if err != nil {
			return nil, err
		}
		if starts > 1 {
			res.StartObjectives = append(res.StartObjectives, r.F)
		}
		if k == 0 || r.F < best.F {
			best = r
		}
		if rescue && k == starts-1 {
			// One start that fits worse than the noise allows, by more than twice the
			// scatter of χ²ᵣ above the expected χ²ᵣ or the weight search's aim, sits in a
			// wrong minimum: try RescueStarts seeded random starts as well and keep the
			// lowest objective.
			rescue = false
			lim := math.Max(e.obj.ExpectedChi2r(), ws.target) + 2*e.chi2rScatter()
			if c := e.chi2rOf(best.X, mu); c > lim {
				res.Notices = append(res.Notices, fmt.Sprintf("the start fitted at χ²ᵣ %.3g, above the %.3g that the noise allows: %d random starts tried as well", c, lim, RescueStarts))
				res.StartObjectives = append(res.StartObjectives, best.F)
				starts += RescueStarts
			}
		}
	}
	if r, ok, err := e.tryReflection(best, mu, use, s.MaxIter); err != nil {
		return nil, err
	} else if ok {
		res.Notices = append(res.Notices, fmt.Sprintf("the image turned by 180° fitted better (objective %.6g against %.6g): kept it, refitted", r.F, best.F))
		best = r
	}
	if len(res.StartObjectives) > 1 {
		// Put the kept objective first.
		for i, f := range res.StartObjectives {
			if f == best.F {
				res.StartObjectives[0], res.StartObjectives[i] = res.StartObjectives[i], res.StartObjectives[0]
				break
			}
		}
	}
	if auto && s.Starts <= 1 && ws.target > 0 {
		// The runs of the weight search stop after PathIter iterations, before χ²ᵣ has
		// settled (it still falls by about 1 % over a thousand iterations with total
		// variation), so the final run at the chosen weight often fits better than its
		// search run did. One correction of log μ along the slope of the search path brings
		// χ²ᵣ back to the target; it is kept when it lands nearer.
		if c := e.chi2rOf(best.X, mu); math.Abs(c-ws.target) > ws.tol() {
			if slope := ws.slope(mu); slope > 0 {
				dl := math.Max(-math.Ln10, math.Min(math.Ln10, (ws.target-c)/slope))
				mu2 := mu * math.Exp(dl)
				r, err := e.run(best.X, mu2, use, s.MaxIter, "final, corrected weight")
				if err != nil {
					return nil, err
				}
				c2, reg := e.measure(r.X, mu2)
				res.Path = append(res.Path, WeightStep{Weight: mu2, Chi2r: c2, Reg: reg, Iter: r.Iter, Converged: r.Converged, Stalled: r.Stalled})
				if !r.Stalled && math.Abs(c2-ws.target) < math.Abs(c-ws.target) {
					best, mu = r, mu2
				}
			}
		}
	}
	bestConv, bestTail := best.Converged, best.Tail
	x := best.X
	res.Objective = e.f(mu)(nil, x)
	if !finite(res.Objective) {
		return nil, fmt.Errorf("recon: final objective is %g: %s", res.Objective, e.obj.Problem())
	}
	for i, t := range typeList {
		if use&t != 0 {
			tc := TermChi2{Type: t, N: e.obj.N(t), Weight: e.obj.w[i], Chi2: e.obj.Chi2(t), Chi2r: e.obj.Chi2r(t)}
			res.Chi2 = append(res.Chi2, tc)
		}
	}
	res.Chi2r = e.obj.TotalChi2r()
	res.Chi2rTarget = e.obj.ExpectedChi2r()
	res.FluxScale = e.obj.FluxScale()
	if e.reg != nil {
		res.Reg = e.reg.Eval(nil, x)
	}
	res.Weight = mu
	res.Iter, res.Evals, res.Status = best.Iter, best.Evals, best.Status
	res.Converged = bestConv
	res.StopReason = best.Status.String()
	if best.Status == optim.IterationLimit && !math.IsNaN(bestTail) {
		// Say how far from converged: a decrease of a few 10⁻⁶ over the last iterations
		// changes nothing visible in the image.
		res.StopReason += fmt.Sprintf(" (objective down %.2g %% over the last %d iterations)", 100*bestTail, tailWindow)
	}
	if bestConv {
		ftol := s.FTol
		if ftol == 0 {
			ftol = DefaultFTol
		}
		res.StopReason = fmt.Sprintf("converged: relative objective change below %g per iteration over %d iterations, confirmed by a restart", ftol, ftolWindow)
	}
	res.TotalIter += e.total
	vin := verdictInput{expect: map[dataset.DataType]float64{}, tail: bestTail, auto: auto, maxIters: s.MaxIter,
		stalled: best.Stalled && !best.Converged, atEdge: edge}
	for _, t := range typeList {
		if use&t != 0 {
			vin.expect[t] = e.obj.ExpectedChi2rOf(t)
		}
	}
	res.Warnings = verdict(res, vin)
	if !p.Unnormalized {
		f := 0.0
		for _, v := range x {
			f += v
		}
		for i := range x {
			x[i] /= f
		}
	}
	res.Image = x
	return res, nil
}

// smoothStart reports whether start s on grid g is a smooth blob: a Gaussian (chosen or
// picked by StartAuto) or the flat disc.
func smoothStart(s Start, g GridChoice) bool {
	switch s.Kind {
	case StartGaussian, StartFlat:
		return true
	case StartAuto:
		return true
	}
	return false
}

// initialWeight returns the first weight of the automatic search: the weight at which the
// regularizer term at the start image is a tenth of the data term of an image that fits,
// μ0 = 0.1·N/R(x0) with N the number of data. Starting higher is useless and harmful: with
// an edge-preserving regularizer whose curvature is 1/ε in flat regions, a dominant
// regularizer makes the problem so stiff that the warm-started runs that follow barely move.
// Measured: with μ0 = 0.1·J(x0)/R(x0) instead, a start that fits badly (J ≫ N) began at
// weights of 10⁶ and every following step stalled after 6 iterations, at χ²ᵣ = 238 on a
// binary with a resolved primary and 121 on an inclined ring (total variation from the
// fitted uniform disc); from 0.1·N/R both reach χ²ᵣ ≈ 1. When the first step already fits
// better than χ²ᵣ = 1, chooseWeight raises the weight. Where R(x0) is not positive the
// weight is N.
func (e *engine) initialWeight(x0 []float64) float64 {
	n := float64(max(e.p.Data.Len(e.obj.Use()), 1))
	r := e.reg.Eval(nil, x0)
	if r > 0 && finite(n/r) {
		return 0.1 * n / r
	}
	return n
}

// weightSearch is the outcome of chooseWeight.
type weightSearch struct {
	path   []WeightStep
	image  []float64 // the image of the chosen weight's run
	weight float64
	edge   string // "lower" or "upper" when no weight within the range reached the target
	// floor is the χ²ᵣ that the smallest weights reach (the fit without regularization) and
	// target the χ²ᵣ aimed at.
	floor, target float64
}

// RescueStarts is the number of seeded random starts added at the final weight when the
// one default start fits worse than the noise allows (Solve).
const RescueStarts = 2

// Range of the automatic weight search, in decades below and above the first weight μ0; the
// search never leaves it (common practice, no source).
const (
	weightDecadesDown = 8
	weightDecadesUp   = 6
)

// Constants of the weight target (chooseWeight), measured on the validation suite
// (recon/validate): FloorShare is the share α of the gap between the floor and the expected
// χ²ᵣ above the floor that the target lies at; FloorMargin the least relative margin above
// the floor; FloorNoise the least margin in units of the standard deviation of χ²ᵣ for N
// data, τ·√(2/N) (χ² with N degrees of freedom has variance 2N); FloorFlat the fall of χ²ᵣ
// over a decade of weight (relative to τ) below which the floor is reached.
const (
	FloorShare  = 0.3
	FloorMargin = 0.005
	FloorFlat   = 0.002
	FloorNoise  = 0.5
)

// chooseWeight picks the regularization weight from the data. χ²ᵣ(μ) rises with μ from a
// floor χ²_min, the fit of the least-regularized images, to values far above the expected
// χ²ᵣ τ (Objective.ExpectedChi2r). The discrepancy principle (Morozov 1966; Hansen 2010,
// Discrete Inverse Problems, sect. 5.2) takes χ²ᵣ = τ; but an image has more free pixels
// than the data constrain, so the least-regularized images fit the noise and the floor lies
// below τ, by about the share of the data that the free pixels can absorb (the effective
// number of parameters of the fit; e.g. Hastie, Tibshirani & Friedman 2009, sect. 7.6). The
// image nearest the truth then fits the data a little worse than the floor and better than
// τ: measured on the validation suite (24 scenes, two arrays, two error models), the fixed
// weight of lowest L1 difference to the truth has χ²ᵣ between 0 and 0.5 of the way from the
// floor to τ, while χ²ᵣ = τ over-regularizes sparse arrays (four telescopes: floor 0.84–0.88,
// relative L1 up to 1.6 times the best). The target is therefore
//
//	χ²_target = χ²_min + max(FloorShare·(τ − χ²_min), FloorMargin·χ²_min, FloorNoise·τ·√(2/N)),
//
// which is also right when calibration errors lift the floor above τ (the least
// regularization that fits as well as the data allow). The last margin matters where the
// image cannot absorb the noise (sparse data, floor ≈ τ): χ²ᵣ then differs between images
// by less than its own scatter, and without it the search took the least-regularized image
// (four telescopes, discs: relative L1 2–4 times the best fixed weight's; with it, within
// 1.0–1.3 times). The search runs from μ0 down by
// decades until χ²ᵣ falls by less than FloorFlat·τ over a decade (the floor) or
// weightDecadesDown is reached, then up from μ0 by decades if no weight was above the
// target, then refines log μ between the weights that bracket the target by regula falsi
// (Illinois variant; Dowell & Jarratt 1971) until χ²ᵣ is within a quarter of the margin of
// the target or WeightSteps runs were made. Runs going down start from the image of the
// last larger weight, refining runs from the image of the bracketing larger weight. A run
// that stalled (moved nothing) is retried once from the search's start image and, if it
// stalls again, is recorded as stalled and neither used nor continued from. The weight
// returned is that of the usable run nearest to the target, preferring one at or below it.
func (e *engine) chooseWeight(x0 []float64, mu0 float64, first *runOut) (weightSearch, error) {
	use := e.obj.Use()
	var ws weightSearch
	images := map[int][]float64{}
	tau := e.obj.ExpectedChi2r()
	steps := e.s.WeightSteps
	muLo, muHi := mu0*math.Pow(10, -weightDecadesDown), mu0*math.Pow(10, weightDecadesUp)
	// step runs at mu from x and records it; it returns the index of the step, or −1 when
	// it stalled twice or failed to give a finite χ²ᵣ.
	step := func(x []float64, mu float64) (int, error) {
		label := WeightStage(len(ws.path)+1, steps)
		var r runOut
		if first != nil && len(ws.path) == 0 && mu == mu0 && sameImage(x, x0) {
			r = *first // done already, from x0 at μ0
		} else {
			var err error
			if r, err = e.run(x, mu, use, e.s.PathIter, label); err != nil {
				return -1, err
			}
		}
		if r.Stalled && !sameImage(x, x0) {
			r2, err := e.run(x0, mu, use, e.s.PathIter, label+" retry")
			if err != nil {
				return -1, err
			}
			r2.Iter += r.Iter
			r = r2
		}
		c, reg := e.measure(r.X, mu)
		ws.path = append(ws.path, WeightStep{Weight: mu, Chi2r: c, Reg: reg, Iter: r.Iter, Converged: r.Converged, Stalled: r.Stalled})
		k := len(ws.path) - 1
		if r.Stalled || !finite(c) {
			return -1, nil
		}
		images[k] = r.X
		return k, nil
	}
	usable := func(k int) bool { return images[k] != nil }
	// Down from μ0 to the floor.
	x, mu := x0, mu0
	last := -1
	for len(ws.path) < steps && mu >= muLo*(1-1e-9) {
		k, err := step(x, mu)
		if err != nil {
			return ws, err
		}
		if k >= 0 {
			if last >= 0 && ws.path[last].Chi2r-ws.path[k].Chi2r < FloorFlat*tau {
				break
			}
			x, last = images[k], k
		}
		mu /= 10
	}
	ws.floor = math.Inf(1)
	for k, st := range ws.path {
		if usable(k) {
			ws.floor = math.Min(ws.floor, st.Chi2r)
		}
	}
	if math.IsInf(ws.floor, 1) {
		// Every run stalled: the final run starts from the search's start image.
		ws.image, ws.weight, ws.edge = x0, mu0, "stalled"
		return ws, nil
	}
	ws.target = ws.floor + max(FloorShare*(tau-ws.floor), FloorMargin*ws.floor, FloorNoise*e.chi2rScatter())
	tol := ws.tol()
	// bracket returns the usable steps nearest the target from above (larger χ²ᵣ) and
	// from below, −1 where there is none.
	bracket := func() (above, below int) {
		return bracketSteps(len(ws.path), usable, func(k int) (float64, float64) { return ws.path[k].Weight, ws.path[k].Chi2r }, ws.target)
	}
	// Up from μ0 while no weight fits worse than the target.
	above, below := bracket()
	mu = mu0
	x = images[0]
	if x == nil {
		x = x0
	}
	for above < 0 && len(ws.path) < steps {
		mu *= 10
		if mu > muHi*(1+1e-9) {
			break
		}
		k, err := step(x, mu)
		if err != nil {
			return ws, err
		}
		if k >= 0 {
			x = images[k]
		}
		above, below = bracket()
	}
	// Refine between the brackets.
	if above >= 0 && below >= 0 {
		r := illinois{la: math.Log(ws.path[above].Weight), fa: ws.path[above].Chi2r - ws.target,
			lb: math.Log(ws.path[below].Weight), fb: ws.path[below].Chi2r - ws.target}
		for len(ws.path) < steps && math.Min(r.fa, -r.fb) > tol {
			lm := r.next()
			k, err := step(images[above], math.Exp(lm))
			if err != nil {
				return ws, err
			}
			if k < 0 {
				break // stalled twice between the brackets: keep the best usable step
			}
			fm := ws.path[k].Chi2r - ws.target
			if r.update(lm, fm, fm > 0) {
				above = k
			} else {
				below = k
			}
		}
	}
	// The usable step nearest the target, one at or below it within tol preferred.
	bi := -1
	dist := func(k int) float64 {
		d := ws.path[k].Chi2r - ws.target
		if d > tol {
			d *= 4 // above the target by more than the tolerance: fits worse than wanted
		}
		return math.Abs(d)
	}
	for k := range ws.path {
		if usable(k) && (bi < 0 || dist(k) < dist(bi)) {
			bi = k
		}
	}
	ws.image, ws.weight = images[bi], ws.path[bi].Weight
	switch {
	case above < 0 && ws.path[bi].Chi2r < ws.target-tol:
		ws.edge = "upper"
	case below < 0 && ws.path[bi].Chi2r > ws.target+tol:
		ws.edge = "lower"
	}
	return ws, nil
}

// tol is the distance to the target within which χ²ᵣ counts as on target.
func (ws *weightSearch) tol() float64 { return 0.25 * (ws.target - ws.floor) }

// slope returns dχ²ᵣ/d ln μ of the search path near μ: from the nearest usable steps on
// either side of μ, or from the two nearest on one side; 0 when it cannot be told.
func (ws *weightSearch) slope(mu float64) float64 {
	var pts []WeightStep
	for _, st := range ws.path {
		if !st.Stalled && finite(st.Chi2r) {
			pts = append(pts, st)
		}
	}
	slices.SortFunc(pts, func(a, b WeightStep) int { return cmp.Compare(a.Weight, b.Weight) })
	if len(pts) < 2 {
		return 0
	}
	// i is the first step above μ, clamped so that pts[i−1], pts[i] is a pair.
	i := sort.Search(len(pts), func(k int) bool { return pts[k].Weight > mu })
	i = max(1, min(i, len(pts)-1))
	a, b := pts[i-1], pts[i]
	if a.Weight == b.Weight {
		return 0
	}
	return (b.Chi2r - a.Chi2r) / (math.Log(b.Weight) - math.Log(a.Weight))
}

// chi2rScatter returns the standard deviation of χ²ᵣ over the N data the engine fits,
// τ·√(2/N) with τ the expected χ²ᵣ (χ² with N degrees of freedom has variance 2N).
func (e *engine) chi2rScatter() float64 {
	n := float64(max(e.p.Data.Len(e.obj.Use()), 1))
	return e.obj.ExpectedChi2r() * math.Sqrt(2/n)
}

// chi2rOf returns the total χ²ᵣ of x (exact terms).
func (e *engine) chi2rOf(x []float64, mu float64) float64 {
	c, _ := e.measure(x, mu)
	return c
}

// sameImage reports whether a and b are the same slice or hold the same values.
func sameImage(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}

// tryReflection evaluates the objective at weight mu of best's image turned by 180° about
// the centre pixel. V² and visibility amplitudes do not change under that turn; closure
// phases change sign. With few or noisy closure phases the search can settle in the turned
// basin, whose image fits the amplitudes as well and the phases worse; when the turned image
// evaluates lower, it is refitted and returned with ok set if its objective stays lower.
func (e *engine) tryReflection(best runOut, mu float64, use dataset.DataType, maxIter int) (runOut, bool, error) {
	n := e.grid.N
	rot := reflect(best.X, n)
	f := e.f(mu)
	if !(f(nil, rot) < best.F) {
		return runOut{}, false, nil
	}
	r, err := e.run(rot, mu, use, maxIter, "turned by 180°")
	if err != nil {
		return runOut{}, false, err
	}
	return r, r.F < best.F, nil
}

// reflect returns img (n × n) turned by 180° about the centre pixel (n/2, n/2); the
// first row and column, which have no partner, stay in place.
func reflect(img []float64, n int) []float64 {
	out := make([]float64, n*n)
	for iy := 0; iy < n; iy++ {
		jy := (n - iy) % n
		for ix := 0; ix < n; ix++ {
			out[jy*n+(n-ix)%n] = img[iy*n+ix]
		}
	}
	return out
}

// recentre moves img (n × n) in place, cyclically, by the whole number of pixels that brings
// its centroid nearest to the centre pixel (n/2, n/2), and returns the move (along the x and
// y indices; zero when none). V², T3 amplitudes and closure phases are unchanged by a
// translation, which only multiplies every visibility by a phase factor, so a reconstruction
// from them drifts freely, and an object off the centre risks the edge of the field. The
// move is cyclic so that no flux is lost; the faint pixels it carries across the edge make the
// image slightly worse a fit, which is why Solve moves the image before its final run.
func recentre(img []float64, n int) [2]int {
	sh := centreShift(img, n)
	if sh != [2]int{} {
		shiftCyclic(img, n, sh)
	}
	return sh
}

// positionFree reports whether the data types used leave an image of p free to move: without
// visibility phases, which fix the position, and with flux normalisation and no support
// (which is fixed in place), an image moved by whole pixels fits as well (recentre,
// centreCube).
func positionFree(p Problem, use dataset.DataType) bool {
	return use&dataset.VisPhi == 0 && !p.Unnormalized && p.Support == 0
}

// centreShift returns the move by whole pixels (along the x and y indices) that brings the
// centroid of img (n × n, or several n × n planes one after the other, whose sum counts)
// nearest to the centre pixel (n/2, n/2); zero when img has no flux.
func centreShift(img []float64, n int) [2]int {
	var f, cx, cy float64
	for k := 0; k+n*n <= len(img); k += n * n {
		for iy := 0; iy < n; iy++ {
			for ix := 0; ix < n; ix++ {
				v := img[k+iy*n+ix]
				f += v
				cx += v * float64(ix)
				cy += v * float64(iy)
			}
		}
	}
	if !(f > 0) {
		return [2]int{}
	}
	return [2]int{n/2 - int(math.Round(cx/f)), n/2 - int(math.Round(cy/f))}
}

// shiftCyclic moves img (n × n) in place by sh pixels along the x and y indices, cyclically.
func shiftCyclic(img []float64, n int, sh [2]int) {
	dx, dy := sh[0], sh[1]
	out := make([]float64, n*n)
	for iy := 0; iy < n; iy++ {
		jy := ((iy+dy)%n + n) % n
		for ix := 0; ix < n; ix++ {
			out[jy*n+((ix+dx)%n+n)%n] = img[iy*n+ix]
		}
	}
	copy(img, out)
}

// lbfgsMemory is the number of correction pairs of the quasi-Newton method.
var lbfgsMemory = 5

// finite reports whether x is neither NaN nor infinite.
func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// bracketSteps returns, of the n steps of a weight path that usable accepts, the one of
// smallest weight whose χ²ᵣ is above target and the one of largest weight whose χ²ᵣ is not,
// −1 where there is none; step(k) gives step k's weight and χ²ᵣ.
func bracketSteps(n int, usable func(int) bool, step func(int) (weight, chi2r float64), target float64) (above, below int) {
	above, below = -1, -1
	var wa, wb float64
	for k := range n {
		if !usable(k) {
			continue
		}
		w, c := step(k)
		if c > target {
			if above < 0 || w < wa {
				above, wa = k, w
			}
		} else if below < 0 || w > wb {
			below, wb = k, w
		}
	}
	return above, below
}

// illinois is the bracket of a root search by regula falsi in its Illinois form (Dowell &
// Jarratt 1971, BIT 11, 168): the end a where the function is above the root's side (f > 0
// in a plain search), the end b below it, each at its abscissa l and value f.
type illinois struct {
	la, fa, lb, fb float64
	side           int // which end the last update moved: 1 for a, −1 for b, 0 before any
}

// next is the abscissa where the chord between the ends crosses zero, or their midpoint
// when the chord leaves the bracket.
func (r *illinois) next() float64 {
	lm := r.la - r.fa*(r.lb-r.la)/(r.fb-r.fa)
	if !finite(lm) || lm <= math.Min(r.la, r.lb) || lm >= math.Max(r.la, r.lb) {
		lm = 0.5 * (r.la + r.lb)
	}
	return lm
}

// update replaces end a (when above) or end b by (lm, fm), halving the other end's value when
// the same end moved twice in a row (the Illinois step), and returns above.
func (r *illinois) update(lm, fm float64, above bool) bool {
	if above {
		r.la, r.fa = lm, fm
		if r.side == 1 {
			r.fb /= 2
		}
		r.side = 1
	} else {
		r.lb, r.fb = lm, fm
		if r.side == -1 {
			r.fa /= 2
		}
		r.side = -1
	}
	return above
}
