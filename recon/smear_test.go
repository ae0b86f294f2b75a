package recon

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/integrate"
	"gonum.org/v1/gonum/integrate/quad"

	"vcz/dataset"
	"vcz/nufft"
)

// wideBandData returns randomData's data of random baselines up to fmax (cycles/rad) in
// channels of relative width r, with errors sigma.
func wideBandData(rng *rand.Rand, fmax, r, sigma float64) *dataset.Data {
	d := randomData(rng, fmax)
	for _, t := range [][2][]float64{{d.Vis2.DLambda, d.Vis2.Lambda}, {d.T3.DLambda, d.T3.Lambda}, {d.Vis.DLambda, d.Vis.Lambda}} {
		for i := range t[0] {
			t[0][i] = r * t[1][i]
		}
	}
	for i := range d.Vis2.Err {
		d.Vis2.Err[i] = sigma
	}
	for i := range d.T3.PhiErr {
		d.T3.AmpErr[i], d.T3.PhiErr[i] = sigma, sigma
	}
	for i := range d.Vis.PhiErr {
		d.Vis.AmpErr[i], d.Vis.PhiErr[i] = sigma, sigma
	}
	return d
}

// binaryImage returns an n×n image with a primary of flux 1 at the centre pixel and a
// companion of flux f at pixel offset (dx, dy) along the index axes, and its visibility
// function written from the pixel positions of CONVENTIONS.md.
func binaryImage(n, dx, dy int, pixel, f float64) ([]float64, func(u, v float64) complex128) {
	img := make([]float64, n*n)
	img[n/2*n+n/2] = 1
	img[(n/2+dy)*n+n/2+dx] = f
	x, y := -float64(dx)*pixel, float64(dy)*pixel
	return img, func(u, v float64) complex128 {
		return (1 + complex(f, 0)*cmplx.Exp(complex(0, -2*math.Pi*(u*x+v*y)))) / complex(1+f, 0)
	}
}

// TestSmearBinaryQuadrature checks the smeared model of a binary in wide channels
// (Δλ/λ = 0.1, the companion 8 pixels out, so that its fringe turns by up to about 2 rad
// across a channel) against the band average (1/Δλ) ∫ V(B/λ') dλ' of its exact visibility,
// integrated by Romberg's method (gonum/integrate) on 4097 wavelengths: they agree to 1e-6
// (the requirement). The unsmeared model misses by far more.
func TestSmearBinaryQuadrature(t *testing.T) {
	const n, pixel, r, lambda = 32, 1e-9, 0.1, 2e-6
	rng := rand.New(rand.NewPCG(5, 1))
	d := wideBandData(rng, 0.5/pixel/2, r, 1e-3)
	for _, l := range [][]float64{d.Vis2.Lambda, d.T3.Lambda, d.Vis.Lambda} {
		for i := range l {
			l[i] = lambda
		}
	}
	for _, dl := range [][]float64{d.Vis2.DLambda, d.T3.DLambda, d.Vis.DLambda} {
		for i := range dl {
			dl[i] = r * lambda
		}
	}
	img, vis := binaryImage(n, 8, -5, pixel, 0.4)
	g := Grid{N: n, Pixel: pixel}
	on, err := NewForwardModelWith(d, g, true, exactTransform, ModelOptions{Smearing: SmearOn, SmearTol: 1e-9})
	if err != nil {
		t.Fatal(err)
	}
	off, err := NewForwardModelWith(d, g, true, exactTransform, ModelOptions{Smearing: SmearOff})
	if err != nil {
		t.Fatal(err)
	}
	if !on.Smearing().Modelled || off.Smearing().Modelled {
		t.Fatalf("smearing on: %+v, off: %+v", on.Smearing(), off.Smearing())
	}
	on.Forward(img)
	off.Forward(img)
	const samples = 1<<12 + 1
	re, im := make([]float64, samples), make([]float64, samples)
	worst, worstOff := 0.0, 0.0
	for i, rf := range on.sampling.vis2 {
		b := lambda * math.Hypot(d.Vis2.U[i], d.Vis2.V[i])
		if b == 0 {
			continue
		}
		dl := r * lambda / float64(samples-1)
		for k := range samples {
			l := lambda*(1-r/2) + float64(k)*dl
			w := vis(d.Vis2.U[i]*lambda/l, d.Vis2.V[i]*lambda/l)
			re[k], im[k] = real(w), imag(w)
		}
		want := complex(integrate.Romberg(re, dl), integrate.Romberg(im, dl)) / complex(r*lambda, 0)
		worst = math.Max(worst, cmplx.Abs(on.at(rf)-want))
		worstOff = math.Max(worstOff, cmplx.Abs(off.at(rf)-want))
	}
	if worst > 1e-6 {
		t.Errorf("smeared model differs from the band integral by %.3g", worst)
	}
	if worstOff < 1e-2 {
		t.Errorf("unsmeared model differs from the band integral by only %.3g: the test does not exercise smearing", worstOff)
	}
	t.Logf("largest difference to the band integral: smeared %.2g, unsmeared %.2g; %+v", worst, worstOff, on.Smearing())
}

