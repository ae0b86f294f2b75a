package recon

import (
	"math"

	"vcz/dataset"
)

// visPhiKind is the term of absolute visibility phases (OI_VIS VISPHI, VISPHIERR in degrees,
// held in radians; OIFITS v2 PHITYP, Duvert, Young & Hummel 2017, table 6): the wrap-safe
// phase term of term_phase.go on z = V·exp(−iφₒ),
//
//	χ² = Σ 2(1 − cos φ)/σ²,  φ = arg z,  residual 2 sin(φ/2)/σ,
//
// with dJ/dφ = 2 sin φ/σ² and ∂φ/∂(Re, Im) V = i V/|V|². While Solve smooths the phase terms
// the term is smoothPhase(z) with η the smoothing factor times the median |V| of the data
// (phaseScales). Differential phases are the term of term_visdiff.go. With TermOptions.ComplexVis a visibility whose amplitude and phase are both absolute
// contributes the tangential part (Im z/σ_t)² of its complex residual z (term_visamp.go), with
// σ_t = Aₒσ_φ (σ_φ where Aₒ = 0), which is Gaussian: its expected χ² is one, and that of the
// other phases is the one of term_phase.go.
type visPhiKind struct{}

func (visPhiKind) bind(d *dataset.Data, c termConfig) term {
	p := &d.Vis
	t := &visPhiTerm{d: d}
	t.vx, t.ex = complexVis(p, c)
	pp := newPicker(c)
	for i := range p.Lambda {
		switch {
		case c.complexVis && complexPair(p, i):
		case p.PhiOK[i] && p.PhiTyp[i] == dataset.PhiAbsolute:
			if pp.keep() {
				t.vp = append(t.vp, int32(i))
				t.e = append(t.e, phasor(p.Phi[i]))
			}
		}
	}
	_, t.scale = phaseScales(d)
	return t
}

func (visPhiKind) predict(d *dataset.Data, s *sampling, vis []complex128) []float64 {
	out := make([]float64, d.Vis.Len())
	for i, r := range s.cvis {
		v := at(vis, r)
		out[i] = math.Atan2(imag(v), real(v))
	}
	return out
}

// visPhiTerm is the visibility-phase term over the absolute phases vp and the complex
// visibilities vx of d.Vis.
type visPhiTerm struct {
	d      *dataset.Data
	vp, vx []int32
	e, ex  []complex128 // exp(−iφₒ) of each of vp and of vx
	scale  float64      // typical |V|, the unit of the smoothing
}

func (t *visPhiTerm) len() int          { return len(t.vp) + len(t.vx) }
func (t *visPhiTerm) notices() []string { return nil }
func (t *visPhiTerm) need(n *needs) {
	mark(n.vis, t.vp)
	mark(n.vis, t.vx)
}

func (t *visPhiTerm) expected() float64 {
	s := 0.0
	for _, i := range t.vp {
		s += expectedPhaseTerm(t.d.Vis.PhiErr[i])
	}
	return s + float64(len(t.vx))
}

// tangentialErr is the error σ_t = Aₒσ_φ of the tangential part of complex visibility i,
// σ_φ where Aₒ is zero, to keep the term finite.
func tangentialErr(p *dataset.VisPoints, i int32) float64 {
	st := p.Amp[i] * p.PhiErr[i]
	if st <= 0 {
		st = p.PhiErr[i]
	}
	return st
}

func (t *visPhiTerm) eval(c *evalCtx, k, parts int) (float64, float64) {
	p := &t.d.Vis
	w, g := c.w, c.grad
	s, sm := 0.0, 0.0
	eta := c.smooth * t.scale
	lo, hi := part(len(t.vp), k, parts)
	for j := lo; j < hi; j++ {
		i := t.vp[j]
		r := c.s.cvis[i]
		v := at(c.vis, r)
		e := t.e[j]
		z := v * e
		az := abs(z)
		cs, sn := 1.0, 0.0
		if az > 0 {
			cs, sn = real(z)/az, imag(z)/az
		}
		sig := p.PhiErr[i]
		is2 := 1 / (sig * sig)
		s += 2 * (1 - cs) * is2
		if eta > 0 {
			// As for the closure phases, with ∂z/∂V = e.
			sv, gz := smoothPhase(z, eta, is2)
			sm += sv
			if g != nil {
				addGrad(g, r, conj(e)*complex(w*real(gz), w*imag(gz)))
			}
			continue
		}
		if g != nil {
			addGrad(g, r, complex(0, 2*w*sn*is2)*inv(v))
		}
	}
	sp := 0.0
	lo, hi = part(len(t.vx), k, parts)
	for j := lo; j < hi; j++ {
		i := t.vx[j]
		r := c.s.cvis[i]
		e := t.ex[j]
		st := tangentialErr(p, i)
		rt := imag(complexResidual(at(c.vis, r), p.Amp[i], e)) / st
		sp += rt * rt
		if g != nil {
			addGrad(g, r, complex(0, 2*w*rt/st)*conj(e))
		}
	}
	extra := 0.0
	if eta > 0 {
		extra = w * (sm - s)
	}
	return s + sp, extra
}

func (t *visPhiTerm) residuals(dst []float64, c *evalCtx) {
	p := &t.d.Vis
	k := 0
	for j, i := range t.vp {
		dst[k] = phaseResidual(at(c.vis, c.s.cvis[i])*t.e[j], p.PhiErr[i])
		k++
	}
	for j, i := range t.vx {
		dst[k] = imag(complexResidual(at(c.vis, c.s.cvis[i]), p.Amp[i], t.ex[j])) / tangentialErr(p, i)
		k++
	}
}
