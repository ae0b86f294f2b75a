package recon

import (
	"errors"
	"fmt"
	"math"

	"vcz/recon/optim"
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
	Data *Data
	// Grid, when N > 0, is the grid; otherwise ChooseGrid(Data, GridOptions) picks it.
	Grid        Grid
	GridOptions GridOptions
	Terms       TermOptions
	// Reg is the regularizer; nil means none.
	Reg RegularizerFunc
	// Weight is the regularization weight μ in J(x) + μ·R(x). Zero with Reg set means
	// automatic (ChooseWeight: the discrepancy principle).
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
}

// Settings control Solve. The zero value gives the documented defaults.
type Settings struct {
	// MaxIter is the iteration limit of the final reconstruction; 0 means 500.
	MaxIter int
	// PathIter is the iteration limit of each step of the weight search and of the first
	// pass on amplitudes; 0 means 100.
	PathIter int
	// FTol stops a run when the objective decreased by less than FTol·max(|f|, 1) per
	// iteration on average over the last 5 iterations; 0 means 1e-7.
	FTol float64
	// PGTol is the projected-gradient norm that stops a run; 0 means the optim default.
	PGTol float64
	// Seed drives every random choice (random starts); the same seed gives the same image.
	Seed uint64
	// Starts is the number of starts at the final weight: the given start and Starts−1
	// seeded random images; the lowest objective is kept. 0 means 3 on grids of up to 64²
	// pixels and 1 on larger grids. Measured on the binary and disc tests, three starts
	// lowered the final χ²ᵣ with total variation from 2.16 to 1.26 and 2.34 to 1.32 (binary)
	// and never raised it, for 1.5 to 3 times the iterations; on larger grids that cost would
	// break the time goal of a night's reconstruction, so one start is the default there.
	// Coarse-to-fine, measured the same way, never lowered χ²ᵣ and is off by default.
	// Measured again on the simulated disc, binary and ring of the fidelity test (96² and 90²
	// grids, total variation) after the phase smoothing: three starts kept the given start
	// on the binary and the ring, and on the disc a random start whose objective was 0.02 %
	// lower gave a worse image (L1 0.089 against 0.046), for 3 times the time;
	// coarse-to-fine gave L1 0.046, 0.055 and 0.079 against 0.046, 0.040 and 0.061.
	Starts int
	// CoarseToFine first reconstructs on a grid of half the pixels (rounded up to an even
	// number) over the same field (with the same settings, automatic weight included) and
	// starts the full grid from its resampled image. Grids under 32 pixels ignore it.
	CoarseToFine bool
	// NoAmplitudeFirst turns off the first pass on amplitude data (V², T3 and VIS
	// amplitudes) that precedes fitting the phases. The pass runs by default when the start
	// is a smooth blob (a Gaussian, also when StartAuto picks one, or the flat disc) and the
	// data have both amplitudes and phases: the phase gradient scales as 1/|V| and stalls
	// where a smooth start has |V| ≈ 0. Measured on the disc test from a Gaussian start, the
	// pass lowered the final χ²ᵣ in 4 of 4 cases (10.9 against 13.3, 10.5 against 14.7, 2.2
	// against 4.4, 1.8 against 1.9); from the fitted uniform-disc start it raised χ²ᵣ
	// (4.5 against 1.04 in the worst case) and is therefore not run; on the binary test it
	// changed nothing. (Measured before the phase terms were smoothed in the first passes.)
	NoAmplitudeFirst bool
	// WeightSteps is the largest number of weights tried by the automatic choice; 0 means 14.
	WeightSteps int
	// Workers is passed to the default transform; 0 means GOMAXPROCS.
	Workers int
	// Progress, when non-nil, is called after every accepted iteration; false stops Solve.
	Progress func(Progress) bool
}

// Progress describes the state after an iteration, for a progress display.
type Progress struct {
	Stage     string  // "amplitudes", "weight k/K", "final", "start k/K", "coarse"
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
	Type   DataType
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
}

