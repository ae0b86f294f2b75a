package recon

import (
	"errors"
	"fmt"
	"math"
	"runtime"
	"slices"
	"time"

	"vcz/dataset"
	"vcz/recon/optim"
)

// CubeObjective is the objective of an image cube of P planes on one grid of NPix pixels,
//
//	F(x) = Σ_k [J_k(x_k/F_k) + μ_k·R(x_k/F_k) + ρ_k(F_k − 1)²] + η·S(x_1/F_1, …, x_P/F_P),
//
// with F_k = Σ x_k the flux of plane k, J_k the weighted χ² of the plane's data (an
// Objective on its own forward model), R the spatial regularizer, ρ_k the number of the
// plane's data (the flux term of Solve) and S a regularizer across planes
// (SpectralSmoothness, JointSparsity). Each bracket is Solve's objective of one plane, term
// for term, so that one plane with η = 0 gives the gray engine's value and gradient to the
// bit. Its variable is the concatenation of the planes' images, plane after plane.
// Evaluating it costs one Forward and one Adjoint per plane. It holds the buffers of one
// evaluation and is not safe for concurrent use.
type CubeObjective struct {
	Planes []*CubePlaneTerm
	NPix   int
	// Spectral is S; nil means none.
	Spectral Regularizer
	// Eta is the weight η of S.
	Eta float64
	// Workers is the largest number of planes evaluated at once (runSweep, as the sweeps of
	// SolveCube; the planes' objectives should then be serial); 0 means GOMAXPROCS. Each
	// plane writes only its own block of the gradient and the planes are summed in order,
	// so the result does not depend on it.
	Workers int

	xn, sgrad []float64
	fl        []float64
	cost      []time.Duration // each plane's last evaluation (runSweep)
}

// CubePlaneTerm is one plane's part of a CubeObjective.
type CubePlaneTerm struct {
	Obj *Objective
	Reg Regularizer // nil for none
	Mu  float64     // weight μ_k of Reg
	Rho float64     // weight ρ_k of the flux term

	rgrad []float64
	val   float64
	// data, when known is set, is the value of Obj at the plane's current image, left by the
	// last evaluation of the plane's run (SolveCube): Eval without a gradient takes it
	// instead of evaluating Obj again. Whoever sets known clears it before the image changes.
	data  float64
	known bool
}

// Eval returns F(x) and, when grad is non-nil, overwrites grad with ∂F/∂x.
func (c *CubeObjective) Eval(grad, x []float64) float64 {
	P, n := len(c.Planes), c.NPix
	checkCube("CubeObjective", grad, x, P, n)
	if len(c.xn) != P*n {
		c.xn = make([]float64, P*n)
		c.sgrad = make([]float64, P*n)
		c.fl = make([]float64, P)
	}
	// Fluxes and normalised planes first: a plane without flux has no normalised image.
	bad := false
	for k, t := range c.Planes {
		fl := 0.0
		for _, xi := range x[k*n : (k+1)*n] {
			fl += xi
		}
		c.fl[k] = fl
		if !(fl > 0) {
			bad = true
			for i := range grad[k*n : (k+1)*n] {
				grad[k*n+i] = -2 * t.Rho
			}
		}
	}
	if bad {
		// As in Solve: a huge finite value, so the line search steps back, and a gradient
		// towards more flux in the planes without it.
		for k := range c.Planes {
			if c.fl[k] > 0 {
				clear(grad[k*n : (k+1)*n])
			}
		}
		return noFluxObjective
	}
	one := func(k int) {
		t := c.Planes[k]
		xk := x[k*n : (k+1)*n]
		var gk []float64
		if grad != nil {
			gk = grad[k*n : (k+1)*n]
		}
		xn := c.xn[k*n : (k+1)*n]
		t.val = t.eval(gk, xk, xn, c.fl[k])
	}
	w := c.Workers
	if w <= 0 {
		w = runtime.GOMAXPROCS(0)
	}
	if len(c.cost) != P {
		c.cost = make([]time.Duration, P)
	}
	runSweep(P, nil, w, c.cost, one)
	v := 0.0
	for _, t := range c.Planes {
		v += t.val
	}
	if c.Spectral != nil && c.Eta != 0 {
		var sg []float64
		if grad != nil {
			sg = c.sgrad
		}
		v += c.Eta * c.Spectral.Eval(sg, c.xn)
		if grad != nil {
			// ∂S(x/F)/∂x_kp = (g_kp − Σ_q g_kq x_kq/F_k)/F_k, plane by plane.
			for k := range P {
				g, xn := sg[k*n:(k+1)*n], c.xn[k*n:(k+1)*n]
				cs := 0.0
				for i, gi := range g {
					cs += gi * xn[i]
				}
				s := c.Eta / c.fl[k]
				gk := grad[k*n : (k+1)*n]
				for i := range gk {
					gk[i] += s * (g[i] - cs)
				}
			}
		}
	}
	return v
}

