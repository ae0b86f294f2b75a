package simulate

import (
	"cmp"
	"fmt"
	"maps"
	"math"
	"slices"

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

// A chromatic sky (ChromaticSky) changes across a band, so a channel measures the coherent
// flux and the total flux each integrated over the band, and their ratio,
//
//	V̄(u, v) = ∫ N(u/(1 + r·t), v/(1 + r·t), λ(t)) dt / ∫ F(λ(t)) dt,  λ(t) = λ·(1 + r·t),
//
// over t in [−1/2, 1/2], N the coherent flux Σ_k F_k(λ)·V_k + Σ cells of the discs and F the
// total flux (ChromaticSky, chromatic.go): the intensity integrated over the bandpass before
// it is normalised (Thompson, Moran & Swenson 2017, sect. 6.3). For a gray sky, F constant,
// this is the average of V above. The plain average of the normalised V would weigh a
// sub-band where the sky is faint as much as one where it is bright.
//
// The integrals are Gauss–Legendre sums on panels of the band: where a disc's line can emit
// (its cells' line centres, Line·(1 ± Velocity·sin(Inc)/c), widened by lineReach standard
// deviations σ of the local line), panels at most lineSpan·σ wide; elsewhere one panel. Each
// panel has bandNodes nodes for the fringe turn across it. A 16-node rule integrates a
// Gaussian over a panel of 4σ to 1e-15 of its integral (measured against the error function),
// and beyond 9σ the line is below 3e-18 of its peak.
// A channel is cut into at most maxLinePanels panels per disc; a line narrower than that
// allows (its width below about a thousandth of the band) is refused.
const (
	lineReach     = 9
	lineSpan      = 4
	maxLinePanels = 4096
)

// extent is the radius (rad) about the phase centre that holds the sky's flux: the
// components' radii and the discs' outer radii.
func (s *ChromaticSky) extent() float64 {
	r := 0.0
	for _, c := range s.Components {
		r = math.Max(r, c.Model.Radius()*model.MasToRad)
	}
	for _, d := range s.Discs {
		r = math.Max(r, d.Outer)
	}
	return r
}

// bandNodesAt returns the quadrature nodes t and weights w on [−1/2, 1/2] of a channel of
// centre lambda and width band (m) whose fringes turn by up to phi radians across it.
func (s *ChromaticSky) bandNodesAt(lambda, band, phi float64) (t, w []float64, err error) {
	r := band / lambda
	cuts := []float64{-0.5, 0.5}
	for k, d := range s.Discs {
		sig := d.Line * d.Width / SpeedOfLight
		dv := d.Velocity * math.Sin(d.Inc) / SpeedOfLight
		lo := (d.Line*(1-dv)-lineReach*sig)/lambda - 1
		hi := (d.Line*(1+dv)+lineReach*sig)/lambda - 1
		lo, hi = math.Max(lo/r, -0.5), math.Min(hi/r, 0.5)
		if !(lo < hi) {
			continue
		}
		mf := math.Ceil((hi - lo) / (lineSpan * sig / lambda / r))
		if !(mf <= maxLinePanels) {
			return nil, nil, fmt.Errorf("chromatic model: disc %d: its line (width %.3g km/s) is too narrow to average over the channel at %.6g µm, %.3g nm wide; set smearing = false in the plan or widen the line", k+1, d.Width/1e3, lambda*1e6, band*1e9)
		}
		m := int(mf)
		for i := range m + 1 {
			cuts = append(cuts, lo+(hi-lo)*float64(i)/float64(m))
		}
	}
	slices.Sort(cuts)
	cuts = slices.Compact(cuts)
	for i := 1; i < len(cuts); i++ {
		a, b := cuts[i-1], cuts[i]
		n := bandNodes(phi * (b - a))
		k := len(t)
		t, w = append(t, make([]float64, n)...), append(w, make([]float64, n)...)
		quad.Legendre{}.FixedLocations(t[k:], w[k:], a, b)
	}
	return t, w, nil
}

// bandAverage sets vis[i] to the band average V̄ of the sky at (u[i], v[i]) (cycles/rad) in
// the channel of centre lambda[i] and width band[i] (m).
func (s *ChromaticSky) bandAverage(vis []complex128, u, v, lambda, band []float64) error {
	if err := s.validate(); err != nil {
		return err
	}
	for i := range s.Discs {
		s.Discs[i].cells()
	}
	type channel struct{ lambda, band float64 }
	type rule struct {
		phi  float64
		t, w []float64
	}
	radius := s.extent()
	rules := map[channel]*rule{}
	for i := range u {
		ch := channel{lambda[i], band[i]}
		q := rules[ch]
		if q == nil {
			q = &rule{}
			rules[ch] = q
		}
		r := band[i] / lambda[i]
		q.phi = math.Max(q.phi, 2*math.Pi*math.Hypot(u[i], v[i])*radius*r/(1-r*r/4))
	}
	for _, ch := range slices.SortedFunc(maps.Keys(rules), func(a, b channel) int {
		return cmp.Or(cmp.Compare(a.lambda, b.lambda), cmp.Compare(a.band, b.band))
	}) {
		q := rules[ch]
		var err error
		if q.t, q.w, err = s.bandNodesAt(ch.lambda, ch.band, q.phi); err != nil {
			return err
		}
	}
	for i := range u {
		q := rules[channel{lambda[i], band[i]}]
		r := band[i] / lambda[i]
		var num complex128
		f := 0.0
		for j, t := range q.t {
			g := 1 + r*t
			n, fl := s.coherent(u[i]/g, v[i]/g, lambda[i]*g)
			num += complex(q.w[j], 0) * n
			f += q.w[j] * fl
		}
		if !(f > 0) {
			return fmt.Errorf("chromatic model: total flux %g over the channel at %.6g µm; it must be positive", f, lambda[i]*1e6)
		}
		vis[i] = num / complex(f, 0)
	}
	return nil
}
