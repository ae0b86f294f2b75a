package optim

import (
	"errors"
	"fmt"
	"math"
	"math/bits"
)

// Problem is a smooth objective with optional simple bounds.
type Problem struct {
	// Func returns the objective at x. When grad is non-nil, Func
	// overwrites it with the gradient at x. Minimize always passes a
	// non-nil grad of len(x). Func must not retain x or grad.
	Func func(grad, x []float64) float64

	// Lower and Upper hold per-variable bounds, Lower[i] <= x[i] <= Upper[i].
	// A nil slice means no bound on that side; entries may be -Inf or +Inf.
	// A non-nil slice must have the length of x0.
	Lower, Upper []float64
}

// Iter describes the state after an accepted iteration. It is passed to
// Settings.Callback.
type Iter struct {
	Iter         int       // iterations completed, 1 after the first accepted step
	Evals        int       // calls of Func so far
	F            float64   // objective at X
	ProjGradNorm float64   // infinity norm of the projected gradient at X
	Step         float64   // infinity norm of the accepted change in x
	X            []float64 // current point; read only, valid only during the call
}

// Settings controls Minimize. The zero value selects the documented
// defaults.
type Settings struct {
	// MaxIter is the iteration limit. Zero means 1000.
	MaxIter int

	// FTol stops the run when the relative decrease of the objective in an
	// iteration, (f_prev - f) / max(|f_prev|, |f|, 1), is at most FTol (the
	// test of Byrd et al. 1995). Zero means 1e-10; a negative value
	// disables the test.
	FTol float64

	// PGTol stops the run when the infinity norm of the projected gradient,
	// max_i |P(x - g)_i - x_i| with P the projection on the bounds, is at
	// most PGTol. The test is absolute. Zero means 1e-8; a negative value
	// disables the test.
	PGTol float64

	// Memory is the number of correction pairs kept by the limited-memory
	// quasi-Newton update. Zero means 5, which on the package benchmarks
	// needs about as many iterations as 10 at half the cost per iteration.
	// The workspace holds 2*Memory+7 vectors of the problem size.
	Memory int

	// Scale, when positive, is the scale γ of the initial inverse Hessian γI used for the
	// first steepest-descent step, before any correction pair exists, in place of a step that
	// moves x by 5 % of its norm. A run warm-started from the end of a similar run passes
	// that run's Result.Scale: on a badly scaled problem the default first step is far too
	// long and its line search costs many evaluations.
	Scale float64

	// Resume, when non-nil, is the curvature memory the run starts from and leaves its own
	// in at the end (State); its workspace is reused.
	Resume *State

	// Callback, when non-nil, is called after every accepted iteration.
	// Returning false stops the run with Status CallbackStop.
	Callback func(Iter) bool
}

// Default settings, used where a Settings field is zero.
const (
	DefaultMaxIter = 1000
	DefaultFTol    = 1e-10
	DefaultPGTol   = 1e-8
	DefaultMemory  = 5
)

// Status says why Minimize stopped.
type Status int

// The stop reasons.
const (
	NotTerminated       Status = iota // the run ended with an error
	FunctionConvergence               // relative objective change below FTol
	GradientConvergence               // projected-gradient norm below PGTol
	IterationLimit                    // MaxIter iterations done
	LineSearchFailure                 // no acceptable step along a descent direction, even steepest descent
	CallbackStop                      // Settings.Callback returned false
)

var statusNames = [...]string{
	NotTerminated:       "not terminated",
	FunctionConvergence: "converged: relative objective change below tolerance",
	GradientConvergence: "converged: projected gradient below tolerance",
	IterationLimit:      "iteration limit reached",
	LineSearchFailure:   "line search failed",
	CallbackStop:        "stopped by callback",
}

// String returns a short English description of s.
func (s Status) String() string {
	if s >= 0 && int(s) < len(statusNames) {
		return statusNames[s]
	}
	return fmt.Sprintf("optim.Status(%d)", int(s))
}

// Converged reports whether s is FunctionConvergence or GradientConvergence.
func (s Status) Converged() bool {
	return s == FunctionConvergence || s == GradientConvergence
}

// Result is the outcome of Minimize.
type Result struct {
	X            []float64 // best point found; newly allocated
	F            float64   // objective at X
	Iter         int       // accepted iterations
	Evals        int       // calls of Func
	Status       Status    // why the run stopped
	ProjGradNorm float64   // infinity norm of the projected gradient at X
	// Scale is the scale γ = s·y/y·y of the newest correction pair at the end (0 when there
	// was none), for Settings.Scale of a warm-started run.
	Scale float64
	// LastAtX reports that the last call of Func was at X, so that what Func keeps of its
	// last evaluation holds for X (false when the run ended after trial points that were
	// not accepted).
	LastAtX bool
}

