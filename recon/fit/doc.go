// Package fit fits parametric sky models (vcz/recon/model) to
// interferometric data (vcz/recon.Data) by least squares, and maps the χ²
// of a faint companion over separation and position angle.
//
// # Residuals and χ²
//
// The fit minimises the sum of squared normalised residuals, with the
// same χ² per data type as the image reconstruction (recon.Objective):
// (|V|² − V²ₒ)/σ for squared visibilities, (|B| − |B|ₒ)/σ for T3
// amplitudes, (|V| − Aₒ)/σ for absolute visibility amplitudes, and for
// closure phases and absolute visibility phases the wrap-safe 2 sin(Δφ/2)/σ,
// Δφ the model-minus-data phase reduced to (−π, π], whose square is
// 2(1 − cos Δφ)/σ². Differential and correlated-flux amplitudes and
// differential phases are left out with a notice. Options.Use selects
// the types.
//
// # Method
//
// Levenberg–Marquardt with Moré's scaling and convergence tests (Moré
// 1978, Lecture Notes in Mathematics 630, 105) and the damping update of
// Madsen, Nielsen & Tingleff (2004), with central finite-difference
// Jacobians. Bounds are imposed by a change of variables (sine for two
// bounds, square root for one), so the iteration is unconstrained; the
// natural domains of shape parameters (diameters and widths ≥ 0,
// 0 ≤ u_ld ≤ 1, 0 < ratio ≤ 1, 0 ≤ inc ≤ 90°) are added to the user's
// bounds. Binaries are multi-modal in separation and position angle, so
// Options.Starts draws further seeded starts of the free positions and
// the best is kept.
//
// # Uncertainties
//
// The covariance of the free parameters is (JᵀJ)⁻¹ χ²ᵣ, J the Jacobian of
// the normalised residuals in user units at the solution and
// χ²ᵣ = χ²/(N − P); errors are the square roots of its diagonal and the
// correlation matrix is reported beside it. Parameters on a bound are
// flagged: their errors mean nothing.
//
// # Units and conventions
//
// Parameters are in the model's user units: offsets and sizes in mas,
// angles in degrees, position angles east of north; x is towards east, y
// towards north (CONVENTIONS.md). Fit and GridSearch never change the
// model passed in. Results are deterministic for a given Options.Seed.
package fit
