package nufft

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"strings"
	"testing"
)

const mas = 4.84813681109536e-9 // one milliarcsecond in radians

// bandPoints returns m points filling the band |u|, |v| ≤ 1/(2·pixel):
// the four corners, points on each edge, and uniform random points.
func bandPoints(rng *rand.Rand, m int, pixel float64) (u, v []float64) {
	h := 0.5 / pixel
	u = []float64{-h, -h, h, h, 0, 0, h, -h, 0}
	v = []float64{-h, h, -h, h, h, -h, 0, 0, 0}
	for len(u) < m {
		a, b := (2*rng.Float64()-1)*h, (2*rng.Float64()-1)*h
		switch len(u) % 10 { // a tenth of the points on the edges
		case 0:
			a = h * float64(1-2*(len(u)/10%2))
		case 5:
			b = h * float64(1-2*(len(u)/10%2))
		}
		u = append(u, a)
		v = append(v, b)
	}
	return u[:m], v[:m]
}

func randImage(rng *rand.Rand, n int) []float64 {
	img := make([]float64, n)
	for i := range img {
		img[i] = rng.NormFloat64()
	}
	return img
}

func randVis(rng *rand.Rand, m int) []complex128 {
	vis := make([]complex128, m)
	for i := range vis {
		vis[i] = complex(rng.NormFloat64(), rng.NormFloat64())
	}
	return vis
}

// relErrC is the relative l2 error ‖got − want‖₂/‖want‖₂ (Barnett,
// Magland & af Klinteberg 2019, eq. 4.1).
func relErrC(got, want []complex128) float64 {
	var num, den float64
	for i := range got {
		d := got[i] - want[i]
		num += real(d)*real(d) + imag(d)*imag(d)
		den += real(want[i])*real(want[i]) + imag(want[i])*imag(want[i])
	}
	return math.Sqrt(num / den)
}

func relErrR(got, want []float64) float64 {
	var num, den float64
	for i := range got {
		num += sq(got[i] - want[i])
		den += sq(want[i])
	}
	return math.Sqrt(num / den)
}

// TestExactDirect checks Exact against the defining sum evaluated term by
// term with cmplx.Exp, on the pixel positions of CONVENTIONS.md.
func TestExactDirect(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 1))
	nx, ny, m := 21, 14, 40
	pix := 0.7 * mas
	u, v := bandPoints(rng, m, pix)
	// Points outside the band alias in the same way in both sums.
	u[m-1], v[m-1] = 1.7/pix, -2.3/pix
	img := randImage(rng, nx*ny)
	vis := randVis(rng, m)
	e, err := NewExact(nx, ny, pix, u, v, Options{})
	if err != nil {
		t.Fatal(err)
	}
	fw := make([]complex128, m)
	e.Forward(fw, img)
	ad := make([]float64, nx*ny)
	e.Adjoint(ad, vis)
	wantF := make([]complex128, m)
	wantA := make([]float64, nx*ny)
	for iy := range ny {
		for ix := range nx {
			x := -float64(ix-nx/2) * pix
			y := float64(iy-ny/2) * pix
			for k := range m {
				ph := cmplx.Exp(complex(0, -2*math.Pi*(u[k]*x+v[k]*y)))
				wantF[k] += complex(img[iy*nx+ix], 0) * ph
				wantA[iy*nx+ix] += real(vis[k] * cmplx.Conj(ph))
			}
		}
	}
	if d := relErrC(fw, wantF); d > 1e-13 {
		t.Errorf("Forward: relative error %g against term-by-term sum", d)
	}
	if d := relErrR(ad, wantA); d > 1e-13 {
		t.Errorf("Adjoint: relative error %g against term-by-term sum", d)
	}
}

