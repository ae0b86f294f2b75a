// Package fit fits parametric sky models (vcz/recon/model) to
// interferometric data (vcz/dataset.Data) by least squares, and maps the χ²
// of a faint companion over separation and position angle.
//
// # Residuals and χ²
//
// The fit minimises the sum of squared normalised residuals, with the
// same χ² per data type as the image reconstruction (recon.Residuals), for
// each type of the table of data types (package dataset): (model − data)/σ
// for amplitudes and, for phases, the wrap-safe 2 sin(Δφ/2)/σ, Δφ the
// model-minus-data phase reduced to (−π, π], whose square is
// 2(1 − cos Δφ)/σ²; each term's file in recon (term_<word>.go) gives its
// formula. Data a normalised model cannot fit (correlated fluxes) are left
// out with a notice. Options.Use selects the types.
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
// Options.Starts adds further starts of the free positions and the best
// is kept. The extra starts come from a coarse χ² map of each free
// position, made before the fit with the other parameters at their start
// values and a few trial fluxes: the component is placed at the lowest
// local minima of the map, one fringe spacing 1/q_max or more apart. The
// grid step is 1/(3 q_max) and the map reaches 0.75/q_min (or the
// bounds), so it costs a few tenths of a second for a thousand data;
// random draws fill any starts left over. On 36 simulated binaries
// (separations 3 to 20 mas, flux ratios 0.05 to 0.5, start 1.4 mas away)
// 16 random starts found 10 companions and the seeded starts all 36.
//
// # Uncertainties
//
// The covariance of the free parameters is (JᵀJ)⁻¹ χ²ᵣ, J the Jacobian of
// the normalised residuals in user units at the solution and
// χ²ᵣ = χ²/(N − P); errors are the square roots of its diagonal and the
// correlation matrix is reported beside it. Parameters on a bound, or
// within BoundTol of it, are flagged: their errors mean nothing.
//
// # Verdict
//
// Result.Warnings judges the fit by the rule of the images' verdict
// (recon.Chi2rFar): χ²ᵣ above 1.25 times its expected value
// (Result.Chi2rExpected) or far below it, a fit that did not converge,
// and parameters the data leave undetermined at the best fit
// (Param.Undetermined: a flat direction of JᵀJ, or a 1σ wider than the
// parameter's bounds; the covariance of the rest holds them fixed).
//
// # Separation, position angle and contrast
//
// Result.Pairs gives every component with a position relative to the
// brightest one: separation, position angle east of north, flux ratio and
// Δmag, with errors propagated from the covariance through the Jacobian
// of the transformation (Pairs). On fitted binaries they agree with a
// Monte Carlo of the covariance to about 1 %.
//
// # Significance
//
// Significance compares the χ² of a fit without a component with the χ²
// with it, rescaled so that the fit with it has χ²ᵣ = 1, against the χ²
// distribution with the component's number of free parameters
// (NewDetection gives the source and the limits). For a single star and a
// companion of free flux at a fixed position the false-detection rates at
// 2σ and 3σ match the normal tails over 4 000 noise draws. With the
// position searched too (16 seeded starts) the rates on the same data were
// 60 % at 2σ and 12 % at 3σ over 300 draws: that figure is local, not
// field-wide. Detection.Calibrate gives the field-wide one: CalibrateSearch
// simulates the search over the field on the data's own (u,v) points and
// error bars (noise around the fit without the component, to first order,
// an adjoint transform per draw) and refers the Δχ² found to the
// distribution of the largest Δχ² of those searches. Over 1 000 single
// stars searched over ±12 mas (BenchmarkFalseDetectionRateSearched) the
// field-wide figure reached 2σ in 4.3 % and 3σ in 0.2 % of draws (normal
// tails: 4.55 ± 0.66 % and 0.27 ± 0.16 %), the local one in 48 % and
// 7.7 %. The trials correction by the field's area over the resolution
// element, 1 − (1 − p₁)^N, gave 5.9 % and 0.6 %: it counts about a
// quarter of the effective trials found by simulation and overstates the
// significance, so the simulation is what Calibrate uses. A calibration
// of 1 000 searches over 10 000 positions next to 2 040 data takes about
// 1 s (BenchmarkCalibrateSearch).
//
// # Detection limits
//
// DetectionLimits gives, at each position of a separation × position
// angle grid next to a fitted model, the flux ratio of a point companion
// that would have been detected at 3σ and 5σ (by default), from the
// excess χ² such a companion would give the model, its free parameters
// refitted to first order; Limits.WriteCSV writes the azimuthal mean and
// worst case against separation. Companions injected at 1.5 times the 5σ
// limit were detected at 5σ in 119 of 120 draws at three positions, at
// half of it in 1 of 120. A 50 × 50 grid on 2 040 data takes about 5 s on
// two shared cores (BenchmarkDetectionLimits). LimitOptions.Injection
// adds limits by injection–recovery: companions injected into these data
// and detected at their position. They follow the data's noise at each
// position and agree with the χ² limits on average: at three positions
// companions at 1.5 times their 5σ limit were detected in 120 of 120
// draws, at half of it in 1 of 120, and at two cells they matched direct
// injections into re-simulated data to 0.05 %. With both methods the
// 50 × 50 grid took 1.7 times as long as with the χ² method alone.
//
// # Model files
//
// Result.ModelTOML writes the fitted model in the TOML form that
// model.ParseTOML reads, best-fit values with the free parameters still
// free and their 1σ in comments, so a fit can be restarted from its
// solution or handed to the image reconstruction.
//
// # Units and conventions
//
// Parameters are in the model's user units: offsets and sizes in mas,
// angles in degrees, position angles east of north; x is towards east, y
// towards north (CONVENTIONS.md). Fit and GridSearch never change the
// model passed in. Results are deterministic for a given Options.Seed.
package fit
