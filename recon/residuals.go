package recon

import (
	"fmt"
	"math"

	"vcz/dataset"
)

// ResidualOptions select the data of Residuals.
type ResidualOptions struct {
	// Use is the set of data types fitted; 0 means every type.
	Use dataset.DataType
	// Stride keeps every Stride-th datum of each type's list (0 or 1: all), for cheap maps of
	// χ² over a few parameters.
	Stride int
	// Smearing says whether the model visibilities are averaged over each channel's band
	// (smear.go), as for images: SmearAuto (the zero value) where the smearing of a point
	// source at distance Extent from the phase centre exceeds the noise, SmearOn wherever
	// it exceeds the quadrature tolerance, SmearOff never (without a notice, unlike
	// images). When smearing is modelled,
	// Points holds the quadrature sub-points of every point and Eval and Chi2 take the
	// model visibilities there.
	Smearing Smearing
	// Extent (rad) is the distance from the phase centre out to which the smeared model
	// is exact within the tolerance; 0 means the largest scale the data constrain,
	// λmax/Bmin (common practice, no source).
	Extent float64
	// SmearTol is the quadrature tolerance (ModelOptions.SmearTol); 0 means the default.
	SmearTol float64
}

// Residuals are the normalised residuals of the data of a data set for a least-squares fit of
// a normalised model whose visibilities are computed elsewhere (recon/fit fits analytic
// models). They come from the same data terms as the image objective (term_*.go), in the
// order of the table of data types (package dataset) and, within a type, of the data. Each
// term's residuals are given in its file (term_<word>.go): (model − data)/σ for amplitudes and
// 2 sin(Δφ/2)/σ for phases, so that the sum of squares of each type is its χ² in Objective.
// Data a normalised model cannot fit (correlated fluxes) are left out with a notice.
// A Residuals is not safe for concurrent use.
type Residuals struct {
	s       sampling
	terms   [nTypes]term // nil for the types not in use
	n, off  [nTypes]int
	total   int
	use     dataset.DataType
	notices []string
	c       evalCtx
	smear   *smearing    // nil when the band averages are not modelled
	avg     []complex128 // the band-averaged visibilities at the points
	info    SmearInfo
}

// NewResiduals selects the data of d that a fit of the types opt.Use uses.
func NewResiduals(d *dataset.Data, opt ResidualOptions) *Residuals {
	use := opt.Use
	if use == 0 {
		use = dataset.AllTypes
	}
	r := &Residuals{}
	c := termConfig{lsq: true, stride: opt.Stride}
	for i, row := range termTable {
		r.off[i] = r.total
		if use&row.Type == 0 {
			continue
		}
		t := row.kind.bind(d, c)
		r.terms[i] = t
		r.notices = append(r.notices, t.notices()...)
		r.n[i] = t.len()
		r.total += r.n[i]
		if r.n[i] > 0 {
			r.use |= row.Type
		}
	}
	n := newNeeds(d)
	for _, t := range r.terms {
		if t != nil {
			t.need(n)
		}
	}
	r.s = newSampling(d, n)
	r.c = evalCtx{s: &r.s, w: 1}
	if opt.Smearing == SmearOff {
		return r
	}
	if ext := smearExtent(&r.s, opt.Extent); ext > 0 {
		r.smear, r.info = newSmearingOut(d, &r.s, ext, ext, ModelOptions{Smearing: opt.Smearing, SmearTol: opt.SmearTol})
		if r.smear != nil {
			r.avg = make([]complex128, len(r.s.U))
		}
	}
	if n := r.info.Notice(len(r.s.U)); n != "" {
		r.notices = append(r.notices, n)
	}
	return r
}

// smearExtent returns ext when positive, else 1/f_min over the points of s, the largest
// scale λmax/Bmin the data constrain (common practice, no source); 0 without a point off
// the origin.
func smearExtent(s *sampling, ext float64) float64 {
	if ext > 0 {
		return ext
	}
	fmin := math.Inf(1)
	for k := range s.U {
		if f := math.Hypot(s.U[k], s.V[k]); f > 0 {
			fmin = math.Min(fmin, f)
		}
	}
	if math.IsInf(fmin, 1) {
		return 0
	}
	return 1 / fmin
}