// TestAccuracy checks the requested tolerance: relative l2 error of Plan
// against Exact (Barnett et al. 2019, eq. 4.1) ≤ tol, for random points
// filling the band including its edges and random images, square and
// non-square (down to one row), power-of-two and other sizes.
func TestAccuracy(t *testing.T) {
	rng := rand.New(rand.NewPCG(2, 2))
	for _, sz := range []struct{ nx, ny, m int }{{64, 64, 3000}, {48, 30, 2000}, {100, 128, 1500}, {33, 21, 800}, {300, 3, 400}, {5, 200, 400}, {90, 1, 300}} {
		pix := 0.5 * mas
		u, v := bandPoints(rng, sz.m, pix)
		img := randImage(rng, sz.nx*sz.ny)
		vis := randVis(rng, sz.m)
		e, err := NewExact(sz.nx, sz.ny, pix, u, v, Options{})
		if err != nil {
			t.Fatal(err)
		}
		wantF := make([]complex128, sz.m)
		e.Forward(wantF, img)
		wantA := make([]float64, sz.nx*sz.ny)
		e.Adjoint(wantA, vis)
		for _, tol := range []float64{1e-3, 1e-6, 1e-9, 1e-12} {
			p, err := NewPlan(sz.nx, sz.ny, pix, u, v, Options{Tol: tol})
			if err != nil {
				t.Fatal(err)
			}
			gotF := make([]complex128, sz.m)
			p.Forward(gotF, img)
			gotA := make([]float64, sz.nx*sz.ny)
			p.Adjoint(gotA, vis)
			ef, ea := relErrC(gotF, wantF), relErrR(gotA, wantA)
			t.Logf("%dx%d m=%d tol=%g w=%d: Forward %.2g Adjoint %.2g", sz.nx, sz.ny, sz.m, tol, p.KernelWidth(), ef, ea)
			if ef > tol || ea > tol {
				t.Errorf("%dx%d tol=%g: relative errors Forward %g, Adjoint %g exceed tol", sz.nx, sz.ny, tol, ef, ea)
			}
		}
	}
}

// TestAdjointIdentity checks Re⟨F x, y⟩ = ⟨x, Fᴴ y⟩ to 1e-12 relative,
// the defining property of the adjoint (e.g. Kreyszig 1978, Introductory
// Functional Analysis, sect. 3.9), for Plan at several tolerances and for
// Exact.
func TestAdjointIdentity(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 3))
	nx, ny, m := 40, 56, 5000
	pix := mas
	u, v := bandPoints(rng, m, pix)
	x := randImage(rng, nx*ny)
	y := randVis(rng, m)
	var ts []Transform
	for _, tol := range []float64{1e-3, 1e-6, 1e-12} {
		p, err := NewPlan(nx, ny, pix, u, v, Options{Tol: tol})
		if err != nil {
			t.Fatal(err)
		}
		ts = append(ts, p)
	}
	e, err := NewExact(nx, ny, pix, u, v, Options{})
	if err != nil {
		t.Fatal(err)
	}
	ts = append(ts, e)
	fx := make([]complex128, m)
	fhy := make([]float64, nx*ny)
	for i, tr := range ts {
		tr.Forward(fx, x)
		tr.Adjoint(fhy, y)
		var lhs, rhs, scale float64
		for k := range fx {
			lhs += real(fx[k])*real(y[k]) + imag(fx[k])*imag(y[k])
			scale += cmplx.Abs(fx[k]) * cmplx.Abs(y[k])
		}
		for p := range x {
			rhs += x[p] * fhy[p]
		}
		if d := math.Abs(lhs-rhs) / scale; d > 1e-12 {
			t.Errorf("transform %d: Re⟨Fx,y⟩ = %.15g, ⟨x,Fᴴy⟩ = %.15g, relative difference %g", i, lhs, rhs, d)
		}
	}
}

