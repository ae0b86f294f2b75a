// Package recon is the reconstruction engine of vcz: the forward model, the data terms and
// the constrained minimisation that turns interferometric data into an image.
//
// # Data
//
// The data come as a *dataset.Data (package vcz/dataset: the data set model, its selection
// and summary, and the table of data types); recon adds the grid chosen from the data
// (ChooseGrid) and everything that evaluates a model against them.
//
// # Conventions
//
// Signs, axes and units follow CONVENTIONS.md of the project: x towards east, y towards north,
// pixel (ix, iy) at x = −(ix − N/2)·pixel, y = (iy − N/2)·pixel; V(u,v) = Σ I exp(−2πi(u x +
// v y)) / Σ I; the bispectrum of a triangle is B = V(u1,v1)·V(u2,v2)·conj(V(u1+u2, v1+v2)).
//
// # Forward model and data terms
//
// NewForwardModel collects the distinct (u,v) points of all data — closure-triangle baselines
// usually coincide with V² baselines, and a baseline given with the opposite sign is the
// conjugate of a stored one — and makes one transform (package vcz/nufft) for them. The data
// types are one table (package dataset: word, FITS key, label, unit, OIFITS table) and each
// has one data term (termtable.go) in its own file (term_*.go: formula and source, χ² with its gradient with
// respect to the model visibilities, residuals for least squares, expected χ², model
// values). Objective sums the weighted χ² of the terms of the types used (Gaussian in
// amplitudes, wrap-safe 2(1 − cos Δφ)/σ² in phases; each term's file gives its formula),
// value and gradient in one pass:
// one Forward and one Adjoint per evaluation. Residuals gives the same terms as residual
// vectors for the analytic fits of vcz/recon/fit, and Predict the model values for plots. The gradient includes the flux normalisation:
// ∂J/∂x_p = (Re Σ conj(G_k) a_kp − Re Σ conj(G_k) V_k)/F with G_k = ∂J/∂Re V_k + i ∂J/∂Im V_k.
// χ²ᵣ is χ²/N per data type and Σχ²/ΣN in total (N the number of measurements, no
// correction for the number of free pixels).
//
// # Solve
//
// Solve minimises J(x/F) + μ·R(x/F) + ρ(F − 1)² (F = Σx, ρ the number of data) subject to
// x ≥ 0 (and x = 0 outside an optional support), with the bound-constrained quasi-Newton
// method of vcz/recon/optim. The data terms and the regularizer see the normalised image,
// so the flux term only fixes the scale, and the result is normalised to flux 1. Every run
// starts without curvature memory; it has converged when the objective fell by less than
// FTol (1e-7) relative per iteration over 10 iterations and a restart without memory gains
// nothing either, or on the projected-gradient test of optim; a run that ends early having
// moved nothing is marked stalled.
//
// The steps, each measured on the test cases of this package (solve_test.go and the
// benchmark) and on the independent validation suite (package vcz/recon/validate):
//   - Start: by default a Gaussian with the second moment of the object size fitted to V²
//     (StartAuto); a fitted uniform disc trapped ring-like objects.
//   - Amplitude pass: V², T3 and VIS amplitudes alone first from a smooth start.
//   - Orientation: V² and amplitudes fix the image only up to a turn by 180°, which changes
//     the sign of every closure phase, and sparse or noisy closure phases do not always turn
//     the amplitude fit over. The smoothed phases are fitted from the amplitude image (the
//     first step of the weight search) and, for a quarter of the iterations, from its turn;
//     the turn goes on when its objective is lower after as many iterations by more than the
//     scatter of χ², τ√(2N). On the validation suite this removed the one mirrored image
//     (L1 0.42 → 0.047) and cost 3 % more time. Comparing the objectives before any phase
//     fit, or after a quarter of the iterations without the margin, took the turn on
//     near-ties (a disc with calibration errors went from L1 0.035 to 0.105); running both
//     orientations the full count cost 10 % more time for much the same figures.
//   - Phase smoothing: the weight search (or, at a given weight, a first run) fits closure
//     (and absolute visibility) phases through the smoothed term
//     2(|z| − Re z)/(√(|z|²+η²)σ²) (Objective.SetPhaseSmoothing), zero whenever the phase
//     matches, at every amplitude, with η a tenth of the typical model amplitude of the data;
//     the final run fits the exact wrap-safe terms.
//   - Weight: automatic: χ²ᵣ rises with μ from a floor χ²_min (the least-regularized
//     images, which fit some of the noise) to far above its expected value τ
//     (Objective.ExpectedChi2r: 1, or less where wrap-safe phase terms have large errors).
//     The weight aims at χ²_min + max(0.3·(τ − χ²_min), 0.005·χ²_min, 0.5·τ·√(2/N)) (the
//     last is half the scatter of χ²ᵣ over N data): down by decades from
//     μ0 = 0.1·N/R(x0) to the floor, up if needed, then regula falsi in log μ; stalled runs
//     are retried once from the start and never used or continued from; one correction of
//     the final weight along the slope of the path when the final run lands off the aim.
//     Measured on the validation suite, χ²ᵣ = τ (the discrepancy principle)
//     over-regularizes sparse arrays. The path (μ, χ²ᵣ, R, iterations, converged, stalled)
//     is kept in Result.Path.
//   - Position: without absolute phases the image is moved by whole pixels before the final
//     run so that its centroid is at the centre (Result.Shift).
//   - Starts (Settings.Starts): one by default, and RescueStarts seeded random starts more
//     when it fits worse than the noise allows; more on request; the lowest objective is
//     kept, and the verdict warns when the starts disagree.
//   - Verdict: Result.Warnings says why a result is doubtful (χ²ᵣ above 1.25 times its
//     expected value, one data type fitted far worse than the others, a stalled final run or
//     one stopped at its iteration limit while still improving, a weight at the edge of the
//     searched range, disagreeing starts).
//
// # Cubes
//
// SolveCube reconstructs an image cube: planes over one grid, each fitted to its own data
// (CubePlane; SplitChannels makes them from channel groups, and epochs could make them
// along time), with the spatial regularizer in each plane and a regularizer across planes
// (SpectralSmoothness, JointSparsity), the objective of CubeObjective. The gray image of
// all data sets the grid, the start and the spatial weight, shared among the planes by
// their numbers of data; the planes are then fitted in Gauss–Seidel sweeps, each by the
// runs of Solve against the others held fixed. When the gray image cannot fit all channels,
// a common factor on the planes' weights is chosen from the cube's own fit with Solve's
// discrepancy aim (cube_weight.go). One plane is Solve, bit for bit.
//
// # Fidelity
//
// Fidelity compares a reconstruction with a known truth as the project's acceptance test
// does: both convolved with a Gaussian beam of FWHM λmin/(2·Bmax), aligned by the sub-pixel
// peak of their cross-correlation, then the zero-mean normalised cross-correlation and the
// relative L1 difference. Measured with the defaults (total variation) on the simulated
// spotted disc, binary with a resolved primary and inclined ring with a central star: NCC
// 0.9982, 0.9945, 0.9973 and L1 0.053, 0.104, 0.091 (fidelity_cases_test.go, which says why
// the binary misses its target of 0.10); on the validation suite a median L1 of 0.050.
//
// # Grid
//
// ChooseGrid: pixel a quarter of λmin/(2·Bmax); field of view three times the object size
// from a 1-D least-squares fit of a uniform disc and of a Gaussian to the V² data, at most
// λmax/Bmin; N the next count up that is even with prime factors 2, 3 and 5 only, between 32
// and 256 (common practice, no source), so that rounding can take the field beyond λmax/Bmin
// by one such step. The reasoning is returned for printing and says by how much.
//
// # Design notes
//
// Why the defaults are what they are, as measured; the next change to the engine is judged
// the same way, on the validation suite (DEVELOPERS.md).
//   - One start by default (Settings.Starts). The rescue starts saved a point group whose
//     one start ended at χ²ᵣ 10 times expected (relative L1 0.88 → 0.17) and changed no
//     other default image; three starts everywhere on the 53 four-telescope cases also saved
//     it, but raised the median L1 from 0.048 to 0.109 (flat errors) and from 0.066 to 0.137
//     (errors growing near nulls), since a random start that fits a little better often
//     gives a worse image. On the simulated disc of the fidelity test likewise a random start
//     whose objective was 0.02 % lower gave L1 0.089 against 0.046, for 3 times the time.
//   - Coarse-to-fine is off (Settings.CoarseToFine): measured the same way it never lowered
//     χ²ᵣ (L1 0.046, 0.055 and 0.079 on the simulated disc, binary and ring against 0.046,
//     0.040 and 0.061).
//   - The amplitude pass (Settings.NoAmplitudeFirst): the phase gradient scales as 1/|V| and
//     stalls where a smooth start has |V| ≈ 0. On the disc test from a Gaussian start the
//     pass lowered the final χ²ᵣ in 4 of 4 cases (10.9 against 13.3, 10.5 against 14.7,
//     2.2 against 4.4, 1.8 against 1.9); from the fitted uniform-disc start it raised χ²ᵣ
//     (4.5 against 1.04 in the worst case) and is therefore not run there; on the binary
//     test it changed nothing (measured before the phase terms were smoothed in the first
//     passes).
//
// Everything is deterministic: the same data, settings and seed give the identical image.
package recon
