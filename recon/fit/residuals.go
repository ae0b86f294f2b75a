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
	sm   *recon.Smearing  // the bandwidth-smearing setting; nil: off
	u, v []float64        // the points at which vis is evaluated
	vis  []complex128     // scratch: visibilities at the points
}

// newTerms selects the data of d that a fit of the types in use (0 = all)
// uses; stride > 1 keeps every stride-th datum of each type. sm says
// whether the model's visibilities are averaged over each channel's band
// (recon.ResidualOptions; nil: never): the model is then evaluated at the
// quadrature sub-points of every band and the residuals take their
// averages, as the images' forward model does.
func newTerms(d *dataset.Data, use dataset.DataType, stride int, sm *recon.Smearing) *terms {
	mode := recon.SmearOff
	if sm != nil {
		mode = *sm
	}
	r := recon.NewResiduals(d, recon.ResidualOptions{Use: use, Stride: stride, Smearing: mode})
	u, v := r.Points()
	return &terms{Residuals: r, d: d, use: use, sm: sm, u: u, v: v, vis: make([]complex128, len(u))}
}

// eval writes the normalised residuals of m into dst (length Len) and
// returns their sum of squares.
func (t *terms) eval(dst []float64, m *model.Model) float64 {
	m.VisMany(t.vis, t.u, t.v)
	return t.Eval(dst, t.vis)
}