// TestPointSource checks the sign convention of CONVENTIONS.md: a point
// source at (x0, y0) gives exp(−2πi(u·x0 + v·y0)), with x0 east (pixel
// index ix below nx/2) and y0 north (iy above ny/2).
func TestPointSource(t *testing.T) {
	nx, ny := 32, 32
	pix := mas
	ix, iy := 11, 23 // x0 = +5 mas (east), y0 = +7 mas (north)
	x0, y0 := -float64(ix-nx/2)*pix, float64(iy-ny/2)*pix
	if x0 <= 0 || y0 <= 0 {
		t.Fatal("test point is not north-east")
	}
	rng := rand.New(rand.NewPCG(4, 4))
	u, v := bandPoints(rng, 200, pix)
	// A small positive u alone: the phase must be −2π u x0 < 0.
	u[0], v[0] = 0.01/pix, 0
	u[1], v[1] = 0, 0.01/pix
	img := make([]float64, nx*ny)
	img[iy*nx+ix] = 1
	for _, mk := range []func() (Transform, error){
		func() (Transform, error) { return NewExact(nx, ny, pix, u, v, Options{}) },
		func() (Transform, error) { return NewPlan(nx, ny, pix, u, v, Options{Tol: 1e-9}) },
	} {
		tr, err := mk()
		if err != nil {
			t.Fatal(err)
		}
		vis := make([]complex128, len(u))
		tr.Forward(vis, img)
		for k := range u {
			want := cmplx.Exp(complex(0, -2*math.Pi*(u[k]*x0+v[k]*y0)))
			if d := cmplx.Abs(vis[k] - want); d > 1e-8 {
				t.Errorf("%T point %d: got %v, want %v", tr, k, vis[k], want)
			}
		}
		if imag(vis[0]) >= 0 || imag(vis[1]) >= 0 {
			t.Errorf("%T: phases at small +u and +v are %v, %v; want negative", tr, cmplx.Phase(vis[0]), cmplx.Phase(vis[1]))
		}
	}
}

// TestUniformDisc checks a finely sampled uniform disc of diameter θ
// against V(q) = 2 J1(πθq)/(πθq), q = √(u²+v²) (Born & Wolf, Principles
// of Optics, sect. 8.5.2), including the first null at q = 1.2197/θ (first
// zero of J1 at 3.8317, Abramowitz & Stegun 1964, table 9.5).
func TestUniformDisc(t *testing.T) {
	const n, sub = 128, 8
	pix := 0.25 * mas
	theta := 60 * pix
	img := make([]float64, n*n)
	// Each pixel holds the fraction of its area inside the disc, from
	// sub×sub samples.
	var total float64
	for iy := range n {
		for ix := range n {
			var c int
			for a := range sub {
				for b := range sub {
					x := -(float64(ix-n/2) + (float64(a)+0.5)/sub - 0.5) * pix
					y := (float64(iy-n/2) + (float64(b)+0.5)/sub - 0.5) * pix
					if x*x+y*y <= theta*theta/4 {
						c++
					}
				}
			}
			img[iy*n+ix] = float64(c) / (sub * sub)
			total += img[iy*n+ix]
		}
	}
	qnull := 1.2197 / theta
	var u, v, q []float64
	for i := range 40 {
		qi := float64(i) / 20 * qnull // up to about twice the first null
		ang := 0.37 + 1.3*float64(i)
		u = append(u, qi*math.Cos(ang))
		v = append(v, qi*math.Sin(ang))
		q = append(q, qi)
	}
	u = append(u, qnull, 0)
	v = append(v, 0, qnull)
	q = append(q, qnull, qnull)
	p, err := NewPlan(n, n, pix, u, v, Options{Tol: 1e-9})
	if err != nil {
		t.Fatal(err)
	}
	vis := make([]complex128, len(u))
	p.Forward(vis, img)
	for k := range u {
		z := math.Pi * theta * q[k]
		want := 1.0
		if z > 0 {
			want = 2 * math.J1(z) / z
		}
		got := vis[k] / complex(total, 0)
		// The sampled disc differs from the ideal one by about a sub-pixel
		// area at its rim; 2e-3 of the total flux bounds that here.
		if math.Abs(real(got)-want) > 2e-3 || math.Abs(imag(got)) > 1e-9 {
			t.Errorf("q = %.4g/θ: got %v, want %.6f", q[k]*theta, got, want)
		}
	}
	if z := math.Pi * 1.2197; math.Abs(math.J1(z)) > 1e-4 {
		t.Errorf("J1(π·1.2197) = %g, want ≈ 0", math.J1(z))
	}
}

