package recon

import (
	"fmt"
	"math"

	"vcz/dataset"
)

// Prediction holds the model values of every datum of a Data, for each data type in a slice
// parallel to the type's table in the Data (usable or not): V², T3 amplitudes and closure
// phases per triangle, visibility amplitudes and phases per complex visibility. Phases are in
// radians in (−π, π]. They serve fit plots and residuals ((data − model)/error, phases
// wrapped).
type Prediction struct {
	values [nTypes][]float64
}

// Of returns the model values of one data type.
func (p *Prediction) Of(t dataset.DataType) []float64 { return p.values[t.Index()] }

// Predict computes the model observables of img (N² pixels on grid g, any positive flux;
// the model is normalised by it) at the data points of d, with the default ModelOptions
// (bandwidth smearing where it exceeds the noise). mk makes the transform; nil means
// NewTransform(0).
func Predict(d *dataset.Data, g Grid, img []float64, mk TransformFunc) (*Prediction, error) {
	return PredictWith(d, g, img, mk, ModelOptions{})
}

// PredictWith is Predict with the forward model's options, e.g. the smearing setting of the
// run that made img (Result.Smearing), so that the predictions are the model it fitted.
func PredictWith(d *dataset.Data, g Grid, img []float64, mk TransformFunc, opt ModelOptions) (*Prediction, error) {
	m, err := NewForwardModelWith(d, g, true, mk, opt)
	if err != nil {
		return nil, err
	}
	if len(img) != g.N*g.N {
		return nil, fmt.Errorf("recon: image has %d pixels for a %d × %d grid", len(img), g.N, g.N)
	}
	if f := m.Forward(img); !(f > 0) || math.IsInf(f, 0) {
		return nil, fmt.Errorf("recon: image flux is %g; it must be positive", f)
	}
	return predict(d, &m.sampling, m.vis), nil
}

// PredictVis computes the model observables at the data points of d of a model whose
// visibilities vis sets: vis(dst, u, v) writes the normalised visibility at each point
// (u[k], v[k]) (cycles/rad, the sign convention of CONVENTIONS.md) to dst[k], as
// recon/model's Model.VisMany does.
func PredictVis(d *dataset.Data, vis func(dst []complex128, u, v []float64)) *Prediction {
	s := newSampling(d, nil)
	buf := make([]complex128, len(s.U))
	vis(buf, s.U, s.V)
	return predict(d, &s, buf)
}

// PredictVisWith is PredictVis with the model's visibilities averaged over each channel's
// band as the fits of recon/fit average them (ResidualOptions: Smearing and Extent): vis is
// evaluated at the quadrature sub-points of every band. SmearOff is PredictVis.
func PredictVisWith(d *dataset.Data, vis func(dst []complex128, u, v []float64), opt ResidualOptions) *Prediction {
	if opt.Smearing == SmearOff {
		return PredictVis(d, vis)
	}
	s := newSampling(d, nil)
	sm, _ := newSmearingOut(d, &s, smearExtent(&s, opt.Extent), smearExtent(&s, opt.Extent), ModelOptions{Smearing: opt.Smearing, SmearTol: opt.SmearTol})
	buf := make([]complex128, len(s.U))
	if sm == nil {
		vis(buf, s.U, s.V)
	} else {
		vis(sm.sub, sm.u, sm.v)
		sm.average(buf)
	}
	return predict(d, &s, buf)
}

func predict(d *dataset.Data, s *sampling, vis []complex128) *Prediction {
	p := &Prediction{}
	for i, r := range termTable {
		p.values[i] = r.kind.predict(d, s, vis)
	}
	return p
}

// WrapPhase returns phi reduced to (−π, π], for phase residuals.
func WrapPhase(phi float64) float64 {
	w := math.Remainder(phi, 2*math.Pi)
	if w <= -math.Pi {
		w += 2 * math.Pi
	}
	return w
}
