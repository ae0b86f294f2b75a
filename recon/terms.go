package recon

import (
	"fmt"
	"math"
	"slices"
	"sync"
)

// Weights are the weights of the χ² terms, indexed like DataTypes() (Vis2, T3Amp, T3Phi, VisAmp,
// VisPhi). A zero weight means 1; to leave a data type out, leave it out of the used set.
type Weights [len(typeList)]float64

// TermOptions configure the data terms.
type TermOptions struct {
	// Use is the set of data types fitted; 0 means every type the data set has.
	Use DataType
	// Weights multiply each type's χ² in the objective.
	Weights Weights
	// ComplexVis fits each complex visibility whose amplitude and phase are both absolute and
	// both usable as one complex number, with the error ellipse of its amplitude and phase
	// errors (radial σ_amp, tangential amp·σ_phi), instead of separate amplitude and phase
	// terms. Without flux normalisation the objective is then quadratic in the image.
	ComplexVis bool
}

// Objective is the weighted sum of the data terms,
//
//	J(x) = Σ_t w_t χ²_t(x),
//
// with, for V² data, χ² = Σ (|V|² − V²ₒ)²/σ²; for closure phases the wrap-safe
// χ² = Σ 2(1 − cos(φ − φₒ))/σ², σ in radians, which tends to the Gaussian form for small
// residuals; for T3 amplitudes χ² = Σ (|B| − |B|ₒ)²/σ²; for visibility amplitudes
// Σ (|V| − Aₒ)²/σ² (correlated fluxes: Σ (s|V| − Aₒ)²/σ² with the scale s at its least-squares
// optimum s = Σ Aₒ|V|/σ² / Σ |V|²/σ²); and for absolute visibility phases the wrap-safe form.
// Differential amplitudes and phases cannot be fitted by a gray image and are left out with a
// notice. An Objective holds the buffers of one evaluation and is not safe for concurrent use.
type Objective struct {
	m *Model
	d *Data
	w [len(typeList)]float64
	// Index lists of the data that enter each term, built once.
	t3a, t3p, va, vc, vp, vx []int32
	e3, ev                   []complex128 // exp(−i φₒ) of t3p and of the vis phase data
	scaleB, scaleV           float64      // typical model amplitudes of the phase terms (phaseScales)
	is3                      []float64    // 1/σ² of each t3p datum
	smooth                   float64      // smoothing of the phase terms (SetPhaseSmoothing)
	use, avail               DataType
	chi2                     [len(typeList)]float64
	n                        [len(typeList)]int
	expect                   [len(typeList)]float64 // expected χ² of each type (ExpectedChi2r)
	scale                    float64
	notices                  []string
	bad                      string // first non-finite result of the last evaluation
	parts                    []termPart
	minParallel              int // parallelData; tests lower it
}