// TestGaussian checks that a circular Gaussian of standard deviation σ
// centred at (x0, y0) gives exp(−2π²σ²q²)·exp(−2πi(u x0 + v y0)) (the
// Fourier pair of the Gaussian, e.g. Bracewell 2000, The Fourier
// Transform and Its Applications, ch. 6; from memory). With σ = 3 pixels
// the sampling error is below 1e-30 and the truncation at the image edge
// below 1e-20.
func TestGaussian(t *testing.T) {
	nx, ny := 64, 48
	pix := mas
	sigma := 3 * pix
	ix0, iy0 := 30, 20
	x0, y0 := -float64(ix0-nx/2)*pix, float64(iy0-ny/2)*pix
	img := make([]float64, nx*ny)
	var total float64
	for iy := range ny {
		for ix := range nx {
			x, y := -float64(ix-nx/2)*pix, float64(iy-ny/2)*pix
			img[iy*nx+ix] = math.Exp(-((x-x0)*(x-x0) + (y-y0)*(y-y0)) / (2 * sigma * sigma))
			total += img[iy*nx+ix]
		}
	}
	rng := rand.New(rand.NewPCG(5, 5))
	m := 300
	u, v := make([]float64, m), make([]float64, m)
	for k := range u {
		u[k] = (rng.Float64() - 0.5) * 0.3 / pix
		v[k] = (rng.Float64() - 0.5) * 0.3 / pix
	}
	p, err := NewPlan(nx, ny, pix, u, v, Options{Tol: 1e-10})
	if err != nil {
		t.Fatal(err)
	}
	vis := make([]complex128, m)
	p.Forward(vis, img)
	for k := range u {
		q2 := u[k]*u[k] + v[k]*v[k]
		want := complex(math.Exp(-2*math.Pi*math.Pi*sigma*sigma*q2), 0) *
			cmplx.Exp(complex(0, -2*math.Pi*(u[k]*x0+v[k]*y0)))
		if d := cmplx.Abs(vis[k]/complex(total, 0) - want); d > 1e-9 {
			t.Errorf("point %d: got %v, want %v", k, vis[k]/complex(total, 0), want)
		}
	}
}

// TestAllocs asserts that calls allocate nothing, serial and parallel.
func TestAllocs(t *testing.T) {
	rng := rand.New(rand.NewPCG(6, 6))
	n, m := 64, 40000
	u, v := bandPoints(rng, m, mas)
	img := randImage(rng, n*n)
	vis := make([]complex128, m)
	out := make([]float64, n*n)
	for _, w := range []int{1, 2} {
		p, err := NewPlan(n, n, mas, u, v, Options{Workers: w})
		if err != nil {
			t.Fatal(err)
		}
		e, err := NewExact(n, n, mas, u[:50], v[:50], Options{Workers: w})
		if err != nil {
			t.Fatal(err)
		}
		visE := make([]complex128, 50)
		for name, f := range map[string]func(){
			"Plan.Forward":       func() { p.Forward(vis, img) },
			"Plan.Adjoint":       func() { p.Adjoint(out, vis) },
			"Plan.ForwardSorted": func() { p.ForwardSorted(vis, img) },
			"Plan.AdjointSorted": func() { p.AdjointSorted(out, vis) },
			"Exact.Forward":      func() { e.Forward(visE, img) },
			"Exact.Adjoint":      func() { e.Adjoint(out, visE) },
		} {
			if a := testing.AllocsPerRun(5, f); a != 0 {
				t.Errorf("%s with %d workers: %g allocations per call", name, w, a)
			}
		}
	}
}