// ErrNonFinite is wrapped by the error Minimize returns when Func yields
// a NaN or infinite value or gradient component.
var ErrNonFinite = errors.New("non-finite objective or gradient")

// NonFiniteError reports where Func produced a non-finite number.
type NonFiniteError struct {
	Iter      int     // iteration being computed, 1-based; 0 = the evaluation at the start
	Eval      int     // 1-based index of the offending call of Func
	Value     float64 // objective returned by that call
	GradIndex int     // index of the first non-finite gradient component, -1 if the gradient was finite
}

func (e *NonFiniteError) Error() string {
	if e.GradIndex >= 0 {
		return fmt.Sprintf("optim: gradient component %d is not finite at iteration %d, evaluation %d (objective %g)",
			e.GradIndex, e.Iter, e.Eval, e.Value)
	}
	return fmt.Sprintf("optim: objective is %g at iteration %d, evaluation %d", e.Value, e.Iter, e.Eval)
}

// Unwrap returns ErrNonFinite.
func (e *NonFiniteError) Unwrap() error { return ErrNonFinite }

// Line search constants. The sufficient-decrease constant 1e-4 is the
// usual choice (Nocedal & Wright 2006, Numerical Optimization, sect. 3.1,
// from memory); the interpolated step is kept within [0.1, 0.5] of the
// previous trial (Dennis & Schnabel 1983, sect. 6.3.2, from memory). The
// first steepest-descent step changing x by 5 % is common practice, no
// source.
const (
	armijoC1     = 1e-4
	maxBacktrack = 30
	initialDelta = 0.05 // first step moves x by about 5 % of its norm
)

// workspace holds every vector used by one run, allocated once.
type workspace struct {
	n, m   int
	x, g   []float64
	xt, gt []float64   // trial point and its gradient
	d      []float64   // search direction
	q      []float64   // two-loop recursion vector; accept's new s, then swapped into the pairs
	ynew   []float64   // accept's new y, then swapped into the pairs
	runs   []int       // free variables as half-open index ranges
	masks  []uint8     // accept's free variables, four bits per byte (acceptLowerAVX)
	s, y   [][]float64 // correction pairs, ring buffer
	alpha  []float64
	sy     []float64
	k      int // number of stored pairs
	head   int // index of the oldest pair
}

func newWorkspace(n, m int) *workspace {
	w := &workspace{n: n, m: m}
	// One backing array keeps the vectors contiguous and the allocation count fixed.
	buf := make([]float64, (2*m+7)*n)
	next := func() []float64 {
		v := buf[:n:n]
		buf = buf[n:]
		return v
	}
	w.x, w.g, w.xt, w.gt, w.d, w.q, w.ynew = next(), next(), next(), next(), next(), next(), next()
	w.s = make([][]float64, m)
	w.y = make([][]float64, m)
	for i := range m {
		w.s[i] = next()
		w.y[i] = next()
	}
	w.runs = make([]int, 0, n+1)
	w.masks = make([]uint8, n/4)
	w.alpha = make([]float64, m)
	w.sy = make([]float64, m)
	return w
}

