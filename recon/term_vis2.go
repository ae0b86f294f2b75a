package recon

import "vcz/dataset"

// vis2Kind is the term of squared visibilities (OI_VIS2 VIS2DATA, VIS2ERR; Pauls et al. 2005,
// PASP 117, 1255): the Gaussian χ² of the normalised residuals
//
//	r = (|V|² − V²ₒ)/σ,  χ² = Σ r²,
//
// with the gradient ∂r²/∂(Re V, Im V) = 4 r/σ · V. Its expected χ² is one per datum. The
// reciprocals 1/σ are taken once, when the term is made.
type vis2Kind struct{}

func (vis2Kind) bind(d *dataset.Data, c termConfig) term {
	t := &vis2Term{d: d, idx: pickOK(d.Vis2.Len(), nil, c)}
	t.isig = make([]float64, len(t.idx))
	for j, i := range t.idx {
		t.isig[j] = 1 / d.Vis2.Err[i]
	}
	return t
}

func (vis2Kind) predict(d *dataset.Data, s *sampling, vis []complex128) []float64 {
	out := make([]float64, d.Vis2.Len())
	for i, r := range s.vis2 {
		v := at(vis, r)
		out[i] = real(v)*real(v) + imag(v)*imag(v)
	}
	return out
}

// vis2Term is the V² term over the data idx of d.Vis2.
type vis2Term struct {
	d    *dataset.Data
	idx  []int32
	isig []float64 // 1/σ of each datum
}

func (t *vis2Term) len() int          { return len(t.idx) }
func (t *vis2Term) expected() float64 { return float64(len(t.idx)) }
func (t *vis2Term) notices() []string { return nil }
func (t *vis2Term) need(n *needs) {
	mark(n.vis2, t.idx)
}

// residual returns the normalised residual of datum j of the term at the point's
// visibility v.
func (t *vis2Term) residual(v complex128, j int) float64 {
	return (real(v)*real(v) + imag(v)*imag(v) - t.d.Vis2.Value[t.idx[j]]) * t.isig[j]
}

func (t *vis2Term) eval(c *evalCtx, k, parts int) (float64, float64) {
	val, refs, vis, grad := t.d.Vis2.Value, c.s.vis2, c.vis, c.grad
	lo, hi := part(len(t.idx), k, parts)
	idx, isig := t.idx[lo:hi], t.isig[lo:hi]
	isig = isig[:len(idx)]
	s, w4 := 0.0, 4*c.w
	for j, i := range idx {
		r := refs[i]
		// |V|² and the gradient 4w r/σ·V, taken with respect to the point's own visibility:
		// a conjugated datum sees the same modulus, and its derivative conjugated back is
		// the same multiple of the point's visibility.
		v := vis[r.i]
		is := isig[j]
		res := (real(v)*real(v) + imag(v)*imag(v) - val[i]) * is
		s += res * res
		if grad != nil {
			f := w4 * res * is
			grad[r.i] += complex(f*real(v), f*imag(v))
		}
	}
	return s, 0
}

func (t *vis2Term) residuals(dst []float64, c *evalCtx) {
	for j, i := range t.idx {
		dst[j] = t.residual(at(c.vis, c.s.vis2[i]), j)
	}
}
