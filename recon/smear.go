package recon

import (
	"fmt"
	"math"
	"strings"

	"vcz/dataset"
)

// Bandwidth smearing. A spectral channel of centre λ and width Δλ (OI_WAVELENGTH EFF_WAVE,
// EFF_BAND) does not measure the visibility at u = B/λ but its average over the band. For a
// top-hat band,
//
//	V̄(u, v) = (1/Δλ) ∫_{λ−Δλ/2}^{λ+Δλ/2} V(u·λ/λ', v·λ/λ') dλ' = ∫_{−1/2}^{1/2} V(u/(1 + r·t), v/(1 + r·t)) dt,
//
// r = Δλ/λ, the relative bandwidth. For a point source at offset s from the phase centre this
// is close to exp(−2πi u·s)·sinc(π·r·u·s) (sinc x = sin x / x), the bandwidth-smearing loss of
// Thompson, Moran & Swenson 2017, "Interferometry and Synthesis in Radio Astronomy", 3rd ed.,
// sect. 6.3, exact to first order in r; the integral above is exact for a top-hat band.
//
// The forward model computes the integral by Gauss–Legendre quadrature of S nodes over the
// band (gaussLegendre): each distinct (u,v) point becomes S sub-points
// (u, v)/(1 + r·t_j) with weights w_j (Σ w_j = 1), the transform is made for the sub-points,
// and V̄ = Σ w_j V(u_j, v_j). The map is linear, so the normalisation by the flux and the
// gradient carry over: ∂J/∂V(u_j) = w_j·∂J/∂V̄ (the weights are real), and the adjoint
// transform of the sub-points gives the image gradient.
//
// Every observable is computed from the smeared visibilities: V² = |V̄|², amplitudes |V̄|,
// phases arg V̄, and the bispectrum V̄₁·V̄₂·conj(V̄₃), the product of the per-baseline band
// averages. That is the standard model for a top-hat band: an instrument forms each
// channel's coherent flux per baseline over the whole band, and the bispectrum of the channel
// from those; the band average of the product V₁V₂V̄₃ would instead describe a bispectrum
// formed at each wavelength and averaged afterwards. The squared visibility is likewise the
// squared modulus of the band-averaged coherent flux, not the band average of |V|².
//
// S is chosen per point from the field of the grid: the smallest S whose quadrature error is
// at most a tolerance τ for a point source at the corner of the grid, the farthest emission
// the image can hold; S = 1 (the centre of the band) where even that is within τ. The error
// is measured against Gauss–Legendre quadrature of many more nodes (at least 24 plus the
// phase turn across the band in radians, which converges exponentially).

// Smearing says whether a forward model averages each datum's visibility over its band.
type Smearing int8

// The smearing modes.
const (
	// SmearAuto, the default, models the smearing when it exceeds the noise for some datum:
	// when the fractional visibility loss of a point source at the edge of the field,
	// |1 − V̄/V| (the B·FOV·Δλ/λ² effect), exceeds the datum's relative error (smearRatio).
	SmearAuto Smearing = iota
	// SmearOn models it wherever it exceeds the tolerance.
	SmearOn
	// SmearOff takes every visibility at the centre of its band.
	SmearOff
)

var smearWords = [...]string{SmearAuto: "auto", SmearOn: "on", SmearOff: "off"}

// String returns the word of the mode: auto, on or off.
func (s Smearing) String() string {
	if s < 0 || int(s) >= len(smearWords) {
		return fmt.Sprintf("Smearing(%d)", int(s))
	}
	return smearWords[s]
}

// ParseSmearing reads auto, on or off (any case, blanks ignored; "" is auto).
func ParseSmearing(text string) (Smearing, error) {
	w := strings.ToLower(strings.TrimSpace(text))
	if w == "" {
		return SmearAuto, nil
	}
	for i, s := range smearWords {
		if w == s {
			return Smearing(i), nil
		}
	}
	return SmearAuto, fmt.Errorf("want auto, on or off, not %q", text)
}

// ModelOptions configure a forward model. The zero value is the default.
type ModelOptions struct {
	// Smearing says whether visibilities are averaged over their bands; zero is SmearAuto.
	Smearing Smearing
	// SmearTol, when positive, is the largest quadrature error of the smeared visibility of a
	// unit point source anywhere in the grid; 0 means a tenth of the smallest relative error
	// of the data (smearRatio, smearTolerance), within [1e-8, 1e-3].
	SmearTol float64
}

