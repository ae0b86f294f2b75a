package recon

import (
	"math"

	"vcz/dataset"
)

// t3PhiKind is the term of closure phases (OI_T3 T3PHI, T3PHIERR in degrees, held in
// radians; Pauls et al. 2005, PASP 117, 1255): the wrap-safe phase term of term_phase.go on
// the bispectrum rotated by the measured phase, b = W1·W2·W3·exp(−iφₒ),
//
//	χ² = Σ 2(1 − cos φ)/σ²,  φ = arg b,  residual 2 sin(φ/2)/σ.
//
// With dJ/dφ = 2 sin φ/σ² and ∂φ/∂(Re, Im) W1 = i W1/|W1|² = i conj(W2 W3 e)·b/|b|², and
// likewise for W2 and W3, one reciprocal serves all three sides. A zero bispectrum has no
// phase: its term is 0, without gradient. While Solve smooths the phase terms
// (SetPhaseSmoothing) the term is smoothPhase(b) with η the smoothing factor times the median
// measured triple amplitude (phaseScales). The expected χ² is that of term_phase.go.
// Triangles whose phase is not usable (PhiOK false) are left out.
type t3PhiKind struct{}

func (t3PhiKind) bind(d *dataset.Data, c termConfig) term {
	t := &t3PhiTerm{d: d, idx: pickOK(d.T3.Len(), d.T3.PhiOK, c)}
	for _, i := range t.idx {
		t.e = append(t.e, phasor(d.T3.Phi[i]))
		t.is2 = append(t.is2, 1/(d.T3.PhiErr[i]*d.T3.PhiErr[i]))
	}
	t.scale, _ = phaseScales(d)
	return t
}

func (t3PhiKind) predict(d *dataset.Data, s *sampling, vis []complex128) []float64 {
	out := make([]float64, d.T3.Len())
	for i, r := range s.t3 {
		w1, w2, w3 := sides(vis, r)
		b := w1 * w2 * w3
		out[i] = math.Atan2(imag(b), real(b))
	}
	return out
}

// t3PhiTerm is the closure-phase term over the triangles idx of d.T3.
type t3PhiTerm struct {
	d     *dataset.Data
	idx   []int32
	e     []complex128 // exp(−iφₒ) of each datum
	is2   []float64    // 1/σ² of each datum
	scale float64      // typical triple amplitude, the unit of the smoothing
}

func (t *t3PhiTerm) len() int          { return len(t.idx) }
func (t *t3PhiTerm) notices() []string { return nil }
func (t *t3PhiTerm) need(n *needs) {
	mark(n.t3, t.idx)
}

func (t *t3PhiTerm) expected() float64 {
	s := 0.0
	for _, i := range t.idx {
		s += expectedPhaseTerm(t.d.T3.PhiErr[i])
	}
	return s
}

func (t *t3PhiTerm) eval(c *evalCtx, k, parts int) (float64, float64) {
	lo, hi := part(len(t.idx), k, parts)
	if eta := c.smooth * t.scale; eta > 0 {
		return t.evalSmoothed(c, lo, hi, eta)
	}
	w, g, refs, vis := c.w, c.grad, c.s.t3, c.vis
	s := 0.0
	// The triangles go in blocks, as in evalSmoothed: the bispectra, then their terms four at
	// a time (exactPhaseBlock), then the sums and gradients in the order of the triangles.
	var blk phaseBlock
	var sd [3][phaseBlockLen]complex128 // W1, W2 and W3 of each triangle of the block
	for b0 := lo; b0 < hi; b0 += phaseBlockLen {
		n := min(phaseBlockLen, hi-b0)
		idx, es, is2s := t.idx[b0:b0+n], t.e[b0:b0+n], t.is2[b0:b0+n]
		es, is2s = es[:len(idx)], is2s[:len(idx)]
		for j, i := range idx {
			w1, w2, w3 := sides(vis, refs[i])
			// b = W1·W2·W3·exp(−iφₒ), whose argument is φ − φₒ.
			b := w1 * (w2 * (w3 * es[j]))
			sd[0][j], sd[1][j], sd[2][j] = w1, w2, w3
			blk.re[j], blk.im[j], blk.is2[j] = real(b), imag(b), is2s[j]
		}
		// A zero bispectrum has no phase: its term is taken as 0, without gradient.
		exactPhaseBlock(&blk, n, 2*w)
		for j := range n {
			s += blk.exact[j]
		}
		if g == nil {
			continue
		}
		for j, i := range idx {
			if !(blk.ab2[j] > 0) {
				continue
			}
			r := &refs[i]
			w1, w2, w3 := sd[0][j], sd[1][j], sd[2][j]
			// dJ/dφ = 2 sin φ/σ² = 2 Im b/(|b|σ²) and ∂φ/∂(Re, Im) W1 = i W1/|W1|², so
			// that ∂J/∂W1 = i·kb·|b|²/|W1|²·W1 with kb = 2w Im b/(|b|³σ²), and
			// |b|²/|W1|² = |W2|²|W3|² (|exp(−iφₒ)| = 1): one real factor per side, without
			// the products W2·W3 of the chain rule through b.
			kb := blk.kb[j]
			a1 := real(w1)*real(w1) + imag(w1)*imag(w1)
			a2 := real(w2)*real(w2) + imag(w2)*imag(w2)
			a3 := real(w3)*real(w3) + imag(w3)*imag(w3)
			k1, k2, k3 := kb*(a2*a3), kb*(a1*a3), kb*(a1*a2)
			addGrad(g, r[0], complex(-k1*imag(w1), k1*real(w1)))
			addGrad(g, r[1], complex(-k2*imag(w2), k2*real(w2)))
			addGrad(g, r[2], complex(-k3*imag(w3), k3*real(w3)))
		}
	}
	return s, 0
}

