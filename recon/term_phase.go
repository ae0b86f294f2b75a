package recon

import (
	"math"
	"slices"

	"vcz/dataset"
)

// The wrap-safe phase term shared by closure phases (term_t3phi.go) and visibility phases
// (term_visphi.go). For a model quantity z rotated by the measured phase, z = Q·exp(−iφₒ)
// with Q the bispectrum or the visibility, the phase residual is Δφ = arg z and
//
//	χ² = Σ 2(1 − cos Δφ)/σ² = Σ 2(|z| − Re z)/(|z|σ²),
//
// σ in radians, which is periodic in Δφ and tends to the Gaussian (Δφ/σ)² for small
// residuals. The normalised residual of a least-squares fit is 2 sin(Δφ/2)/σ, whose square is
// the same term since 4 sin²(Δφ/2) = 2(1 − cos Δφ). Its expectation for ε ~ N(0, σ²) is
// E[2(1 − cos ε)]/σ² = 2(1 − e^(−σ²/2))/σ², because E[cos ε] = e^(−σ²/2) (the characteristic
// function of the normal distribution). The smoothed form used while Solve searches is
// smoothPhase (Objective.SetPhaseSmoothing).

// phaseResidual returns the normalised wrap-safe residual 2 sin(Δφ/2)/σ of z = |z|e^(iΔφ),
// Δφ in (−π, π] as atan2 gives it, and 0 at z = 0, which has no phase (as eval takes its
// term). It uses the half-angle formulas, not atan2 and sin: with z = x + iy and a = |z|,
//
//	sin(Δφ/2) = y/√(2a(a + x))     for x ≥ 0 (sin Δφ = 2 sin(Δφ/2) cos(Δφ/2), cos(Δφ/2) = √((a + x)/2a)),
//	sin(Δφ/2) = ±√((a − x)/2a)     for x < 0, with the sign of y (of −0 too, as atan2),
//
// each free of cancellation on its side (half-angle formulas, Abramowitz & Stegun 1964,
// 4.3.20–4.3.21, from memory). Moduli that are not finite or beyond 1e150, where a² would
// overflow, take the atan2 form.
func phaseResidual(z complex128, sigma float64) float64 {
	x, y := real(z), imag(z)
	a := math.Sqrt(x*x + y*y)
	switch {
	case a == 0:
		return 0
	case !(a <= 1e150):
		return 2 * math.Sin(math.Atan2(y, x)/2) / sigma
	case x >= 0:
		return 2 * y / (math.Sqrt(2*a*(a+x)) * sigma)
	}
	return 2 * math.Copysign(math.Sqrt((a-x)/(2*a)), y) / sigma
}

// expectedPhaseTerm is E[2(1 − cos ε)]/σ² for ε ~ N(0, σ²), σ in radians (ExpectedChi2r).
func expectedPhaseTerm(sigma float64) float64 {
	v := sigma * sigma
	if v < 1e-8 {
		return 1 - v/4 // the series 1 − σ²/4 + σ⁴/24 avoids the cancellation
	}
	return -2 * math.Expm1(-v/2) / v
}

// smoothPhase returns the smoothed phase term 2(|z| − Re z)/(qσ²), q = √(|z|² + η²), of
// SetPhaseSmoothing, with is2 = 1/σ², and its gradient with respect to (Re z, Im z) as a
// complex number: (2/σ²)[(z/|z| − 1)/q − (|z| − Re z)·z/q³], taking z/|z| = 0 at z = 0.
func smoothPhase(z complex128, eta, is2 float64) (float64, complex128) {
	re, im := real(z), imag(z)
	a := math.Sqrt(re*re + im*im)
	q2 := a*a + eta*eta
	iq := 1 / math.Sqrt(q2)
	d := a - re
	v := 2 * d * iq * is2
	ux, uy := 0.0, 0.0
	if a > 0 {
		ux, uy = re/a, im/a
	}
	c := 2 * is2 * iq
	c3 := c * d / q2
	return v, complex(c*(ux-1)-c3*re, c*uy-c3*im)
}

// smoothPhaseExact returns the exact wrap-safe term 2(|z| − Re z)/(|z|σ²) (0 at z = 0) with
// the smoothed term and its gradient of smoothPhase, sharing |z| and the reciprocals.
func smoothPhaseExact(z complex128, eta, is2 float64) (exact, v float64, g complex128) {
	re, im := real(z), imag(z)
	a2 := re*re + im*im
	a := math.Sqrt(a2)
	q2 := a2 + eta*eta
	iq := 1 / math.Sqrt(q2)
	d := a - re
	ux, uy := 0.0, 0.0
	if a > 0 {
		ia := 1 / a
		ux, uy = re*ia, im*ia
		exact = 2 * (1 - ux) * is2 // as the exact term computes it, to the bit
	}
	c := 2 * is2 * iq
	v = d * c
	c3 := c * d * iq * iq
	return exact, v, complex(c*(ux-1)-c3*re, c*uy-c3*im)
}

// phaseScales returns the typical model amplitudes of the closure-phase and visibility-phase
// terms of d (SetPhaseSmoothing): the median triple amplitude and the median |V|.
func phaseScales(d *dataset.Data) (b, v float64) {
	var amps []float64
	for i, w := range d.Vis2.Value {
		if d.Vis2.Err[i] > 0 {
			amps = append(amps, math.Sqrt(math.Max(w, 0)))
		}
	}
	for i, ok := range d.Vis.AmpOK {
		if ok && d.Vis.AmpTyp[i] == dataset.AmpAbsolute && len(d.Vis2.Value) == 0 {
			amps = append(amps, math.Abs(d.Vis.Amp[i]))
		}
	}
	v = median(amps)
	var t3 []float64
	for i, ok := range d.T3.AmpOK {
		if ok {
			t3 = append(t3, math.Abs(d.T3.Amp[i]))
		}
	}
	b = median(t3)
	if !(v > 0) {
		v = DefaultPhaseScale
	}
	if !(b > 0) {
		b = v * v * v
	}
	return b, v
}

// DefaultPhaseScale is the typical amplitude assumed for the smoothing of visibility phases
// when the data hold no amplitudes at all (common practice, no source).
const DefaultPhaseScale = 0.1

// median returns the median of v (reordering it), NaN when v is empty.
func median(v []float64) float64 {
	if len(v) == 0 {
		return math.NaN()
	}
	slices.Sort(v)
	if len(v)%2 == 1 {
		return v[len(v)/2]
	}
	return 0.5 * (v[len(v)/2-1] + v[len(v)/2])
}