// Minimize minimizes p.Func from x0 subject to the bounds of p, by a
// limited-memory variable-metric method with bounds (VMLM-B, Thiébaut
// 2002, Proc. SPIE 4847, 174). See the package documentation for the
// algorithm. x0 is not modified; it is projected on the bounds before the
// first evaluation.
//
// Minimize returns an error for an invalid problem (nil Func, wrong bound
// lengths, Lower > Upper, NaN bounds) and a *NonFiniteError when Func
// produces a non-finite value; in the latter case Result holds the last
// point with a finite objective and Status NotTerminated.
func Minimize(p Problem, x0 []float64, s Settings) (Result, error) {
	n := len(x0)
	if p.Func == nil {
		return Result{}, errors.New("optim: Problem.Func is nil")
	}
	if n == 0 {
		return Result{}, errors.New("optim: no variables")
	}
	if p.Lower != nil && len(p.Lower) != n {
		return Result{}, fmt.Errorf("optim: len(Lower) = %d, want %d", len(p.Lower), n)
	}
	if p.Upper != nil && len(p.Upper) != n {
		return Result{}, fmt.Errorf("optim: len(Upper) = %d, want %d", len(p.Upper), n)
	}
	for i, v := range x0 {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return Result{}, fmt.Errorf("optim: start x0[%d] is %g", i, v)
		}
	}
	for i := range n {
		lo, hi := bound(p.Lower, i, math.Inf(-1)), bound(p.Upper, i, math.Inf(1))
		if math.IsNaN(lo) || math.IsNaN(hi) {
			return Result{}, fmt.Errorf("optim: bound of variable %d is NaN", i)
		}
		if lo > hi {
			return Result{}, fmt.Errorf("optim: variable %d has Lower %g > Upper %g", i, lo, hi)
		}
		if lo == math.Inf(1) || hi == math.Inf(-1) {
			return Result{}, fmt.Errorf("optim: variable %d has an infinite bound on the wrong side", i)
		}
	}
	maxIter := s.MaxIter
	if maxIter <= 0 {
		maxIter = DefaultMaxIter
	}
	ftol := s.FTol
	if ftol == 0 {
		ftol = DefaultFTol
	}
	pgtol := s.PGTol
	if pgtol == 0 {
		pgtol = DefaultPGTol
	}
	m := s.Memory
	if m <= 0 {
		m = DefaultMemory
	}

	w := s.Resume.workspace(n, m)
	r := &run{p: p, w: w}
	if s.Scale > 0 && !math.IsInf(s.Scale, 0) {
		r.gamma = s.Scale
	}
	s.Resume.resume(r)
	copy(w.x, x0)
	r.project(w.x)

	res := Result{X: make([]float64, n)}
	finish := func(st Status, err error) (Result, error) {
		copy(res.X, w.x)
		res.F = r.f
		res.Iter = r.iter
		res.Evals = r.evals
		res.Status = st
		res.ProjGradNorm = r.pgnorm
		res.Scale = r.gamma
		res.LastAtX = r.lastAtX
		s.Resume.keep(r)
		return res, err
	}

	f, err := r.eval(w.g, w.x)
	if err != nil {
		r.f = math.NaN()
		r.pgnorm = math.NaN()
		return finish(NotTerminated, err)
	}
	r.f, r.lastAtX = f, true
	r.pgnorm = r.projGradNorm(w.x, w.g)
	r.nfree = r.setFree(w.x, w.g)
	if pgtol > 0 && r.pgnorm <= pgtol {
		return finish(GradientConvergence, nil)
	}

	for r.iter < maxIter {
		if r.pgnorm == 0 {
			// Exactly stationary: no variable can move, whatever PGTol is.
			return finish(GradientConvergence, nil)
		}
		fprev := r.f
		step, ok, err := r.iterate()
		if err != nil {
			return finish(NotTerminated, err)
		}
		if !ok {
			return finish(LineSearchFailure, nil)
		}
		r.iter++
		if s.Callback != nil && !s.Callback(Iter{Iter: r.iter, Evals: r.evals, F: r.f,
			ProjGradNorm: r.pgnorm, Step: step, X: w.x}) {
			return finish(CallbackStop, nil)
		}
		if pgtol > 0 && r.pgnorm <= pgtol {
			return finish(GradientConvergence, nil)
		}
		if ftol > 0 && fprev-r.f <= ftol*max(math.Abs(fprev), math.Abs(r.f), 1) {
			return finish(FunctionConvergence, nil)
		}
	}
	return finish(IterationLimit, nil)
}

func bound(b []float64, i int, def float64) float64 {
	if b == nil {
		return def
	}
	return b[i]
}

// run is the state of one call of Minimize.
type run struct {
	p      Problem
	w      *workspace
	f      float64
	pgnorm float64
	iter   int
	evals  int
	gamma  float64 // scale of the initial inverse Hessian, s.y/y.y of the newest pair
	nfree  int     // number of free variables at x, whose runs are in w.runs (setFree)
	// lastAtX: the last call of Func was at x (Result.LastAtX).
	lastAtX bool
}

// eval calls Func and checks that value and gradient are finite.
func (r *run) eval(grad, x []float64) (float64, error) {
	f, err := r.evalValue(grad, x)
	if err != nil {
		return f, err
	}
	return f, r.checkGrad(grad, f)
}

// evalValue calls Func and checks that the value is finite; the gradient is
// left to checkGrad, or to the sum over it that accept computes anyway.
func (r *run) evalValue(grad, x []float64) (float64, error) {
	r.evals++
	r.lastAtX = false
	f := r.p.Func(grad, x)
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return f, &NonFiniteError{Iter: r.current(), Eval: r.evals, Value: f, GradIndex: -1}
	}
	return f, nil
}

// checkGrad returns the error for the first non-finite component of the
// gradient of the latest evaluation, of value f, or nil.
func (r *run) checkGrad(grad []float64, f float64) error {
	for i, v := range grad {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return &NonFiniteError{Iter: r.current(), Eval: r.evals, Value: f, GradIndex: i}
		}
	}
	return nil
}

// current returns the iteration being computed: 0 for the evaluation at
// the start, k+1 during the line search after k accepted iterations.
func (r *run) current() int {
	if r.evals <= 1 {
		return 0
	}
	return r.iter + 1
}

