// Package validate is the independent validation suite of the reconstruction engine: it
// makes interferometric data of known scenes without the project's transform (vcz/nufft) or
// simulator noise (vcz/recon/simulate), reconstructs them as `vcz image` does by default,
// and scores the images against the truth. An engine tuned on data of its own simulator can
// fit that simulator's error model and fail on data from elsewhere; the suite varies the
// scenes, the arrays and the error models so that no single one can be tuned to.
//
// # Scenes
//
// Scenes(res) returns 24 scenes, each an analytic surface brightness of the sky offset (x
// east, y north, radians; CONVENTIONS.md) with an invented name and a family, sized in units
// of the resolution res = λmin/(2·Bmax) of an array so that every object spans 2 to 6
// resolution elements (the diameter holding 95 % of the flux), within the largest scale
// λmax/Bmin of the four-telescope array (6.4 resolution elements):
//   - ld-disc: limb-darkened discs (linear law, Hanbury Brown et al. 1974; power law,
//     Hestroffer 1997) of 3 to 5 resolution elements with bright and dark Gaussian spots of
//     0.5 to 1.5;
//   - binary: a resolved limb-darkened primary and a companion (unresolved, or partly
//     resolved) at separations of 1.5 to 4 resolution elements and flux ratios 0.05 to 0.7;
//   - ring: inclined rings with a Gaussian radial profile and an azimuthal modulation, and a
//     central star;
//   - group: groups of point-like sources (Gaussians a quarter of a resolution element wide)
//     on a diffuse elliptical halo;
//   - knots: an off-centre compact core with knots along a jet; these data also hold
//     complex visibilities (OI_VIS with absolute VISAMP and VISPHI).
//
// Scene.Truth renders a scene on any reconstruction grid (recon.Grid) with 8 × 8 samples per
// pixel, normalised to a total flux of 1; Scene.Rotated is the scene turned by 180°.
//
// # Data
//
// Generate makes the data of a Case (scene, array, error model). The array is an observing
// plan (Arrays loads the six- and four-telescope example plans, examples/plan-six-demo.toml
// and examples/plan-four-compact.toml); vcz/recon/simulate is used only to read the plan and
// lay out the tables with their times, (u,v) coordinates, station indices and triangles, every
// value of which is then replaced. The scene is rendered on a grid of a tenth of the
// resolution with 9 × 9 samples per pixel, and its visibilities are the exact sum over the
// pixels, V(u,v) = Σ I exp(−2πi(ux + vy))/Σ I (DirectSum), corrected for the sub-pixel
// sampling; against the analytic visibilities of a uniform disc they agree to 4·10⁻⁴, of a
// Gaussian to 10⁻¹⁰. V² = |V|², the bispectrum B = V(u1,v1)·V(u2,v2)·conj(V(u1+u2, v1+v2)),
// T3PHI = arg B in degrees, T3AMP = |B|, and for the knots VISAMP = |V|, VISPHI = arg V.
//
// Errors follow one of three models, each with a fixed seed per scene and array (the same
// for every model, so that the models differ only where they are meant to):
//   - nullgrow: V² σ = max(rel·V², 0.0015) with rel drawn in 2–5 % per row; closure-phase
//     σ = √(φ0² + (k/|B|)²), φ0 drawn in 1–5° per row, k = 0.003 (k/|B| in radians), at most
//     180°, so phases near nulls are nearly unknown; T3AMP σ = max(rel·|B|, 0.002) with rel
//     in 3–7 %; VISAMP σ = max(rel·|V|, 0.003) with rel in 1–2.5 % and VISPHI σ like the
//     closure phase with |V| for |B|.
//   - flat: the same, but phase errors held at φ0 (1–5°) everywhere, also where |B| is tiny.
//   - calib: flat, plus errors not in the error bars: a V² scale factor per exposure (time
//     stamp), 1 + 0.03·N(0,1) (T3AMP scaled by its 3/2 power, VISAMP by its square root),
//     and a phase offset of 1–2° (either sign) per triangle and per baseline of OI_VIS.
//
// The noise is Gaussian with those σ (phases wrapped onto (−180°, 180°]). Then 2 % of the
// points of each table, chosen at random, are flagged (FLAG = T) and corrupted: a third with
// NaN values, the others with values far off and errors of zero or NaN. The file is encoded
// as OIFITS v2 (vcz/io/oifits), decoded again and merged with dataset.FromFiles, so that the
// data pass through the real reader, which drops the flagged points.
//
// # Runs
//
// RunCase reconstructs a case with DefaultProblem, which mirrors `vcz image DATA -o OUT.fits`
// with every option at its default (total variation with its default smoothing scale,
// automatic weight, automatic start, grid from recon.ChooseGrid), with one transform worker;
// and, for the oracle, with fixed weights one per decade from 10⁻¹ to 10⁹ (OracleScan) and
// then half a decade either side of the best, keeping the weight of lowest L1. Score uses
// recon.Fidelity (beam FWHM λmin/(2·Bmax), NCC and relative L1 against the truth on the
// reconstruction's grid) and flags an image as mirrored when it is closer in L1 to the truth
// turned by 180° than to the truth. Run runs cases a few at a time (default 2) and returns
// the rows in the order of the cases, so the table does not depend on scheduling;
// WriteMarkdown writes it with a summary of the targets met: default L1 at most 1.25 × the
// oracle's, χ²ᵣ within 0.8–1.25 of its expected value, never mirrored.
//
// SuiteCases is the full suite: 24 scenes × 2 arrays × (nullgrow, flat), plus calib for the
// first scene of each family on both arrays (106 cases). NightCase is a long night of the
// six-telescope array: 48 channels × 20 exposures, 14 400 V² and 19 200 closure phases of a
// spotted limb-darkened disc with flat errors.
//
// # Running
//
//	go test -count=1 ./recon/validate                       # generator tests and TestSuiteSubset
//	go test -run '^$' -bench Suite -benchtime 1x ./recon/validate -suite.out table.md
//	go test -run '^$' -bench Suite -benchtime 1x ./recon/validate -suite.only 'Varn|Brisca/four'
//	go test -run '^$' -bench Suite -benchtime 1x ./recon/validate -suite.oracle=false
//	go test -run '^$' -bench Night -benchtime 1x ./recon/validate
//	go test -run '^$' -bench Subset -benchtime 1x ./recon/validate   # all six cases of TestSuiteSubset
//
// -suite.concurrent sets the number of cases run at once, -suite.refine=false skips the
// half-decade refinement of the oracle. TestSuiteSubset asserts the engine's targets on three
// cases of the four-telescope array and BenchmarkSubset on all six; the full run takes about half
// an hour on two cores. Results of the full run are reported in the closing notes of the
// change that added the suite and in the README.
package validate
