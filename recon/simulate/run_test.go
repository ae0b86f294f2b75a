package simulate

import (
	"math"
	"math/cmplx"
	"reflect"
	"strings"
	"testing"

	"vcz/io/oifits"
	"vcz/nufft"
	"vcz/recon/model"
)

func mustModel(t testing.TB, spec string) *model.Model {
	t.Helper()
	m, err := model.ParseCompact(spec)
	if err != nil {
		t.Fatal(err)
	}
	return m
}

func noiseless(p *Plan) *Plan {
	q := *p
	q.Noise.Add = false
	return &q
}

// TestPointSource: a point source is fully coherent, V² = 1 and closure
// phase 0 on every baseline and triangle (fact of the trade, no source),
// and |V| = 1 with the phase of its offset.
func TestPointSource(t *testing.T) {
	p, _ := Demo()
	p = noiseless(p)
	p.WriteVis = true
	f, rep, err := Run(p, ModelSky{mustModel(t, "point")})
	if err != nil {
		t.Fatal(err)
	}
	if rep.Vis2 != 8*15*8 || rep.T3 != 8*20*8 || rep.Vis != 8*15*8 {
		t.Errorf("report counts %+v", rep)
	}
	for _, r := range f.Vis2[0].Rows {
		for c, d := range r.Data {
			if math.Abs(d-1) > 1e-15 || !(r.Err[c] > 0) {
				t.Fatalf("V² = %g ± %g", d, r.Err[c])
			}
		}
	}
	for _, r := range f.T3[0].Rows {
		for c := range r.Phi {
			if math.Abs(r.Phi[c]) > 1e-12 || math.Abs(r.Amp[c]-1) > 1e-15 {
				t.Fatalf("T3 %g° amp %g", r.Phi[c], r.Amp[c])
			}
		}
	}
	for _, r := range f.Vis[0].Rows {
		for c := range r.Phi {
			if math.Abs(r.Phi[c]) > 1e-12 || math.Abs(r.Amp[c]-1) > 1e-15 {
				t.Fatalf("VIS %g° amp %g", r.Phi[c], r.Amp[c])
			}
		}
	}
}

// TestTableGeometry: UCOORD/VCOORD of the triangles match the baselines of
// OI_VIS2 (U1 = baseline 1→2, U2 = 2→3, U1 + U2 = 1→3), every projected
// baseline is no longer than the station separation, and STA_INDEX points
// into OI_ARRAY.
func TestTableGeometry(t *testing.T) {
	p, m := Demo()
	f, _, err := Run(noiseless(p), ModelSky{m})
	if err != nil {
		t.Fatal(err)
	}
	type key struct {
		mjd  float64
		a, b int
	}
	base := map[key][2]float64{}
	sta := f.Arrays[0].Stations
	for _, r := range f.Vis2[0].Rows {
		base[key{r.MJD, r.StaIndex[0], r.StaIndex[1]}] = [2]float64{r.UCoord, r.VCoord}
		a, b := sta[r.StaIndex[0]-1], sta[r.StaIndex[1]-1]
		d := [3]float64{b.XYZ[0] - a.XYZ[0], b.XYZ[1] - a.XYZ[1], b.XYZ[2] - a.XYZ[2]}
		if math.Hypot(r.UCoord, r.VCoord) > math.Sqrt(dot(d, d))+1e-9 {
			t.Fatalf("projected baseline %g m longer than the station separation %g m", math.Hypot(r.UCoord, r.VCoord), math.Sqrt(dot(d, d)))
		}
	}
	for _, r := range f.T3[0].Rows {
		s := r.StaIndex
		b1, ok1 := base[key{r.MJD, s[0], s[1]}]
		b2, ok2 := base[key{r.MJD, s[1], s[2]}]
		b3, ok3 := base[key{r.MJD, s[0], s[2]}]
		if !ok1 || !ok2 || !ok3 {
			t.Fatalf("triangle %v has no matching baselines", s)
		}
		if b1 != [2]float64{r.U1Coord, r.V1Coord} || b2 != [2]float64{r.U2Coord, r.V2Coord} ||
			math.Abs(b1[0]+b2[0]-b3[0]) > 1e-9 || math.Abs(b1[1]+b2[1]-b3[1]) > 1e-9 {
			t.Fatalf("triangle %v coordinates inconsistent", s)
		}
	}
}

