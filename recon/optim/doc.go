// Package optim minimizes smooth functions of many variables subject to
// simple bounds, Lower[i] <= x[i] <= Upper[i], as needed for image
// reconstruction under positivity (pixels >= 0).
//
// # Method
//
// Minimize implements a limited-memory variable-metric method with bounds,
// VMLM-B (Thiébaut 2002, Proc. SPIE 4847, 174). Each iteration
//
//  1. marks the free variables: those not at a bound with the gradient
//     pushing outwards;
//  2. computes a quasi-Newton direction d = -H g on the free variables with
//     the L-BFGS two-loop recursion (Nocedal 1980, Math. Comp. 35, 773;
//     Liu & Nocedal 1989, Math. Prog. 45, 503), every inner product taken
//     over the free variables only, with the initial matrix scaled by
//     s.y/y.y of the newest pair; the other variables get d = 0;
//  3. backtracks along the projected path P(x + a d), starting at a = 1,
//     until the projected sufficient-decrease (Armijo) condition holds
//     (Bertsekas 1982, Constrained Optimization and Lagrange Multiplier
//     Methods, sect. 1.5, from memory);
//  4. stores the pair s = x_new - x, y = g_new - g when s.y > 0.
//
// When the quasi-Newton direction is not a descent direction or its line
// search fails, the pairs are dropped and the iteration is retried along
// the steepest-descent direction; if that fails too the run stops with
// LineSearchFailure. Every accepted step strictly lowers the objective,
// so the sequence of objectives is non-increasing.
//
// This method was chosen over L-BFGS-B (Byrd, Lu, Nocedal & Zhu 1995, SIAM
// J. Sci. Comput. 16, 1190) because, for the intended use (10^4 to 10^6
// pixels bounded below by 0, objective cost dominated by a Fourier
// transform), it needs one gradient evaluation per iteration when the unit
// step is accepted, its per-iteration overhead is O(m n) without the
// compact-representation matrices of L-BFGS-B, and the projected line
// search lets many bounds become active in a single step.
//
// # Stopping
//
// The run stops, and Result.Status says why, when
//   - the projected-gradient infinity norm max_i |P(x - g)_i - x_i| is at
//     most Settings.PGTol (GradientConvergence);
//   - the relative decrease (f_prev - f)/max(|f_prev|, |f|, 1) is at most
//     Settings.FTol (FunctionConvergence), the test of Byrd et al. 1995;
//   - Settings.MaxIter iterations are done (IterationLimit);
//   - no acceptable step exists even along steepest descent, e.g. at the
//     limit of floating-point precision (LineSearchFailure);
//   - Settings.Callback returned false (CallbackStop).
//
// The line search compares objective values, so the projected gradient
// cannot be driven much below sqrt(eps |f|) (eps = 2.2e-16, the relative
// precision of f): a tighter PGTol ends the run by FTol or, with FTol
// disabled, by LineSearchFailure once steps stop lowering f.
//
// A NaN or infinite objective or gradient stops the run with a
// *NonFiniteError naming the iteration and the evaluation; Minimize never
// returns a NaN objective with a nil error.
//
// # Invariants
//
// The workspace (2*Memory+7 float64 vectors and one int vector of length n) is allocated once per
// call of Minimize; iterations allocate nothing. The computation is
// sequential and deterministic: the same problem and start give the
// bit-identical result. Every point passed to Func lies within the bounds.
// Minimize keeps no state between calls, unless given a State to resume
// from and keep its curvature memory in (Settings.Resume), so concurrent
// calls on distinct problems, with distinct States, are safe.
package optim
