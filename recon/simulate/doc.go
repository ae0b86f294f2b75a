// Package simulate makes synthetic interferometric data: it turns a model
// of the sky and an observing plan into an OIFITS v2 file (an
// *oifits.File for oifits.WriteFile) with realistic (u,v) coverage and
// noise, and is how the project makes its demo data and much of its test
// data.
//
// # Plans
//
// A Plan holds the site (latitude, longitude, altitude, elevation limit),
// the stations (east, north, up metres), which of them are combined, the
// target (RA, Dec), the night (MJD) and hour angles, the wavelength
// channels, the noise model, the seed and the tables to write. LoadPlan
// reads one from TOML; PlanHelp documents every key. Unknown keys are
// errors that name the key and its line.
//
// # Geometry
//
// Every pair of combined stations i < j (in plan order) is a baseline
// from station i to station j; its east-north-up vector is rotated to
// equatorial components and projected for hour angle h and declination δ
// with Thompson, Moran & Swenson (2017, Interferometry and Synthesis in
// Radio Astronomy, 3rd ed., ch. 4 and eq. 4.1); see UVW. UCOORD and VCOORD
// are that projection in metres (u east, v north), and the spatial
// frequencies are UCOORD/λ, VCOORD/λ (CONVENTIONS.md). Hour angles at
// which the target is below the elevation limit are skipped and counted
// in the Report. Every three combined stations i < j < k form a closing
// triangle with U1 = baseline i→j and U2 = baseline j→k.
//
// # Sky models
//
// A Sky gives normalised visibilities: ModelSky wraps analytic components
// of package model, ImageSky an image on the CONVENTIONS.md grid
// transformed by a nufft plan at tolerance 1e-9 (not by resampling).
//
// # Noise
//
// VIS2DATA = |V|², T3AMP and T3PHI from the bispectrum
// B = V(u1,v1) V(u2,v2) conj(V(u1+u2, v1+v2)), VISAMP and VISPHI from V.
// Each value gets an error (relative part and floor in quadrature for
// amplitudes; for phases a floor in degrees and the amplitude floor divided by the
// amplitude, in radians, in quadrature, at most 180°, so that phases are poorly known where
// the amplitude is near zero, as in real data) written to its *ERR column, and,
// when Plan.Noise.Add is set, a Gaussian draw with that σ from a PCG
// generator (math/rand/v2) seeded with Plan.Seed; each table type has its
// own stream. The same plan, sky and seed give the same file.
//
// # Demo
//
// Demo returns the plan and model of the project's demo data set, the
// invented spotted giant Vaeloris seen by the invented six-telescope
// array; the same files are in examples/.
package simulate
