// Package fitsimage writes and reads sky images as FITS files with a
// celestial coordinate system.
//
// # Conventions
//
// An Image holds NX × NY pixels, row-major, Data[iy*NX+ix], with ix along
// FITS axis 1 and iy along FITS axis 2; a cube stores Planes such images
// one after the other (FITS axis 3). Pixel (ix, iy), 0-based, sits at the
// sky offset x = −(ix − NX/2)·Pixel towards east and y = (iy − NY/2)·Pixel
// towards north (integer division): east is to the left and north up, as
// a FITS viewer shows the image.
//
// WriteFile records this with the world coordinate system of Greisen &
// Calabretta 2002 (A&A 395, 1061) and Calabretta & Greisen 2002 (A&A 395,
// 1077): CTYPE1 = 'RA---SIN', CTYPE2 = 'DEC--SIN' (orthographic projection,
// the natural one for interferometric images), CRPIXn = N/2 + 1 (FITS
// pixel numbers are 1-based), CDELT1 = −Pixel and CDELT2 = +Pixel in
// degrees, CUNITn = 'deg', and CRVAL1/CRVAL2 = RA/Dec of the phase centre
// when known (HasRADec); otherwise CRVAL is omitted, which the standard
// reads as 0 and which ReadFile reads as unknown. Pixels are IEEE doubles
// (BITPIX = −64) in the primary HDU; written files pass fitsverify with no
// warnings.
//
// ReadFile accepts images written by other software: BITPIX of any kind
// (BSCALE and BZERO applied), a scale given by CDELTn (with or without a
// PCi_j matrix) or by a CDi_j matrix, in CUNITn of deg (the default),
// arcmin, arcsec, mas or rad. An image with east to the right (positive x
// scale) or south up is flipped so that Data always follows the
// conventions above; a rotated image (non-zero off-diagonal terms) or
// non-square pixels are an error. ReadFile does not use CRPIXn: the phase
// centre is taken to be pixel (NX/2, NY/2) of the (possibly flipped) image,
// as the conventions require; CRVAL1/CRVAL2 give RA/Dec when both are
// present. Integer images with BLANK keep the BLANK value (scaled), not NaN.
package fitsimage
