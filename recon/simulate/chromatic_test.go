package simulate

import (
	"math"
	"math/cmplx"
	"strings"
	"testing"

	"vcz/recon/model"
)

// lineDiscModel is a star and a Keplerian disc seen in a line at 2.1661 µm (the example of
// ChromaticHelp, with the disc 0.5–3 mas).
const lineDiscModel = `reference = 2.166
[[component]]
model = "point"
spectral_index = -2
[[disc]]
inner = 0.5
outer = 3
inc = 60
pa = 30
line = 2.1661
velocity = 200
width = 15
flux = 0.6
`

// linePlan is the demo plan shrunk 30 times (baselines of 1.3 to 11 m), so that the disc is
// marginally resolved, observed in 41 channels of 0.15 nm across the line.
func linePlan(t *testing.T) *Plan {
	p, _ := Demo()
	for i := range p.Stations {
		p.Stations[i].East /= 30
		p.Stations[i].North /= 30
		p.Stations[i].Up /= 30
	}
	p.Wavelengths, p.Bandwidths = nil, nil
	for c := range 41 {
		p.Wavelengths = append(p.Wavelengths, (2.1631+0.00015*float64(c))*1e-6)
		p.Bandwidths = append(p.Bandwidths, 0.00015e-6)
	}
	p.WriteVis2, p.WriteT3, p.WriteVis, p.WriteDiff = false, false, false, true
	p.Noise.Add = false
	return p
}

// TestDifferentialPhotocentre checks the differential phases of a rotating line-emitting disc
// around a star against the first-order relation φ ≈ −2π(u·x_c + v·y_c) between the phase of
// a marginally resolved source and its photocentre (x_c, y_c) (Lachaume 2003, A&A 400, 795),
// with the photocentre of the model at each wavelength (ChromaticSky.Photocentre) and the
// same reference removed as the data carry (mean and slope in 1/λ over the row): they agree
// within the third-order term, (2π|u|R)³/6 with R the disc's outer radius, and the phases
// exceed that bound across the line (measured: phases up to 0.030 rad, differences at most
// 0.0004 rad, bound 0.017 rad).
func TestDifferentialPhotocentre(t *testing.T) {
	sky, err := ParseChromatic([]byte(lineDiscModel), "disc.toml")
	if err != nil {
		t.Fatal(err)
	}
	p := linePlan(t)
	f, rep, err := Run(p, sky)
	if err != nil {
		t.Fatal(err)
	}
	if len(f.Vis) != 1 || f.Vis[0].PhiTyp != "differential" || f.Vis[0].AmpTyp != "differential" || rep.Diff != len(f.Vis[0].Rows)*41 {
		t.Fatalf("tables %d, report %+v", len(f.Vis), rep)
	}
	nc := len(p.Wavelengths)
	xc, yc := make([]float64, nc), make([]float64, nc)
	for c, l := range p.Wavelengths {
		xc[c], yc[c] = sky.Photocentre(l)
	}
	R := 3 * model.MasToRad
	worst, largest, bound := 0.0, 0.0, 0.0
	for _, r := range f.Vis[0].Rows {
		pred := oiRowPhases(r.UCoord, r.VCoord, p.Wavelengths, xc, yc)
		for c, l := range p.Wavelengths {
			q := 2 * math.Pi * math.Hypot(r.UCoord, r.VCoord) / l * R
			bound = math.Max(bound, q*q*q/6)
			e := math.Abs(wrapDeg(r.Phi[c]-pred[c])) * math.Pi / 180
			if e > q*q*q/6 {
				t.Errorf("baseline (%.1f, %.1f) m, %.5f µm: differential phase %.4g°, photocentre %.4g°", r.UCoord, r.VCoord, l*1e6, r.Phi[c], pred[c])
			}
			worst = math.Max(worst, e)
			largest = math.Max(largest, math.Abs(r.Phi[c])*math.Pi/180)
		}
	}
	if largest < 1.5*bound {
		t.Errorf("largest differential phase %.3g rad, not above the bound %.3g: the test does not exercise the relation", largest, bound)
	}
	t.Logf("largest differential phase %.3g rad, largest difference to the photocentre relation %.3g rad (bound %.3g)", largest, worst, bound)
}

