package recon

import (
	"fmt"
	"math"

	"vcz/dataset"
	"vcz/nufft"
)

// Weights are the weights of the χ² terms, indexed like dataset.DataTypes(), the order of the
// table of data types (package dataset). A zero weight means 1; to leave a data type out, leave
// it out of the used set.
type Weights [nTypes]float64

// TermOptions configure the data terms.
type TermOptions struct {
	// Use is the set of data types fitted; 0 means every type the data set has.
	Use dataset.DataType
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
// one term for each row of the table of data types (package dataset), given by termTable
// (termtable.go). Each term is in its own file, term_<word>.go, with its χ² formula and source;
// amplitudes are Gaussian in the measured quantity and phases take the wrap-safe form
// Σ 2(1 − cos(φ − φₒ))/σ² (term_phase.go). An Objective holds the buffers of one evaluation and
// is not safe for concurrent use.
type Objective struct {
	m      *ForwardModel
	d      *dataset.Data
	w      [nTypes]float64
	terms  [nTypes]term
	smooth float64 // smoothing of the phase terms (SetPhaseSmoothing)
	use    dataset.DataType
	avail  dataset.DataType
	chi2   [nTypes]float64
	n      [nTypes]int
	expect [nTypes]float64 // expected χ² of each type (ExpectedChi2r)
	scale  float64
	notes  []string
	bad    string // first non-finite result of the last evaluation
	parts  []termPart
	// minParallel is the number of V² and closure data (T3 counted twice) from which Eval
	// splits the terms into evalParts parts; tests lower it.
	minParallel int
	// serial evaluates the parts one after the other on the calling goroutine (setSerial).
	serial bool
	nparts int // the parts of the running evaluation (partJob)
}

// parallelTransform is a transform whose workers also run other work (nufft.Plan.Parallel).
// The data terms' parts run on them, or one after the other on the caller when the transform
// has no such workers: the helpers of a transform are awake between its calls, where a helper
// of the terms' own, woken by a channel, waited in the caller's processor queue and ran
// after the caller's part (an evaluation of BenchmarkImageNight's terms took 2.0 times its
// first part; on the transform's workers the run was 2–8 % faster in 7 of 9 interleaved
// pairs).
type parallelTransform interface {
	Parallel(n int, j nufft.Job)
}

// partJob runs the parts of an Objective's evaluation as a nufft.Job.
type partJob Objective

func (j *partJob) Do(_, k int) {
	o := (*Objective)(j)
	o.evalPart(&o.parts[k], k, o.nparts)
}

// setSerial makes the objective evaluate on the calling goroutine alone, its data terms' parts
// and its transform (ForwardModel.setSerial), or with their helpers again: for a caller that
// evaluates several objectives at once, one per processor. Results do not change: the parts
// are the same and summed in the same order.
func (o *Objective) setSerial(on bool) {
	o.serial = on
	o.m.setSerial(on)
}

// NewObjective builds the data terms of d on model m (which must have been made from d).
func NewObjective(d *dataset.Data, m *ForwardModel, opt TermOptions) *Objective {
	o := &Objective{m: m, d: d, minParallel: parallelData}
	c := termConfig{complexVis: opt.ComplexVis}
	for i, r := range termTable {
		o.w[i] = opt.Weights[i]
		if o.w[i] == 0 {
			o.w[i] = 1
		}
		t := r.kind.bind(d, c)
		o.terms[i] = t
		o.notes = append(o.notes, t.notices()...)
		o.n[i] = t.len()
		o.expect[i] = t.expected()
		if o.n[i] > 0 {
			o.avail |= r.Type
		}
	}
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

// SetUse sets the data types fitted (0 = all available) and returns the set in force, which
// omits the types without data.
func (o *Objective) SetUse(t dataset.DataType) dataset.DataType {
	if t == 0 {
		t = dataset.AllTypes
	}
	o.use = t & o.avail
	return o.use
}

// Use returns the data types fitted.
func (o *Objective) Use() dataset.DataType { return o.use }

// Available returns the data types that have data in the terms.
func (o *Objective) Available() dataset.DataType { return o.avail }

// Notices lists what the terms leave out or treat specially, one sentence each.
func (o *Objective) Notices() []string { return o.notes }

// Model returns the forward model.
func (o *Objective) Model() *ForwardModel { return o.m }

// N returns the number of data of one type in the terms.
func (o *Objective) N(t dataset.DataType) int { return o.n[t.Index()] }

// Chi2 returns the unweighted χ² of one data type at the last evaluation (0 when not used).
func (o *Objective) Chi2(t dataset.DataType) float64 { return o.chi2[t.Index()] }

// Chi2r returns χ²/N of one data type at the last evaluation, NaN when the type has no data or
// is not used.
func (o *Objective) Chi2r(t dataset.DataType) float64 {
	i := t.Index()
	if o.n[i] == 0 || o.use&t == 0 {
		return math.NaN()
	}
	return o.chi2[i] / float64(o.n[i])
}

// TotalChi2r returns Σχ²/ΣN over the used types (unweighted), NaN without data.
func (o *Objective) TotalChi2r() float64 { return o.perPoint(&o.chi2) }

// perPoint returns Σ v/ΣN over the used types, NaN without data.
func (o *Objective) perPoint(v *[nTypes]float64) float64 {
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

// ExpectedChi2rOf returns the expected χ²ᵣ of one data type (see ExpectedChi2r), NaN when it
// has no data.
func (o *Objective) ExpectedChi2rOf(t dataset.DataType) float64 {
	i := t.Index()
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
	if len(x) != o.m.N*o.m.N {
		panic(fmt.Sprintf("recon: image has %d pixels, grid has %d", len(x), o.m.N*o.m.N))
	}
	return o.eval(grad, o.m.shift(x), nil)
}

// eval is Eval after the model's shift of the image (ForwardModel.shift), which returned its
// flux, with the extra gradient ex (nil for none) added in the pass that writes grad.
func (o *Objective) eval(grad []float64, flux float64, ex *gradExtra) float64 {
	m := o.m
	m.forward(flux)
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
	o.chi2 = [nTypes]float64{}
	d := o.d
	// The terms of large data sets are evaluated in evalParts fixed parts, in parallel; the
	// parts are summed in a fixed order, so the result does not depend on the number of
	// processors.
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
	// Free scales are fitted first, over all the data of their term.
	for i, t := range o.terms {
		if sc, ok := t.(scaler); ok && o.use&typeList[i] != 0 {
			o.parts[0].ctx = evalCtx{s: &m.sampling, vis: m.vis}
			o.scale = sc.prepare(&o.parts[0].ctx)
		}
	}
	if pt, ok := o.m.tr.(parallelTransform); ok && parts > 1 && !o.serial {
		o.nparts = parts
		pt.Parallel(parts, (*partJob)(o))
	} else {
		for k := range parts {
			o.evalPart(&o.parts[k], k, parts)
		}
	}
	extra := 0.0
	// The parts' derivatives are added to the model's in part order; the last addition also
	// sums Re Σ conj(G_k)·V_k of the gradient's normalisation (ForwardModel.gradient), in
	// the same order, so that the derivatives are read once.
	cm, haveCM := 0.0, false
	for k := 0; k < parts; k++ {
		pt := &o.parts[k]
		for i := range o.chi2 {
			o.chi2[i] += pt.chi2[i]
		}
		extra += pt.extra
		switch {
		case k == 0:
		case k == parts-1 && m.norm && grad != nil:
			gv, vis := m.gvis, m.vis[:len(m.gvis)]
			pg := pt.gvis[:len(gv)]
			for q, g := range gv {
				g += pg[q]
				gv[q] = g
				v := vis[q]
				cm += real(g)*real(v) + imag(g)*imag(v)
			}
			haveCM = true
		default:
			for q, g := range pt.gvis {
				m.gvis[q] += g
			}
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
	switch {
	case grad == nil:
	case haveCM:
		m.gradientWith(grad, ex, cm)
	default:
		m.gradient(grad, ex)
	}
	return total
}

// parallelData is the number of V² and closure data (T3 counted twice) from which Eval splits
// the terms into evalParts parts evaluated in parallel; below it the goroutines cost more than
// they save (common practice, no source).
const parallelData = 4096

// evalParts is the number of parts of a large evaluation: two, the cores of the machine the
// time goals are set on. It is fixed, not the number of processors, so that the sums and
// hence the images do not depend on the machine.
const evalParts = 2

// termPart holds the partial sums of one part of an evaluation.
type termPart struct {
	gvis  []complex128 // ∂J/∂V of the part (part 0 uses the model's own buffer)
	chi2  [nTypes]float64
	extra float64
	ctx   evalCtx // kept here, so that an evaluation allocates nothing
}

// evalPart evaluates the used terms on part k of parts of their data (a contiguous share of
// each of their lists) at the model visibilities, adding ∂J/∂V to pt.gvis.
func (o *Objective) evalPart(pt *termPart, k, parts int) {
	pt.chi2 = [nTypes]float64{}
	pt.extra = 0
	if k > 0 {
		clear(pt.gvis)
	}
	c := &pt.ctx
	*c = evalCtx{s: &o.m.sampling, vis: o.m.vis, grad: pt.gvis, smooth: o.smooth}
	for i, t := range o.terms {
		if o.use&typeList[i] == 0 {
			continue
		}
		c.w = o.w[i]
		chi2, extra := t.eval(c, k, parts)
		pt.chi2[i] = chi2
		pt.extra += extra
	}
}
