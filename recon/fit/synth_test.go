package fit

import (
	"math"
	"math/cmplx"
	"math/rand/v2"

	"gonum.org/v1/gonum/integrate/quad"

	"vcz/dataset"
	"vcz/recon/model"
)

// visFunc is a complex visibility V(u, v), u and v in cycles per radian.
type visFunc func(u, v float64) complex128

// noise sets the 1σ errors of synthetic data; zero noise draws nothing
// but still sets the errors (which must be positive).
type noise struct {
	v2, t3amp, t3phi float64 // t3phi in radians
	vis              bool    // also write complex visibilities (amp error v2, phase error t3phi)
	rng              *rand.Rand
}

// synth makes a data set of an invented six-station array: baselines of
// 10 to about 130 m rotated over eight epochs (a simple stand-in for
// Earth rotation) at three wavelengths 1.5, 1.65 and 1.8 µm in channels
// 10 nm wide, with every baseline as a V² point and every station triple
// as a closure triangle. Values are the band averages of vis over each
// channel, as an instrument measures them, plus Gaussian noise when n.rng
// is not nil: V̄ = ∫_{−1/2}^{1/2} V(u/(1 + r·t), v/(1 + r·t)) dt with
// r = Δλ/λ (Thompson, Moran & Swenson 2017, sect. 6.3), by gonum's
// 16-node Gauss–Legendre rule, exact to rounding here (fringe turns below
// 0.2 rad across a band); the bispectrum is the product of the band
// averages, the model of recon/smear.go.
func synth(visAt visFunc, n noise) *dataset.Data {
	const dlambda = 1e-8
	nodes, weights := make([]float64, 16), make([]float64, 16)
	quad.Legendre{}.FixedLocations(nodes, weights, -0.5, 0.5)
	var lam float64 // the channel being made
	vis := func(u, v float64) complex128 {
		var a complex128
		for j, t := range nodes {
			f := 1 / (1 + dlambda/lam*t)
			a += complex(weights[j], 0) * visAt(u*f, v*f)
		}
		return a
	}
	stations := [][2]float64{{0, 0}, {10, 3}, {-25, 30}, {60, -20}, {-70, -55}, {35, 85}} // east, north (m)
	lambdas := []float64{1.5e-6, 1.65e-6, 1.8e-6}
	d := &dataset.Data{}
	gauss := func(s float64) float64 {
		if n.rng == nil {
			return 0
		}
		return s * n.rng.NormFloat64()
	}
	for ep := 0; ep < 8; ep++ {
		rot := float64(ep) * math.Pi / 10
		sr, cr := math.Sincos(rot)
		uv := func(a, b int, lam float64) (float64, float64) {
			de := stations[b][0] - stations[a][0]
			dn := stations[b][1] - stations[a][1]
			return (cr*de - sr*dn) / lam, (sr*de + cr*dn) / lam
		}
		for _, lam = range lambdas {
			for a := range stations {
				for b := a + 1; b < len(stations); b++ {
					u, v := uv(a, b, lam)
					w := vis(u, v)
					p := &d.Vis2
					p.U = append(p.U, u)
					p.V = append(p.V, v)
					p.Lambda = append(p.Lambda, lam)
					p.DLambda = append(p.DLambda, dlambda)
					p.MJD = append(p.MJD, 60000+float64(ep)/24)
					p.Value = append(p.Value, real(w)*real(w)+imag(w)*imag(w)+gauss(n.v2))
					p.Err = append(p.Err, n.v2)
					p.Origin = append(p.Origin, dataset.Origin{})
					if n.vis {
						c := &d.Vis
						c.U = append(c.U, u)
						c.V = append(c.V, v)
						c.Lambda = append(c.Lambda, lam)
						c.DLambda = append(c.DLambda, dlambda)
						c.MJD = append(c.MJD, 60000+float64(ep)/24)
						c.Amp = append(c.Amp, cmplx.Abs(w)+gauss(n.v2))
						c.AmpErr = append(c.AmpErr, n.v2)
						c.Phi = append(c.Phi, cmplx.Phase(w)+gauss(n.t3phi))
						c.PhiErr = append(c.PhiErr, n.t3phi)
						c.AmpOK = append(c.AmpOK, true)
						c.PhiOK = append(c.PhiOK, true)
						c.AmpTyp = append(c.AmpTyp, dataset.AmpAbsolute)
						c.PhiTyp = append(c.PhiTyp, dataset.PhiAbsolute)
						c.Origin = append(c.Origin, dataset.Origin{})
					}
				}
			}
			for a := range stations {
				for b := a + 1; b < len(stations); b++ {
					for c := b + 1; c < len(stations); c++ {
						u1, v1 := uv(a, b, lam)
						u2, v2 := uv(b, c, lam)
						// CONVENTIONS.md: B = V(u1,v1) V(u2,v2) conj(V(u1+u2, v1+v2)).
						bs := vis(u1, v1) * vis(u2, v2) * cmplx.Conj(vis(u1+u2, v1+v2))
						t := &d.T3
						t.U1 = append(t.U1, u1)
						t.V1 = append(t.V1, v1)
						t.U2 = append(t.U2, u2)
						t.V2 = append(t.V2, v2)
						t.Lambda = append(t.Lambda, lam)
						t.DLambda = append(t.DLambda, dlambda)
						t.MJD = append(t.MJD, 60000+float64(ep)/24)
						t.Amp = append(t.Amp, cmplx.Abs(bs)+gauss(n.t3amp))
						t.AmpErr = append(t.AmpErr, n.t3amp)
						t.Phi = append(t.Phi, cmplx.Phase(bs)+gauss(n.t3phi))
						t.PhiErr = append(t.PhiErr, n.t3phi)
						t.AmpOK = append(t.AmpOK, true)
						t.PhiOK = append(t.PhiOK, true)
						t.Origin = append(t.Origin, dataset.Origin{})
					}
				}
			}
		}
	}
	return d
}

// modelVis returns the visibility function of a model.
func modelVis(m *model.Model) visFunc { return m.Vis }

var exactNoise = noise{v2: 0.01, t3amp: 0.01, t3phi: math.Pi / 180}
