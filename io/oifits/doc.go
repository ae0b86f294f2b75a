// Package oifits reads and writes optical interferometry data in the OIFITS
// format, revisions 1 (Pauls, Young, Cotton & Monnier 2005, PASP 117, 1255)
// and 2 (Duvert, Young & Hummel 2017, A&A 597, A8).
//
// Decode and ReadFile read the tables OI_TARGET, OI_ARRAY, OI_WAVELENGTH,
// OI_VIS2, OI_T3, OI_VIS and OI_FLUX into a File; every other extension is
// skipped with a notice in File.Skipped. Values keep the units of the
// standard (metres, degrees, MJD); conversion to the SI/radian quantities of
// a forward model is the job of the data set model in package dataset.
//
// # Validation
//
// Decode checks the structure of the file before it allocates anything: each
// header is scanned for the mandatory FITS keywords and each HDU's declared
// data size is compared with the file length, so a corrupt NAXIS2 cannot make
// it allocate more memory than the file holds. It then checks the links the
// standard requires: every data table's INSNAME names an OI_WAVELENGTH
// table, ARRNAME (optional in v1) names an OI_ARRAY table, every TARGET_ID
// is in OI_TARGET, and every vector column has NWAVE elements. Errors must
// be positive and finite on every point that is not flagged and whose value
// is finite. Flagged points and non-finite values are kept, with their
// FLAG, for the data set model to drop and count.
//
// OIFITS v1 has no AMPTYP/PHITYP keywords; Vis.AmpTyp and Vis.PhiTyp are
// then "" (not stated) and the data set model decides how to treat them.
// Primary-header HISTORY and COMMENT cards are kept in File.Primary.
//
// Every error is an *Error naming the file, HDU number, EXTNAME, row and
// column where they are known.
//
// # Writing
//
// Encode and WriteFile write OIFITS v2 with the mandatory keywords and
// columns of Duvert et al. (2017) for each table; written files pass
// fitsverify with no errors and no warnings. WriteFile writes to a
// temporary file and renames it into place (package io/safefile).
package oifits