// project clips x on the bounds in place.
func (r *run) project(x []float64) {
	if lo := r.p.Lower; lo != nil {
		for i, l := range lo {
			if x[i] < l {
				x[i] = l
			}
		}
	}
	if hi := r.p.Upper; hi != nil {
		for i, u := range hi {
			if x[i] > u {
				x[i] = u
			}
		}
	}
}

// projGradNorm returns max_i |P(x - g)_i - x_i|.
func (r *run) projGradNorm(x, g []float64) float64 {
	lo, hi := r.p.Lower, r.p.Upper
	var nrm float64
	for i, gi := range g {
		v := x[i] - gi
		if lo != nil && v < lo[i] {
			v = lo[i]
		}
		if hi != nil && v > hi[i] {
			v = hi[i]
		}
		nrm = max(nrm, math.Abs(v-x[i]))
	}
	return nrm
}

// setFree marks the variables that may move: those not held at a bound by
// the sign of the gradient. They are stored as runs of consecutive
// indices, [runs[2k], runs[2k+1]), so that the restricted inner products
// below are plain vector loops; image supports make the runs long. It
// returns the number of free variables. It serves the starting point;
// accept marks those of each new point in its own pass, with the same
// rule.
func (r *run) setFree(x, g []float64) int {
	lo, hi := r.p.Lower, r.p.Upper
	runs := r.w.runs[:0]
	nf := 0
	in := false
	for i, gi := range g {
		f := true
		if lo != nil && x[i] <= lo[i] && gi > 0 {
			f = false
		}
		if hi != nil && x[i] >= hi[i] && gi < 0 {
			f = false
		}
		if f {
			nf++
			if !in {
				runs = append(runs, i)
				in = true
			}
		} else if in {
			runs = append(runs, i)
			in = false
		}
	}
	if in {
		runs = append(runs, len(g))
	}
	r.w.runs = runs
	return nf
}

// dotFree returns the inner product of a and b over the free variables.
// The sums run in four interleaved partial sums, added in a fixed order at
// the end: one running sum waits for each addition to finish, and four
// keep the processor's adders busy (about three times faster on a
// 16384-pixel image; common practice, no source). The order depends only
// on the free set, so results stay reproducible.
func (r *run) dotFree(a, b []float64) float64 {
	var s0, s1, s2, s3 float64
	runs := r.w.runs
	for k := 0; k+1 < len(runs); k += 2 {
		a := a[runs[k]:runs[k+1]]
		b := b[runs[k]:runs[k+1]]
		b = b[:len(a)]
		i := 0
		for ; i+4 <= len(a); i += 4 {
			a4, b4 := a[i:i+4:i+4], b[i:i+4:i+4]
			s0 += a4[0] * b4[0]
			s1 += a4[1] * b4[1]
			s2 += a4[2] * b4[2]
			s3 += a4[3] * b4[3]
		}
		for ; i < len(a); i++ {
			s0 += a[i] * b[i]
		}
	}
	return (s0 + s1) + (s2 + s3)
}

// dot3Free returns a.b, b.b and a.c over the free variables in one pass,
// each in two interleaved partial sums (see dotFree).
func (r *run) dot3Free(a, b, c []float64) (ab, bb, ac float64) {
	var ab1, bb1, ac1 float64
	runs := r.w.runs
	for k := 0; k+1 < len(runs); k += 2 {
		lo, hi := runs[k], runs[k+1]
		a, b, c := a[lo:hi], b[lo:hi], c[lo:hi]
		b, c = b[:len(a)], c[:len(a)]
		i := 0
		for ; i+2 <= len(a); i += 2 {
			a2, b2, c2 := a[i:i+2:i+2], b[i:i+2:i+2], c[i:i+2:i+2]
			ab += a2[0] * b2[0]
			bb += b2[0] * b2[0]
			ac += a2[0] * c2[0]
			ab1 += a2[1] * b2[1]
			bb1 += b2[1] * b2[1]
			ac1 += a2[1] * c2[1]
		}
		for ; i < len(a); i++ {
			ab += a[i] * b[i]
			bb += b[i] * b[i]
			ac += a[i] * c[i]
		}
	}
	return ab + ab1, bb + bb1, ac + ac1
}

// scaleFree sets dst[i] = alpha*a[i] on the free variables and 0 elsewhere.
func (r *run) scaleFree(dst []float64, alpha float64, a []float64) {
	runs := r.w.runs
	prev := 0
	for k := 0; k+1 < len(runs); k += 2 {
		lo, hi := runs[k], runs[k+1]
		clear(dst[prev:lo])
		a := a[lo:hi]
		dst := dst[lo:hi]
		dst = dst[:len(a)]
		for i, ai := range a {
			dst[i] = alpha * ai
		}
		prev = hi
	}
	clear(dst[prev:])
}