// NewObjective builds the data terms of d on model m (which must have been made from d).
func NewObjective(d *Data, m *Model, opt TermOptions) *Objective {
	o := &Objective{m: m, d: d, minParallel: parallelData}
	for i, w := range opt.Weights {
		o.w[i] = w
		if w == 0 {
			o.w[i] = 1
		}
	}
	for i := range d.T3.Lambda {
		if d.T3.AmpOK[i] {
			o.t3a = append(o.t3a, int32(i))
		}
		if d.T3.PhiOK[i] {
			o.t3p = append(o.t3p, int32(i))
			s, c := math.Sincos(d.T3.Phi[i])
			o.e3 = append(o.e3, complex(c, -s))
			o.is3 = append(o.is3, 1/(d.T3.PhiErr[i]*d.T3.PhiErr[i]))
		}
	}
	var ndiffA, ndiffP int
	p := &d.Vis
	o.ev = make([]complex128, p.Len())
	for i := range p.Lambda {
		if p.PhiOK[i] {
			s, c := math.Sincos(p.Phi[i])
			o.ev[i] = complex(c, -s)
		}
		absA := p.AmpOK[i] && p.AmpTyp[i] == AmpAbsolute
		absP := p.PhiOK[i] && p.PhiTyp[i] == PhiAbsolute
		switch {
		case opt.ComplexVis && absA && absP:
			o.vx = append(o.vx, int32(i))
			continue
		case absA:
			o.va = append(o.va, int32(i))
		case p.AmpOK[i] && p.AmpTyp[i] == AmpCorrelatedFlux:
			o.vc = append(o.vc, int32(i))
		case p.AmpOK[i]:
			ndiffA++
		}
		switch {
		case absP:
			o.vp = append(o.vp, int32(i))
		case p.PhiOK[i]:
			ndiffP++
		}
	}
	if ndiffA > 0 {
		o.notices = append(o.notices, fmt.Sprintf("%d differential visibility amplitudes left out: a gray image cannot model them", ndiffA))
	}
	if ndiffP > 0 {
		o.notices = append(o.notices, fmt.Sprintf("%d differential visibility phases left out: a gray image cannot model them", ndiffP))
	}
	if len(o.vc) > 0 {
		o.notices = append(o.notices, fmt.Sprintf("%d correlated-flux amplitudes fitted with a free flux scale", len(o.vc)))
	}
	o.scaleB, o.scaleV = phaseScales(d)
	o.expect[T3Phi.index()] = 0
	for _, i := range o.t3p {
		o.expect[T3Phi.index()] += expectedPhaseTerm(d.T3.PhiErr[i])
	}
	for _, i := range o.vp {
		o.expect[VisPhi.index()] += expectedPhaseTerm(p.PhiErr[i])
	}
	o.n[Vis2.index()] = d.Vis2.Len()
	o.n[T3Amp.index()] = len(o.t3a)
	o.n[T3Phi.index()] = len(o.t3p)
	o.n[VisAmp.index()] = len(o.va) + len(o.vc) + len(o.vx)
	o.n[VisPhi.index()] = len(o.vp) + len(o.vx)
	for i, t := range typeList {
		if o.n[i] > 0 {
			o.avail |= t
		}
	}
	o.expect[Vis2.index()] = float64(o.n[Vis2.index()])
	o.expect[T3Amp.index()] = float64(o.n[T3Amp.index()])
	o.expect[VisAmp.index()] = float64(o.n[VisAmp.index()])
	o.expect[VisPhi.index()] += float64(len(o.vx)) // the tangential part of the complex term is Gaussian
	o.SetUse(opt.Use)
	return o
}

// DefaultPhaseSmoothing is the smoothing of the phase terms that Solve uses before its final
// run (Objective.SetPhaseSmoothing): η is a tenth of the typical model amplitude of the data
// (common practice, no source; measured on the validation suite, recon/validate).
const DefaultPhaseSmoothing = 0.1

// SetPhaseSmoothing sets the smoothing f ≥ 0 of the phase terms; 0, the default, is the exact
// wrap-safe term. A phase term 2(1 − cos(φ − φₒ))/σ² = 2(|z| − Re z)/(|z|σ²), where z is the
// model bispectrum (or visibility) rotated by −φₒ, has a gradient that grows as 1/|z| where
// the model amplitude passes near zero, and the phase turns by up to π over an amplitude
// change of a few |z|: a quasi-Newton method then creeps with tiny steps. Smoothed, the term
// is
//
//	2(|z| − Re z)/(q σ²),  q = √(|z|² + η²),
//
// equal to the exact term where |z| ≫ η, with a gradient bounded by about 2/(ησ²) where it is
// not, and — unlike 2(1 − Re z/q)/σ² — zero whenever the phase matches, at every amplitude:
// it never pushes amplitudes up or ranks a wrong image above the true one (measured: that
// biased form ranked a fragmented image below the truth on data with closure-phase errors
// held at a few degrees near nulls). The scale η is f times the typical amplitude of the
// term's model quantity, taken from the data, not from their errors: for closure phases the
// median measured triple amplitude (T3AMP where usable, otherwise the cube of the median
// |V| from V²), for visibility phases the median |V|. The χ² reported by Chi2 and Chi2r are
// always those of the exact terms; Eval returns the smoothed objective while f > 0.
func (o *Objective) SetPhaseSmoothing(f float64) {
	if !(f > 0) {
		f = 0
	}
	o.smooth = f
}

// PhaseSmoothing returns the smoothing in force (SetPhaseSmoothing).
func (o *Objective) PhaseSmoothing() float64 { return o.smooth }

