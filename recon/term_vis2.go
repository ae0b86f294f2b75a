package recon

import "vcz/dataset"

// vis2Kind is the term of squared visibilities (OI_VIS2 VIS2DATA, VIS2ERR; Pauls et al. 2005,
// PASP 117, 1255): the Gaussian χ² of the normalised residuals
//
//	r = (|V|² − V²ₒ)/σ,  χ² = Σ r²,
//
// with the gradient ∂r²/∂(Re V, Im V) = 4 r/σ · V. Its expected χ² is one per datum.
type vis2Kind struct{}

func (vis2Kind) bind(d *dataset.Data, c termConfig) term {
	return &vis2Term{d: d, idx: pickOK(d.Vis2.Len(), nil, c)}
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
	d   *dataset.Data
	idx []int32
}

func (t *vis2Term) len() int          { return len(t.idx) }
func (t *vis2Term) expected() float64 { return float64(len(t.idx)) }
func (t *vis2Term) notices() []string { return nil }
func (t *vis2Term) need(n *needs) {
	mark(n.vis2, t.idx)
}

func (t *vis2Term) residual(v complex128, i int32) float64 {
	return (real(v)*real(v) + imag(v)*imag(v) - t.d.Vis2.Value[i]) / t.d.Vis2.Err[i]
}

func (t *vis2Term) eval(c *evalCtx, k, parts int) (float64, float64) {
	val, verr, refs, vis, grad := t.d.Vis2.Value, t.d.Vis2.Err, c.s.vis2, c.vis, c.grad
	lo, hi := part(len(t.idx), k, parts)
	s, w4 := 0.0, 4*c.w
	for _, i := range t.idx[lo:hi] {
		r := refs[i]
		// |V|² and the gradient 4w r/σ·V, taken with respect to the point's own visibility:
		// a conjugated datum sees the same modulus, and its derivative conjugated back is
		// the same multiple of the point's visibility.
		v := vis[r.i]
		sig := verr[i]
		res := (real(v)*real(v) + imag(v)*imag(v) - val[i]) / sig
		s += res * res
		if grad != nil {
			f := w4 * res / sig
			grad[r.i] += complex(f*real(v), f*imag(v))
		}
	}
	return s, 0
}

func (t *vis2Term) residuals(dst []float64, c *evalCtx) {
	for j, i := range t.idx {
		dst[j] = t.residual(at(c.vis, c.s.vis2[i]), i)
	}
}