// TestWorkers checks that results do not depend on scheduling nor on the
// number of workers: repeated calls (serial ones, SetSerial), and calls
// with 1, 2, 3 and 5 workers
// (beyond GOMAXPROCS on purpose), give bitwise identical Forward and
// Adjoint results, for Plan at two tolerances (float32 and float64
// weights) and for Exact. The image has 70 rows, which is not a multiple
// of the shard sizes.
func TestWorkers(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 7))
	nx, ny, m, me := 96, 70, 60000, 600
	u, v := bandPoints(rng, m, mas)
	// Cluster a third of the points, as on real (u,v) tracks.
	for k := 0; k < m/3; k++ {
		u[k] = 0.1/mas + 0.02*rng.NormFloat64()/mas
		v[k] = -0.2/mas + 0.01*rng.NormFloat64()/mas
	}
	img := randImage(rng, nx*ny)
	vis := randVis(rng, m)
	type maker func(r resolved) (Transform, *pool)
	for _, c := range []struct {
		name string
		m    int
		tol  float64
		mk   maker
	}{
		{"Plan tol=1e-6", m, 1e-6, func(r resolved) (Transform, *pool) {
			p := &Plan{newPlan(r, u, v, kaiserBessel, kernelWidth(r.tol))}
			return p, p.pool
		}},
		{"Plan tol=1e-12", m, 1e-12, func(r resolved) (Transform, *pool) {
			p := &Plan{newPlan(r, u, v, kaiserBessel, kernelWidth(r.tol))}
			return p, p.pool
		}},
		{"Exact", me, 0, func(r resolved) (Transform, *pool) {
			e := &Exact{newExact(r, u[:me], v[:me])}
			return e, e.pool
		}},
	} {
		var refF []complex128
		var refA []float64
		for _, w := range []int{1, 2, 3, 5} {
			r, err := resolve("test", nx, ny, mas, u[:c.m], v[:c.m], Options{Tol: c.tol, Workers: 1})
			if err != nil {
				t.Fatal(err)
			}
			r.workers = w // beyond GOMAXPROCS on purpose
			tr, pl := c.mk(r)
			if pl.n != w {
				t.Fatalf("%s: uses %d workers, want %d", c.name, pl.n, w)
			}
			f1, f2 := make([]complex128, c.m), make([]complex128, c.m)
			a1, a2 := make([]float64, nx*ny), make([]float64, nx*ny)
			tr.Forward(f1, img)
			tr.Adjoint(a1, vis[:c.m])
			// The repeated calls run serially (SetSerial), as a caller running several
			// transforms at once has them.
			tr.(interface{ SetSerial(bool) }).SetSerial(true)
			tr.Forward(f2, img)
			tr.Adjoint(a2, vis[:c.m])
			stopPool(pl.ch)
			if refF == nil {
				refF, refA = f1, a1
			}
			for k := range f1 {
				if f1[k] != f2[k] || f1[k] != refF[k] {
					t.Fatalf("%s, %d workers: Forward at point %d: %v, repeated serially %v, 1 worker %v", c.name, w, k, f1[k], f2[k], refF[k])
				}
			}
			for k := range a1 {
				if a1[k] != a2[k] || a1[k] != refA[k] {
					t.Fatalf("%s, %d workers: Adjoint at pixel %d: %v, repeated serially %v, 1 worker %v", c.name, w, k, a1[k], a2[k], refA[k])
				}
			}
		}
	}
}

// TestNew checks that New picks Exact for a handful of points and Plan
// for many, and that both are accurate.
func TestNew(t *testing.T) {
	rng := rand.New(rand.NewPCG(8, 8))
	for _, c := range []struct {
		n, m  int
		exact bool
	}{{16, 5, true}, {64, 10, true}, {64, 5000, false}} {
		u, v := bandPoints(rng, c.m, mas)
		tr, err := New(c.n, c.n, mas, u, v, Options{})
		if err != nil {
			t.Fatal(err)
		}
		if _, ok := tr.(*Exact); ok != c.exact {
			t.Errorf("n=%d m=%d: New returned %T", c.n, c.m, tr)
		}
		e, _ := NewExact(c.n, c.n, mas, u, v, Options{})
		img := randImage(rng, c.n*c.n)
		got, want := make([]complex128, c.m), make([]complex128, c.m)
		tr.Forward(got, img)
		e.Forward(want, img)
		if d := relErrC(got, want); d > DefaultTol {
			t.Errorf("n=%d m=%d: relative error %g", c.n, c.m, d)
		}
	}
}