// Smearing returns how the residuals treat bandwidth smearing.
func (r *Residuals) Smearing() SmearInfo { return r.info }

// Points returns the distinct (u,v) points (cycles/rad) at which Eval and Chi2 want the model
// visibilities: the data's points, or the quadrature sub-points of their bands when
// smearing is modelled. The slices belong to r.
func (r *Residuals) Points() (u, v []float64) {
	if r.smear != nil {
		return r.smear.u, r.smear.v
	}
	return r.s.U, r.s.V
}

// nPoints is the number of visibilities Eval and Chi2 take.
func (r *Residuals) nPoints() int {
	if r.smear != nil {
		return len(r.smear.u)
	}
	return len(r.s.U)
}

// Len returns the number of residuals.
func (r *Residuals) Len() int { return r.total }

// Use returns the data types that have data among the residuals.
func (r *Residuals) Use() dataset.DataType { return r.use }

// N returns the number of residuals of one data type.
func (r *Residuals) N(t dataset.DataType) int { return r.n[t.Index()] }

// ExpectedChi2r returns the expectation of the sum of squares of the residuals per residual
// for data drawn with their stated errors about the true model, by the rule of
// Objective.ExpectedChi2r (1 for every Gaussian term, less for wrap-safe phases of large
// errors); NaN without data.
func (r *Residuals) ExpectedChi2r() float64 {
	if r.total == 0 {
		return math.NaN()
	}
	s := 0.0
	for _, t := range r.terms {
		if t != nil {
			s += t.expected()
		}
	}
	return s / float64(r.total)
}

// Notices lists what the residuals leave out, one sentence each.
func (r *Residuals) Notices() []string { return r.notices }

// Eval writes the normalised residuals of the model whose visibilities at Points are vis to
// dst (length Len) and returns the sum of their squares.
func (r *Residuals) Eval(dst []float64, vis []complex128) float64 {
	if len(dst) != r.total || len(vis) != r.nPoints() {
		panic(fmt.Sprintf("recon: Residuals.Eval: %d residuals and %d visibilities for %d and %d", len(dst), len(vis), r.total, r.nPoints()))
	}
	c := r.ctx(vis)
	for i, t := range r.terms {
		if t != nil {
			t.residuals(dst[r.off[i]:r.off[i]+r.n[i]], c)
		}
	}
	s := 0.0
	for _, x := range dst {
		s += x * x
	}
	return s
}

// Chi2 returns the χ² of the model whose visibilities at Points are vis, the sum of squares of
// the residuals, without writing them; it is the cheaper of the two.
func (r *Residuals) Chi2(vis []complex128) float64 {
	if len(vis) != r.nPoints() {
		panic(fmt.Sprintf("recon: Residuals.Chi2: %d visibilities for %d points", len(vis), r.nPoints()))
	}
	c := r.ctx(vis)
	s := 0.0
	for _, t := range r.terms {
		if t != nil {
			x, _ := t.eval(c, 0, 1)
			s += x
		}
	}
	return s
}

// Chi2Of returns the χ² of one data type from residuals res written by Eval.
func (r *Residuals) Chi2Of(t dataset.DataType, res []float64) float64 {
	i := t.Index()
	s := 0.0
	for _, x := range res[r.off[i] : r.off[i]+r.n[i]] {
		s += x * x
	}
	return s
}

// ctx prepares the evaluation at vis: the band averages when smearing is modelled, then
// the free scales are fitted.
func (r *Residuals) ctx(vis []complex128) *evalCtx {
	c := &r.c
	if r.smear != nil {
		// average reads the sub-point visibilities from sub; vis is only read.
		r.smear.sub = vis
		r.smear.average(r.avg)
		vis = r.avg
	}
	c.vis = vis
	for _, t := range r.terms {
		if sc, ok := t.(scaler); ok {
			sc.prepare(c)
		}
	}
	return c
}