// TestClosurePhaseSymmetry: a centro-symmetric model gives closure phases
// of 0° or 180° only (common practice, no source); the asymmetric demo
// star gives others, and its closure phases equal the phase sums
// φ(1→2) + φ(2→3) − φ(1→3) of the written complex visibilities.
func TestClosurePhaseSymmetry(t *testing.T) {
	p, star := Demo()
	p = noiseless(p)
	p.WriteVis = true
	f, _, err := Run(p, ModelSky{mustModel(t, "ld:diameter=4,u_ld=0.4;gauss:fwhm=9,ratio=0.4,pa=35,flux=0.2")})
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range f.T3[0].Rows {
		for _, ph := range r.Phi {
			if d := math.Min(math.Abs(ph), 180-math.Abs(ph)); d > 1e-7 {
				t.Fatalf("symmetric model closure phase %g°", ph)
			}
		}
	}
	f, _, err = Run(p, ModelSky{star})
	if err != nil {
		t.Fatal(err)
	}
	phase := map[[3]float64]float64{}
	for _, r := range f.Vis[0].Rows {
		for c, ph := range r.Phi {
			phase[[3]float64{r.MJD, float64(r.StaIndex[0]*100 + r.StaIndex[1]), float64(c)}] = ph
		}
	}
	var big float64
	for _, r := range f.T3[0].Rows {
		s := r.StaIndex
		for c, ph := range r.Phi {
			get := func(a, b int) float64 { return phase[[3]float64{r.MJD, float64(a*100 + b), float64(c)}] }
			sum := wrapDeg(get(s[0], s[1]) + get(s[1], s[2]) - get(s[0], s[2]))
			if d := math.Abs(wrapDeg(sum - ph)); d > 1e-8 {
				t.Fatalf("closure phase %g° but phase sum %g°", ph, sum)
			}
			big = math.Max(big, math.Min(math.Abs(ph), 180-math.Abs(ph)))
		}
	}
	if big < 5 {
		t.Errorf("demo star closure phases all within %g° of 0/180", big)
	}
}

// TestElevationLimit: at latitude 0 a target at δ = 0 has elevation
// 90° − 15°·|h| (h in hours; Smart 1977, ch. II, from memory), so with a
// 31° limit the hour angles |h| ≥ 4 are skipped and counted.
func TestElevationLimit(t *testing.T) {
	p, _ := Demo()
	p.Latitude, p.Dec, p.ElevationLimit = 0, 0, 31
	p.HourAngles = nil
	for h := -6.0; h <= 6; h++ {
		p.HourAngles = append(p.HourAngles, h)
	}
	f, rep, err := Run(noiseless(p), ModelSky{mustModel(t, "point")})
	if err != nil {
		t.Fatal(err)
	}
	if rep.Skipped != 6 || rep.HourAngles != 7 || len(f.Vis2[0].Rows) != 7*15 {
		t.Errorf("skipped %d (%v), kept %d, rows %d", rep.Skipped, rep.SkippedHourAngles, rep.HourAngles, len(f.Vis2[0].Rows))
	}
	p.ElevationLimit = 89
	p.HourAngles = []float64{-3, 3}
	if _, _, err := Run(p, ModelSky{mustModel(t, "point")}); err == nil {
		t.Error("a target never above the limit gave no error")
	}
}

// exactSky transforms an image by the exact direct sum.
type exactSky struct{ ImageSky }

func (s exactSky) Visibilities(dst []complex128, u, v []float64) error {
	e, err := nufft.NewExact(s.NX, s.NY, s.Pixel, u, v, nufft.Options{})
	if err != nil {
		return err
	}
	e.Forward(dst, s.Data)
	var tot float64
	for _, p := range s.Data {
		tot += p
	}
	for k := range dst {
		dst[k] /= complex(tot, 0)
	}
	return nil
}