func TestConstructorErrors(t *testing.T) {
	u, v := []float64{1, 2}, []float64{3, 4}
	nan := math.NaN()
	for _, c := range []struct {
		name   string
		nx, ny int
		pixel  float64
		u, v   []float64
		opt    Options
		want   string
	}{
		{"zero size", 0, 8, mas, u, v, Options{}, "image size"},
		{"negative pixel", 8, 8, -mas, u, v, Options{}, "pixel size"},
		{"infinite pixel", 8, 8, math.Inf(1), u, v, Options{}, "pixel size"},
		{"length mismatch", 8, 8, mas, u, v[:1], Options{}, "2 u values but 1 v values"},
		{"NaN u", 8, 8, mas, []float64{1, nan}, v, Options{}, "point 1"},
		{"tol too small", 8, 8, mas, u, v, Options{Tol: 1e-15}, "tolerance"},
		{"tol too large", 8, 8, mas, u, v, Options{Tol: 0.5}, "tolerance"},
		{"negative workers", 8, 8, mas, u, v, Options{Workers: -1}, "workers"},
	} {
		for name, f := range map[string]func() error{
			"NewPlan":  func() error { _, err := NewPlan(c.nx, c.ny, c.pixel, c.u, c.v, c.opt); return err },
			"NewExact": func() error { _, err := NewExact(c.nx, c.ny, c.pixel, c.u, c.v, c.opt); return err },
			"New":      func() error { _, err := New(c.nx, c.ny, c.pixel, c.u, c.v, c.opt); return err },
		} {
			err := f()
			if err == nil || !strings.Contains(err.Error(), c.want) || !strings.HasPrefix(err.Error(), "nufft: "+name) {
				t.Errorf("%s %s: error %v, want one containing %q", name, c.name, err, c.want)
			}
		}
	}
}

func TestLengthPanics(t *testing.T) {
	u, v := []float64{1e6, 2e6}, []float64{3e6, 4e6}
	p, _ := NewPlan(8, 8, mas, u, v, Options{})
	e, _ := NewExact(8, 8, mas, u, v, Options{})
	for name, f := range map[string]func(){
		"Plan.Forward":  func() { p.Forward(make([]complex128, 3), make([]float64, 64)) },
		"Plan.Adjoint":  func() { p.Adjoint(make([]float64, 63), make([]complex128, 2)) },
		"Exact.Forward": func() { e.Forward(make([]complex128, 2), make([]float64, 65)) },
		"Exact.Adjoint": func() { e.Adjoint(make([]float64, 64), make([]complex128, 1)) },
	} {
		func() {
			defer func() {
				r := recover()
				if s, ok := r.(string); !ok || !strings.HasPrefix(s, "nufft: "+name) {
					t.Errorf("%s: recovered %v, want a panic starting with %q", name, r, "nufft: "+name)
				}
			}()
			f()
		}()
	}
}

// TestKernelFT checks the quadrature of the Kaiser–Bessel transform
// against its closed form w·sinh(√(β²−(πwξ)²))/√(β²−(πwξ)²) / I0(β)
// (Jackson et al. 1991, IEEE TMI 10, 473; from memory), and besselI0
// against values of A&S 1964 table 9.8 (I0(1) = 1.266065878,
// e^−10·I0(10) = 0.1278333372).
func TestKernelFT(t *testing.T) {
	if d := math.Abs(besselI0(1) - 1.266065878); d > 1e-9 {
		t.Errorf("I0(1) off by %g", d)
	}
	if d := math.Abs(math.Exp(-10)*besselI0(10) - 0.1278333372); d > 1e-10 {
		t.Errorf("e^-10 I0(10) off by %g", d)
	}
	for _, w := range []int{4, 7, 13} {
		k := newKernel(kaiserBessel, w)
		xi := []float64{0, 0.05, 0.125, 0.2, 0.25, 0.3}
		got := make([]float64, len(xi))
		k.ft(got, xi)
		for i, f := range xi {
			z := math.Sqrt(k.beta*k.beta - sq(math.Pi*float64(w)*f))
			want := float64(w) * math.Sinh(z) / z * k.norm
			if d := math.Abs(got[i]-want) / want; d > 1e-13 {
				t.Errorf("w=%d ξ=%g: quadrature %g, closed form %g (rel %g)", w, f, got[i], want, d)
			}
		}
	}
}