// SmearInfo says how a forward model treats bandwidth smearing.
type SmearInfo struct {
	// Modelled is true when visibilities are band averages; SubPoints is then the number of
	// quadrature nodes over all points, and MaxNodes the most of any point.
	Modelled            bool
	SubPoints, MaxNodes int
	// Effect is the largest ratio, over the data, of the fractional visibility loss of a
	// point source at the edge of the field to the datum's relative error (smearRatio):
	// above 1 the smearing exceeds the noise.
	Effect float64
	// Tol is the quadrature tolerance used.
	Tol float64
}

// Notice returns the sentence that tells users what was done, "" when the data have no
// bandwidths.
func (s SmearInfo) Notice(points int) string {
	switch {
	case s.Modelled:
		return fmt.Sprintf("bandwidth smearing modelled: %d points averaged over their bands with %d sub-samples (at most %d per point; largest effect %.3g times the noise at the field's edge)", points, s.SubPoints, s.MaxNodes, s.Effect)
	case s.Effect > 1:
		return fmt.Sprintf("bandwidth smearing not modelled although it reaches %.3g times the noise at the field's edge", s.Effect)
	}
	return ""
}

// relBand returns the relative bandwidth dl[i]/l[i], 0 when it is missing, not finite or
// not positive.
func relBand(dl, l []float64, i int) float64 {
	if i >= len(dl) || i >= len(l) {
		return 0
	}
	r := dl[i] / l[i]
	if !(r > 0) || math.IsInf(r, 0) || r >= 2 {
		return 0
	}
	return r
}

// smearing holds the sub-points of a smeared forward model and the buffers of one evaluation.
type smearing struct {
	u, v []float64    // the sub-points (cycles/rad)
	w    []float64    // the weight of each sub-point; those of a point sum to 1
	off  []int32      // point k has the sub-points off[k] .. off[k+1]−1
	sub  []complex128 // the visibilities at the sub-points of the last Forward
	gsub []complex128 // ∂J/∂V at the sub-points
	// at, when not nil, is the place in sub and gsub of each sub-point, which are then in
	// the transform's order of the sub-points (ForwardModel.st; reorder).
	at []int32
}

// reorder holds sub and gsub in a new order of the sub-points, sub-point order[i] at place
// i. The band averages then gather the sub-points of each point from their places, in the
// same order of nodes, so that they give the same bits.
func (s *smearing) reorder(order []int) {
	if len(order) != len(s.u) {
		panic(fmt.Sprintf("recon: reorder of %d sub-points by %d indices", len(s.u), len(order)))
	}
	s.at = make([]int32, len(order))
	for i, k := range order {
		s.at[k] = int32(i)
	}
}

// average sets dst[k] to the weighted mean of the visibilities of the sub-points of point k.
func (s *smearing) average(dst []complex128) {
	if s.at != nil {
		at := s.at[:len(s.w)]
		for k := range dst {
			var a complex128
			for j := s.off[k]; j < s.off[k+1]; j++ {
				v, wj := s.sub[at[j]], s.w[j]
				a += complex(wj*real(v), wj*imag(v))
			}
			dst[k] = a
		}
		return
	}
	for k := range dst {
		var a complex128
		for j := s.off[k]; j < s.off[k+1]; j++ {
			v, wj := s.sub[j], s.w[j]
			a += complex(wj*real(v), wj*imag(v))
		}
		dst[k] = a
	}
}

// spread sets the derivative at each sub-point from that of its point: w_j·g[k].
func (s *smearing) spread(g []complex128) {
	if s.at != nil {
		at := s.at[:len(s.w)]
		for k, gk := range g {
			for j := s.off[k]; j < s.off[k+1]; j++ {
				s.gsub[at[j]] = complex(s.w[j]*real(gk), s.w[j]*imag(gk))
			}
		}
		return
	}
	for k, gk := range g {
		for j := s.off[k]; j < s.off[k+1]; j++ {
			s.gsub[j] = complex(s.w[j]*real(gk), s.w[j]*imag(gk))
		}
	}
}

// transform computes the model visibilities of the image at the points, unnormalised, from
// the image times the sign of the shifted points in m.xs (ForwardModel.shift): the transform,
// then the band averages when smearing is modelled.
func (m *ForwardModel) transform() {
	x := m.xs
	dst := m.vis
	if m.smear != nil {
		dst = m.smear.sub
	}
	if m.st != nil {
		m.st.ForwardSorted(dst, x)
	} else {
		m.tr.Forward(dst, x)
	}
	if m.smear != nil {
		m.smear.average(m.vis)
	}
}