// TestImageModel: noiseless data of an image model equal those computed
// with the exact direct sum (nufft.NewExact) to 1e-8.
func TestImageModel(t *testing.T) {
	p, m := Demo()
	p = noiseless(p)
	p.WriteVis = true
	const n = 96
	pix := 0.06 * model.MasToRad
	sky := ImageSky{NX: n, NY: n, Pixel: pix, Data: m.Image(n, n, pix)}
	fa, _, err := Run(p, sky)
	if err != nil {
		t.Fatal(err)
	}
	fb, _, err := Run(p, exactSky{sky})
	if err != nil {
		t.Fatal(err)
	}
	var worst float64
	for i, r := range fa.Vis[0].Rows {
		rb := fb.Vis[0].Rows[i]
		for c := range r.Amp {
			za := cmplx.Rect(r.Amp[c], r.Phi[c]*math.Pi/180)
			zb := cmplx.Rect(rb.Amp[c], rb.Phi[c]*math.Pi/180)
			worst = math.Max(worst, cmplx.Abs(za-zb))
		}
	}
	for i, r := range fa.Vis2[0].Rows {
		for c := range r.Data {
			worst = math.Max(worst, math.Abs(r.Data[c]-fb.Vis2[0].Rows[i].Data[c]))
		}
	}
	if worst > 1e-8 {
		t.Errorf("image model differs from the exact sum by %g", worst)
	}
	// The image is also a fair copy of the analytic model at these
	// frequencies (rasterisation error only; common practice, no source).
	fc, _, err := Run(p, ModelSky{m})
	if err != nil {
		t.Fatal(err)
	}
	var dv2 float64
	for i, r := range fa.Vis2[0].Rows {
		for c := range r.Data {
			dv2 = math.Max(dv2, math.Abs(r.Data[c]-fc.Vis2[0].Rows[i].Data[c]))
		}
	}
	if dv2 > 2e-3 {
		t.Errorf("rasterised model V² differs from the analytic by %g", dv2)
	}
	if err := (ImageSky{NX: 2, NY: 2, Pixel: pix, Data: []float64{0, 0, 0, 0}}).Visibilities(make([]complex128, 1), []float64{0}, []float64{0}); err == nil {
		t.Error("image of zero flux accepted")
	}
}

// TestNoiseStatistics: χ² of the noisy against the noiseless data, with
// the written errors, lies within N ± 4√(2N) for each data type (χ²
// with N degrees of freedom has mean N and variance 2N; Press et al.,
// Numerical Recipes, 3rd ed., sect. 6.2, from memory).
func TestNoiseStatistics(t *testing.T) {
	p, m := Demo()
	p.WriteVis = true
	f0, _, err := Run(noiseless(p), ModelSky{m})
	if err != nil {
		t.Fatal(err)
	}
	f1, _, err := Run(p, ModelSky{m})
	if err != nil {
		t.Fatal(err)
	}
	check := func(name string, chi2 float64, n int) {
		lim := 4 * math.Sqrt(2*float64(n))
		if math.Abs(chi2-float64(n)) > lim || n == 0 {
			t.Errorf("%s: χ² = %.1f for N = %d (allowed ±%.1f)", name, chi2, n, lim)
		}
	}
	var c2, c3a, c3p, cva, cvp float64
	var n2, n3, nv int
	for i, r := range f1.Vis2[0].Rows {
		for c := range r.Data {
			c2 += sq((r.Data[c] - f0.Vis2[0].Rows[i].Data[c]) / r.Err[c])
			n2++
		}
	}
	for i, r := range f1.T3[0].Rows {
		r0 := f0.T3[0].Rows[i]
		for c := range r.Phi {
			c3a += sq((r.Amp[c] - r0.Amp[c]) / r.AmpErr[c])
			c3p += sq(wrapDeg(r.Phi[c]-r0.Phi[c]) / r.PhiErr[c])
			n3++
		}
	}
	for i, r := range f1.Vis[0].Rows {
		r0 := f0.Vis[0].Rows[i]
		for c := range r.Phi {
			cva += sq((r.Amp[c] - r0.Amp[c]) / r.AmpErr[c])
			cvp += sq(wrapDeg(r.Phi[c]-r0.Phi[c]) / r.PhiErr[c])
			nv++
		}
	}
	check("V²", c2, n2)
	check("T3 amplitude", c3a, n3)
	check("closure phase", c3p, n3)
	check("VISAMP", cva, nv)
	check("VISPHI", cvp, nv)
}

func sq(x float64) float64 { return x * x }

// TestReproducible: the same plan, model and seed give identical files;
// another seed gives different noise; and the V² noise does not depend on
// whether the other tables are written.
func TestReproducible(t *testing.T) {
	p, m := Demo()
	a, _, err := Run(p, ModelSky{m})
	if err != nil {
		t.Fatal(err)
	}
	b, _, _ := Run(p, ModelSky{m})
	if !reflect.DeepEqual(a, b) {
		t.Error("two runs with the same seed differ")
	}
	q := *p
	q.Seed++
	c, _, _ := Run(&q, ModelSky{m})
	if reflect.DeepEqual(a.Vis2, c.Vis2) {
		t.Error("another seed gave the same V²")
	}
	q = *p
	q.WriteT3, q.WriteVis = false, true
	d, _, _ := Run(&q, ModelSky{m})
	if !reflect.DeepEqual(a.Vis2, d.Vis2) {
		t.Error("V² noise changed with the set of tables written")
	}
}

