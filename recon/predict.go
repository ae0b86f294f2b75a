package recon

import (
	"fmt"
	"math"
)

// Prediction holds the model observables of an image at every datum of a Data, in slices
// parallel to the Data's: V² values, T3 amplitudes and closure phases (rad, in (−π, π]),
// visibility amplitudes and phases (rad). They serve fit plots and residuals
// ((data − model)/error, phases wrapped).
type Prediction struct {
	Vis2           []float64
	T3Amp, T3Phi   []float64
	VisAmp, VisPhi []float64
}

// Predict computes the model observables of img (N² pixels on grid g, any positive flux;
// the model is normalised by it) at the data points of d. mk makes the transform; nil means
// NewTransform(0).
func Predict(d *Data, g Grid, img []float64, mk TransformFunc) (*Prediction, error) {
	m, err := NewModel(d, g, true, mk)
	if err != nil {
		return nil, err
	}
	if len(img) != g.N*g.N {
		return nil, fmt.Errorf("recon: image has %d pixels for a %d × %d grid", len(img), g.N, g.N)
	}
	if f := m.Forward(img); !(f > 0) || math.IsInf(f, 0) {
		return nil, fmt.Errorf("recon: image flux is %g; it must be positive", f)
	}
	p := &Prediction{
		Vis2:   make([]float64, len(m.vis2)),
		T3Amp:  make([]float64, len(m.t3)),
		T3Phi:  make([]float64, len(m.t3)),
		VisAmp: make([]float64, len(m.cvis)),
		VisPhi: make([]float64, len(m.cvis)),
	}
	for i, r := range m.vis2 {
		v := m.at(r)
		p.Vis2[i] = real(v)*real(v) + imag(v)*imag(v)
	}
	for i, r := range m.t3 {
		b := m.at(r[0]) * m.at(r[1]) * m.at(r[2])
		p.T3Amp[i] = abs(b)
		p.T3Phi[i] = math.Atan2(imag(b), real(b))
	}
	for i, r := range m.cvis {
		v := m.at(r)
		p.VisAmp[i] = abs(v)
		p.VisPhi[i] = math.Atan2(imag(v), real(v))
	}
	return p, nil
}

// WrapPhase returns phi reduced to (−π, π], for phase residuals.
func WrapPhase(phi float64) float64 {
	w := math.Remainder(phi, 2*math.Pi)
	if w <= -math.Pi {
		w += 2 * math.Pi
	}
	return w
}