// direction computes the search direction d = -H g restricted to the free
// variables, with the two-loop recursion of Nocedal (1980, Math. Comp. 35,
// 773) in which every inner product runs over the free variables only
// (Thiébaut 2002). Pairs whose restricted s.y is not positive are skipped.
// It returns g.d and whether any pair was used.
//
// Each update of q (and of d) is applied in the pass that computes the next
// inner products, which reads the vectors once instead of twice; the
// arithmetic and its order are those of separate passes.
func (r *run) direction() (gd float64, used bool) {
	w := r.w
	q, g, d := w.q, w.g, w.d
	// Entries of q outside the free set are never read: every inner
	// product and update below is restricted to the free runs. q starts as
	// g: src is g until the first update writes q = src + c·u.
	src := g
	var c float64
	var u []float64 // the update pending on q, nil for none
	gamma := 0.0
	for j := w.k - 1; j >= 0; j-- {
		idx := (w.head + j) % w.m
		s, y := w.s[idx], w.y[idx]
		sy, yy, sq := r.updateDot3Free(q, src, c, u, s, y)
		if u != nil {
			src, u = q, nil
		}
		if !(sy > 0) || !(yy > 0) {
			w.sy[idx] = 0
			continue
		}
		w.sy[idx] = sy
		if gamma == 0 {
			gamma = sy / yy
		}
		a := sq / sy
		w.alpha[idx] = a
		c, u = -a, y
		used = true
	}
	if !used {
		return 0, false
	}
	if u != nil {
		r.updateFree(q, src, c, u)
	}
	// d holds -H g: start from -gamma q (0 off the free set) and apply
	// the second loop with negated coefficients.
	u = nil
	for j := 0; j < w.k; j++ {
		idx := (w.head + j) % w.m
		sy := w.sy[idx]
		if sy == 0 {
			continue
		}
		s, y := w.s[idx], w.y[idx]
		var yd float64
		if u == nil {
			yd = r.scaleDotFree(d, -gamma, q, y)
		} else {
			yd = r.updateDotFree(d, c, u, y)
		}
		c, u = -(w.alpha[idx] + yd/sy), s
	}
	r.gamma = gamma
	return r.updateDotFree(d, c, u, g), true
}

// updateFree sets dst[i] = src[i] + c*u[i] on the free variables.
func (r *run) updateFree(dst, src []float64, c float64, u []float64) {
	runs := r.w.runs
	for k := 0; k+1 < len(runs); k += 2 {
		lo, hi := runs[k], runs[k+1]
		dst, src, u := dst[lo:hi], src[lo:hi], u[lo:hi]
		src, u = src[:len(dst)], u[:len(dst)]
		for i := range dst {
			dst[i] = src[i] + c*u[i]
		}
	}
}

// updateDot3Free sets q = src + c·u on the free variables when u is not nil
// and returns a.b, b.b and a.q afterwards (a.src when u is nil), with the
// partial sums of dot3Free.
func (r *run) updateDot3Free(q, src []float64, c float64, u, a, b []float64) (ab, bb, aq float64) {
	if u == nil {
		return r.dot3Free(a, b, src)
	}
	var ab1, bb1, aq1 float64
	runs := r.w.runs
	for k := 0; k+1 < len(runs); k += 2 {
		lo, hi := runs[k], runs[k+1]
		a, b, q, src, u := a[lo:hi], b[lo:hi], q[lo:hi], src[lo:hi], u[lo:hi]
		b, q, src, u = b[:len(a)], q[:len(a)], src[:len(a)], u[:len(a)]
		i := 0
		for ; i+2 <= len(a); i += 2 {
			a2, b2, q2 := a[i:i+2:i+2], b[i:i+2:i+2], q[i:i+2:i+2]
			s2, u2 := src[i:i+2:i+2], u[i:i+2:i+2]
			q0 := s2[0] + c*u2[0]
			q1 := s2[1] + c*u2[1]
			q2[0], q2[1] = q0, q1
			ab += a2[0] * b2[0]
			bb += b2[0] * b2[0]
			aq += a2[0] * q0
			ab1 += a2[1] * b2[1]
			bb1 += b2[1] * b2[1]
			aq1 += a2[1] * q1
		}
		for ; i < len(a); i++ {
			qi := src[i] + c*u[i]
			q[i] = qi
			ab += a[i] * b[i]
			bb += b[i] * b[i]
			aq += a[i] * qi
		}
	}
	return ab + ab1, bb + bb1, aq + aq1
}

