// Package dataset is the data set model of vcz: the interferometric data of one or more OIFITS
// files merged into flat, typed slices ready for a forward model, and the table of data types.
//
// FromFiles merges the data tables of several OIFITS files (package vcz/io/oifits) into one
// Data of flat, typed slices in SI units and radians: per V² point u, v (cycles per radian,
// UCOORD/λ and VCOORD/λ), λ, Δλ, MJD, value, error and origin (file, HDU, row, channel); per
// closure triangle u1, v1, u2, v2, λ, T3AMP ± error and T3PHI ± error; per complex visibility
// u, v, amplitude ± error, phase ± error and their AMPTYP / PHITYP. Flagged points and
// non-finite values are dropped and counted per table type; a Selection keeps a target, a
// wavelength range, an MJD range, instruments and data types. Every problem FromFiles finds is
// an *Error naming the file, table (HDU and EXTNAME), row and column, in the form io/oifits
// uses for the problems it finds when decoding.
//
// Data.Summarize gives the figures of `vcz inspect`, counts and geometry only: baselines, the
// nominal resolution λmin/(2·Bmax), the largest scale λmax/Bmin, the MJD range and the number
// of nights (groups of epochs separated by more than NightGap = 0.5 day). The grid a
// reconstruction chooses from them is package recon's.
//
// # Data types
//
// The data types (V², T3 amplitude, closure phase, visibility amplitude, visibility phase) are
// one table, in types.go: a DataType bit, the user's word, the FITS key, the label and unit
// shown to people, the OIFITS table and whether the values are phases. Every list of data
// types in the project is read from it, in its order (DataTypes); package recon gives each
// type its data term in a table of its own, in the same order.
//
// # Conventions
//
// Signs, axes and units follow CONVENTIONS.md of the project: u = UCOORD/λ towards east,
// v = VCOORD/λ towards north; the bispectrum of a triangle is
// B = V(u1,v1)·V(u2,v2)·conj(V(u1+u2, v1+v2)); phases are held in radians.
package dataset
