package recon

import "vcz/dataset"

// t3AmpKind is the term of triple-product amplitudes (OI_T3 T3AMP, T3AMPERR; Pauls et al.
// 2005, PASP 117, 1255): the Gaussian χ² of
//
//	r = (|B| − |B|ₒ)/σ,  |B| = |W1||W2||W3|,  χ² = Σ r²,
//
// with the bispectrum B = W1·W2·W3 (sides). Since ∂|B|/∂W1 = |W2||W3|·W1/|W1| and likewise
// for W2 and W3, ∂r²/∂W1 = 2 r/σ · |W2||W3| · W1/|W1|. Its expected χ² is one per datum.
// Triangles whose amplitude is not usable (AmpOK false) are left out.
type t3AmpKind struct{}

func (t3AmpKind) bind(d *dataset.Data, c termConfig) term {
	return &t3AmpTerm{d: d, idx: pickOK(d.T3.Len(), d.T3.AmpOK, c)}
}

func (t3AmpKind) predict(d *dataset.Data, s *sampling, vis []complex128) []float64 {
	out := make([]float64, d.T3.Len())
	for i, r := range s.t3 {
		w1, w2, w3 := sides(vis, r)
		out[i] = abs(w1) * abs(w2) * abs(w3)
	}
	return out
}

// t3AmpTerm is the T3 amplitude term over the triangles idx of d.T3.
type t3AmpTerm struct {
	d   *dataset.Data
	idx []int32
}

func (t *t3AmpTerm) len() int          { return len(t.idx) }
func (t *t3AmpTerm) expected() float64 { return float64(len(t.idx)) }
func (t *t3AmpTerm) notices() []string { return nil }
func (t *t3AmpTerm) need(n *needs) {
	mark(n.t3, t.idx)
}

func (t *t3AmpTerm) eval(c *evalCtx, k, parts int) (float64, float64) {
	amp, aerr, refs, vis, grad := t.d.T3.Amp, t.d.T3.AmpErr, c.s.t3, c.vis, c.grad
	lo, hi := part(len(t.idx), k, parts)
	s := 0.0
	for _, i := range t.idx[lo:hi] {
		r := refs[i]
		w1, w2, w3 := sides(vis, r)
		a1, a2, a3 := abs(w1), abs(w2), abs(w3)
		sig := aerr[i]
		res := (a1*a2*a3 - amp[i]) / sig
		s += res * res
		if grad != nil {
			g := 2 * c.w * res / sig
			addGrad(grad, r[0], complex(g*a2*a3, 0)*unit(w1, a1))
			addGrad(grad, r[1], complex(g*a1*a3, 0)*unit(w2, a2))
			addGrad(grad, r[2], complex(g*a1*a2, 0)*unit(w3, a3))
		}
	}
	return s, 0
}

func (t *t3AmpTerm) residuals(dst []float64, c *evalCtx) {
	d := t.d
	for j, i := range t.idx {
		w1, w2, w3 := sides(c.vis, c.s.t3[i])
		dst[j] = (abs(w1)*abs(w2)*abs(w3) - d.T3.Amp[i]) / d.T3.AmpErr[i]
	}
}