// Result is the outcome of Solve.
type Result struct {
	Image []float64 // N² pixels, normalised to a total flux of 1 (unless Unnormalized)
	Grid  GridChoice

	Chi2  []TermChi2 // per used data type, in the order of DataTypes()
	Chi2r float64    // Σχ²/ΣN over the used types
	// Chi2rTarget is the expectation of Chi2r for data about the true model (ExpectedChi2r),
	// the target of the automatic weight.
	Chi2rTarget float64
	Reg         float64 // R(x) of the final image (0 without regularizer)
	Weight      float64 // μ used in the final run
	Objective   float64 // J + μR (+ the flux term)
	FluxScale   float64 // scale of correlated-flux amplitudes, 0 without them

	Iter, Evals int          // of the final run
	TotalIter   int          // of all runs
	Status      optim.Status // of the final run, as optim reports it
	// StopReason says in words why the final run stopped: the relative-change test of
	// Settings.FTol (which optim reports as CallbackStop), or optim's Status.
	StopReason string
	Path       []WeightStep // the automatic weight search, empty for a given weight
	// Shift is the whole-pixel move (along the x and y indices) that put the centroid of the
	// image at the centre after the final run (recentre); zero when it was not moved.
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
const ftolWindow = 5

// Defaults of Settings.
const (
	DefaultMaxIter     = 500
	DefaultPathIter    = 100
	DefaultFTol        = 1e-7
	DefaultWeightSteps = 14
)

// engine is a reconstruction on one grid.
type engine struct {
	p         Problem
	s         Settings
	grid      GridChoice
	obj       *Objective
	reg       Regularizer
	rgrad     []float64
	xn        []float64 // the normalised image x/Σx
	lower     []float64
	upper     []float64
	rho       float64 // weight of the flux term ρ(Σx − 1)²
	total     int     // iterations of all runs
	converged bool    // the last run met the relative-change test
	scale     float64 // inverse-Hessian scale at the end of the last run (optim.Result.Scale)
	tail      float64 // relative decrease of the objective over the last tailWindow iterations of the last run
	stopped   bool    // Progress asked to stop
}

func newEngine(p Problem, s Settings, g GridChoice) (*engine, error) {
	mk := p.Transform
	if mk == nil {
		mk = NewTransform(s.Workers)
	}
	m, err := NewModel(p.Data, g.Grid, !p.Unnormalized, mk)
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
		e.upper = make([]float64, n*n)
		r2 := p.Support * p.Support
		for iy := 0; iy < n; iy++ {
			for ix := 0; ix < n; ix++ {
				x, y := float64(ix-n/2)*g.Pixel, float64(iy-n/2)*g.Pixel
				e.upper[iy*n+ix] = 0
				if x*x+y*y <= r2 {
					e.upper[iy*n+ix] = math.Inf(1)
				}
			}
		}
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
		if e.rho > 0 {
			fl = 0
			for _, xi := range x {
				fl += xi
			}
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
		v := e.obj.Eval(grad, x)
		if e.reg != nil && mu != 0 {
			var rg []float64
			if grad != nil {
				rg = e.rgrad
			}
			xn := x
			if e.rho > 0 {
				xn = e.xn
				for i, xi := range x {
					xn[i] = xi / fl
				}
			}
			r := e.reg.Eval(rg, xn)
			v += mu * r
			if grad != nil {
				// ∂R(x/F)/∂x_p = (g_p − Σ_q g_q x_q/F)/F.
				c := 0.0
				if e.rho > 0 {
					for i, g := range rg {
						c += g * xn[i]
					}
				}
				s := mu / fl
				for i := range grad {
					grad[i] += s * (rg[i] - c)
				}
			}
		}
		if e.rho > 0 {
			df := fl - 1
			v += e.rho * df * df
			if grad != nil {
				c := 2 * e.rho * df
				for i := range grad {
					grad[i] += c
				}
			}
		}
		return v
	}
}

// run minimises from x0 at weight mu with the used types and the iteration limit given.
func (e *engine) run(x0 []float64, mu float64, use DataType, maxIter int, stage string) (optim.Result, error) {
	prev := e.obj.Use()
	e.obj.SetUse(use)
	defer e.obj.SetUse(prev)
	// The relative-change test is applied over a window of iterations rather than to one
	// iteration: a warm start after a change of weight often begins with a short
	// steepest-descent step whose small decrease would end the run at once.
	ftol := e.s.FTol
	if ftol == 0 {
		ftol = DefaultFTol
	}
	st := optim.Settings{MaxIter: maxIter, FTol: -1, PGTol: e.s.PGTol, Scale: e.scale}
	hist := make([]float64, 0, maxIter+1)
	hist = append(hist, math.NaN())
	e.converged = false
	var types []TermChi2
	st.Callback = func(it optim.Iter) bool {
		hist = append(hist, it.F)
		if e.s.Progress != nil {
			types = types[:0]
			for i, t := range typeList {
				if use&t != 0 {
					types = append(types, TermChi2{Type: t, N: e.obj.N(t), Weight: e.obj.w[i], Chi2: e.obj.Chi2(t), Chi2r: e.obj.Chi2r(t)})
				}
			}
			if !e.s.Progress(Progress{Stage: stage, Weight: mu, Iter: it.Iter, Objective: it.F, Chi2r: e.obj.TotalChi2r(), Types: types}) {
				e.stopped = true
				return false
			}
		}
		if k := len(hist) - 1; k > ftolWindow {
			old := hist[k-ftolWindow]
			if old-it.F <= ftol*ftolWindow*math.Max(math.Abs(it.F), 1) {
				e.converged = true
				return false
			}
		}
		return true
	}
	res, err := optim.Minimize(optim.Problem{Func: e.f(mu), Lower: e.lower, Upper: e.upper}, x0, st)
	e.total += res.Iter
	e.tail = math.NaN()
	if k := len(hist) - 1; k > tailWindow {
		e.tail = (hist[k-tailWindow] - hist[k]) / math.Max(math.Abs(hist[k]), 1)
	}
	if res.Scale > 0 {
		// The next run is warm-started from a nearby point: its first step takes the
		// curvature scale found here (measured on the night benchmark: the first line
		// search of a run otherwise costs about 20 evaluations).
		e.scale = res.Scale
	}
	if e.stopped && err == nil {
		return res, ErrStopped
	}
	if err != nil {
		where := e.obj.Problem()
		if where == "" {
			where = "regularizer or flux term"
		}
		return res, fmt.Errorf("recon: %s (weight %g): %s: %w", stage, mu, where, err)
	}
	return res, nil
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
const amplitudeTypes = Vis2 | T3Amp | VisAmp

// Solve reconstructs an image. The steps: choose the grid (unless given); make the start
// image; with CoarseToFine, reconstruct on the half grid first and start from its upsampled
// image; fit the amplitude data alone (unless NoAmplitudeFirst or the data lack either kind);
// choose the weight by the discrepancy principle when it is automatic; run the final
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
	if p.Grid.N > 0 {
		g = GridChoice{Grid: p.Grid, FOV: float64(p.Grid.N) * p.Grid.Pixel}
		geo := p.Data.summaryGeometry()
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
	res := &Result{Grid: g}
	if s.CoarseToFine && g.N >= 32 {
		cp := p
		// Half the pixels, rounded up to an even number, over the same field.
		nh := (g.N/2 + 1) &^ 1
		cp.Grid = Grid{N: nh, Pixel: float64(g.N) * g.Pixel / float64(nh)}
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
	e.obj.SetPhaseSmoothing(true)
	ampFirst := !s.NoAmplitudeFirst && use&amplitudeTypes != 0 && use&(T3Phi|VisPhi) != 0
	if ampFirst && !s.CoarseToFine && smoothStart(p.Start, g) {
		r, err := e.run(x0, mu, use&amplitudeTypes, s.PathIter, "amplitudes")
		if err != nil {
			return nil, err
		}
		x0 = r.X
	}
	if auto {
		path, xw, w, err := e.chooseWeight(x0, mu)
		res.Path = path
		if err != nil {
			return nil, err
		}
		x0, mu = xw, w
	}
	e.obj.SetPhaseSmoothing(false)
	if use&VisPhi == 0 && !p.Unnormalized && p.Support == 0 {
		x0 = append([]float64(nil), x0...)
		if sh := recentre(x0, g.N); sh != [2]int{} {
			res.Shift = sh
			res.Notices = append(res.Notices, fmt.Sprintf("image moved by (%d, %d) pixels before the final run to put its centroid at the centre: V² and closure phases do not fix the position", sh[0], sh[1]))
		}
	}
	starts := s.Starts
	if starts == 0 {
		starts = 1
		if g.N <= 64 {
			starts = 3
		}
	}
	starts = max(starts, 1)
	var best optim.Result
	bestConv, bestTail := false, math.NaN()
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
			e.obj.SetPhaseSmoothing(true)
			r, err := e.run(xs, mu, use, s.PathIter, stage+" smoothed")
			e.obj.SetPhaseSmoothing(false)
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
			best, bestConv, bestTail = r, e.converged, e.tail
		}
	}
	if starts > 1 {
		// Put the kept objective first.
		for i, f := range res.StartObjectives {
			if f == best.F {
				res.StartObjectives[0], res.StartObjectives[i] = res.StartObjectives[i], res.StartObjectives[0]
				break
			}
		}
	}
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
		res.StopReason = fmt.Sprintf("converged: relative objective change below %g per iteration over %d iterations", ftol, ftolWindow)
	}
	res.TotalIter += e.total
	vin := verdictInput{expect: map[DataType]float64{}, tail: bestTail, auto: auto, maxIters: s.MaxIter}
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
		return g.SizeModel != "uniform disc"
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

// chooseWeight runs the discrepancy principle with the target τ = ExpectedChi2r (1 unless
// some phases have large errors): warm-started reconstructions along weights μ0·10^(−k/2),
// k = 0, 1, ..., until the total χ²ᵣ falls below τ + 2√(2/N) (within twice its statistical
// scatter), stops improving (by less than 1 % over two steps) or WeightSteps is reached.
// When the first weight already fits below τ − 2√(2/N), the weights rise instead,
// μ0·10^(k/2), until χ²ᵣ is no longer below that. Where χ²ᵣ crosses τ between two
// consecutive steps, the weight is interpolated linearly in (log μ, log χ²ᵣ) and the final
// run starts from the image of the larger weight of the two. Without a crossing it returns
// the weight with χ²ᵣ closest to τ and its image.
func (e *engine) chooseWeight(x0 []float64, mu0 float64) ([]WeightStep, []float64, float64, error) {
	use := e.obj.Use()
	var path []WeightStep
	images := [][]float64{}
	// χ² of N independent Gaussian data has variance 2N, so χ²ᵣ scatters by √(2/N) about 1
	// (e.g. Press et al., Numerical Recipes, 3rd ed., sect. 15.1); a step within twice that of 1
	// is as good as 1.
	band := 2 * math.Sqrt(2/float64(max(e.p.Data.Len(use), 1)))
	tau := e.obj.ExpectedChi2r()
	step := func(x []float64, mu float64) (float64, error) {
		k := len(path)
		r, err := e.run(x, mu, use, e.s.PathIter, fmt.Sprintf("weight %d/%d", k+1, e.s.WeightSteps))
		if err != nil {
			return 0, err
		}
		c, reg := e.measure(r.X, mu)
		path = append(path, WeightStep{Weight: mu, Chi2r: c, Reg: reg, Iter: r.Iter})
		images = append(images, r.X)
		return c, nil
	}
	factor := math.Pow(10, -0.5)
	x, mu := x0, mu0
	for k := 0; k < e.s.WeightSteps; k++ {
		c, err := step(x, mu)
		if err != nil {
			return path, nil, 0, err
		}
		x = images[k]
		if c <= tau+band {
			break // at τ within the statistical scatter of χ²ᵣ, or below
		}
		// Two steps without 1 % of improvement mean χ²ᵣ has reached its floor, but only when
		// the runs did iterate: a run that stops after a few iterations is stalled by a
		// regularizer too stiff at that weight, and smaller weights get it moving again.
		if k > 1 && path[k-2].Chi2r-c < 0.01*path[k-2].Chi2r && path[k-1].Iter > 2*ftolWindow && path[k].Iter > 2*ftolWindow {
			break
		}
		mu *= factor
	}
	if len(path) == 1 {
		// The first weight fits too well: raise it until χ²ᵣ comes up to τ.
		for len(path) < e.s.WeightSteps && path[len(path)-1].Chi2r < tau-band {
			mu /= factor
			if _, err := step(images[len(images)-1], mu); err != nil {
				return path, nil, 0, err
			}
		}
	}
	for i := len(path) - 1; i > 0; i-- {
		a, b := path[i-1], path[i]
		if (a.Chi2r-tau)*(b.Chi2r-tau) <= 0 && a.Chi2r != b.Chi2r {
			t := math.Log(a.Chi2r/tau) / (math.Log(a.Chi2r) - math.Log(b.Chi2r))
			w := math.Exp(math.Log(a.Weight) + t*(math.Log(b.Weight)-math.Log(a.Weight)))
			img := images[i-1]
			if b.Weight > a.Weight {
				img = images[i]
			}
			return path, img, w, nil
		}
	}
	bi := 0
	for i, st := range path {
		if math.Abs(math.Log(st.Chi2r/tau)) < math.Abs(math.Log(path[bi].Chi2r/tau)) {
			bi = i
		}
	}
	return path, images[bi], path[bi].Weight, nil
}

// recentre moves img (n × n) in place, cyclically, by the whole number of pixels that brings
// its centroid nearest to the centre pixel (n/2, n/2), and returns the move (along the x and
// y indices; zero when none). V², T3 amplitudes and closure phases are unchanged by a
// translation, which only multiplies every visibility by a phase factor, so a reconstruction
// from them drifts freely, and an object off the centre risks the edge of the field. The
// move is cyclic so that no flux is lost; the faint pixels it carries across the edge make the
// image slightly worse a fit, which is why Solve moves the image before its final run.
func recentre(img []float64, n int) [2]int {
	var f, cx, cy float64
	for iy := 0; iy < n; iy++ {
		for ix := 0; ix < n; ix++ {
			v := img[iy*n+ix]
			f += v
			cx += v * float64(ix)
			cy += v * float64(iy)
		}
	}
	if !(f > 0) {
		return [2]int{}
	}
	dx := n/2 - int(math.Round(cx/f))
	dy := n/2 - int(math.Round(cy/f))
	if dx == 0 && dy == 0 {
		return [2]int{}
	}
	out := make([]float64, n*n)
	for iy := 0; iy < n; iy++ {
		jy := ((iy+dy)%n + n) % n
		for ix := 0; ix < n; ix++ {
			out[jy*n+((ix+dx)%n+n)%n] = img[iy*n+ix]
		}
	}
	copy(img, out)
	return [2]int{dx, dy}
}
