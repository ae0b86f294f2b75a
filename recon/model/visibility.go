package model

import "math"

// UniformDiscV returns the visibility of a centred uniform disc of angular diameter theta
// (radians) at spatial frequency q (cycles per radian): 2·J1(z)/z with z = π·θ·q (Born &
// Wolf, Principles of Optics, sect. 8.5.2), the amplitude of a "ud" component.
func UniformDiscV(theta, q float64) float64 { return airy(math.Pi * theta * q) }

// GaussianV returns the visibility of a centred circular Gaussian of full width at half
// maximum fwhm (radians) at spatial frequency q (cycles per radian): exp(−(π·fwhm·q)²/(4 ln 2)),
// the Fourier transform of the Gaussian, the amplitude of a circular "gauss" component.
func GaussianV(fwhm, q float64) float64 { return gaussV(math.Pi * fwhm * q) }

// gaussV returns exp(−w²/(4 ln 2)), the visibility of a circular Gaussian at w = π·FWHM·q.
func gaussV(w float64) float64 { return math.Exp(-w * w / (4 * math.Ln2)) }
