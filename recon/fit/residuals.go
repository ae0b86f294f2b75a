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
	u, v []float64        // the points at which vis is evaluated
	vis  []complex128     // scratch: visibilities at the points
}

// newTerms selects the data of d that a fit of the types in use (0 = all)
// uses; stride > 1 keeps every stride-th datum of each type.
func newTerms(d *dataset.Data, use dataset.DataType, stride int) *terms {
	r := recon.NewResiduals(d, recon.ResidualOptions{Use: use, Stride: stride})
	u, v := r.Points()
	return &terms{Residuals: r, d: d, use: use, u: u, v: v, vis: make([]complex128, len(u))}
}

// eval writes the normalised residuals of m into dst (length Len) and
// returns their sum of squares.
func (t *terms) eval(dst []float64, m *model.Model) float64 {
	m.VisMany(t.vis, t.u, t.v)
	return t.Eval(dst, t.vis)
}
