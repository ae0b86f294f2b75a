package recon

import (
	"math"
	"math/rand/v2"
	"testing"

	"vcz/dataset"
	"vcz/io/oifits"
	"vcz/recon/simulate"
)

// diffRows returns data of differential phases and amplitudes in rows of nc channels across
// 1.5–2.4 µm on random baselines up to fmax (cycles/rad at 2 µm), with values set later.
func diffRows(rng *rand.Rand, rows, nc int, fmax float64) *dataset.Data {
	d := &dataset.Data{}
	p := &d.Vis
	for r := range rows {
		bx, by := (2*rng.Float64()-1)*fmax*2e-6, (2*rng.Float64()-1)*fmax*2e-6
		for c := range nc {
			l := (1.5 + 0.9*float64(c)/float64(nc-1)) * 1e-6
			p.U = append(p.U, bx/l)
			p.V = append(p.V, by/l)
			p.Lambda = append(p.Lambda, l)
			p.DLambda = append(p.DLambda, 0)
			p.MJD = append(p.MJD, 60000)
			p.Amp = append(p.Amp, 1)
			p.AmpErr = append(p.AmpErr, 0.02)
			p.Phi = append(p.Phi, 0)
			p.PhiErr = append(p.PhiErr, 0.05+0.1*rng.Float64())
			p.AmpOK = append(p.AmpOK, true)
			p.PhiOK = append(p.PhiOK, true)
			p.AmpTyp = append(p.AmpTyp, dataset.AmpDifferential)
			p.PhiTyp = append(p.PhiTyp, dataset.PhiDifferential)
			p.Origin = append(p.Origin, dataset.Origin{HDU: 2, Row: r + 1, Channel: c})
		}
	}
	return d
}

// TestVisDiffExpected checks the expected χ² of the differential terms by simulation: data
// drawn about a model as a reduction makes them — the model's phases plus Gaussian noise,
// with the least-squares line in 1/λ of each row removed; its amplitudes plus Gaussian noise
// divided by their mean over the row, with the errors scaled alike — give, at that model, a
// mean χ² over 4000 draws within 3 % of the term's expected value (for the phases the sum of
// 2(1 − e^(−v/2))/σ² over the variances v left by the projection, for the amplitudes n − 1 per
// row of n), which is well below the number of data.
func TestVisDiffExpected(t *testing.T) {
	const n, pixel, rows, nc, draws = 16, 1e-9, 5, 6, 4000
	rng := rand.New(rand.NewPCG(11, 3))
	d := diffRows(rng, rows, nc, 0.2/pixel)
	img := make([]float64, n*n)
	img[n/2*n+n/2] = 1
	img[(n/2+3)*n+n/2-2] = 0.4 // an asymmetric image: phases that vary along each row
	m, err := NewForwardModel(d, Grid{N: n, Pixel: pixel}, true, exactTransform)
	if err != nil {
		t.Fatal(err)
	}
	m.Forward(img)
	p := &d.Vis
	psi, amp := make([]float64, p.Len()), make([]float64, p.Len())
	for i, r := range m.cvis {
		v := m.at(r)
		psi[i], amp[i] = math.Atan2(imag(v), real(v)), abs(v)
	}
	const sa = 0.02 // amplitude noise before the normalisation
	var mean [2]float64
	var o *Objective
	for range draws {
		for r := range rows {
			idx := make([]int, nc)
			for c := range idx {
				idx[c] = r*nc + c
			}
			// Phases: ψ + ε, unwrapped along the row from the model's own unwrapping, minus
			// the least-squares line a + b/λ.
			y, x := make([]float64, nc), make([]float64, nc)
			for c, i := range idx {
				y[c] = psi[i] + p.PhiErr[i]*rng.NormFloat64()
				if c > 0 {
					y[c] = y[c-1] + math.Remainder(y[c]-y[c-1], 2*math.Pi)
				}
				x[c] = 1 / p.Lambda[i]
			}
			a, b := lineFit(x, y)
			am := 0.0
			noisy := make([]float64, nc)
			for c, i := range idx {
				p.Phi[i] = y[c] - a - b*x[c]
				noisy[c] = amp[i] + sa*rng.NormFloat64()
				am += noisy[c] / nc
			}
			for c, i := range idx {
				p.Amp[i], p.AmpErr[i] = noisy[c]/am, sa/am
			}
		}
		o = NewObjective(d, m, TermOptions{})
		o.Eval(nil, img)
		mean[0] += o.Chi2(dataset.VisDiff) / draws
		mean[1] += o.Chi2(dataset.VisAmp) / draws
	}
	for k, ty := range []dataset.DataType{dataset.VisDiff, dataset.VisAmp} {
		want := o.ExpectedChi2rOf(ty) * float64(o.N(ty))
		if math.Abs(mean[k]-want) > 0.03*want {
			t.Errorf("%v: mean χ² %.4g over %d draws, expected %.4g (N = %d)", ty, mean[k], draws, want, o.N(ty))
		}
		t.Logf("%v: mean χ² %.4g, expected %.4g, N = %d", ty, mean[k], want, o.N(ty))
	}
}

