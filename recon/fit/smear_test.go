package fit

import (
	"math"
	"testing"

	"vcz/dataset"
	"vcz/io/oifits"
	"vcz/recon"
	"vcz/recon/simulate"
)

// A binary (flux ratio 0.5, companion 4 mas east and 3 mas north) observed without noise in
// three channels of Δλ/λ ≈ 0.09 whose visibilities are band averages (the simulator's
// quadrature over the band, a code apart from recon's): fitted with the model smeared over
// the bands (on, and auto, the zero Options), the flux ratio and position come back to 1e-4
// relative; fitted at the band
// centres, the ratio is biased low, the smearing having washed out part of the companion's
// fringes (Thompson, Moran & Swenson 2017, sect. 6.3).
func TestFitSmearedBinary(t *testing.T) {
	plan, _ := simulate.Demo()
	plan.Wavelengths = []float64{1.5e-6, 1.65e-6, 1.8e-6}
	plan.Bandwidths = []float64{0.15e-6, 0.15e-6, 0.15e-6}
	plan.Smearing = simulate.SmearOn
	plan.Noise.Add = false
	f, _, err := simulate.Run(plan, simulate.ModelSky{Model: mustLoad(t, "point;point:x=4,y=3,flux=0.5")})
	if err != nil {
		t.Fatal(err)
	}
	d, err := dataset.FromFiles([]*oifits.File{f}, dataset.Selection{})
	if err != nil {
		t.Fatal(err)
	}
	fitRatio := func(sm recon.Smearing) (ratio, x, y float64) {
		res, err := Fit(d, mustLoad(t, "point;point:x~4.1,y~2.9,flux~0.45(0..1)"), Options{Smearing: sm})
		if err != nil {
			t.Fatal(err)
		}
		v := map[string]float64{}
		for _, p := range res.Params {
			v[p.Ref.Name] = p.Value
		}
		return v["flux"], v["x"], v["y"]
	}
	r1, x1, y1 := fitRatio(recon.SmearOn)
	r0, _, _ := fitRatio(recon.SmearOff)
	var zero Options // its Smearing is the default of 'vcz fit', auto, which smears here
	if ra, _, _ := fitRatio(zero.Smearing); math.Abs(ra-0.5) > 5e-5 {
		t.Errorf("fit with the zero Options: ratio %.6f, want 0.5", ra)
	}
	t.Logf("flux ratio 0.5: smeared model %.6f at (%.5f, %.5f) mas, unsmeared %.6f", r1, x1, y1, r0)
	if math.Abs(r1-0.5) > 5e-5 || math.Abs(x1-4) > 4e-4 || math.Abs(y1-3) > 3e-4 {
		t.Errorf("smeared fit: ratio %.6f at (%.5f, %.5f), want 0.5 at (4, 3)", r1, x1, y1)
	}
	if !(r0 < 0.5-10*math.Abs(r1-0.5)) {
		t.Errorf("unsmeared fit: ratio %.6f not biased low: the test does not exercise smearing", r0)
	}
}