// TestSmearPointSinc checks the smeared visibility of a point source in a narrow band
// (Δλ/λ = 0.005) against the analytic loss exp(−2πi u·s)·sinc(π·(Δλ/λ)·u·s) of Thompson,
// Moran & Swenson 2017, sect. 6.3, which is exact to first order in Δλ/λ: the difference is
// within the second-order term, |β|·(Δλ/λ)²/4 with β = 2π u·s.
func TestSmearPointSinc(t *testing.T) {
	const n, pixel, r = 32, 1e-9, 0.005
	rng := rand.New(rand.NewPCG(6, 1))
	d := wideBandData(rng, 0.5/pixel/2, r, 1e-4)
	img := make([]float64, n*n)
	dx, dy := -9, 6
	img[(n/2+dy)*n+n/2+dx] = 1
	x, y := -float64(dx)*pixel, float64(dy)*pixel
	m, err := NewForwardModelWith(d, Grid{N: n, Pixel: pixel}, true, exactTransform, ModelOptions{Smearing: SmearOn, SmearTol: 1e-10})
	if err != nil {
		t.Fatal(err)
	}
	if !m.Smearing().Modelled {
		t.Fatalf("smearing not modelled: %+v", m.Smearing())
	}
	m.Forward(img)
	for k := range m.U {
		beta := 2 * math.Pi * (m.U[k]*x + m.V[k]*y)
		a := r * beta / 2
		sinc := 1.0
		if a != 0 {
			sinc = math.Sin(a) / a
		}
		want := cmplx.Exp(complex(0, -beta)) * complex(sinc, 0)
		if e := cmplx.Abs(m.vis[k] - want); e > math.Abs(beta)*r*r/4+1e-12 {
			t.Errorf("point %d: smeared %v, sinc model %v, difference %.3g above %.3g", k, m.vis[k], want, e, math.Abs(beta)*r*r/4)
		}
	}
}

// TestSmearGradient checks the gradient of the objective with smearing modelled against
// central finite differences (common practice, no source, for the step and tolerance), for
// every data type at once and each on its own.
func TestSmearGradient(t *testing.T) {
	const n, pixel = 8, 1e-9
	rng := rand.New(rand.NewPCG(7, 7))
	d := wideBandData(rng, 0.5/pixel/2, 0.3, 0.05)
	for _, norm := range []bool{true, false} {
		m, err := NewForwardModelWith(d, Grid{N: n, Pixel: pixel}, norm, exactTransform, ModelOptions{Smearing: SmearOn, SmearTol: 1e-8})
		if err != nil {
			t.Fatal(err)
		}
		if !m.Smearing().Modelled {
			t.Fatalf("smearing not modelled: %+v", m.Smearing())
		}
		for _, use := range []dataset.DataType{0, dataset.Vis2, dataset.T3Amp, dataset.T3Phi, dataset.VisAmp, dataset.VisPhi} {
			o := NewObjective(d, m, TermOptions{Use: use})
			x := make([]float64, n*n)
			for i := range x {
				x[i] = 0.2 + rng.Float64()
			}
			g := make([]float64, n*n)
			o.Eval(g, x)
			want := make([]float64, n*n)
			fd.Gradient(want, func(x []float64) float64 { return o.Eval(nil, x) }, x,
				&fd.Settings{Formula: fd.Central, Step: 1e-6})
			if e := relErr(g, want); e > 1e-6 {
				t.Errorf("normalised %v, %v: gradient relative error %.3g", norm, use, e)
			}
		}
	}
}