// scaleDotFree sets d = c·src on the free variables and 0 elsewhere, and
// returns y.d over the free variables with the partial sums of dotFree.
func (r *run) scaleDotFree(d []float64, c float64, src, y []float64) float64 {
	var s0, s1, s2, s3 float64
	runs := r.w.runs
	prev := 0
	for k := 0; k+1 < len(runs); k += 2 {
		lo, hi := runs[k], runs[k+1]
		clear(d[prev:lo])
		prev = hi
		d, src, y := d[lo:hi], src[lo:hi], y[lo:hi]
		src, y = src[:len(d)], y[:len(d)]
		i := 0
		for ; i+4 <= len(d); i += 4 {
			d4, x4, y4 := d[i:i+4:i+4], src[i:i+4:i+4], y[i:i+4:i+4]
			d0, d1, d2, d3 := c*x4[0], c*x4[1], c*x4[2], c*x4[3]
			d4[0], d4[1], d4[2], d4[3] = d0, d1, d2, d3
			s0 += y4[0] * d0
			s1 += y4[1] * d1
			s2 += y4[2] * d2
			s3 += y4[3] * d3
		}
		for ; i < len(d); i++ {
			di := c * src[i]
			d[i] = di
			s0 += y[i] * di
		}
	}
	clear(d[prev:])
	return (s0 + s1) + (s2 + s3)
}

// updateDotFree sets d += c·u on the free variables and returns y.d over
// them afterwards, with the partial sums of dotFree.
func (r *run) updateDotFree(d []float64, c float64, u, y []float64) float64 {
	var s0, s1, s2, s3 float64
	runs := r.w.runs
	for k := 0; k+1 < len(runs); k += 2 {
		lo, hi := runs[k], runs[k+1]
		d, u, y := d[lo:hi], u[lo:hi], y[lo:hi]
		u, y = u[:len(d)], y[:len(d)]
		i := 0
		for ; i+4 <= len(d); i += 4 {
			d4, u4, y4 := d[i:i+4:i+4], u[i:i+4:i+4], y[i:i+4:i+4]
			d0, d1, d2, d3 := d4[0]+c*u4[0], d4[1]+c*u4[1], d4[2]+c*u4[2], d4[3]+c*u4[3]
			d4[0], d4[1], d4[2], d4[3] = d0, d1, d2, d3
			s0 += y4[0] * d0
			s1 += y4[1] * d1
			s2 += y4[2] * d2
			s3 += y4[3] * d3
		}
		for ; i < len(d); i++ {
			di := d[i] + c*u[i]
			d[i] = di
			s0 += y[i] * di
		}
	}
	return (s0 + s1) + (s2 + s3)
}

// steepest sets d to minus the free gradient and returns g.d.
func (r *run) steepest() float64 {
	w := r.w
	r.scaleFree(w.d, -1, w.g)
	return -r.dotFree(w.g, w.g)
}

// iterate performs one iteration: direction, projected line search and
// update of the correction pairs. It returns the infinity norm of the
// accepted step and false when no acceptable step was found.
func (r *run) iterate() (float64, bool, error) {
	w := r.w
	if r.nfree == 0 {
		// Every variable is held at a bound: the point is stationary.
		return 0, false, nil
	}
	gd, used := r.direction()
	if used && !(gd < 0) {
		used = false
	}
	for attempt := 0; attempt < 2; attempt++ {
		var alpha float64
		if used {
			alpha = 1
		} else {
			gd = r.steepest()
			if !(gd < 0) {
				return 0, false, nil
			}
			alpha = r.firstStep()
		}
		step, ok, err := r.lineSearch(alpha, gd)
		if err != nil {
			return 0, false, err
		}
		if ok {
			return step, true, nil
		}
		if !used {
			return 0, false, nil
		}
		// The quasi-Newton direction failed: forget the pairs and retry
		// along steepest descent.
		w.k, w.head = 0, 0
		used = false
	}
	return 0, false, nil
}

// firstStep returns the length of a steepest-descent trial step without
// curvature information: the scaled step of the newest pairs when known,
// otherwise a step that changes x by initialDelta of its norm (or a unit
// step in the infinity norm when x = 0).
func (r *run) firstStep() float64 {
	w := r.w
	if r.gamma > 0 {
		return r.gamma
	}
	var dn, xn, dmax float64
	for i, di := range w.d {
		dn += di * di
		xn += w.x[i] * w.x[i]
		dmax = max(dmax, math.Abs(di))
	}
	if xn > 0 {
		return initialDelta * math.Sqrt(xn/dn)
	}
	return 1 / dmax
}

