// Package fitsfile is a small reader and writer for the parts of FITS
// (Pence et al. 2010, A&A 524, A42: "Definition of the Flexible Image
// Transport System (FITS), version 3.0") that vcz needs: headers, primary
// and image HDUs with BITPIX = -64, and binary tables with fixed-width
// columns.
//
// # Writing
//
// A Writer emits HDUs one after the other. Header cards are written in the
// fixed format of the standard (sect. 4.2): the value indicator in columns 9
// and 10, logical and numeric values right-justified to column 30, strings
// starting in column 11 with at least eight characters between the quotes.
// Every header and data unit is padded to a multiple of 2880 bytes, headers
// with spaces and data with zeros (sect. 3.3). Binary table columns of types
// L (bytes 'T'/'F'), B, I, J, K, E, D and A (space padded) are supported,
// scalar or with a repeat count (vector columns), with optional TUNIT and
// TDIM. A LongString value longer than one card holds continues on
// CONTINUE cards (the long-string convention, FITS standard 4.0 sect.
// 4.2.1.2), announced by LONGSTRN; Parse joins such cards into one string.
//
// # Reading
//
// Parse walks the 2880-byte header blocks of a FITS file held in memory,
// checks that the mandatory keywords of each HDU are present, in order
// where the standard requires it, and of the right type, and compares the
// data size each header declares, |BITPIX|/8 * GCOUNT * (PCOUNT +
// NAXIS1*...*NAXISn), with the bytes that remain in the file before it
// creates anything sized by the header. A corrupt header can therefore
// never make the reader allocate more than the file's own size. Binary
// tables are read column by column with typed accessors that apply TSCALn
// and TZEROn; logical values are true only for the byte 'T'.
//
// Errors from Parse and the table accessors are *FormatError values naming
// the HDU (1-based, primary = 1) and its EXTNAME.
package fitsfile