// phaseScales returns the typical model amplitudes of the closure-phase and visibility-phase
// terms of d (SetPhaseSmoothing): the median triple amplitude and the median |V|.
func phaseScales(d *Data) (b, v float64) {
	var amps []float64
	for i, w := range d.Vis2.Value {
		if d.Vis2.Err[i] > 0 {
			amps = append(amps, math.Sqrt(math.Max(w, 0)))
		}
	}
	for i, ok := range d.Vis.AmpOK {
		if ok && d.Vis.AmpTyp[i] == AmpAbsolute && len(d.Vis2.Value) == 0 {
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

// smoothPhase returns the smoothed phase term 2(|z| − Re z)/(qσ²) of SetPhaseSmoothing, with
// is2 = 1/σ², and its gradient with respect to (Re z, Im z) as a complex number:
// (2/σ²)[(z/|z| − 1)/q − (|z| − Re z)·z/q³], taking z/|z| = 0 at z = 0.
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

// SetUse sets the data types fitted (0 = all available) and returns the set in force, which
// omits the types without data.
func (o *Objective) SetUse(t DataType) DataType {
	if t == 0 {
		t = AllTypes
	}
	o.use = t & o.avail
	return o.use
}

// Use returns the data types fitted.
func (o *Objective) Use() DataType { return o.use }

// Available returns the data types that have data in the terms.
func (o *Objective) Available() DataType { return o.avail }

// Notices lists what the terms leave out or treat specially, one sentence each.
func (o *Objective) Notices() []string { return o.notices }

// Model returns the forward model.
func (o *Objective) Model() *Model { return o.m }

// N returns the number of data of one type in the terms.
func (o *Objective) N(t DataType) int { return o.n[t.index()] }

// Chi2 returns the unweighted χ² of one data type at the last evaluation (0 when not used).
func (o *Objective) Chi2(t DataType) float64 { return o.chi2[t.index()] }

// Chi2r returns χ²/N of one data type at the last evaluation, NaN when the type has no data or
// is not used.
func (o *Objective) Chi2r(t DataType) float64 {
	i := t.index()
	if o.n[i] == 0 || o.use&t == 0 {
		return math.NaN()
	}
	return o.chi2[i] / float64(o.n[i])
}

// TotalChi2r returns Σχ²/ΣN over the used types (unweighted), NaN without data.
func (o *Objective) TotalChi2r() float64 { return o.perPoint(&o.chi2) }

// perPoint returns Σ v/ΣN over the used types, NaN without data.
func (o *Objective) perPoint(v *[len(typeList)]float64) float64 {
	s, n := 0.0, 0
	for i, t := range typeList {
		if o.use&t != 0 {
			s += v[i]
			n += o.n[i]
		}
	}
	if n == 0 {
		return math.NaN()
	}
	return s / float64(n)
}

// ExpectedChi2r returns the expectation of TotalChi2r for data drawn with their stated
// errors about the true model: 1 for every Gaussian term, and for a wrap-safe phase term of
// error σ (radians) E[2(1 − cos ε)]/σ² = 2(1 − e^(−σ²/2))/σ², because E[cos ε] = e^(−σ²/2)
// for ε ~ N(0, σ²) (the characteristic function of the normal distribution). It is below 1
// when some phases have large errors, as phases near nulls of the visibility do (0.93 at
// σ = 30°, 0.77 at 60°), and bounds the target of the automatic weight. NaN without data.
func (o *Objective) ExpectedChi2r() float64 { return o.perPoint(&o.expect) }

// expectedPhaseTerm is E[2(1 − cos ε)]/σ² for ε ~ N(0, σ²), σ in radians (ExpectedChi2r).
func expectedPhaseTerm(sigma float64) float64 {
	v := sigma * sigma
	if v < 1e-8 {
		return 1 - v/4 // the series 1 − σ²/4 + σ⁴/24 avoids the cancellation
	}
	return -2 * math.Expm1(-v/2) / v
}

// ExpectedChi2rOf returns the expected χ²ᵣ of one data type (see ExpectedChi2r), NaN when it
// has no data.
func (o *Objective) ExpectedChi2rOf(t DataType) float64 {
	i := t.index()
	if o.n[i] == 0 {
		return math.NaN()
	}
	return o.expect[i] / float64(o.n[i])
}

// FluxScale returns the fitted scale of the correlated-flux amplitudes (0 without them).
func (o *Objective) FluxScale() float64 { return o.scale }

// Problem returns a description of the first non-finite quantity met in the last evaluation,
// or "" when every term was finite.
func (o *Objective) Problem() string { return o.bad }

// Eval returns J(x) and, when grad is non-nil, overwrites grad with ∂J/∂x. It costs one
// Forward and (with grad) one Adjoint transform.
func (o *Objective) Eval(grad, x []float64) float64 {
	m := o.m
	flux := m.Forward(x)
	o.bad = ""
	if m.norm && (!(flux > 0) || math.IsInf(flux, 0)) {
		o.bad = fmt.Sprintf("total flux of the image is %g", flux)
		if grad != nil {
			for i := range grad {
				grad[i] = math.NaN()
			}
		}
		return math.NaN()
	}
	o.chi2 = [len(typeList)]float64{}
	d := o.d
	// V², T3 amplitudes and closure phases, the bulk of most data sets, are evaluated in
	// evalParts fixed parts, in parallel; the parts are summed in a fixed order, so the
	// result does not depend on the number of processors.
	parts := 1
	if d.Vis2.Len()+2*d.T3.Len() >= o.minParallel {
		parts = evalParts
	}
	if len(o.parts) < parts {
		o.parts = make([]termPart, parts)
		for k := 1; k < parts; k++ {
			o.parts[k].gvis = make([]complex128, len(m.gvis))
		}
	}
	o.parts[0].gvis = m.gvis
	var wg sync.WaitGroup
	for k := 1; k < parts; k++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			o.evalPart(&o.parts[k], k, parts)
		}()
	}
	o.evalPart(&o.parts[0], 0, parts)
	wg.Wait()
	extra := 0.0
	for k := 0; k < parts; k++ {
		pt := &o.parts[k]
		for _, t := range []DataType{Vis2, T3Amp, T3Phi} {
			o.chi2[t.index()] += pt.chi2[t.index()]
		}
		extra += pt.extra
		if k > 0 {
			for q, g := range pt.gvis {
				m.gvis[q] += g
			}
		}
	}
	p := &d.Vis
	if o.use&VisAmp != 0 {
		w := o.w[VisAmp.index()]
		s := 0.0
		for _, i := range o.va {
			r := m.cvis[i]
			v := m.at(r)
			a := abs(v)
			sig := p.AmpErr[i]
			res := (a - p.Amp[i]) / sig
			s += res * res
			m.addGrad(r, complex(2*w*res/sig, 0)*unit(v, a))
		}
		if len(o.vc) > 0 {
			// Least-squares scale of the correlated fluxes; by the envelope theorem the gradient
			// is taken at fixed scale.
			num, den := 0.0, 0.0
			for _, i := range o.vc {
				a := abs(m.at(m.cvis[i]))
				is2 := 1 / (p.AmpErr[i] * p.AmpErr[i])
				num += p.Amp[i] * a * is2
				den += a * a * is2
			}
			sc := 0.0
			if den > 0 {
				sc = num / den
			}
			o.scale = sc
			for _, i := range o.vc {
				r := m.cvis[i]
				v := m.at(r)
				a := abs(v)
				sig := p.AmpErr[i]
				res := (sc*a - p.Amp[i]) / sig
				s += res * res
				m.addGrad(r, complex(2*w*res*sc/sig, 0)*unit(v, a))
			}
		}
		o.chi2[VisAmp.index()] = s
	}
	if o.use&VisPhi != 0 {
		w := o.w[VisPhi.index()]
		s := 0.0
		sm := 0.0
		eta := o.smooth * o.scaleV
		for _, i := range o.vp {
			r := m.cvis[i]
			v := m.at(r)
			z := v * o.ev[i]
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
				t, gz := smoothPhase(z, eta, is2)
				sm += t
				m.addGrad(r, conj(o.ev[i])*gz*complex(w, 0))
				continue
			}
			m.addGrad(r, complex(0, 2*w*sn*is2)*inv(v))
		}
		o.chi2[VisPhi.index()] += s
		if eta > 0 {
			extra += w * (sm - s)
		}
	}
	if len(o.vx) > 0 && o.use&(VisAmp|VisPhi) != 0 {
		wa, wp := o.w[VisAmp.index()], o.w[VisPhi.index()]
		if o.use&VisAmp == 0 {
			wa = 0
		}
		if o.use&VisPhi == 0 {
			wp = 0
		}
		sa, sp := 0.0, 0.0
		for _, i := range o.vx {
			r := m.cvis[i]
			// Rotate the residual into the frame of the datum: real part radial, imaginary
			// part tangential.
			e := o.ev[i]
			z := (m.at(r) - complex(p.Amp[i], 0)*conj(e)) * e
			sr, st := p.AmpErr[i], p.Amp[i]*p.PhiErr[i]
			if st <= 0 {
				st = p.PhiErr[i] // a zero amplitude: keep the term finite
			}
			rr, rt := real(z)/sr, imag(z)/st
			sa += rr * rr
			sp += rt * rt
			g := complex(2*wa*rr/sr, 2*wp*rt/st)
			m.addGrad(r, g*conj(e))
		}
		if o.use&VisAmp != 0 {
			o.chi2[VisAmp.index()] += sa
		}
		if o.use&VisPhi != 0 {
			o.chi2[VisPhi.index()] += sp
		}
	}
	total := 0.0
	for i, t := range typeList {
		if o.use&t != 0 {
			total += o.w[i] * o.chi2[i]
		}
	}
	if math.IsNaN(total) || math.IsInf(total, 0) {
		for i, t := range typeList {
			if o.use&t != 0 && (math.IsNaN(o.chi2[i]) || math.IsInf(o.chi2[i], 0)) {
				o.bad = fmt.Sprintf("χ² of %s is %g", t, o.chi2[i])
				break
			}
		}
	}
	total += extra
	if grad != nil {
		m.Gradient(grad)
	}
	return total
}