// TestKernelAccuracy measures both kernels at equal widths with β from
// their papers, the measurement behind the choice of Kaiser–Bessel and
// of kernelWidth, and fails if Kaiser–Bessel stops being the more
// accurate or exceeds the table kbError by more than 20%.
func TestKernelAccuracy(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 9))
	n, m := 64, 3000
	u, v := bandPoints(rng, m, mas)
	img := randImage(rng, n*n)
	e, _ := NewExact(n, n, mas, u, v, Options{})
	want := make([]complex128, m)
	e.Forward(want, img)
	got := make([]complex128, m)
	r, err := resolve("test", n, n, mas, u, v, Options{Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	r.tol = 1e-13 // float64 weights at every width
	for w := 3; w <= 14; w++ {
		var errs [2]float64
		for i, kind := range []kernelKind{kaiserBessel, expSemicircle} {
			p := &Plan{newPlan(r, u, v, kind, w)}
			p.Forward(got, img)
			errs[i] = relErrC(got, want)
		}
		t.Logf("w=%2d: Kaiser–Bessel %.2e, exp of semicircle %.2e, ratio %.2f", w, errs[0], errs[1], errs[1]/errs[0])
		if errs[0] > errs[1] {
			t.Errorf("w=%d: Kaiser–Bessel error %g above exponential of semicircle %g", w, errs[0], errs[1])
		}
		if errs[0] > 1.2*kbError[w] {
			t.Errorf("w=%d: Kaiser–Bessel error %g above the tabulated %g", w, errs[0], kbError[w])
		}
	}
}

// TestMemory checks the memory budget of a plan at the default tolerance,
// counted from its slice sizes: at most 3× the upsampled grid plus 150
// bytes per point (the budget of the package's design; common practice,
// no source).
func TestMemory(t *testing.T) {
	rng := rand.New(rand.NewPCG(10, 10))
	for _, c := range []struct{ n, m, w int }{{128, 10000, 1}, {256, 100000, 1}, {256, 100000, 2}, {100, 3000, 2}} {
		u, v := bandPoints(rng, c.m, mas)
		r, err := resolve("test", c.n, c.n, mas, u, v, Options{Workers: 1})
		if err != nil {
			t.Fatal(err)
		}
		r.workers = c.w
		p := newPlan(r, u, v, kaiserBessel, kernelWidth(r.tol))
		stopPool(p.pool.ch)
		grid, perPoint, total := p.memBytes()
		budget := 3*grid + 150*c.m
		t.Logf("n=%d m=%d workers=%d: grid %d B, %.1f B/point, total %d B = %.2f grids + %.1f B/point",
			c.n, c.m, p.workers, grid, float64(perPoint)/float64(c.m), total,
			float64(total-perPoint)/float64(grid), float64(perPoint)/float64(c.m))
		if total > budget {
			t.Errorf("n=%d m=%d workers=%d: plan holds %d bytes, budget %d", c.n, c.m, c.w, total, budget)
		}
	}
}

// TestInterleaved checks that the plan's order is a permutation of the
// sorted positions that alternates the halves of each block.
func TestInterleaved(t *testing.T) {
	for _, m := range []int{1, 2, 3, interleaveBlock - 1, interleaveBlock, 5*interleaveBlock + 7} {
		seen := make([]int, m)
		for i := range m {
			seen[interleaved(i, m)]++
		}
		for j, c := range seen {
			if c != 1 {
				t.Fatalf("m=%d: position %d taken %d times", m, j, c)
			}
		}
		if m >= 4 {
			q := (min(m, interleaveBlock) + 1) / 2
			if interleaved(0, m) != 0 || interleaved(q, m) != 1 || interleaved(1, m) != 2 {
				t.Errorf("m=%d: the first block does not alternate its halves", m)
			}
		}
	}
}

// TestSharedBuffer checks that Forward and Adjoint, whose grid and
// spreading bands share memory, give the same bits whichever ran
// before, with float32 and float64 weights.
func TestSharedBuffer(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 14))
	nx, ny, m := 40, 34, 5000
	u, v := bandPoints(rng, m, mas)
	img := randImage(rng, nx*ny)
	vis := randVis(rng, m)
	for _, tol := range []float64{1e-6, 1e-10} {
		// p runs Adjoint first, q Forward first.
		p, err := NewPlan(nx, ny, mas, u, v, Options{Tol: tol, Workers: 1})
		if err != nil {
			t.Fatal(err)
		}
		q, err := NewPlan(nx, ny, mas, u, v, Options{Tol: tol, Workers: 1})
		if err != nil {
			t.Fatal(err)
		}
		a1, a2 := make([]float64, nx*ny), make([]float64, nx*ny)
		f1, f2 := make([]complex128, m), make([]complex128, m)
		p.Adjoint(a1, vis) // on a fresh plan
		p.Forward(f2, img) // after Adjoint
		p.Adjoint(a2, vis) // after Forward
		q.Forward(f1, img) // on a fresh plan
		for k := range a1 {
			if a1[k] != a2[k] {
				t.Fatalf("tol=%g: Adjoint at pixel %d is %v after Forward, %v before", tol, k, a2[k], a1[k])
			}
		}
		for k := range f1 {
			if f1[k] != f2[k] {
				t.Fatalf("tol=%g: Forward at point %d is %v after Adjoint, %v before", tol, k, f2[k], f1[k])
			}
		}
	}
}

