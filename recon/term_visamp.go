package recon

import (
	"math"

	"vcz/dataset"
)

// visAmpKind is the term of visibility amplitudes (OI_VIS VISAMP, VISAMPERR; OIFITS v2 AMPTYP,
// Duvert, Young & Hummel 2017, table 6), by amplitude type:
//
//   - absolute amplitudes: the Gaussian χ² of r = (|V| − Aₒ)/σ, with ∂r²/∂V = 2 r/σ · V/|V|;
//   - correlated fluxes: r = (s|V| − Aₒ)/σ with the flux scale s at its least-squares
//     optimum s = Σ Aₒ|V|/σ² / Σ |V|²/σ², fitted before each evaluation (prepare); by the
//     envelope theorem the gradient is taken at fixed s. Least-squares fits of normalised
//     models leave them out;
//   - differential amplitudes (AMPTYP = 'differential'), the amplitudes of a row (exposure and
//     baseline) divided by their mean over the reference channels, all the usable channels
//     of the row: r_c = (|V_c|/m − Aₒ_c)/σ_c with m the mean of |V| over the row, whose
//     gradient is ∂J/∂|V_k| = (2r_k/σ_k)/m − Σ_c 2r_c|V_c|/(σ_c·n·m²) (the differential
//     phases, term_visdiff.go, group their data in the same way). Rows of a single usable
//     channel are left out with a notice;
//   - with TermOptions.ComplexVis, a visibility whose amplitude and phase are both absolute is
//     fitted as one complex number with the error ellipse of its amplitude and phase errors:
//     z = (V − Aₒe^(iφₒ))·e^(−iφₒ) has its real part along the measured phasor, and this term
//     is the radial part (Re z/σ_A)²; the tangential part belongs to term_visphi.go.
//
// Its expected χ² is one per datum, but for the differential amplitudes, whose normalisation
// takes one degree of freedom per row: n − 1 for a row of n channels.
type visAmpKind struct{}

func (visAmpKind) bind(d *dataset.Data, c termConfig) term {
	p := &d.Vis
	t := &visAmpTerm{d: d}
	t.vx, t.ex = complexVis(p, c)
	pa, pc := newPicker(c), newPicker(c)
	ncorr := 0
	for i := range p.Lambda {
		absA := p.AmpOK[i] && p.AmpTyp[i] == dataset.AmpAbsolute
		switch {
		case c.complexVis && complexPair(p, i):
		case absA:
			if pa.keep() {
				t.va = append(t.va, int32(i))
			}
		case p.AmpOK[i] && p.AmpTyp[i] == dataset.AmpCorrelatedFlux && !c.lsq:
			if pc.keep() {
				t.vc = append(t.vc, int32(i))
			}
		case p.AmpOK[i] && p.AmpTyp[i] == dataset.AmpCorrelatedFlux:
			ncorr++
		}
	}
	var short int
	t.vd, short = newDiffGroups(p, func(i int) bool { return p.AmpOK[i] && p.AmpTyp[i] == dataset.AmpDifferential }, 2, c)
	t.note = leftOut(short, "%d differential visibility amplitudes left out: their rows have a single usable channel")
	if c.lsq {
		t.note = append(t.note, leftOut(ncorr, "%d correlated-flux amplitudes left out")...)
	} else {
		t.note = append(t.note, leftOut(len(t.vc), "%d correlated-flux amplitudes fitted with a free flux scale")...)
	}
	return t
}

func (visAmpKind) predict(d *dataset.Data, s *sampling, vis []complex128) []float64 {
	p := &d.Vis
	out := make([]float64, p.Len())
	for i, r := range s.cvis {
		out[i] = abs(at(vis, r))
	}
	g, _ := newDiffGroups(p, func(i int) bool { return p.AmpTyp[i] == dataset.AmpDifferential }, 1, termConfig{})
	for q := range g.len() {
		lo, hi := g.bounds(q)
		m := g.meanAmp(q, s, vis)
		for _, i := range g.idx[lo:hi] {
			out[i] /= m
		}
	}
	return out
}

// phasor returns exp(−iφ), which rotates a model quantity by the measured phase φ.
func phasor(phi float64) complex128 {
	s, c := math.Sincos(phi)
	return complex(c, -s)
}

// complexPair reports whether both the amplitude and the phase of complex visibility i are
// absolute and usable, so that TermOptions.ComplexVis fits them as one complex number.
func complexPair(p *dataset.VisPoints, i int) bool {
	return p.AmpOK[i] && p.AmpTyp[i] == dataset.AmpAbsolute && p.PhiOK[i] && p.PhiTyp[i] == dataset.PhiAbsolute
}

// complexVis returns the complex visibilities that c fits as complex numbers (none unless
// c.complexVis) and their rotations exp(−iφₒ); the amplitude and phase terms both take them.
func complexVis(p *dataset.VisPoints, c termConfig) (vx []int32, ex []complex128) {
	if !c.complexVis {
		return nil, nil
	}
	pk := newPicker(c)
	for i := range p.Lambda {
		if complexPair(p, i) && pk.keep() {
			vx = append(vx, int32(i))
			ex = append(ex, phasor(p.Phi[i]))
		}
	}
	return vx, ex
}

// complexResidual returns z = (V − Aₒe^(iφₒ))·e^(−iφₒ), e = e^(−iφₒ): the residual of a
// complex visibility in the frame of the measured phasor, radial part real.
func complexResidual(v complex128, amp float64, e complex128) complex128 {
	return (v - complex(amp, 0)*conj(e)) * e
}