// evalSmoothed is eval on the triangles [lo, hi) while the phase terms are smoothed with
// scale eta: the smoothed term of SetPhaseSmoothing on b, whose gradient with respect to
// (Re b, Im b) has a radial part, carried to the sides by ∂b/∂W1 = W2·W3·exp(−iφₒ) and its
// likes. It returns the exact χ² and the weighted excess of the smoothed term.
//
// The triangles go in blocks of phaseBlockLen: the bispectra of a block first, then their
// terms in one pass of smoothPhaseBlock (four at a time where the processor has AVX), then the
// sums and gradients in the order of the triangles, so that the bits are those of one
// triangle after the other.
func (t *t3PhiTerm) evalSmoothed(c *evalCtx, lo, hi int, eta float64) (float64, float64) {
	w, g, refs, vis := c.w, c.grad, c.s.t3, c.vis
	s, sm := 0.0, 0.0
	eta2 := eta * eta
	var blk phaseBlock
	var sd [3][phaseBlockLen]complex128 // W1, W2 and W3·exp(−iφₒ) of each triangle of the block
	for b0 := lo; b0 < hi; b0 += phaseBlockLen {
		n := min(phaseBlockLen, hi-b0)
		idx, es, is2s := t.idx[b0:b0+n], t.e[b0:b0+n], t.is2[b0:b0+n]
		es, is2s = es[:len(idx)], is2s[:len(idx)]
		for j, i := range idx {
			w1, w2, w3 := sides(vis, refs[i])
			// b and its derivatives ∂b/∂W1 = W2 W3 e, ∂b/∂W2 = W1 W3 e, ∂b/∂W3 = W1 W2 e
			// from shared products.
			w3e := w3 * es[j]
			b := w1 * (w2 * w3e)
			sd[0][j], sd[1][j], sd[2][j] = w1, w2, w3e
			blk.re[j], blk.im[j], blk.is2[j] = real(b), imag(b), is2s[j]
		}
		smoothPhaseBlock(&blk, n, eta2)
		for j := range n {
			s += blk.exact[j]
			sm += blk.v[j]
		}
		if g == nil {
			continue
		}
		for j, i := range idx {
			r := &refs[i]
			gb := complex(w*blk.gre[j], w*blk.gim[j])
			w1, w2, w3e := sd[0][j], sd[1][j], sd[2][j]
			d1 := w2 * w3e
			d2 := w1 * w3e
			d3 := w1 * w2 * es[j]
			addGrad(g, r[0], conj(d1)*gb)
			addGrad(g, r[1], conj(d2)*gb)
			addGrad(g, r[2], conj(d3)*gb)
		}
	}
	return s, w * (sm - s)
}

func (t *t3PhiTerm) residuals(dst []float64, c *evalCtx) {
	for k, i := range t.idx {
		w1, w2, w3 := sides(c.vis, c.s.t3[i])
		dst[k] = phaseResidual(w1*w2*w3*t.e[k], t.d.T3.PhiErr[i])
	}
}