// lineSearch backtracks along the projected path x(a) = P(x + a d) until
// the sufficient-decrease condition f(x(a)) <= f + c1 g.(x(a) - x) holds
// (Bertsekas 1982, Constrained Optimization and Lagrange Multiplier
// Methods, sect. 1.5, from memory). Trial steps after the first come from the minimum
// of the quadratic through f, g.d and the last trial, safeguarded to
// [0.1, 0.5] of that trial. On success the point, gradient and correction
// pairs are updated.
func (r *run) lineSearch(alpha, gd float64) (float64, bool, error) {
	w := r.w
	for range maxBacktrack {
		moved, decr := r.trial(alpha)
		if !moved {
			return 0, false, nil
		}
		ft, err := r.evalValue(w.gt, w.xt)
		if err != nil {
			return 0, false, err
		}
		if ft <= r.f+armijoC1*decr && ft <= r.f {
			step, err := r.accept(ft)
			return step, err == nil, err
		}
		if err := r.checkGrad(w.gt, ft); err != nil {
			return 0, false, err
		}
		// Quadratic interpolation of phi(a) = f(x + a d) from phi(0), phi'(0) and phi(alpha).
		den := 2 * (ft - r.f - gd*alpha)
		next := 0.5 * alpha
		if den > 0 {
			next = -gd * alpha * alpha / den
		}
		alpha = min(max(next, 0.1*alpha), 0.5*alpha)
	}
	return 0, false, nil
}

// trial sets the trial point xt = P(x + alpha d) and returns whether it differs from x and
// the linear decrease g.(xt - x), negative for a descent step, in one pass.
func (r *run) trial(alpha float64) (moved bool, decr float64) {
	w := r.w
	x, g, xt, d := w.x, w.g, w.xt, w.d
	lo, hi := r.p.Lower, r.p.Upper
	xs := x
	if lo != nil && hi == nil {
		// Lower bounds only, the case of images: the loop below without the tests of the
		// missing bound, and without a branch on v != x_i. A variable that did not move
		// adds g_i·0 = ±0 to the sum, which leaves it unchanged (g is finite), so the
		// sum has the bits of the general loop's; it is zero when nothing moved, and
		// only then does a second pass look whether anything did.
		lo, d, g, xt := lo[:len(x)], d[:len(x)], g[:len(x)], xt[:len(x)]
		i0 := 0
		if hasAcceptAVX {
			// Four at a time, the same operations in the same order (trialLowerAVX).
			i0 = len(x) &^ 3
			if i0 > 0 {
				decr = trialLowerAVX(xt, x, d, g, lo, alpha)
			}
		}
		for i := i0; i < len(x); i++ {
			xi := x[i]
			v := xi + alpha*d[i]
			if v < lo[i] {
				v = lo[i]
			}
			xt[i] = v
			decr += g[i] * (v - xi)
		}
		moved = decr != 0
		if !moved {
			for i, xi := range x {
				if xt[i] != xi {
					moved = true
					break
				}
			}
		}
		xs = x[:0] // done: the general loop below has nothing left
	}
	for i, xi := range xs {
		v := xi + alpha*d[i]
		if lo != nil && v < lo[i] {
			v = lo[i]
		}
		if hi != nil && v > hi[i] {
			v = hi[i]
		}
		xt[i] = v
		if v != xi {
			moved = true
			decr += g[i] * (v - xi)
		}
	}
	return moved, decr
}

// acceptLower is accept's pass for lower bounds alone, the case of images: the pair s =
// xt − x, y = gt − g, its s.y, the step's and the projected gradient's infinity norms, and
// the free runs of the new point, written to runs (of room len(x)+1), with their number and
// whether the last one is open. Where the processor has AVX, acceptLowerAVX does the
// variables four at a time and leaves their free bits in masks (of room len(x)/4), from which
// the runs are read; the rest are done here. A function of its own, so that the loop's
// values stay in registers. A run starts or ends at i when free changes: i is written at the
// end of runs every time and kept only then, without a branch that scattered variables at
// the bound would mispredict.
func acceptLower(s, y, x, xt, g, gt, lo []float64, runs []int, masks []uint8) (sy, step, pg float64, nr int, in bool) {
	n := len(x)
	s, y, xt, g, gt, lo, runs = s[:n], y[:n], xt[:n], g[:n], gt[:n], lo[:n], runs[:n+1]
	i0 := 0
	if hasAcceptAVX && n >= 4 {
		// Four at a time, then the free runs from the bytes of free bits: a run starts or ends
		// at bit j where the bit differs from the one before (from in for bit 0).
		var out [9]float64
		masks = masks[:n/4]
		acceptLowerAVX(s, y, x, xt, g, gt, lo, masks, &out)
		sy = out[0]
		for _, a := range out[1:5] {
			if a > step {
				step = a
			}
		}
		for _, a := range out[5:9] {
			if a > pg {
				pg = a
			}
		}
		prev := uint8(0)
		for q, m := range masks {
			t := (m ^ (m<<1 | prev)) & 15
			for t != 0 {
				runs[nr] = 4*q + bits.TrailingZeros8(t)
				nr++
				t &= t - 1
			}
			prev = m >> 3
		}
		in = prev != 0
		i0 = len(masks) * 4
	}
	for i := i0; i < n; i++ {
		xi := x[i]
		xn, gn, l := xt[i], gt[i], lo[i]
		si, yi := xn-xi, gn-g[i]
		s[i], y[i] = si, yi
		sy += si * yi
		if a := math.Abs(si); a > step {
			step = a
		}
		v := xn - gn
		if v < l {
			v = l
		}
		if a := math.Abs(v - xn); a > pg {
			pg = a
		}
		free := !(xn <= l && gn > 0)
		edge := 0
		if free != in {
			edge = 1
		}
		runs[nr] = i
		nr += edge
		in = free
	}
	return sy, step, pg, nr, in
}

