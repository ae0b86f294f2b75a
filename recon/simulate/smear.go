package simulate

import (
	"math"

	"gonum.org/v1/gonum/integrate/quad"

	"vcz/recon/model"
)

// Bandwidth smearing (Plan.Smearing). A channel of centre λ and width Δλ measures the
// average of the visibility over its band; for a top-hat band, with r = Δλ/λ,
//
//	V̄(u, v) = ∫_{−1/2}^{1/2} V(u/(1 + r·t), v/(1 + r·t)) dt,
//
// which for a point source at offset s is close to exp(−2πi u·s)·sinc(π·r·u·s) (Thompson,
// Moran & Swenson 2017, "Interferometry and Synthesis in Radio Astronomy", 3rd ed., sect. 6.3).
// Run evaluates the integral by Gauss–Legendre quadrature (gonum's quad.Legendre) of the
// sky's own visibilities, exact sums for analytic models, with enough nodes for the largest
// fringe turn across a band, φ = 2π·|u|·R·r/(1 − r²/4) for emission out to radius R: 16 nodes
// plus 2φ, whose error for exp(iφt) is below 1e-12 (the remainder of a rule exact for
// polynomials of degree 2n − 1).

// extenter is a Sky that knows the radius (rad) about the phase centre that holds its flux.
type extenter interface{ extent() float64 }

func (s ModelSky) extent() float64 { return s.Model.Radius() * model.MasToRad }

func (s ImageSky) extent() float64 {
	return 0.5 * math.Hypot(float64(s.NX), float64(s.NY)) * s.Pixel
}

// bandNodes returns the number of quadrature nodes for fringes that turn by up to phi radians
// across a band. gonum 0.17's rule of 26 nodes has weights that sum to 0.989, so 27 are used
// instead.
func bandNodes(phi float64) int {
	n := 16 + int(math.Ceil(2*phi))
	if n == 26 {
		n = 27
	}
	return n
}

// bandAverage sets vis[i] to the band average of the sky's visibility at (u[i], v[i]) for
// channels of relative width rel[i].
func bandAverage(sky Sky, vis []complex128, u, v, rel []float64) error {
	radius := 0.0
	if e, ok := sky.(extenter); ok {
		radius = e.extent()
	}
	phi := 0.0
	for i := range u {
		r := rel[i]
		phi = math.Max(phi, 2*math.Pi*math.Hypot(u[i], v[i])*radius*r/(1-r*r/4))
	}
	n := bandNodes(phi)
	if radius == 0 {
		n = 64 // a sky of unknown extent: as many nodes as a fringe turn of 24 rad needs
	}
	t, w := make([]float64, n), make([]float64, n)
	quad.Legendre{}.FixedLocations(t, w, -0.5, 0.5)
	us, vs := make([]float64, len(u)*n), make([]float64, len(u)*n)
	for i := range u {
		for j := range t {
			f := 1 / (1 + rel[i]*t[j])
			us[i*n+j], vs[i*n+j] = u[i]*f, v[i]*f
		}
	}
	sub := make([]complex128, len(us))
	if err := sky.Visibilities(sub, us, vs); err != nil {
		return err
	}
	for i := range vis {
		var a complex128
		for j := range t {
			a += complex(w[j], 0) * sub[i*n+j]
		}
		vis[i] = a
	}
	return nil
}