// eval is the bracket of plane k in the CubeObjective formula, computed as Solve's
// objective (engine.f) computes it, operation for operation; xn receives x/fl.
func (t *CubePlaneTerm) eval(grad, x, xn []float64, fl float64) float64 {
	divide(xn, x, fl)
	var v float64
	if grad == nil && t.known {
		v = t.data
	} else {
		v = t.Obj.Eval(grad, x)
	}
	if t.Reg != nil && t.Mu != 0 {
		var rg []float64
		if grad != nil {
			if len(t.rgrad) != len(x) {
				t.rgrad = make([]float64, len(x))
			}
			rg = t.rgrad
		}
		r := t.Reg.Eval(rg, xn)
		v += t.Mu * r
		if grad != nil {
			c := 0.0
			for i, g := range rg {
				c += g * xn[i]
			}
			s := t.Mu / fl
			for i := range grad {
				grad[i] += s * (rg[i] - c)
			}
		}
	}
	if t.Rho > 0 {
		df := fl - 1
		v += t.Rho * df * df
		if grad != nil {
			c := 2 * t.Rho * df
			for i := range grad {
				grad[i] += c
			}
		}
	}
	return v
}

// CubeProblem is a polychromatic reconstruction: the gray problem over all data (its
// grid, data terms, spatial regularizer, weight, support, start and transform) and the
// planes the data are split into.
type CubeProblem struct {
	Problem
	Planes []CubePlane
	// Spectral is the regularizer across planes (SpectralSmooth by default).
	Spectral Spectral
	// SpectralWeight is η; 0 means automatic (SolveCube), scaled by SpectralFactor.
	SpectralWeight float64
	// SpectralFactor multiplies the automatic η; 0 means 1.
	SpectralFactor float64
	// Gray, when non-nil, is the gray reconstruction of Data with this problem and the
	// same settings (an earlier CubeResult.Gray), used instead of solving it again.
	Gray *Result
	// Starts, when non-nil, holds one start image per plane on Problem.Grid (e.g. the
	// planes' own reconstructions, as for the epochs of a batch): no gray image is solved,
	// Data may be nil, plane k keeps the spatial weight PlaneWeights[k], and every sweep
	// fits the exact data terms.
	Starts [][]float64
	// PlaneWeights are the spatial weights μ_k of the planes with Starts.
	PlaneWeights []float64
	// SpectralSteps, when positive and SpectralWeight is 0, chooses η by the discrepancy
	// path of SolveCube instead of the formula: at most that many weights, a factor 10
	// apart.
	SpectralSteps int
	// SpectralTolerance is the rise of a plane's χ²ᵣ over that at its start that the path
	// accepts, as a fraction; 0 means 0.05.
	SpectralTolerance float64
	// SpectralSetting names, in the warnings of CubeResult, the setting that lowers η, for
	// a plane that fits its data worse than expected: "" means DefaultSpectralSetting (the
	// option of an image cube); a cube along time passes its own (batch.JointProblem).
	SpectralSetting string
}

// DefaultSpectralSetting is the setting a warning of SolveCube names to lower η when
// CubeProblem.SpectralSetting is empty.
const DefaultSpectralSetting = "-spectral factor"

// SpectralStep is one weight tried by the discrepancy path of SolveCube.
type SpectralStep struct {
	Weight   float64 // η
	Chi2r    float64 // Σχ²/ΣN of all planes
	Value    float64 // S of the normalised planes
	Accepted bool
}

// PlaneResult is the outcome of one plane of a cube.
type PlaneResult struct {
	CubePlane
	Image []float64 // N² pixels, normalised to a total flux of 1
	Chi2  []TermChi2
	Chi2r float64 // Σχ²/ΣN of the plane's used types
	// Chi2rTarget is the plane's expected χ²ᵣ (Objective.ExpectedChi2r).
	Chi2rTarget float64
	N           int     // number of data fitted
	Weight      float64 // μ_k
	// FluxScale is the fitted scale of correlated-flux amplitudes: the total correlated flux
	// of the plane in the data's unit; 0 without such data.
	FluxScale float64
	// X, Y (rad, east and north) are the photocentre and Size the second-moment radius
	// √(Σ I r²/Σ I) about it (rad) of the plane's image.
	X, Y, Size float64
}

