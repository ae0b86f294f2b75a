// Package output writes the files of a reconstruction: the FITS image with its provenance
// header, the PNG preview and the plots of the fit to the data.
//
// An Outputs value says which files to write; its zero value writes all three kinds. The
// result, the data it was fitted to and the run specification are passed in memory as a
// Run, and nothing is read back from disk: a card that belongs in the header (the input
// hash of a batch epoch) is given in Outputs.Cards and written with the others, once.
//
// # Files
//
// For an output path OUT.fits (Stem removes .fits, .fit or .fts), Outputs.Write writes
//
//	OUT.fits           the image, normalised to a total flux of 1, with provenance
//	OUT.png            preview: north up, east left, scale bar, resolution circle
//	OUT-vis2.png       V² data and model against spatial frequency
//	OUT-t3phi.png      closure phases, data and model
//	OUT-<word>.png     likewise for each other fitted data type (t3amp, visamp, visphi)
//	OUT-residuals.png  residuals normalised by their errors
//	OUT-lcurve.png     the weight path, when the weight was chosen automatically
//
// each through io/safefile, so no half-written file survives an interruption.
//
// # Provenance header
//
// FITSCards gives the cards in a fixed order: OBJECT, DATE, CREATOR, the regularizer, its
// weight and value, the fit (CHI2R, CHI2EXP, then CHI2xx and NPTxx for each fitted data
// type in the order of dataset.DataTypes), iterations, stop reason, seed, grid, the quality
// verdict (NWARN, WARNn), then HISTORY cards naming the data files, the options (the
// canonical text of runspec.Spec, one "option:" card a line), the grid choice, the weight
// path and the notes, and two COMMENT cards on what the image means. Keys have at most eight
// characters; text is printable ASCII (FITS standard 4.0, sect. 4.1.2.1) after ASCII, and
// long values continue on CONTINUE cards (sect. 4.2.1.2). testdata/header.golden holds the
// header of a fixed result; `go test ./output -update` rewrites it.
package output
