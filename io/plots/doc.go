// Package plots draws the diagnostic plots of interferometric data and
// fits as PNG files, with gonum.org/v1/plot: the (u,v) coverage, squared
// visibilities and closure phases against spatial frequency with models
// overlaid, normalised residuals, L-curves of regularization-weight paths
// and χ² maps of grid searches.
//
// # Inputs and units
//
// The functions take plain slices, so any stage of vcz can call them.
// Spatial frequencies are given in cycles per radian as in the data model
// (u = UCOORD/λ towards the east, v = VCOORD/λ towards the north,
// CONVENTIONS.md) and plotted in Mλ (MegaLambda = 10⁶ cycles per radian);
// wavelengths are in metres and shown in µm; phases are in degrees and
// shown wrapped into (−180°, 180°]. A closure phase is plotted against the
// longest baseline of its triangle, whose third side is (u1 + u2, v1 + v2)
// as defined for OI_T3 (Pauls et al. 2005, PASP 117, 1255).
//
// Points with a non-finite coordinate, value or error are skipped (and on
// a logarithmic axis, points not above zero). When nothing is left the
// functions return an error wrapping ErrNoData; slices of inconsistent
// lengths give an error naming them.
//
// # Appearance
//
// Every plot has a title, axis labels with units, a legend when it shows
// more than the data (one entry per model, so several regularizers can be
// compared on one plot) and a default size of 800 × 600 pixels at 96 dpi.
// Data are black with grey error bars; models and series use the
// colour-blind-safe palette of Okabe & Ito (2008). The (u,v) plane is drawn
// on equal axes with u increasing to the left, like the sky (east left);
// a χ² map of east offsets can be drawn the same way (Grid.InvertX).
//
// A Figure is rendered by Image, Encode (PNG to an io.Writer) or WriteFile,
// which writes through vcz/io/safefile so the file is complete or absent.
package plots