// adjoint computes the adjoint transform of the accumulated derivatives at the shifted points
// into m.adj: the adjoint at the points times (−1)^(ix − N/2) (halfShift), a sign that
// gradientWith applies.
func (m *ForwardModel) adjoint() {
	src := m.gvis
	if m.smear != nil {
		m.smear.spread(m.gvis)
		src = m.smear.gsub
	}
	if m.st != nil {
		m.st.AdjointSorted(m.adj, src)
	} else {
		m.tr.Adjoint(m.adj, src)
	}
}

// Smearing returns how the model treats bandwidth smearing.
func (m *ForwardModel) Smearing() SmearInfo { return m.smearInfo }

// legendre holds Gauss–Legendre nodes on [−1/2, 1/2] and weights summing to 1, by order.
type legendre map[int][2][]float64

// nodes returns the n nodes and weights.
func (l legendre) nodes(n int) (t, w []float64) {
	if q, ok := l[n]; ok {
		return q[0], q[1]
	}
	t, w = gaussLegendre(n)
	l[n] = [2][]float64{t, w}
	return t, w
}

// gaussLegendre returns the n-point Gauss–Legendre nodes on [−1/2, 1/2], in increasing
// order, and their weights, which sum to 1: the roots z of the Legendre polynomial P_n by
// Newton's method from z = cos(π(i − 1/4)/(n + 1/2)), P_n by its three-term recurrence, and
// the weights 2/((1 − z²)·P_n'(z)²) (Abramowitz & Stegun 1964, 25.4.29), both halved for the
// interval of length 1. (gonum's quad.Legendre gives weights summing to 0.9894 for n = 26.)
func gaussLegendre(n int) (t, w []float64) {
	t, w = make([]float64, n), make([]float64, n)
	for i := 0; i < (n+1)/2; i++ {
		z := math.Cos(math.Pi * (float64(i) + 0.75) / (float64(n) + 0.5))
		var dp float64
		for range 100 {
			p1, p2 := 1.0, 0.0
			for j := 1; j <= n; j++ {
				p1, p2 = ((2*float64(j)-1)*z*p1-(float64(j)-1)*p2)/float64(j), p1
			}
			dp = float64(n) * (z*p1 - p2) / (z*z - 1)
			dz := p1 / dp
			z -= dz
			if math.Abs(dz) <= 1e-16 {
				break
			}
		}
		wi := 1 / ((1 - z*z) * dp * dp)
		t[i], t[n-1-i] = -z/2, z/2
		w[i], w[n-1-i] = wi, wi
	}
	return t, w
}

// bandMean returns ∫_{−1/2}^{1/2} exp(−iβ/(1 + r·t)) dt · exp(iβ) by n-node Gauss–Legendre
// quadrature: the smeared visibility of a unit point source whose phase at the band's
// centre is −β (β = 2π·u·s), relative to its unsmeared value.
func (l legendre) bandMean(beta, r float64, n int) complex128 {
	t, w := l.nodes(n)
	var a complex128
	for j := range t {
		s, c := math.Sincos(beta - beta/(1+r*t[j]))
		a += complex(w[j]*c, w[j]*s)
	}
	return a
}

// exactNodes is the order of the reference quadrature for a phase β at relative bandwidth r:
// 24 plus the phase turn across the band, for which Gauss–Legendre converges to rounding.
// It is at most maxExactNodes: a phase turn beyond that (a baseline of corrupt data) only
// needs a loss near 1, which that many nodes already give.
func exactNodes(beta, r float64) int {
	return 24 + int(math.Min(math.Ceil(math.Abs(beta)*r/(1-r*r/4)), maxExactNodes))
}

// maxExactNodes bounds the reference quadrature's phase turns (common practice, no source).
const maxExactNodes = 4096

// maxSmearNodes bounds the nodes of one point; a field so wide that more are needed is
// beyond the tolerance and is modelled with this many.
const maxSmearNodes = 256

// smearRatio returns the ratio of the fractional visibility loss δ of a point source at the
// edge of the field to a datum's relative error ρ, 0 without an error: for V²
// ρ = σ/(2·max(V²ₒ, σ)) (a relative change δ of V changes V² by 2δ·V²), for amplitudes
// σ/max(Aₒ, σ), for triple amplitudes σ/(3·max(|B|ₒ, σ)), for visibility phases σ
// (radians; a component of the visibility shrunk by δ moves the phase by up to about δ) and
// for closure phases σ/3 (three baselines). Common practice, no source.
func smearRatio(delta, rho float64) float64 {
	if !(rho > 0) {
		return 0
	}
	return delta / rho
}