// TestFileContents checks the reference tables: one target with the
// plan's coordinates, all stations with 1-based indices, the channels in
// metres, and revision 2.
func TestFileContents(t *testing.T) {
	p, m := Demo()
	f, _, err := Run(p, ModelSky{m})
	if err != nil {
		t.Fatal(err)
	}
	if f.Revision != 2 || len(f.Targets) != 1 || f.Targets[0].Name != "Vaeloris" || f.Targets[0].RAEp0 != 201.3 {
		t.Errorf("target %+v", f.Targets)
	}
	if len(f.Arrays) != 1 || len(f.Arrays[0].Stations) != 6 || f.Arrays[0].Stations[5].Index != 6 || f.Arrays[0].Stations[5].StaName != "NE5" {
		t.Errorf("array %+v", f.Arrays)
	}
	w := f.Wavelengths[0]
	if len(w.EffWave) != 8 || math.Abs(w.EffWave[0]-1.5e-6) > 1e-18 || math.Abs(w.EffWave[7]-1.72e-6) > 1e-18 || math.Abs(w.EffBand[0]-0.22e-6/7) > 1e-18 {
		t.Errorf("wavelengths %v %v", w.EffWave, w.EffBand)
	}
	var _ *oifits.File = f
	if f.Vis2[0].InsName != w.InsName || f.Vis2[0].ArrName != f.Arrays[0].Name || f.Primary.DateObs != "2026-06-12" {
		t.Errorf("links %q %q %q", f.Vis2[0].InsName, f.Vis2[0].ArrName, f.Primary.DateObs)
	}
}

func BenchmarkDemo(b *testing.B) {
	p, m := Demo()
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		if _, _, err := Run(p, ModelSky{m}); err != nil {
			b.Fatal(err)
		}
	}
}

// TestImageGrid: the proposed grid resolves the longest baseline at the
// shortest wavelength (pixel λ_min/(8 B_max)), covers the model, and the
// image model check rejects a pixel beyond the Nyquist limit.
func TestImageGrid(t *testing.T) {
	p, m := Demo()
	n, pix := DefaultImageGrid(p, m)
	var bmax float64
	for i, a := range p.Stations {
		for _, b := range p.Stations[i+1:] {
			d := [3]float64{b.East - a.East, b.North - a.North, b.Up - a.Up}
			bmax = math.Max(bmax, math.Sqrt(dot(d, d)))
		}
	}
	if want := 1.5e-6 / (8 * bmax); math.Abs(pix-want) > 1e-6*want {
		t.Errorf("pixel %g rad, want %g", pix, want)
	}
	if float64(n)*pix < 2*m.Radius()*model.MasToRad || n%2 != 0 {
		t.Errorf("grid %d × %g rad does not cover radius %g mas", n, pix, m.Radius())
	}
	sky := ImageSky{NX: 16, NY: 16, Pixel: 1 * model.MasToRad, Data: m.Image(16, 16, model.MasToRad)}
	if _, _, err := Run(p, sky); err == nil || !strings.Contains(err.Error(), "too coarse") {
		t.Errorf("coarse image accepted: %v", err)
	}
}

// TestPhaseError checks the phase errors of the simulated data: at high signal-to-noise the
// phase error of a complex quantity of amplitude A with additive noise σ is σ/A radians
// (Thompson, Moran & Swenson, Interferometry and Synthesis in Radio Astronomy, sect. 6.2,
// from memory), added in quadrature to the floor and capped at 180°.
func TestPhaseError(t *testing.T) {
	for _, c := range []struct{ floor, ampFloor, amp, want float64 }{
		{1.5, 0.0005, 1, math.Hypot(1.5, 0.0005*180/math.Pi)},
		{1.5, 0.0005, 0.01, math.Hypot(1.5, 0.05*180/math.Pi)}, // 3.24°
		{1, 0.002, 0.002, math.Hypot(1, 180/math.Pi)},          // 1 rad from the noise
		{1, 0.002, 1e-6, 180},                                  // capped
		{1, 0.002, 0, 180},
	} {
		want := c.want
		if got := phaseError(c.floor, c.ampFloor, c.amp); math.Abs(got-want) > 1e-12 {
			t.Errorf("phaseError(%g, %g, %g) = %g, want %g", c.floor, c.ampFloor, c.amp, got, want)
		}
	}
}