// CubeResult is the outcome of SolveCube.
type CubeResult struct {
	Planes []PlaneResult
	Grid   GridChoice
	// Gray is the gray reconstruction of all the data that chose the grid, the spatial
	// weight and the start (nil for one plane, whose result it would be).
	Gray *Result
	// Weight is the spatial weight μ of the gray run, shared among the planes by their
	// numbers of data (times WeightFactor); Spectral, SpectralWeight and SpectralValue are
	// S, η and S(x).
	Weight         float64
	Spectral       Spectral
	SpectralWeight float64
	SpectralValue  float64
	// Path holds the weights the discrepancy path tried (CubeProblem.SpectralSteps).
	Path        []SpectralStep
	Objective   float64
	Chi2r       float64 // Σχ²/ΣN over all planes
	Iter, Evals int     // of the planes' runs in the last sweep, summed
	TotalIter   int     // of all runs, the gray ones included
	Status      optim.Status
	Converged   bool
	StopReason  string
	Notices     []string
	Warnings    []string

	// SpectralEdge is "upper" when the discrepancy path accepted every weight it tried, so
	// that the kept η is the largest of the searched range and the weight that the rule
	// asks for lies above it, and "lower" when it accepted none, so that the first and
	// smallest η was kept although it failed the rule; "" otherwise and without a path.
	SpectralEdge string

	// WeightFactor is the common factor α of the planes' spatial weights, μ_k =
	// α·Weight·N_k/N (1 unless SolveCube chose it; 0 for given start images), WeightPath
	// the factors it tried, and Chi2rFloor and Chi2rAim the least Σχ²/ΣN over them and
	// the Σχ²/ΣN aimed at (chooseCubeFactor; 0 without a search).
	WeightFactor         float64
	WeightPath           []CubeWeightStep
	Chi2rFloor, Chi2rAim float64
	// Moves counts the sets of sweeps before which the cube was moved by whole pixels to
	// put the centroid of its planes' sum at the centre (centreCube).
	Moves int
}

// DefaultSpectralSmooth is the constant c of the automatic weight of SpectralSmoothness,
// η = c·N̄/‖x̄‖² (SolveCube; common practice, no source). Measured on the checks of
// cube_test.go: on a gray object as 4 planes the worst plane differs from the gray image by
// a relative L1 of 0.044 at c = 1, 0.059 at 0.3, 0.070 at 0.1 and 0.087 without the term
// (the gray images of two noise draws differ by 0.039); on a disc growing 20 % across the
// band as 8 planes the diameters from the V² nulls are within −1.9…−0.1 % at c = 1,
// −1.5…+0.3 % at 0.3 and −1.6…+0.4 % without the term.
const DefaultSpectralSmooth = 1.0

// DefaultSpectralJoint is the constant c of the automatic weight of JointSparsity,
// η = c·α·μ·R(x̄)/L(x̄, …, x̄), α the factor of the planes' spatial weights (SolveCube; common
// practice, no source).
const DefaultSpectralJoint = 1.0

// CubeSweeps is the largest number of sweeps over the planes in SolveCube; the sweeps stop
// earlier when one lowers the cube objective by less than CubeSweepTol relative (common
// practice, no source).
const (
	CubeSweeps   = 4
	CubeSweepTol = 1e-4
)

// planeReg is plane k's regularizer in a sweep of SolveCube: μ_k·R(x) + η·S(cube with plane
// k set to x), the other planes held at their values in cube (the normalised planes), S up
// to a constant when it evaluates one plane's part alone (planeSpectral). The engine calls
// it with weight 1 on the normalised image. Otherwise Eval writes x into plane k of cube;
// SolveCube sets the plane to its final image after the plane's runs.
type planeReg struct {
	spatial  Regularizer
	mu       float64
	spectral Regularizer
	eta      float64
	cube     []float64
	k, npix  int
	sg       []float64 // ∂S/∂cube, for a spectral term without planeSpectral
}

func (r *planeReg) Eval(grad, x []float64) float64 {
	// The spatial term writes its gradient into grad, which is then scaled by a (0: grad
	// holds nothing yet) in the pass that adds the spectral term's.
	v, a := 0.0, 0.0
	if r.spatial != nil && r.mu != 0 {
		v, a = r.mu*r.spatial.Eval(grad, x), r.mu
	}
	if ps, ok := r.spectral.(planeSpectral); ok && r.eta != 0 {
		return v + r.eta*ps.evalPlane(grad, a, r.eta, x)
	}
	if grad != nil {
		if a == 0 {
			clear(grad)
		} else {
			for i := range grad {
				grad[i] *= a
			}
		}
	}
	if r.spectral != nil && r.eta != 0 {
		copy(r.cube[r.k*r.npix:], x)
		var sg []float64
		if grad != nil {
			if len(r.sg) != len(r.cube) {
				r.sg = make([]float64, len(r.cube))
			}
			sg = r.sg
		}
		v += r.eta * r.spectral.Eval(sg, r.cube)
		if grad != nil {
			for i, g := range sg[r.k*r.npix : (r.k+1)*r.npix] {
				grad[i] += r.eta * g
			}
		}
	}
	return v
}

// evalDot is Eval with a gradient that also returns Σ_i grad_i·x_i, summed in the order of
// the pixels (dotRegularizer): with SpectralSmoothness in the pass that adds its gradient,
// otherwise in a pass of its own.
func (r *planeReg) evalDot(grad, x []float64) (v, dot float64) {
	if ps, ok := r.spectral.(*SpectralSmoothness); ok && r.eta != 0 {
		a := 0.0
		if r.spatial != nil && r.mu != 0 {
			v, a = r.mu*r.spatial.Eval(grad, x), r.mu
		}
		sv, dot := ps.evalPlaneDot(grad, a, r.eta, x)
		return v + r.eta*sv, dot
	}
	v = r.Eval(grad, x)
	for i, g := range grad {
		dot += g * x[i]
	}
	return v, dot
}