// TestStaleBuffer checks that Forward and Adjoint read only what they
// have written in the call: with NaN in the whole grid and spreading
// bands (which share their memory), in the middle rows that no call
// writes (plan.flip) and in the rest, both give the same bits, in both
// the assembly and the portable loops. TestAccuracy checks the values
// against the exact sum.
func TestStaleBuffer(t *testing.T) {
	asm := useAsm
	defer func() { useAsm = asm }()
	rng := rand.New(rand.NewPCG(15, 16))
	for _, c := range []struct{ nx, ny, m int }{{40, 36, 4000}, {64, 64, 20000}, {100, 30, 8000}} {
		u, v := bandPoints(rng, c.m, mas)
		img := randImage(rng, c.nx*c.ny)
		vis := randVis(rng, c.m)
		for _, tol := range []float64{1e-6, 1e-10} {
			for _, useAsm = range []bool{false, asm} {
				for _, w := range []int{1, 2} {
					pl, err := NewPlan(c.nx, c.ny, mas, u, v, Options{Tol: tol, Workers: w})
					if err != nil {
						t.Fatal(err)
					}
					p := pl.plan
					f, a := make([]complex128, c.m), make([]float64, c.nx*c.ny)
					f2, a2 := make([]complex128, c.m), make([]float64, c.nx*c.ny)
					pl.Forward(f, img)
					pl.Adjoint(a, vis)
					buf := p.grid[:cap(p.grid)] // the grid and the bands
					for _, adjoint := range []bool{false, true} {
						for j := range buf {
							buf[j] = complex(math.NaN(), math.NaN())
						}
						if adjoint {
							pl.Adjoint(a2, vis)
						} else {
							pl.Forward(f2, img)
						}
					}
					for k := range f {
						if f2[k] != f[k] {
							t.Fatalf("%dx%d tol=%g asm=%v workers=%d: Forward at point %d is %v after NaN in the grid, %v before", c.nx, c.ny, tol, useAsm, w, k, f2[k], f[k])
						}
					}
					for k := range a {
						if a2[k] != a[k] {
							t.Fatalf("%dx%d tol=%g asm=%v workers=%d: Adjoint at pixel %d is %v after NaN in the bands, %v before", c.nx, c.ny, tol, useAsm, w, k, a2[k], a[k])
						}
					}
				}
			}
		}
	}
}