// parallelData is the number of V² and closure data (T3 counted twice) from which Eval splits
// them into evalParts parts evaluated in parallel; below it the goroutines cost more than
// they save (common practice, no source).
const parallelData = 4096

// evalParts is the number of parts of a large evaluation: two, the cores of the machine the
// time goals are set on. It is fixed, not the number of processors, so that the sums and
// hence the images do not depend on the machine.
const evalParts = 2

// termPart holds the partial sums of one part of an evaluation.
type termPart struct {
	gvis  []complex128 // ∂J/∂V of the part (part 0 uses the model's own buffer)
	chi2  [len(typeList)]float64
	extra float64
}

// evalPart evaluates the V², T3 amplitude and closure-phase terms of part k of parts (a
// contiguous share of each index list) at the model visibilities, adding ∂J/∂V to pt.gvis.
func (o *Objective) evalPart(pt *termPart, k, parts int) {
	m, d := o.m, o.d
	pt.chi2 = [len(typeList)]float64{}
	pt.extra = 0
	g := pt.gvis
	if k > 0 {
		clear(g)
	}
	lo := func(n int) int { return n * k / parts }
	hi := func(n int) int { return n * (k + 1) / parts }
	if o.use&Vis2 != 0 {
		w := o.w[Vis2.index()]
		s := 0.0
		for i := lo(len(m.vis2)); i < hi(len(m.vis2)); i++ {
			r := m.vis2[i]
			v := m.at(r)
			sig := d.Vis2.Err[i]
			res := (real(v)*real(v) + imag(v)*imag(v) - d.Vis2.Value[i]) / sig
			s += res * res
			// ∂/∂(Re,Im) of (|V|² − d)²/σ² is 4 res/σ · V.
			addGrad(g, r, complex(4*w*res/sig, 0)*v)
		}
		pt.chi2[Vis2.index()] = s
	}
	if o.use&T3Amp != 0 {
		w := o.w[T3Amp.index()]
		s := 0.0
		for _, i := range o.t3a[lo(len(o.t3a)):hi(len(o.t3a))] {
			r := m.t3[i]
			w1, w2, w3 := m.at(r[0]), m.at(r[1]), m.at(r[2])
			a1, a2, a3 := abs(w1), abs(w2), abs(w3)
			sig := d.T3.AmpErr[i]
			res := (a1*a2*a3 - d.T3.Amp[i]) / sig
			s += res * res
			// ∂|B|/∂W1 = |W2||W3| · W1/|W1|, and likewise for W2 and W3.
			c := 2 * w * res / sig
			addGrad(g, r[0], complex(c*a2*a3, 0)*unit(w1, a1))
			addGrad(g, r[1], complex(c*a1*a3, 0)*unit(w2, a2))
			addGrad(g, r[2], complex(c*a1*a2, 0)*unit(w3, a3))
		}
		pt.chi2[T3Amp.index()] = s
	}
	if o.use&T3Phi != 0 {
		w := o.w[T3Phi.index()]
		s, sm := 0.0, 0.0
		eta := o.smooth * o.scaleB
		for k := lo(len(o.t3p)); k < hi(len(o.t3p)); k++ {
			i := o.t3p[k]
			r := m.t3[i]
			w1, w2, w3 := m.at(r[0]), m.at(r[1]), m.at(r[2])
			b := w1 * w2 * w3 * o.e3[k] // B·exp(−iφₒ): its argument is φ − φₒ
			ab2 := real(b)*real(b) + imag(b)*imag(b)
			is2 := o.is3[k]
			if eta > 0 {
				// The smoothed term of SetPhaseSmoothing; ∂b/∂W1 = W2 W3 e, and likewise.
				if ab2 > 0 {
					s += 2 * (1 - real(b)/math.Sqrt(ab2)) * is2
				}
				t, gb := smoothPhase(b, eta, is2)
				sm += t
				gb *= complex(w, 0)
				e := o.e3[k]
				addGrad(g, r[0], conj(w2*w3*e)*gb)
				addGrad(g, r[1], conj(w1*w3*e)*gb)
				addGrad(g, r[2], conj(w1*w2*e)*gb)
				continue
			}
			if !(ab2 > 0) {
				continue // a zero bispectrum has no phase: its term is taken as 0, without gradient
			}
			ia := 1 / math.Sqrt(ab2)
			cs, sn := real(b)*ia, imag(b)*ia
			s += 2 * (1 - cs) * is2
			// dJ/dφ = 2 sin(φ − φₒ)/σ²; ∂φ/∂(Re,Im) W1 = i W1/|W1|² = i conj(W2 W3 e)·b/|b|²,
			// and likewise for W2 and W3: one reciprocal serves all three.
			u := complex(0, 2*w*sn*is2*ia) * b * complex(ia, 0)
			e := o.e3[k]
			addGrad(g, r[0], conj(w2*w3*e)*u)
			addGrad(g, r[1], conj(w1*w3*e)*u)
			addGrad(g, r[2], conj(w1*w2*e)*u)
		}
		pt.chi2[T3Phi.index()] = s
		if eta > 0 {
			pt.extra = w * (sm - s)
		}
	}
}

// addGrad adds the derivative g of the objective with respect to the visibility a datum
// sees, as Model.addGrad, to the buffer buf.
func addGrad(buf []complex128, r ref, g complex128) {
	if r.conj {
		g = complex(real(g), -imag(g))
	}
	buf[r.i] += g
}

// abs returns |z|. Model visibilities are at most of order 1 (and data values finite), so
// the plain square root cannot overflow and is several times faster than math.Hypot.
func abs(z complex128) float64 { return math.Sqrt(real(z)*real(z) + imag(z)*imag(z)) }

func conj(z complex128) complex128 { return complex(real(z), -imag(z)) }

// unit returns z/|z|, or 0 when |z| = 0 (where |z| has no derivative).
func unit(z complex128, a float64) complex128 {
	if a == 0 {
		return 0
	}
	r := 1 / a
	return complex(real(z)*r, imag(z)*r)
}

// inv returns z/|z|² = 1/conj(z), or 0 when z = 0.
func inv(z complex128) complex128 {
	a2 := real(z)*real(z) + imag(z)*imag(z)
	if a2 == 0 {
		return 0
	}
	r := 1 / a2
	return complex(real(z)*r, imag(z)*r)
}
