package fit

import (
	"vcz/dataset"
	"vcz/recon"
	"vcz/recon/model"
)

// terms evaluates the normalised residuals of an analytic model: the data
// terms of recon (recon.Residuals, which also gives their formulas) at the
// model's visibilities. The residuals of each type square to its χ² in
// recon.Objective.
type terms struct {
	*recon.Residuals
	d    *dataset.Data
	use  dataset.DataType // as asked, 0 = all
	sm   smearing         // the bandwidth-smearing settings
	u, v []float64        // the points at which vis is evaluated
	vis  []complex128     // scratch: visibilities at the points
}

// newTerms selects the data of d that a fit of the types in use (0 = all)
// uses; stride > 1 keeps every stride-th datum of each type. sm says
// whether the model's visibilities are averaged over each channel's band
// (recon.ResidualOptions): the model is then evaluated at the quadrature
// sub-points of every band and the residuals take their averages, as the
// images' forward model does.
func newTerms(d *dataset.Data, use dataset.DataType, stride int, sm smearing) *terms {
	r := recon.NewResiduals(d, recon.ResidualOptions{Use: use, Stride: stride, Smearing: sm.mode, SmearTol: sm.tol})
	u, v := r.Points()
	return &terms{Residuals: r, d: d, use: use, sm: sm, u: u, v: v, vis: make([]complex128, len(u))}
}

// smearing is the bandwidth-smearing setting of a fit and its quadrature tolerance (Options).
type smearing struct {
	mode recon.Smearing
	tol  float64
}

// centres takes every model visibility at its band's centre.
var centres = smearing{mode: recon.SmearOff}

// eval writes the normalised residuals of m into dst (length Len) and
// returns their sum of squares.
func (t *terms) eval(dst []float64, m *model.Model) float64 {
	m.VisMany(t.vis, t.u, t.v)
	return t.Eval(dst, t.vis)
}