// TestSmearAuto checks the automatic choice: smearing is modelled when the loss of a point
// source at the edge of the field exceeds the relative errors, and not when the errors are
// larger or the bands narrow; SmearOff never models it, and a model of narrow bands needs no
// more than one node per point even when forced on.
func TestSmearAuto(t *testing.T) {
	const pixel = 1e-9
	g := Grid{N: 32, Pixel: pixel}
	for _, c := range []struct {
		name     string
		r, sigma float64
		mode     Smearing
		want     bool
	}{
		{"wide, precise", 0.1, 1e-3, SmearAuto, true},
		{"moderate, noisy", 0.01, 0.5, SmearAuto, false},
		{"narrow, precise", 1e-6, 1e-3, SmearAuto, false},
		{"narrow, forced", 1e-6, 1e-3, SmearOn, false},
		{"wide, off", 0.1, 1e-3, SmearOff, false},
		{"moderate, noisy, forced", 0.01, 0.5, SmearOn, true},
	} {
		d := wideBandData(rand.New(rand.NewPCG(8, 1)), 0.5/pixel/2, c.r, c.sigma)
		m, err := NewForwardModelWith(d, g, true, exactTransform, ModelOptions{Smearing: c.mode})
		if err != nil {
			t.Fatal(err)
		}
		if got := m.Smearing(); got.Modelled != c.want {
			t.Errorf("%s: modelled %v, want %v (%+v)", c.name, got.Modelled, c.want, got)
		}
	}
}

func TestParseSmearing(t *testing.T) {
	for _, s := range []Smearing{SmearAuto, SmearOn, SmearOff} {
		if got, err := ParseSmearing(" " + s.String() + " "); err != nil || got != s {
			t.Errorf("%v: %v, %v", s, got, err)
		}
	}
	if _, err := ParseSmearing("yes"); err == nil {
		t.Error("yes accepted")
	}
}

// TestGaussLegendre checks the quadrature nodes: n nodes integrate t^k over [−1/2, 1/2]
// exactly for k ≤ 2n − 1 (the defining property of Gauss–Legendre quadrature; the integral
// is ((1/2)^(k+1) − (−1/2)^(k+1))/(k+1)), and agree with gonum's quad.Legendre wherever that
// one's weights sum to 1 (not for n = 26 in gonum 0.17), its nodes taken in reverse order.
func TestGaussLegendre(t *testing.T) {
	for n := 1; n <= 64; n++ {
		x, w := gaussLegendre(n)
		for k := 0; k <= 2*n-1 && k <= 30; k++ {
			s := 0.0
			for j := range x {
				s += w[j] * math.Pow(x[j], float64(k))
			}
			want := (math.Pow(0.5, float64(k+1)) - math.Pow(-0.5, float64(k+1))) / float64(k+1)
			if math.Abs(s-want) > 1e-14 {
				t.Errorf("n = %d: ∫t^%d = %.17g, want %.17g", n, k, s, want)
			}
		}
		if n < 2 {
			continue
		}
		gx, gw := make([]float64, n), make([]float64, n)
		quad.Legendre{}.FixedLocations(gx, gw, -0.5, 0.5)
		if s := floats.Sum(gw); math.Abs(s-1) > 1e-13 {
			continue
		}
		for j := range x { // gonum's nodes are in decreasing order
			if g := n - 1 - j; math.Abs(x[j]-gx[g]) > 1e-14 || math.Abs(w[j]-gw[g]) > 1e-14 {
				t.Errorf("n = %d, node %d: %.17g, %.17g; gonum %.17g, %.17g", n, j, x[j], w[j], gx[g], gw[g])
			}
		}
	}
}

// The band averages cost no allocation per evaluation (the objective's own buffers aside):
// Forward and Gradient of a smeared model allocate nothing.
func TestSmearNoAlloc(t *testing.T) {
	const n, pixel = 16, 1e-9
	d := wideBandData(rand.New(rand.NewPCG(9, 1)), 0.5/pixel/2, 0.1, 1e-3)
	m, err := NewForwardModelWith(d, Grid{N: n, Pixel: pixel}, true, NewTransform(1), ModelOptions{Smearing: SmearOn})
	if err != nil {
		t.Fatal(err)
	}
	if !m.Smearing().Modelled {
		t.Fatalf("smearing not modelled: %+v", m.Smearing())
	}
	x := make([]float64, n*n)
	for i := range x {
		x[i] = 1
	}
	g := make([]float64, n*n)
	if a := testing.AllocsPerRun(10, func() { m.Forward(x); m.Gradient(g) }); a != 0 {
		t.Errorf("%.0f allocations per Forward and Gradient", a)
	}
}

// BenchmarkSmearEval measures one evaluation of the objective (value and gradient) of the
// band-averaged binary of wideBinary on its default grid, with smearing modelled and not, with
// the default transform (the faster of the direct sum and gridding for the points) and with
// gridding alone.
func BenchmarkSmearEval(b *testing.B) {
	d := wideBinary(b, true)
	g, err := ChooseGrid(d, GridOptions{})
	if err != nil {
		b.Fatal(err)
	}
	gridding := func(n int, pixel float64, u, v []float64) (Transform, error) {
		return nufft.NewPlan(n, n, pixel, u, v, nufft.Options{Workers: 1})
	}
	for _, tr := range []struct {
		name string
		mk   TransformFunc
	}{{"default", NewTransform(1)}, {"gridding", gridding}} {
		for _, sm := range []Smearing{SmearOn, SmearOff} {
			b.Run(tr.name+"/smearing="+sm.String(), func(b *testing.B) {
				benchSmearEval(b, d, g.Grid, tr.mk, sm)
			})
		}
	}
}