// lineFit returns the least-squares line a + b·x through (x, y).
func lineFit(x, y []float64) (a, b float64) {
	n := float64(len(x))
	sx, sy, sxx, sxy := 0.0, 0.0, 0.0, 0.0
	for i := range x {
		sx += x[i]
		sy += y[i]
		sxx += x[i] * x[i]
		sxy += x[i] * y[i]
	}
	b = (n*sxy - sx*sy) / (n*sxx - sx*sx)
	return (sy - b*sx) / n, b
}

// TestVisDiffSimulated checks that the term removes the reference as the simulator writes it:
// differential phases and amplitudes of a rotating line-emitting disc around a star
// (simulate's chromatic model, exact sums), without noise, have χ² zero at the model's own
// visibilities in both terms, and with noise a χ² within four times its scatter √(2N) of the
// expected value.
func TestVisDiffSimulated(t *testing.T) {
	sky, err := simulate.ParseChromatic([]byte(`reference = 2.166
[[component]]
model = "point"
[[disc]]
inner = 0.5
outer = 3
inc = 60
pa = 30
line = 2.1661
velocity = 200
width = 15
flux = 0.6
`), "disc.toml")
	if err != nil {
		t.Fatal(err)
	}
	p, _ := simulate.Demo()
	for i := range p.Stations {
		p.Stations[i].East /= 10
		p.Stations[i].North /= 10
	}
	p.Wavelengths, p.Bandwidths = nil, nil
	for c := range 21 {
		p.Wavelengths = append(p.Wavelengths, (2.1646+0.00015*float64(c))*1e-6)
		p.Bandwidths = append(p.Bandwidths, 0.00015e-6)
	}
	p.WriteVis2, p.WriteT3, p.WriteDiff = false, false, true
	for _, add := range []bool{false, true} {
		p.Noise.Add = add
		f, _, err := simulate.Run(p, sky)
		if err != nil {
			t.Fatal(err)
		}
		d, err := dataset.FromFiles([]*oifits.File{f}, dataset.Selection{})
		if err != nil {
			t.Fatal(err)
		}
		s := newSampling(d, nil)
		vis := make([]complex128, len(s.U))
		pv := &d.Vis
		w := make([]complex128, pv.Len())
		if err := sky.VisibilitiesAt(w, pv.U, pv.V, pv.Lambda); err != nil {
			t.Fatal(err)
		}
		for i, r := range s.cvis {
			vis[r.i] = complex(real(w[i]), imag(w[i])*r.sign)
		}
		c := &evalCtx{s: &s, vis: vis, w: 1}
		for _, kind := range []termKind{visDiffKind{}, visAmpKind{}} {
			tm := kind.bind(d, termConfig{})
			chi2, _ := tm.eval(c, 0, 1)
			n := float64(tm.len())
			switch {
			case tm.len() != pv.Len():
				t.Errorf("%T: %d data of %d", kind, tm.len(), pv.Len())
			case !add && chi2 > 1e-12*n:
				t.Errorf("%T without noise: χ² %.3g", kind, chi2)
			case add && math.Abs(chi2-tm.expected()) > 4*math.Sqrt(2*n):
				t.Errorf("%T with noise: χ² %.4g, expected %.4g ± %.3g", kind, chi2, tm.expected(), math.Sqrt(2*n))
			}
			t.Logf("%T, noise %v: χ² %.4g, expected %.4g, N %d", kind, add, chi2, tm.expected(), tm.len())
		}
	}
}
