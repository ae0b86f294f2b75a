package recon

import (
	"math"
	"math/cmplx"
	"math/rand/v2"

	"vcz/dataset"
)

// Synthetic observations for the tests and benchmarks. The (u,v) tracks follow from Earth
// rotation: for an equatorial baseline (X, Y, Z) in metres, hour angle H and declination δ,
//
//	u = X sin H + Y cos H,  v = −X sin δ cos H + Y sin δ sin H + Z cos δ
//
// (Thompson, Moran & Swenson 2017, Interferometry and Synthesis in Radio Astronomy, eq. 4.1).
// The array is invented: telescopes at random positions within a given radius.

type synthArray struct {
	xyz [][3]float64 // m
	dec float64      // rad
}

func newSynthArray(rng *rand.Rand, ntel int, radius float64) synthArray {
	a := synthArray{dec: -0.4}
	for i := 0; i < ntel; i++ {
		r := radius * math.Sqrt(0.05+0.95*rng.Float64())
		t := 2 * math.Pi * rng.Float64()
		a.xyz = append(a.xyz, [3]float64{r * math.Cos(t), r * math.Sin(t), 0.1 * r * (rng.Float64() - 0.5)})
	}
	return a
}

func (a synthArray) uv(i, j int, h float64) (u, v float64) {
	x := a.xyz[j][0] - a.xyz[i][0]
	y := a.xyz[j][1] - a.xyz[i][1]
	z := a.xyz[j][2] - a.xyz[i][2]
	sh, ch := math.Sincos(h)
	sd, cd := math.Sincos(a.dec)
	return x*sh + y*ch, -x*sd*ch + y*sd*sh + z*cd
}

// synthOpts describe an observation: channels between lmin and lmax, hour angles spread
// over ±hspan, and relative noise levels.
type synthOpts struct {
	nchan, nha     int
	lmin, lmax     float64
	hspan          float64
	sigV2, sigPhi  float64 // absolute V² error, closure-phase error (rad)
	sigT3A         float64 // T3 amplitude error, 0 = no T3 amplitudes
	vis, t3, noise bool
	sigVA, sigVP   float64 // VIS amplitude and phase errors when vis is set
}

// observe returns V², closure phases (all triangles) and, when asked, complex visibilities of
// a source with visibility function vis(u, v) (normalised, CONVENTIONS.md sign), with Gaussian
// noise from rng when o.noise is set.
func observe(rng *rand.Rand, a synthArray, vis func(u, v float64) complex128, o synthOpts) *dataset.Data {
	d := &dataset.Data{Targets: []string{"TEST"}}
	nt := len(a.xyz)
	for h := 0; h < o.nha; h++ {
		ha := -o.hspan + 2*o.hspan*(float64(h)+0.5)/float64(o.nha)
		for c := 0; c < o.nchan; c++ {
			l := o.lmin
			if o.nchan > 1 {
				l = o.lmin + (o.lmax-o.lmin)*float64(c)/float64(o.nchan-1)
			}
			noise := func(s float64) float64 {
				if !o.noise {
					return 0
				}
				return s * rng.NormFloat64()
			}
			for i := 0; i < nt; i++ {
				for j := i + 1; j < nt; j++ {
					bu, bv := a.uv(i, j, ha)
					u, v := bu/l, bv/l
					V := vis(u, v)
					p := &d.Vis2
					p.U = append(p.U, u)
					p.V = append(p.V, v)
					p.Lambda = append(p.Lambda, l)
					p.DLambda = append(p.DLambda, 0)
					p.MJD = append(p.MJD, 60000+float64(h)/100)
					p.Value = append(p.Value, real(V)*real(V)+imag(V)*imag(V)+noise(o.sigV2))
					p.Err = append(p.Err, o.sigV2)
					p.Origin = append(p.Origin, dataset.Origin{Row: h, Channel: c})
					if o.vis {
						q := &d.Vis
						q.U = append(q.U, u)
						q.V = append(q.V, v)
						q.Lambda = append(q.Lambda, l)
						q.DLambda = append(q.DLambda, 0)
						q.MJD = append(q.MJD, 60000)
						q.Amp = append(q.Amp, cmplx.Abs(V)+noise(o.sigVA))
						q.AmpErr = append(q.AmpErr, o.sigVA)
						q.Phi = append(q.Phi, cmplx.Phase(V)+noise(o.sigVP))
						q.PhiErr = append(q.PhiErr, o.sigVP)
						q.AmpOK = append(q.AmpOK, true)
						q.PhiOK = append(q.PhiOK, true)
						q.AmpTyp = append(q.AmpTyp, dataset.AmpAbsolute)
						q.PhiTyp = append(q.PhiTyp, dataset.PhiAbsolute)
						q.Origin = append(q.Origin, dataset.Origin{})
					}
				}
			}
			if !o.t3 {
				continue
			}
			for i := 0; i < nt; i++ {
				for j := i + 1; j < nt; j++ {
					for k := j + 1; k < nt; k++ {
						u1, v1 := a.uv(i, j, ha)
						u2, v2 := a.uv(j, k, ha)
						u1, v1, u2, v2 = u1/l, v1/l, u2/l, v2/l
						// B = V(u1,v1)·V(u2,v2)·conj(V(u1+u2, v1+v2)) (CONVENTIONS.md).
						B := vis(u1, v1) * vis(u2, v2) * cmplx.Conj(vis(u1+u2, v1+v2))
						t := &d.T3
						t.U1 = append(t.U1, u1)
						t.V1 = append(t.V1, v1)
						t.U2 = append(t.U2, u2)
						t.V2 = append(t.V2, v2)
						t.Lambda = append(t.Lambda, l)
						t.DLambda = append(t.DLambda, 0)
						t.MJD = append(t.MJD, 60000+float64(h)/100)
						ph := cmplx.Phase(B) + noise(o.sigPhi)
						t.Phi = append(t.Phi, ph)
						t.PhiErr = append(t.PhiErr, o.sigPhi)
						t.PhiOK = append(t.PhiOK, true)
						if o.sigT3A > 0 {
							t.Amp = append(t.Amp, cmplx.Abs(B)+noise(o.sigT3A))
							t.AmpErr = append(t.AmpErr, o.sigT3A)
							t.AmpOK = append(t.AmpOK, true)
						} else {
							t.Amp = append(t.Amp, math.NaN())
							t.AmpErr = append(t.AmpErr, math.NaN())
							t.AmpOK = append(t.AmpOK, false)
						}
						t.Origin = append(t.Origin, dataset.Origin{})
					}
				}
			}
		}
	}
	d.Vis2Count.Valid, d.T3Count.Valid, d.VisCount.Valid = d.Vis2.Len(), d.T3.Len(), d.Vis.Len()
	return d
}

// binaryVis is the visibility of two point sources: the primary (flux 1) at the phase centre
// and the secondary (flux f) at (x east, y north), V = (1 + f exp(−2πi(u x + v y)))/(1 + f).
func binaryVis(f, x, y float64) func(u, v float64) complex128 {
	return func(u, v float64) complex128 {
		return (1 + complex(f, 0)*cmplx.Exp(complex(0, -2*math.Pi*(u*x+v*y)))) / complex(1+f, 0)
	}
}

// discVis is the uniform disc 2J1(x)/x (Born & Wolf, sect. 8.5.2) of diameter theta.
func discVis(theta float64) func(u, v float64) complex128 {
	return func(u, v float64) complex128 { return complex(UniformDiscV(theta, math.Hypot(u, v)), 0) }
}