func benchSmearEval(b *testing.B, d *dataset.Data, g Grid, mk TransformFunc, sm Smearing) {
	{
		{
			m, err := NewForwardModelWith(d, g, true, mk, ModelOptions{Smearing: sm})
			if err != nil {
				b.Fatal(err)
			}
			o := NewObjective(d, m, TermOptions{})
			x := make([]float64, g.N*g.N)
			for i := range x {
				x[i] = 1
			}
			grad := make([]float64, len(x))
			b.ReportAllocs()
			b.ResetTimer()
			for range b.N {
				o.Eval(grad, x)
			}
			b.ReportMetric(float64(max(m.Smearing().SubPoints, len(m.U))), "points")
		}
	}
}

// TestResidualsSmearQuadrature checks the band averages of Residuals (the fits of analytic
// models) as TestSmearBinaryQuadrature checks the image model: the analytic visibility of a
// binary (companion 10 mas out, Δλ/λ = 0.1) evaluated at the sub-points of Points and
// averaged agrees with (1/Δλ) ∫ V(B/λ') dλ' by Romberg's method (gonum/integrate) on 4097
// wavelengths to 1e-6 at every point; off, Points are the data's points.
func TestResidualsSmearQuadrature(t *testing.T) {
	const r, lambda, sep = 0.1, 2e-6, 10 * Mas
	rng := rand.New(rand.NewPCG(7, 1))
	d := wideBandData(rng, 0.4/sep*10, r, 1e-3)
	for _, l := range [][]float64{d.Vis2.Lambda, d.T3.Lambda, d.Vis.Lambda} {
		for i := range l {
			l[i] = lambda
		}
	}
	for _, dl := range [][]float64{d.Vis2.DLambda, d.T3.DLambda, d.Vis.DLambda} {
		for i := range dl {
			dl[i] = r * lambda
		}
	}
	const f = 0.4
	x, y := 0.6*sep, -0.8*sep
	vis := func(u, v float64) complex128 {
		return (1 + complex(f, 0)*cmplx.Exp(complex(0, -2*math.Pi*(u*x+v*y)))) / complex(1+f, 0)
	}
	off := NewResiduals(d, ResidualOptions{Smearing: SmearOff})
	on := NewResiduals(d, ResidualOptions{Smearing: SmearOn, Extent: sep, SmearTol: 1e-9})
	if u, _ := off.Points(); len(u) != len(on.s.U) {
		t.Fatalf("off: %d points, want the data's %d", len(u), len(on.s.U))
	}
	u, v := on.Points()
	if !on.Smearing().Modelled || len(u) <= len(on.s.U) {
		t.Fatalf("smearing not modelled: %+v", on.Smearing())
	}
	sub := make([]complex128, len(u))
	for j := range u {
		sub[j] = vis(u[j], v[j])
	}
	on.Chi2(sub)
	const samples = 1<<12 + 1
	re, im := make([]float64, samples), make([]float64, samples)
	worst, worstOff := 0.0, 0.0
	for k := range on.s.U {
		dl := on.s.rb[k] * lambda / float64(samples-1)
		if dl == 0 {
			continue
		}
		for i := range samples {
			l := lambda*(1-on.s.rb[k]/2) + float64(i)*dl
			w := vis(on.s.U[k]*lambda/l, on.s.V[k]*lambda/l)
			re[i], im[i] = real(w), imag(w)
		}
		want := complex(integrate.Romberg(re, dl), integrate.Romberg(im, dl)) / complex(on.s.rb[k]*lambda, 0)
		worst = math.Max(worst, cmplx.Abs(on.avg[k]-want))
		worstOff = math.Max(worstOff, cmplx.Abs(vis(on.s.U[k], on.s.V[k])-want))
	}
	if worst > 1e-6 {
		t.Errorf("smeared model differs from the band integral by %.3g", worst)
	}
	if worstOff < 1e-2 {
		t.Errorf("unsmeared model differs from the band integral by only %.3g: the test does not exercise smearing", worstOff)
	}
	t.Logf("largest difference to the band integral: smeared %.2g, unsmeared %.2g; %+v", worst, worstOff, on.Smearing())
}