// oiRowPhases returns the first-order phases −2π(u·x_c + v·y_c) (degrees) of a baseline
// (bu, bv) (m) at the wavelengths lambda, with the least-squares line in 1/λ removed as the
// data carry it.
func oiRowPhases(bu, bv float64, lambda, xc, yc []float64) []float64 {
	n := float64(len(lambda))
	ph := make([]float64, len(lambda))
	sx, sy, sxx, sxy := 0.0, 0.0, 0.0, 0.0
	for c, l := range lambda {
		ph[c] = -2 * math.Pi * (bu/l*xc[c] + bv/l*yc[c]) * 180 / math.Pi
		x := 1 / l
		sx, sy, sxx, sxy = sx+x, sy+ph[c], sxx+x*x, sxy+x*ph[c]
	}
	b := (n*sxy - sx*sy) / (n*sxx - sx*sx)
	a := (sy - b*sx) / n
	for c, l := range lambda {
		ph[c] -= a + b/l
	}
	return ph
}

// TestChromaticPowerLaw checks two point sources with different spectral indices against the
// two-point visibility (1 + ρ·exp(−2πi(u·x + v·y)))/(1 + ρ) with the flux ratio
// ρ(λ) = ρ₀·(λ/λ_ref)^(α₂ − α₁) (CONVENTIONS.md).
func TestChromaticPowerLaw(t *testing.T) {
	sky, err := ParseChromatic([]byte(`reference = 2.0
[[component]]
model = "point:flux=2"
spectral_index = -3
[[component]]
model = "point:x=2,y=-1,flux=0.5"
spectral_index = 1
`), "pl.toml")
	if err != nil {
		t.Fatal(err)
	}
	u := []float64{1e7, -3e7, 5e7}
	v := []float64{2e7, 4e7, -1e7}
	l := []float64{1.6e-6, 2e-6, 2.4e-6}
	got := make([]complex128, 3)
	if err := sky.VisibilitiesAt(got, u, v, l); err != nil {
		t.Fatal(err)
	}
	x, y := 2*model.MasToRad, -1*model.MasToRad
	for i := range u {
		rho := 0.25 * math.Pow(l[i]/2e-6, 4)
		want := (1 + complex(rho, 0)*cmplx.Exp(complex(0, -2*math.Pi*(u[i]*x+v[i]*y)))) / complex(1+rho, 0)
		if cmplx.Abs(got[i]-want) > 1e-12 {
			t.Errorf("λ %g: %v, want %v", l[i], got[i], want)
		}
	}
}

// TestLineDiscAnnulus checks the cells of a disc: face-on, at rest and seen at the line's
// centre it is a uniform annulus, whose visibility is that of the outer uniform disc minus
// the inner one weighted by their areas (Born & Wolf, sect. 8.5.2, for the disc), within the
// midpoint rule's error in radius, (Δr/R)² = 1/rings² relative.
func TestLineDiscAnnulus(t *testing.T) {
	const rin, rout = 1.0, 2.5 // mas
	sky := &ChromaticSky{Reference: 2e-6, Discs: []LineDisc{{Inner: rin * model.MasToRad, Outer: rout * model.MasToRad,
		Line: 2e-6, Width: 1e4, Flux: 1, Rings: 100, Sectors: 200}}}
	udIn, _ := model.ParseCompact("ud:diameter=2")
	udOut, _ := model.ParseCompact("ud:diameter=5")
	for _, q := range []float64{1e6, 2e7, 5e7, 1e8} {
		u, v := []float64{q * 0.6}, []float64{q * 0.8}
		got := make([]complex128, 1)
		if err := sky.VisibilitiesAt(got, u, v, []float64{2e-6}); err != nil {
			t.Fatal(err)
		}
		want := (rout*rout*udOut.Vis(u[0], v[0]) - rin*rin*udIn.Vis(u[0], v[0])) / complex(rout*rout-rin*rin, 0)
		if e := cmplx.Abs(got[0] - want); e > 2.0/(100*100) {
			t.Errorf("q = %g: %v, want %v (difference %.2g)", q, got[0], want, e)
		}
	}
}

// Broken chromatic models are refused with one line naming the file and the problem.
func TestParseChromaticErrors(t *testing.T) {
	for _, c := range []struct{ src, want string }{
		{`[[component]]
model = "point"`, "m.toml: reference wavelength missing"},
		{`reference = 2
colour = 3`, `m.toml: unknown key "colour"`},
		{`reference = 2
[[component]]
model = "blob"`, "m.toml: component 1:"},
		{`reference = 2
[[disc]]
inner = 3
outer = 1
line = 2
width = 10
flux = 1`, "m.toml: chromatic model: disc 1: need 0 < inner < outer"},
		{`reference = 2`, "m.toml: no component and no disc"},
	} {
		_, err := ParseChromatic([]byte(c.src), "m.toml")
		if err == nil || !strings.HasPrefix(err.Error(), c.want) || strings.Contains(err.Error(), "\n") {
			t.Errorf("%q: error %v, want %q", c.src, err, c.want)
		}
	}
}