// accept moves to the trial point, stores the correction pair when its
// curvature s.y is positive, updates the projected-gradient norm and
// returns the infinity norm of the step, all in one pass. That pass also
// checks the trial gradient gt: with x, xt and g finite, s.y is finite
// unless a component of gt is not (an s_i·y_i is then NaN or infinite), so
// only a non-finite s.y calls for checkGrad's scan. The pair is written to
// spare vectors (q and ynew) and swapped into the ring only after that
// check, so a run that stops on a non-finite gradient keeps its pairs.
func (r *run) accept(ft float64) (float64, error) {
	w := r.w
	var idx int
	if w.k < w.m {
		idx = (w.head + w.k) % w.m
	} else {
		idx = w.head // the oldest pair is replaced
	}
	lo, hi := r.p.Lower, r.p.Upper
	s, y := w.q, w.ynew
	x, g, xt, gt := w.x, w.g, w.xt, w.gt
	s, y, g, xt, gt = s[:len(x)], y[:len(x)], g[:len(x)], xt[:len(x)], gt[:len(x)]
	var sy, step, pg float64
	// The free variables of the new point (setFree's rule), marked in the same pass.
	runs := w.runs[:0]
	nf, in := 0, false
	if lo != nil && hi == nil {
		// Lower bounds only, the case of images: the loop below without the
		// tests of the missing bounds.
		var nr int
		sy, step, pg, nr, in = acceptLower(s, y, x, xt, g, gt, lo, runs[:len(x)+1], w.masks)
		runs = runs[:nr]
		for k := 0; k+1 < len(runs); k += 2 {
			nf += runs[k+1] - runs[k]
		}
		if in {
			nf += len(x) - runs[len(runs)-1]
		}
		x = x[:0] // done: the general loop below has nothing left
	}
	for i, xi := range x {
		xn, gn := xt[i], gt[i]
		si, yi := xn-xi, gn-g[i]
		s[i], y[i] = si, yi
		sy += si * yi
		// Comparisons rather than max: the values are finite and non-negative, where
		// they agree, and max's handling of NaN and signed zeros chains every element
		// to the previous one (measured: three times slower on 16384 variables).
		if a := math.Abs(si); a > step {
			step = a
		}
		v := xn - gn
		free := true
		if lo != nil {
			if v < lo[i] {
				v = lo[i]
			}
			if xn <= lo[i] && gn > 0 {
				free = false
			}
		}
		if hi != nil {
			if v > hi[i] {
				v = hi[i]
			}
			if xn >= hi[i] && gn < 0 {
				free = false
			}
		}
		if a := math.Abs(v - xn); a > pg {
			pg = a
		}
		if free != in {
			runs = append(runs, i)
			in = free
		}
		if free {
			nf++
		}
	}
	if in {
		runs = append(runs, len(gt))
	}
	if math.IsNaN(sy) || math.IsInf(sy, 0) {
		if err := r.checkGrad(gt, ft); err != nil {
			return 0, err
		}
	}
	w.runs, r.nfree = runs, nf
	if sy > 0 {
		w.s[idx], w.q = w.q, w.s[idx]
		w.y[idx], w.ynew = w.ynew, w.y[idx]
	}
	switch {
	case sy > 0 && w.k < w.m:
		w.k++
	case sy > 0:
		w.head = (w.head + 1) % w.m
	case w.k == w.m:
		// The pair is rejected, and the oldest one goes all the same (as when
		// the new pair took its place before the test).
		w.head = (w.head + 1) % w.m
		w.k--
	}
	w.x, w.xt = w.xt, w.x
	w.g, w.gt = w.gt, w.g
	r.f, r.lastAtX = ft, true
	r.pgnorm = pg
	return step, nil
}