// SolveCube reconstructs an image cube. One plane is the gray image: SolveCube then returns
// Solve's result on the plane's data, bit for bit. With more planes:
//
//  1. Solve reconstructs the gray image x̄ of all the data (grid, automatic weight μ and
//     every step of Solve).
//  2. Each plane k gets the spatial weight μ_k = α·μ·N_k/N, N_k its number of data and N
//     theirs in total: at α = 1 the balance between a plane's χ² and its regularizer is
//     the gray one (Σ_k μ_k = μ, and a cube of identical planes has the gray objective).
//     α is 1 when the gray image fits all channels (its least-regularized χ²ᵣ within twice
//     the scatter of the expected one) or its weight was given; otherwise the gray image
//     is biased by the object's colours, its weight aims at the floor that the chromatic
//     misfit sets and says nothing of the planes, and α is chosen after the sweeps of step
//     4 at α = 1 by the discrepancy aim of Solve measured on the cube's Σχ²/ΣN, each
//     factor's sweeps warm-started from an earlier cube (chooseCubeFactor, at most
//     CubeWeightSteps cubes).
//  3. The spectral weight, unless given: for SpectralSmoothness η = c·N̄/‖x̄‖² with N̄ the
//     mean N_k, so that two neighbouring planes that differ by a fraction δ of the gray
//     image (in the ℓ2 norm) cost c·N̄·δ², as much as the χ² of a plane rising by δ²·c
//     times its expected value; for JointSparsity η = c·α·μ·R(x̄)/L(x̄, …, x̄), so that at the
//     start the spectral term weighs c times the planes' spatial terms together, whatever
//     factor α step 2 chooses (the search fits each factor at its own η). The
//     constants are DefaultSpectralSmooth and DefaultSpectralJoint times
//     CubeProblem.SpectralFactor (common practice, no source; measured on the checks of
//     cube_test.go).
//  4. The cube objective (CubeObjective) is minimised plane by plane (block coordinate
//     descent, Gauss–Seidel order: each plane is fitted with the others held at their
//     latest images, so every plane's run lowers the cube objective; planes that the
//     spectral term does not tie together are fitted at once, one per processor, an odd
//     plane as soon as its even neighbours are fitted for SpectralSmoothness: planeDeps),
//     with positivity and the support, by the runs of Solve: in the first sweep from x̄,
//     the amplitudes first (as Solve does from a smooth start), then the smoothed phase
//     terms, then the exact ones for up to MaxIter iterations; then further sweeps of exact
//     runs of up to PathIter iterations (MaxIter when smaller), at most CubeSweeps in all,
//     until a sweep lowers the objective by less than CubeSweepTol relative. A plane's run in a later sweep resumes from the
//     curvature memory (the quasi-Newton correction pairs) of its run in the sweep before,
//     and ends at Solve's relative-change test without Solve's confirming restarts. A
//     single quasi-Newton run over the whole cube was measured to creep: its one curvature
//     scale cannot suit planes whose χ² differ tenfold (a disc growing 20 % across the
//     band, 8 planes: the objective fell by 0.02 % in 50 iterations, against a factor 5 for
//     each plane alone).
//
// Planes are not moved to a common centre: without absolute or differential phases each
// plane's position is fixed only by the start and the spectral term. Everything runs in an
// order whose dependencies the problem fixes (planeDeps), so the cube does not depend on the
// number of workers.
func SolveCube(cp CubeProblem, s Settings) (*CubeResult, error) {
	P := len(cp.Planes)
	if P == 0 {
		return nil, errors.New("recon: a cube needs at least one plane")
	}
	if P == 1 {
		p := cp.Problem
		p.Data = cp.Planes[0].Data
		r, err := Solve(p, s)
		if err != nil {
			return nil, err
		}
		pr := PlaneResult{CubePlane: cp.Planes[0], Image: r.Image, Chi2: r.Chi2, Chi2r: r.Chi2r, Chi2rTarget: r.Chi2rTarget,
			Weight: r.Weight, FluxScale: r.FluxScale}
		for _, c := range r.Chi2 {
			pr.N += c.N
		}
		_, pr.X, pr.Y, pr.Size = planeMoments(r.Image, r.Grid.N, r.Grid.Pixel)
		return &CubeResult{Planes: []PlaneResult{pr}, Grid: r.Grid, Weight: r.Weight, Spectral: cp.Spectral,
			Objective: r.Objective, Chi2r: r.Chi2r, Iter: r.Iter, Evals: r.Evals, TotalIter: r.TotalIter,
			Status: r.Status, Converged: r.Converged, StopReason: r.StopReason, Notices: r.Notices, Warnings: r.Warnings}, nil
	}
	if cp.Unnormalized {
		return nil, errors.New("recon: a cube of unnormalised images is not supported")
	}
	if cp.Starts == nil && cp.Data == nil {
		return nil, errors.New("recon: no data")
	}
	if s.MaxIter <= 0 {
		s.MaxIter = DefaultMaxIter
	}
	if s.PathIter <= 0 {
		s.PathIter = DefaultPathIter
	}
	// 1. The gray image, or the given starts.
	var (
		gray *Result
		g    GridChoice
		xbar []float64
	)
	if cp.Starts != nil {
		if len(cp.Starts) != P || (cp.PlaneWeights != nil && len(cp.PlaneWeights) != P) {
			panic(fmt.Sprintf("recon: SolveCube: %d planes, %d start images and %d weights", P, len(cp.Starts), len(cp.PlaneWeights)))
		}
		switch {
		case cp.Choice != nil:
			g = *cp.Choice
		case cp.Grid.N > 0:
			g = GridChoice{Grid: cp.Grid, FOV: float64(cp.Grid.N) * cp.Grid.Pixel}
		default:
			return nil, errors.New("recon: a cube from given start images needs their grid")
		}
		xbar = make([]float64, g.N*g.N)
		for k, st := range cp.Starts {
			if len(st) != len(xbar) {
				panic(fmt.Sprintf("recon: SolveCube: start image %d has %d pixels, the grid %d", k+1, len(st), len(xbar)))
			}
			fl := 0.0
			for _, v := range st {
				fl += max(v, 0)
			}
			if !(fl > 0) {
				return nil, fmt.Errorf("recon: plane %d (%s): the start image has no flux", k+1, cp.Planes[k].Label)
			}
			for i, v := range st {
				xbar[i] += max(v, 0) / fl / float64(P)
			}
		}
	} else {
		gs := s
		if s.Progress != nil {
			gs.Progress = func(pr Progress) bool {
				pr.Stage = "gray, " + pr.Stage
				return s.Progress(pr)
			}
		}
		gray = cp.Gray
		if gray == nil {
			var err error
			if gray, err = Solve(cp.Problem, gs); err != nil {
				return nil, fmt.Errorf("recon: gray image: %w", err)
			}
		}
		g, xbar = gray.Grid, gray.Image
	}
	npix := g.N * g.N
	res := &CubeResult{Grid: g, Gray: gray, Spectral: cp.Spectral}
	if gray != nil {
		res.Weight, res.TotalIter, res.WeightFactor = gray.Weight, gray.TotalIter, 1
		for _, m := range gray.Notices {
			res.Notices = append(res.Notices, "gray image: "+m)
		}
	}
	// 2. The planes: an engine each, on the common grid.
	cube := make([]float64, P*npix) // the normalised planes
	for k := range P {
		if cp.Starts != nil {
			st, fl := cp.Starts[k], 0.0
			for _, v := range st {
				fl += max(v, 0)
			}
			for i, v := range st {
				cube[k*npix+i] = max(v, 0) / fl
			}
		} else {
			copy(cube[k*npix:], xbar)
		}
	}
	c := &CubeObjective{NPix: npix, Workers: 1}
	var rep *planeReporter // the planes' progress (runSweep runs several at once)
	if s.Progress != nil {
		rep = newPlaneReporter(P, s.Progress)
	}
	engines := make([]*engine, P)
	regs := make([]*planeReg, P)
	nTot := 0
	for k, pl := range cp.Planes {
		pr := &planeReg{cube: cube, k: k, npix: npix}
		p := cp.Problem
		p.Data, p.Choice, p.Weight = pl.Data, &g, 1
		p.Reg = func(Grid) (Regularizer, error) { return pr, nil }
		// The plane's runs report its spatial weight μ_k, not the engine's weight of 1.
		ps := s
		if s.Progress != nil {
			ps.Progress = func(r Progress) bool {
				r.Weight = pr.mu
				return rep.report(k, r)
			}
		}
		e, err := newEngine(p, ps, g)
		if err != nil {
			return nil, fmt.Errorf("recon: plane %d (%s): %w", k+1, pl.Label, err)
		}
		if cp.Reg != nil && (gray == nil || gray.Weight != 0) {
			if pr.spatial, err = cp.Reg(g.Grid); err != nil {
				return nil, fmt.Errorf("recon: regularizer: %w", err)
			}
		}
		engines[k], regs[k] = e, pr
		nTot += pl.Data.Len(e.obj.Use())
		c.Planes = append(c.Planes, &CubePlaneTerm{Obj: e.obj, Reg: pr.spatial, Rho: e.rho})
	}
	mu0 := make([]float64, P) // the weights at α = 1
	for k, t := range c.Planes {
		switch {
		case cp.Starts == nil:
			t.Mu = gray.Weight * t.Rho / float64(max(nTot, 1))
		case cp.PlaneWeights != nil:
			t.Mu = cp.PlaneWeights[k]
			res.Weight += t.Mu
		}
		regs[k].mu = t.Mu
		mu0[k] = t.Mu
	}
	x := make([]float64, P*npix) // the planes as the engines hold them (flux ≈ 1)
	copy(x, cube)
	if cp.Starts != nil {
		// Positivity and the support, as the engines' bounds hold them.
		for k, e := range engines {
			if e.upper != nil {
				for i, u := range e.upper {
					x[k*npix+i] = min(x[k*npix+i], u)
				}
			}
		}
	}
	// 3. The spectral term and its weight.
	factor := cp.SpectralFactor
	if factor <= 0 {
		factor = 1
	}
	etaFollows := false // η is proportional to the planes' spatial weights (JointSparsity)
	switch cp.Spectral {
	case SpectralSmooth:
		c.Spectral = &SpectralSmoothness{Planes: P, NPix: npix}
		c.Eta = cp.SpectralWeight
		if c.Eta == 0 {
			nn := 0.0
			for _, v := range xbar {
				nn += v * v
			}
			c.Eta = factor * DefaultSpectralSmooth * float64(nTot) / float64(P) / nn
		}
	case SpectralJoint:
		c.Spectral = &JointSparsity{Planes: P, NPix: npix}
		c.Eta = cp.SpectralWeight
		if c.Eta == 0 {
			r := 0.0
			if sp := regs[0].spatial; sp != nil {
				r = sp.Eval(nil, xbar)
			}
			l := c.Spectral.Eval(nil, cube)
			c.Eta = factor * DefaultSpectralJoint * res.Weight * r / l
			etaFollows = c.Eta > 0 && finite(c.Eta)
			if !(c.Eta > 0) || !finite(c.Eta) {
				// Without a spatial term to scale by: the weight at which the spectral
				// term at the start is a tenth of the number of data.
				c.Eta = factor * 0.1 * float64(nTot) / l
			}
		}
	case SpectralNone:
	default:
		return nil, fmt.Errorf("recon: unknown spectral regularizer %d", cp.Spectral)
	}
	// 4. Sweeps over the planes at weight eta, from x and cube as they are.
	smoothing := s.PhaseSmoothing
	if smoothing == 0 {
		smoothing = DefaultPhaseSmoothing
	}
	smoothing = max(smoothing, 0)
	var last []runOut
	// Each plane's exact runs resume from the curvature memory of its run in the sweep
	// before: the other planes enter its objective only through the spectral term, whose
	// Hessian is constant for SpectralSmoothness, so the correction pairs stay valid (for
	// JointSparsity they are an approximation the line search corrects). A run of another
	// objective (the first sweep's amplitudes and smoothed phases, another η), and a run
	// after one that stalled, start without memory. Reusing the State's workspace also saves
	// each run's allocation of it (BenchmarkCubeNight: 270 → 100 MB per reconstruction).
	// From the second sweep on, the runs end at the relative-change test without the
	// restarts that confirm it in Solve: the test across sweeps decides when the cube is
	// done. Measured on BenchmarkCubeNight, those restarts were 8 % of the planes'
	// evaluations and the cube's objective is the same to 2·10⁻⁶, on the disc growing 20 %
	// across the band (TestCubeGrowingDisc) to 2·10⁻⁶ too. Leaving them out of the first
	// sweep too cost 10 % on that disc's objective: there they unstick runs that creep.
	curv := make([]optim.State, P)
	for k, e := range engines {
		e.curv = &curv[k]
	}
	// The data terms' value of each plane at the end of its run, when the run's last
	// evaluation was at its result, serves the evaluations of the cube at the end of the
	// sweep and, when nothing moves the planes after the sweeps, of the result, instead of
	// a Forward per plane each (the same bits: the value does not depend on whether the
	// gradient is asked for).
	forget := func() {
		for _, t := range c.Planes {
			t.known = false
		}
	}
	// The planes are fitted in an order that keeps the dependencies of planeDeps, several at
	// once on up to cubeWorkers goroutines unless they form a chain, each with its transform
	// run serially (one processor each; at 96² a transform's two workers were measured no
	// faster than one inside a reconstruction). Each plane's spectral term has buffers of its
	// own (planeClone).
	deps, chain := planeDeps(P, c.Spectral)
	workers := cubeWorkers(s)
	if chain {
		workers = 1
	}
	for _, e := range engines {
		// Serial throughout, the evaluations between sweeps too: waking the helpers of every
		// plane's transform there left them looking for work while the next sweep ran
		// (about 6 % of its processor time). The data terms' parts, too, run on the plane's
		// goroutine: handed to a helper, they waited for the processor the plane held.
		e.obj.setSerial(workers > 1)
	}
	cost := make([]time.Duration, P) // each plane's last run (runSweep)
	specs := make([]Regularizer, P)
	for k := range specs {
		specs[k] = planeClone(c.Spectral)
	}
	outs := make([]runOut, P)
	errs := make([]error, P)
	iterDone := make([]int, P)
	// fit runs plane k's runs of a sweep and leaves the result in x, cube, outs[k] and
	// iterDone[k]; it writes nothing of the other planes and reads only those its objective
	// holds, which planeDeps keeps from running at the same time.
	fit := func(k, sweep int, label string) error {
		e := engines[k]
		xk := x[k*npix : (k+1)*npix]
		use := e.obj.Use()
		stage := fmt.Sprintf("%splane %d/%d", label, k+1, P)
		if sweep > 0 {
			stage = fmt.Sprintf("%ssweep %d, plane %d/%d", label, sweep+1, k+1, P)
		}
		cur := xk
		if ps, ok := specs[k].(planeSpectral); ok {
			ps.prepare(cube, k)
		}
		e.single = sweep > 0
		if sweep == 0 && cp.Starts == nil {
			e.obj.SetPhaseSmoothing(smoothing)
			if !s.NoAmplitudeFirst && use&amplitudeTypes != 0 && use&(dataset.T3Phi|dataset.VisPhi) != 0 {
				r, err := e.run(cur, 1, use&amplitudeTypes, s.PathIter, stage+" amplitudes")
				if err != nil {
					return err
				}
				cur = r.X
				curv[k].Reset()
			}
			if smoothing > 0 && use&(dataset.T3Phi|dataset.VisPhi) != 0 {
				r, err := e.run(cur, 1, use, s.PathIter, stage+" smoothed phases")
				if err != nil {
					return err
				}
				cur = r.X
				curv[k].Reset()
			}
			e.obj.SetPhaseSmoothing(0)
		}
		iters := s.MaxIter
		if sweep > 0 {
			iters = min(s.PathIter, s.MaxIter)
		}
		r, err := e.run(cur, 1, use, iters, stage)
		if err != nil {
			return err
		}
		iterDone[k] += e.total
		e.total = 0
		if r.Stalled {
			curv[k].Reset()
		}
		c.Planes[k].data, c.Planes[k].known = e.data, r.LastAtX && e.dataOK
		outs[k] = r
		copy(xk, r.X)
		fl := 0.0
		for _, v := range xk {
			fl += v
		}
		divide(cube[k*npix:(k+1)*npix], xk, fl)
		return nil
	}
	sweeps := func(eta float64, label string) error {
		c.Eta = eta
		for k, r := range regs {
			r.spectral, r.eta = specs[k], c.Eta
			curv[k].Reset()
		}
		res.Converged = false
		forget() // the planes may have been moved since (cubeFactor)
		// The sweeps carry the cube away from the centre (V² and closure phases do not
		// fix the position): it is moved back before each set of them, so that the runs
		// that follow fit the moved planes, as Solve does before its final run. Moving the
		// result after its last sweep instead carried faint flux across the edges and left
		// an overfitted cube at χ²ᵣ 0.74 where it had fitted at 0.58.
		if sh := centreCube(c, cp, x, cube, g.N); sh != [2]int{} {
			res.Moves++
		}
		prev := c.Eval(nil, x)
		for sweep := range CubeSweeps {
			runSweep(P, deps, workers, cost, func(k int) {
				if rep != nil {
					rep.start(k)
					defer rep.end(k)
				}
				errs[k] = fit(k, sweep, label)
			})
			for _, err := range errs {
				if err != nil {
					return err
				}
			}
			// In the order of the planes, whatever order they ran in.
			for k := range P {
				res.TotalIter += iterDone[k]
				iterDone[k] = 0
			}
			last = append(last[:0], outs...)
			f := c.Eval(nil, x)
			if prev-f <= CubeSweepTol*math.Max(math.Abs(f), 1) {
				res.Converged = true
				break
			}
			prev = f
		}
		return nil
	}
	// planeChi2r returns the χ²ᵣ of every plane at x, and Σχ²/ΣN of all.
	planeChi2r := func() ([]float64, float64) {
		per := make([]float64, P)
		var c2, nn float64
		for k, e := range engines {
			e.obj.Eval(nil, x[k*npix:(k+1)*npix])
			per[k] = e.obj.TotalChi2r()
			nk := float64(cp.Planes[k].Data.Len(e.obj.Use()))
			c2 += per[k] * nk
			nn += nk
		}
		return per, c2 / math.Max(nn, 1)
	}
	if cp.SpectralSteps > 0 && cp.SpectralWeight == 0 && c.Spectral != nil {
		// The discrepancy path: the largest weight at which no plane's χ²ᵣ rises by more
		// than SpectralTolerance over its start's (the discrepancy idea of the weight
		// choice of Solve, applied across planes; common practice, no source), from
		// η₀ = N̄·NPix/10⁴ (N̄ the mean number of data of a plane; NPix scales the
		// squared difference of two flat unit-flux planes) up by factors of 10, each
		// weight warm-started from the last kept cube. When no weight passes, the first
		// is kept.
		tol := cp.SpectralTolerance
		if tol <= 0 {
			tol = 0.05
		}
		base, _ := planeChi2r()
		eta := float64(nTot) / float64(P) * float64(npix) / 1e4
		keptX, keptCube := slices.Clone(x), slices.Clone(cube)
		keptEta := eta
		var keptLast []runOut
		keptConv := false
		for k := range cp.SpectralSteps {
			if err := sweeps(eta, fmt.Sprintf("weight %.3g, ", eta)); err != nil {
				return nil, err
			}
			per, all := planeChi2r()
			c.Eval(nil, x)
			ok := true
			for i := range per {
				ok = ok && per[i] <= base[i]*(1+tol)
			}
			res.Path = append(res.Path, SpectralStep{Weight: eta, Chi2r: all, Value: c.Spectral.Eval(nil, c.xn), Accepted: ok})
			if ok || k == 0 {
				copy(keptX, x)
				copy(keptCube, cube)
				keptEta, keptConv = eta, res.Converged
				keptLast = append(keptLast[:0], last...)
			}
			if !ok {
				break
			}
			eta *= 10
		}
		switch {
		case len(res.Path) == cp.SpectralSteps && res.Path[len(res.Path)-1].Accepted:
			res.SpectralEdge = "upper"
		case !res.Path[0].Accepted:
			res.SpectralEdge = "lower"
		}
		forget()
		copy(x, keptX)
		copy(cube, keptCube)
		c.Eta, res.Converged = keptEta, keptConv
		last = append(last[:0], keptLast...)
	} else {
		before := res.TotalIter
		if err := sweeps(c.Eta, ""); err != nil {
			return nil, err
		}
		if cp.Starts == nil && gray.Chi2rFloor > 0 && regs[0].spatial != nil && !grayFits(gray) {
			// The factor α of the planes' spatial weights, from the cube's own fit
			// (chooseCubeFactor), when the gray weight was chosen from the data and the
			// gray image could not fit all channels. Each factor's sweeps start from a
			// fitted cube, so they fit the exact terms from the first sweep on.
			s.NoAmplitudeFirst, smoothing = true, 0
			if err := cubeFactor(res, x, cube, &last, c, regs, mu0, etaFollows, res.TotalIter-before, planeChi2r, sweeps); err != nil {
				return nil, err
			}
			forget() // the chosen factor's planes are restored from a copy
		}
	}
	res.SpectralWeight = c.Eta
	for _, r := range last {
		res.Iter += r.Iter
		res.Evals += r.Evals
	}
	res.Status = last[len(last)-1].Status
	if w := planeLimitWarning(last, cp.Planes, s.MaxIter); w != "" {
		res.Warnings = append(res.Warnings, w)
	}
	res.StopReason = fmt.Sprintf("the last sweep lowered the objective by less than %g relative", CubeSweepTol)
	if !res.Converged {
		res.StopReason = fmt.Sprintf("%d sweeps over the planes, the objective still falling", CubeSweeps)
		res.Warnings = append(res.Warnings, fmt.Sprintf("the cube did not settle in %d sweeps over the planes", CubeSweeps))
	}
	if res.Moves > 0 {
		res.Notices = append(res.Notices, fmt.Sprintf("cube moved by whole pixels, all planes alike, before %d of its sets of sweeps to keep the centroid of its planes at the centre: V² and closure phases do not fix the position", res.Moves))
	}
	// The figures of the final cube.
	res.Objective = c.Eval(nil, x)
	if c.Spectral != nil {
		res.SpectralValue = c.Spectral.Eval(nil, c.xn)
	}
	var chiAll float64
	var nAll int
	setting := cp.SpectralSetting
	if setting == "" {
		setting = DefaultSpectralSetting
	}
	for k, t := range c.Planes {
		pr := PlaneResult{CubePlane: cp.Planes[k], Weight: t.Mu, FluxScale: t.Obj.FluxScale()}
		for i, ty := range typeList {
			if t.Obj.Use()&ty != 0 {
				tc := TermChi2{Type: ty, N: t.Obj.N(ty), Weight: t.Obj.w[i], Chi2: t.Obj.Chi2(ty), Chi2r: t.Obj.Chi2r(ty)}
				pr.Chi2 = append(pr.Chi2, tc)
				pr.N += tc.N
				chiAll += tc.Chi2
			}
		}
		nAll += pr.N
		pr.Chi2r = t.Obj.TotalChi2r()
		pr.Chi2rTarget = t.Obj.ExpectedChi2r()
		pr.Image = append([]float64(nil), c.xn[k*npix:(k+1)*npix]...)
		_, pr.X, pr.Y, pr.Size = planeMoments(pr.Image, g.N, g.Pixel)
		res.Planes = append(res.Planes, pr)
		if pr.Chi2r > 1.25*pr.Chi2rTarget {
			res.Warnings = append(res.Warnings, fmt.Sprintf("plane %d (%s) fits its data at χ²ᵣ %.3g, above 1.25 times the %.3g expected: try a smaller %s", k+1, pr.Label, pr.Chi2r, pr.Chi2rTarget, setting))
		} else if w := overfitWarning(k, &pr, res.Chi2rAim); w != "" {
			res.Warnings = append(res.Warnings, w)
		}
	}
	res.Chi2r = chiAll / float64(max(nAll, 1))
	return res, nil
}