// visAmpTerm is the visibility-amplitude term over the absolute amplitudes va, the
// correlated fluxes vc and the complex visibilities vx of d.Vis.
type visAmpTerm struct {
	d          *dataset.Data
	va, vc, vx []int32
	vd         diffGroups   // the differential amplitudes, by row
	ex         []complex128 // exp(−iφₒ) of each of vx
	scale      float64      // flux scale of the correlated fluxes at the last prepare
	note       []string
}

func (t *visAmpTerm) len() int          { return len(t.va) + len(t.vc) + len(t.vx) + len(t.vd.idx) }
func (t *visAmpTerm) expected() float64 { return float64(t.len() - t.vd.len()) }
func (t *visAmpTerm) notices() []string { return t.note }
func (t *visAmpTerm) need(n *needs) {
	mark(n.vis, t.va)
	mark(n.vis, t.vc)
	mark(n.vis, t.vx)
	mark(n.vis, t.vd.idx)
}

// prepare fits the flux scale of the correlated fluxes; 0 without them.
func (t *visAmpTerm) prepare(c *evalCtx) float64 {
	if len(t.vc) == 0 {
		return 0
	}
	p := &t.d.Vis
	num, den := 0.0, 0.0
	for _, i := range t.vc {
		a := abs(at(c.vis, c.s.cvis[i]))
		is2 := 1 / (p.AmpErr[i] * p.AmpErr[i])
		num += p.Amp[i] * a * is2
		den += a * a * is2
	}
	sc := 0.0
	if den > 0 {
		sc = num / den
	}
	t.scale = sc
	return sc
}

func (t *visAmpTerm) eval(c *evalCtx, k, parts int) (float64, float64) {
	p := &t.d.Vis
	w, g := c.w, c.grad
	s := 0.0
	lo, hi := part(len(t.va), k, parts)
	for _, i := range t.va[lo:hi] {
		r := c.s.cvis[i]
		v := at(c.vis, r)
		a := abs(v)
		sig := p.AmpErr[i]
		res := (a - p.Amp[i]) / sig
		s += res * res
		if g != nil {
			addGrad(g, r, complex(2*w*res/sig, 0)*unit(v, a))
		}
	}
	sc := t.scale
	lo, hi = part(len(t.vc), k, parts)
	for _, i := range t.vc[lo:hi] {
		r := c.s.cvis[i]
		v := at(c.vis, r)
		a := abs(v)
		sig := p.AmpErr[i]
		res := (sc*a - p.Amp[i]) / sig
		s += res * res
		if g != nil {
			addGrad(g, r, complex(2*w*res*sc/sig, 0)*unit(v, a))
		}
	}
	sa := 0.0
	lo, hi = part(len(t.vx), k, parts)
	for j := lo; j < hi; j++ {
		i := t.vx[j]
		r := c.s.cvis[i]
		e := t.ex[j]
		sr := p.AmpErr[i]
		rr := real(complexResidual(at(c.vis, r), p.Amp[i], e)) / sr
		sa += rr * rr
		if g != nil {
			addGrad(g, r, complex(2*w*rr/sr, 0)*conj(e))
		}
	}
	sd := 0.0
	vd := &t.vd
	lo, hi = part(vd.len(), k, parts)
	for q := lo; q < hi; q++ {
		jlo, jhi := vd.bounds(q)
		m := vd.meanAmp(q, c.s, c.vis)
		sra := 0.0 // Σ 2r_c|V_c|/σ_c
		for _, i := range vd.idx[jlo:jhi] {
			a := abs(at(c.vis, c.s.cvis[i]))
			res := (a/m - p.Amp[i]) / p.AmpErr[i]
			sd += res * res
			sra += 2 * res * a / p.AmpErr[i]
		}
		if g == nil {
			continue
		}
		common := sra / (float64(jhi-jlo) * m * m)
		for _, i := range vd.idx[jlo:jhi] {
			r := c.s.cvis[i]
			v := at(c.vis, r)
			a := abs(v)
			res := (a/m - p.Amp[i]) / p.AmpErr[i]
			addGrad(g, r, complex(w*(2*res/p.AmpErr[i]/m-common), 0)*unit(v, a))
		}
	}
	return s + sa + sd, 0
}

func (t *visAmpTerm) residuals(dst []float64, c *evalCtx) {
	p := &t.d.Vis
	k := 0
	for _, i := range t.va {
		dst[k] = (abs(at(c.vis, c.s.cvis[i])) - p.Amp[i]) / p.AmpErr[i]
		k++
	}
	for _, i := range t.vc {
		dst[k] = (t.scale*abs(at(c.vis, c.s.cvis[i])) - p.Amp[i]) / p.AmpErr[i]
		k++
	}
	for j, i := range t.vx {
		dst[k] = real(complexResidual(at(c.vis, c.s.cvis[i]), p.Amp[i], t.ex[j])) / p.AmpErr[i]
		k++
	}
	for q := range t.vd.len() {
		lo, hi := t.vd.bounds(q)
		m := t.vd.meanAmp(q, c.s, c.vis)
		for _, i := range t.vd.idx[lo:hi] {
			dst[k] = (abs(at(c.vis, c.s.cvis[i]))/m - p.Amp[i]) / p.AmpErr[i]
			k++
		}
	}
}
