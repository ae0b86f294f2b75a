// Package regularizers provides the image priors added to the data misfit
// in image reconstruction: maximum entropy relative to a prior image (MaxEnt),
// edge-preserving total variation (TV), quadratic smoothness (Smooth),
// compactness (Compact, PriorDistance), and weighted sums of them (Sum),
// together with builders of prior images and a support mask.
//
// # Registry
//
// The regularizers users name ("mem", "tv", "smooth", "compact",
// "priordist") are rows of a registry (registry.go): name, one help line and
// a constructor on an NX × NY grid with Options (prior image, TV
// threshold). ParseList reads lists such as "mem,compact:0.1", weights
// relative to the first term, and Build makes their regularizer. A new
// regularizer is its own file plus one registry row.
//
// # Conventions
//
// An image is a row-major []float64 of NX*NY pixels, x[iy*NX+ix]; the
// centre pixel is (NX/2, NY/2) with integer division, as in the project's
// sky conventions. Lengths, radii, FWHMs and diameters are in pixels; the
// caller converts angles using the pixel size.
//
// Every regularizer has one method, Eval(grad, x []float64) float64, that
// returns the value and, when grad is non-nil, OVERWRITES grad with the
// gradient (it never adds to it). Each value is to be minimized: MaxEnt
// returns -S, the negative entropy. Wrong slice lengths and invalid
// parameters (a non-positive prior pixel, a negative Eps) panic with a
// message starting "regularizers:"; prior builders return errors because
// their arguments come from users.
//
// # Differences and boundary
//
// TV and Smooth use forward differences dx = x[ix+1,iy] - x[ix,iy] and
// dy = x[ix,iy+1] - x[ix,iy], set to zero across the last column and row
// (Neumann boundary), so a flat image has no variation.
//
// # Memory and concurrency
//
// Eval allocates nothing after its first call. Compact (weights) and Sum
// (a gradient buffer) keep scratch memory in the struct and must not be
// used by several goroutines at once; the others hold no scratch and are
// safe for concurrent use while their fields are not modified.
//
// # Sources
//
// Skilling & Bryan 1984, MNRAS 211, 111 and Narayan & Nityananda 1986,
// ARA&A 24, 127 (entropy); Rudin, Osher & Fatemi 1992, Physica D 60, 259
// (total variation); Tikhonov & Arsenin 1977 (quadratic smoothness). The
// compactness penalties, the TV threshold relative to the mean pixel value
// and the prior floor are common practice, no source.
package regularizers