// smearTolerance returns τ = ρ_min/10 within [1e-8, 1e-3], ρ_min the smallest relative error
// of the data (smearRatio); common practice, no source.
func smearTolerance(rhoMin float64) float64 {
	return math.Min(math.Max(rhoMin/10, 1e-8), 1e-3)
}

// newSmearing decides whether the model of d on grid g is smeared and builds its sub-points;
// nil when it is not (or when no point needs more than one node).
func newSmearing(d *dataset.Data, s *sampling, g Grid, opt ModelOptions) (*smearing, SmearInfo) {
	edge := float64(g.N) * g.Pixel / 2
	return newSmearingOut(d, s, edge, edge*math.Sqrt2, opt)
}

// newSmearingOut is newSmearing for emission out to corner (rad) from the phase centre,
// judged for the automatic choice by a point source at edge.
func newSmearingOut(d *dataset.Data, s *sampling, edge, corner float64, opt ModelOptions) (*smearing, SmearInfo) {
	var info SmearInfo
	any := false
	for _, r := range s.rb {
		if r > 0 {
			any = true
			break
		}
	}
	if !any {
		return nil, info
	}
	l := legendre{}
	// δ_k: the fractional loss at each point of a point source at the field's edge.
	delta := make([]float64, len(s.U))
	for k := range s.U {
		if r := s.rb[k]; r > 0 {
			beta := 2 * math.Pi * math.Hypot(s.U[k], s.V[k]) * edge
			delta[k] = abs(1 - l.bandMean(beta, r, exactNodes(beta, r)))
		}
	}
	rhoMin := math.Inf(1)
	see := func(k int32, rho float64) {
		if rho > 0 {
			rhoMin = math.Min(rhoMin, rho)
			info.Effect = math.Max(info.Effect, smearRatio(delta[k], rho))
		}
	}
	p2 := &d.Vis2
	for i, r := range s.vis2 {
		if i < p2.Len() {
			see(r.i, p2.Err[i]/(2*math.Max(p2.Value[i], p2.Err[i])))
		}
	}
	p3 := &d.T3
	for i, r3 := range s.t3 {
		for _, r := range r3 {
			if p3.AmpOK[i] {
				see(r.i, p3.AmpErr[i]/(3*math.Max(math.Abs(p3.Amp[i]), p3.AmpErr[i])))
			}
			if p3.PhiOK[i] {
				see(r.i, p3.PhiErr[i]/3)
			}
		}
	}
	pv := &d.Vis
	for i, r := range s.cvis {
		if pv.AmpOK[i] && pv.AmpTyp[i] == dataset.AmpAbsolute {
			see(r.i, pv.AmpErr[i]/math.Max(math.Abs(pv.Amp[i]), pv.AmpErr[i]))
		}
		if pv.PhiOK[i] {
			see(r.i, pv.PhiErr[i])
		}
	}
	switch opt.Smearing {
	case SmearOff:
		return nil, info
	case SmearAuto:
		if !(info.Effect > 1) {
			return nil, info
		}
	}
	info.Tol = opt.SmearTol
	if !(info.Tol > 0) {
		info.Tol = smearTolerance(rhoMin)
	}
	sm := &smearing{off: make([]int32, len(s.U)+1)}
	for k := range s.U {
		n := 1
		if r := s.rb[k]; r > 0 {
			beta := 2 * math.Pi * math.Hypot(s.U[k], s.V[k]) * corner
			exact := l.bandMean(beta, r, exactNodes(beta, r))
			for n < maxSmearNodes && abs(l.bandMean(beta, r, n)-exact) > info.Tol {
				n++
			}
		}
		t, w := l.nodes(n)
		for j := range t {
			f := 1 / (1 + s.rb[k]*t[j])
			sm.u = append(sm.u, s.U[k]*f)
			sm.v = append(sm.v, s.V[k]*f)
			sm.w = append(sm.w, w[j])
		}
		sm.off[k+1] = int32(len(sm.u))
		info.MaxNodes = max(info.MaxNodes, n)
	}
	if info.MaxNodes <= 1 {
		return nil, info
	}
	info.Modelled = true
	info.SubPoints = len(sm.u)
	sm.sub = make([]complex128, len(sm.u))
	sm.gsub = make([]complex128, len(sm.u))
	return sm, info
}
