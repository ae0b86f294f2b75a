package simulate

import (
	"math"
	"math/cmplx"
	"reflect"
	"strings"
	"testing"

	"gonum.org/v1/gonum/integrate"

	"vcz/io/oifits"
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
	avg.Smearing = SmearDefault
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
	p.Smearing = SmearOn
	p.Bandwidths[2] = 2 * p.Wavelengths[2]
	if err := p.Validate(); err == nil {
		t.Error("a band of twice its centre accepted")
	}
}

// The plan key smearing of [wavelengths] sets Plan.Smearing: averaged when it is left out,
// and the demo plan takes the centres.
func TestPlanSmearingKey(t *testing.T) {
	for _, c := range []struct {
		line string
		want Smearing
	}{{"smearing = true\n", SmearOn}, {"smearing = false\n", SmearOff}, {"", SmearDefault}} {
		text := strings.Replace(DemoPlanTOML, "smearing = false\n", c.line, 1)
		p, err := ParsePlan([]byte(text), "plan")
		if err != nil || p.Smearing != c.want {
			t.Errorf("%q gives %v, %v; want %v", c.line, p != nil && p.Smearing == c.want, err, c.want)
		}
	}
	if d, _ := Demo(); d.Smearing != SmearOff {
		t.Error("the demo plan averages over its bands")
	}
}

// A plan that says nothing of smearing averages a model's visibilities over each band (the
// same values as smearing = true) and reports it; a chromatic model is then taken at the
// channel centres, and smearing = true is refused with it.
func TestPlanSmearingDefault(t *testing.T) {
	p, _ := Demo()
	p = noiseless(p)
	p.Wavelengths = []float64{1.6e-6, 2.2e-6}
	p.Bandwidths = []float64{0.2e-6, 0.27e-6}
	m := mustModel(t, "point;point:x=4,y=-3,flux=0.5")
	run := func(s Smearing, sky Sky) (*oifits.File, Report) {
		q := *p
		q.Smearing = s
		f, rep, err := Run(&q, sky)
		if err != nil {
			t.Fatal(err)
		}
		return f, rep
	}
	fd, rd := run(SmearDefault, ModelSky{m})
	fo, _ := run(SmearOn, ModelSky{m})
	fc, rc := run(SmearOff, ModelSky{m})
	if !rd.BandAveraged || rc.BandAveraged || !strings.Contains(rd.String(), "averaged over each channel's band") {
		t.Errorf("reports: default %v, off %v:\n%s", rd.BandAveraged, rc.BandAveraged, rd.String())
	}
	if !reflect.DeepEqual(fd.Vis2[0].Rows, fo.Vis2[0].Rows) {
		t.Error("default and smearing = true differ")
	}
	if reflect.DeepEqual(fd.Vis2[0].Rows, fc.Vis2[0].Rows) {
		t.Error("default and smearing = false agree: the case does not exercise smearing")
	}
	cs := &ChromaticSky{Reference: 1.6e-6, Components: []SpectralComponent{{Model: m, Index: -1}}}
	if _, rep := run(SmearDefault, cs); rep.BandAveraged {
		t.Error("a chromatic model averaged by default")
	}
	q := *p
	q.Smearing = SmearOn
	if _, _, err := Run(&q, cs); err == nil || !strings.Contains(err.Error(), "chromatic") {
		t.Errorf("smearing = true with a chromatic model: %v", err)
	}
}
