package simulate

import (
	"math"
	"math/cmplx"
	"strings"
	"testing"

	"gonum.org/v1/gonum/integrate"
)

// TestBandAverage checks the band-averaged visibilities of a binary observed in two wide
// channels (Δλ/λ ≈ 0.13 and 0.12) against the average (1/Δλ) ∫ V(B/λ') dλ' of the model's
// visibility integrated by Romberg's method (gonum/integrate) on 2049 wavelengths: they agree
// to 1e-9 in amplitude and in phase (radians), while the values at the channel centres
// differ by more than 1e-2 somewhere.
func TestBandAverage(t *testing.T) {
	p, _ := Demo()
	p = noiseless(p)
	p.WriteVis = true
	p.Wavelengths = []float64{1.6e-6, 2.2e-6}
	p.Bandwidths = []float64{0.2e-6, 0.27e-6}
	m := mustModel(t, "point;point:x=4,y=-3,flux=0.5")
	avg := *p
	avg.BandAverage = true
	fa, _, err := Run(&avg, ModelSky{m})
	if err != nil {
		t.Fatal(err)
	}
	fc, _, err := Run(p, ModelSky{m})
	if err != nil {
		t.Fatal(err)
	}
	const samples = 1<<11 + 1
	re, im := make([]float64, samples), make([]float64, samples)
	u, v := make([]float64, samples), make([]float64, samples)
	vis := make([]complex128, samples)
	worst, centre := 0.0, 0.0
	for ri, r := range fa.Vis[0].Rows {
		for c, lam := range p.Wavelengths {
			dl := p.Bandwidths[c]
			step := dl / (samples - 1)
			for k := range samples {
				l := lam - dl/2 + float64(k)*step
				u[k], v[k] = r.UCoord/l, r.VCoord/l
			}
			m.VisMany(vis, u, v)
			for k, z := range vis {
				re[k], im[k] = real(z), imag(z)
			}
			want := complex(integrate.Romberg(re, step), integrate.Romberg(im, step)) / complex(dl, 0)
			got := cmplx.Rect(r.Amp[c], r.Phi[c]*math.Pi/180)
			worst = math.Max(worst, cmplx.Abs(got-want))
			rc := fc.Vis[0].Rows[ri]
			centre = math.Max(centre, cmplx.Abs(cmplx.Rect(rc.Amp[c], rc.Phi[c]*math.Pi/180)-want))
		}
	}
	if worst > 1e-9 {
		t.Errorf("band averages differ from the integral by %.3g", worst)
	}
	if centre < 1e-2 {
		t.Errorf("centre values differ from the band averages by only %.3g: the test does not exercise smearing", centre)
	}
	t.Logf("largest difference to the band integral: averaged %.2g, centre %.2g", worst, centre)
}

// A band at least twice its centre cannot be averaged over: the plan is refused.
func TestBandAverageRefusesWideBand(t *testing.T) {
	p, _ := Demo()
	p.BandAverage = true
	p.Bandwidths[2] = 2 * p.Wavelengths[2]
	if err := p.Validate(); err == nil {
		t.Error("a band of twice its centre accepted")
	}
}

// The plan key smearing of [wavelengths] sets Plan.BandAverage.
func TestPlanSmearingKey(t *testing.T) {
	text := strings.Replace(DemoPlanTOML, "channels = 8\n", "channels = 8\nsmearing = true\n", 1)
	p, err := ParsePlan([]byte(text), "plan")
	if err != nil || !p.BandAverage {
		t.Fatalf("smearing = true gives %v, %v", p != nil && p.BandAverage, err)
	}
	if d, _ := Demo(); d.BandAverage {
		t.Error("the demo plan averages over its bands")
	}
}
