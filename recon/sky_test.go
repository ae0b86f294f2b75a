package recon

import "vcz/recon/model"

// The analytic visibilities the tests of this package simulate data with; their formulas
// and sources are in recon/model.

func UniformDiscV(theta, q float64) float64 { return model.UniformDiscV(theta, q) }

func GaussianV(fwhm, q float64) float64 { return model.GaussianV(fwhm, q) }
