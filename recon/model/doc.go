// Package model holds analytic models of the sky for simulation and model
// fitting: sums of components (point, uniform disc, linear and power-law
// limb-darkened discs, circular and elliptical Gaussians, thin rings that
// may be inclined, and a fully resolved background), their complex
// visibilities, a rasteriser onto the project's image grid, and the model
// specification formats shared by `vcz simulate` and `vcz fit`.
//
// # Conventions
//
// Signs and axes follow CONVENTIONS.md: x is the offset towards east, y
// towards north; u and v are in cycles per radian; the visibility of a
// brightness I is V(u,v) = Σ I exp(−2πi(u x + v y)) / Σ I. Parameters are
// held and set in user units: offsets, diameters and widths in
// milliarcseconds, angles in degrees (position angles east of north).
// Component.Vis is normalised to the component's own flux (1 at the
// origin); Model.Vis is normalised to the model's total flux, so
// Model.Vis(0,0) = 1. A background component adds flux at zero frequency
// only, lowering all other visibilities by the compact-to-total flux ratio.
//
// # Parameters
//
// Every component exposes named parameters (flux, x, y, and per kind
// diameter, fwhm, u_ld, alpha, ratio, pa, inc) through Get and Set, which
// check the parameter's domain, and carries per parameter whether a fitter
// may move it (Free) and its bounds (Min, Max). Model.Refs, Get and Set
// map a model onto a parameter vector.
//
// # Specifications
//
// A model file is TOML with one [[component]] table per component:
//
//	[[component]]
//	kind = "ld"
//	diameter = {value = 3.2, free = true, min = 1, max = 6}
//	u_ld = 0.3
//
// and the command-line form lists components separated by ';', as in
// "ld:diameter~3.2(1..6),u_ld=0.3;point:x=5,y=-2,flux=0.1" ('~' marks a
// free parameter, '=' a fixed one, parentheses bounds). Help describes
// both for the commands' --help. Unknown kinds, parameters and keys are
// errors that name the item and, in files, the line.
//
// # Sources
//
// Uniform disc: Born & Wolf, Principles of Optics, sect. 8.5.2. Linear
// limb darkening: Hanbury Brown, Davis, Lake & Thompson 1974, MNRAS 167,
// 475. Power-law limb darkening: Hestroffer 1997, A&A 327, 199. Bessel
// functions of real order are computed here (see besselLambda) and checked
// against the standard library, closed forms and numerical Hankel
// transforms. Binary fringes: Monnier 2003, Rep. Prog. Phys. 66, 789.
package model
