package model

import (
	"math"
	"math/cmplx"
	"testing"

	"gonum.org/v1/gonum/integrate/quad"
)

func mustNew(t testing.TB, k Kind, vals map[string]float64) *Component {
	t.Helper()
	c, err := New(k, vals)
	if err != nil {
		t.Fatal(err)
	}
	return c
}

// hankelDisc returns the visibility of a centred, circularly symmetric disc
// of diameter d (radians) with limb-darkening law I(μ), at radial spatial
// frequency q, as the numerical Hankel transform
// V(q) = ∫ I J0(2π q r) r dr / ∫ I r dr (Bracewell 1965, The Fourier
// Transform and its Applications, ch. 12). With r = R sin t, μ = cos t and
// r dr = R² sin t cos t dt, so the integrand is smooth for the linear law.
func hankelDisc(I func(mu float64) float64, d, q float64, n int) float64 {
	R := d / 2
	num := quad.Fixed(func(t float64) float64 {
		s, c := math.Sincos(t)
		return I(c) * s * c * math.J0(2*math.Pi*q*R*s)
	}, 0, math.Pi/2, n, quad.Legendre{}, 0)
	den := quad.Fixed(func(t float64) float64 {
		s, c := math.Sincos(t)
		return I(c) * s * c
	}, 0, math.Pi/2, n, quad.Legendre{}, 0)
	return num / den
}

// TestUniformDiscFirstNull: the first zero of 2J1(z)/z is at z = 3.8317
// (A&S table 9.5, j_{1,1} = 3.831705970), i.e. q = 1.2197/θ (Born & Wolf,
// sect. 8.5.2).
func TestUniformDiscFirstNull(t *testing.T) {
	theta := 3.2 // mas
	c := mustNew(t, UniformDisc, map[string]float64{"diameter": theta})
	q0 := 3.831705970 / math.Pi / (theta * MasToRad)
	if r := q0 * theta * MasToRad; math.Abs(r-1.2197) > 1e-4 {
		t.Fatalf("null at %g/θ, want 1.2197/θ", r)
	}
	if v := real(c.Vis(q0, 0)); math.Abs(v) > 1e-9 {
		t.Errorf("V at null = %g", v)
	}
	if a, b := real(c.Vis(0.999*q0, 0)), real(c.Vis(1.001*q0, 0)); !(a > 0 && b < 0) {
		t.Errorf("no sign change across the null: %g, %g", a, b)
	}
}

// firstNull finds the first zero of the real visibility along u.
func firstNull(c *Component, qmax float64) float64 {
	lo, hi := 0.0, qmax
	for i := 0; i < 200; i++ {
		mid := (lo + hi) / 2
		if real(c.Vis(mid, 0)) > 0 {
			lo = mid
		} else {
			hi = mid
		}
	}
	return lo
}

// TestLimbDarkeningMovesNullOutwards: limb darkening makes the disc look
// smaller, so its first null lies at a higher frequency than that of the
// uniform disc of the same diameter (Hanbury Brown et al. 1974, MNRAS
// 167, 475).
func TestLimbDarkeningMovesNullOutwards(t *testing.T) {
	d := 4.0
	q0 := 3.831705970 / math.Pi / (d * MasToRad)
	prev := firstNull(mustNew(t, UniformDisc, map[string]float64{"diameter": d}), 1.3*q0)
	for _, u := range []float64{0.2, 0.5, 0.8, 1} {
		qn := firstNull(mustNew(t, LinearLD, map[string]float64{"diameter": d, "u_ld": u}), 1.6*q0)
		if !(qn > prev) {
			t.Errorf("u=%g: null at %g, not beyond %g", u, qn, prev)
		}
		prev = qn
	}
}

// TestLinearLDAgainstHankel compares the closed form with the numerical
// Hankel transform of I(μ) = 1 − u(1 − μ) to 1e-8.
func TestLinearLDAgainstHankel(t *testing.T) {
	d := 3.0
	for _, u := range []float64{0, 0.3, 0.7, 1} {
		c := mustNew(t, LinearLD, map[string]float64{"diameter": d, "u_ld": u})
		for _, z := range []float64{1e-4, 0.05, 0.5, 2, 3.9, 7, 12, 25} {
			q := z / (math.Pi * d * MasToRad)
			want := hankelDisc(func(mu float64) float64 { return 1 - u*(1-mu) }, d*MasToRad, q, 300)
			if got := real(c.Vis(0, q)); math.Abs(got-want) > 1e-8 {
				t.Errorf("u=%g z=%g: V = %.12g, Hankel %.12g", u, z, got, want)
			}
		}
	}
}

// TestPowerLaw checks the power-law disc: α = 0 is the uniform disc and
// α = 1 the linear law with u = 1 (both follow from I(μ) = μ^α), and for
// non-integer α the closed form of Hestroffer (1997) equals the numerical
// Hankel transform of μ^α. The integrand then has a weak endpoint
// singularity, which Gauss–Legendre handles with more nodes.
func TestPowerLaw(t *testing.T) {
	d := 2.5
	ud := mustNew(t, UniformDisc, map[string]float64{"diameter": d})
	ld1 := mustNew(t, LinearLD, map[string]float64{"diameter": d, "u_ld": 1})
	p0 := mustNew(t, PowerLD, map[string]float64{"diameter": d, "alpha": 0})
	p1 := mustNew(t, PowerLD, map[string]float64{"diameter": d, "alpha": 1})
	for _, z := range []float64{0.01, 1, 3.83, 6, 9, 30, 200, 800} {
		q := z / (math.Pi * d * MasToRad)
		if a, b := real(p0.Vis(q, 0)), real(ud.Vis(q, 0)); math.Abs(a-b) > 1e-12 {
			t.Errorf("z=%g: α=0 gives %.15g, UD %.15g", z, a, b)
		}
		if a, b := real(p1.Vis(q, 0)), real(ld1.Vis(q, 0)); math.Abs(a-b) > 1e-12 {
			t.Errorf("z=%g: α=1 gives %.15g, linear u=1 %.15g", z, a, b)
		}
	}
	for _, alpha := range []float64{0.25, 0.6, 1.7, 3.3} {
		c := mustNew(t, PowerLD, map[string]float64{"diameter": d, "alpha": alpha})
		for _, z := range []float64{0.3, 2, 5, 8.5, 14, 22} {
			q := z / (math.Pi * d * MasToRad)
			want := hankelDisc(func(mu float64) float64 { return math.Pow(mu, alpha) }, d*MasToRad, q, 4000)
			if got := real(c.Vis(q, 0)); math.Abs(got-want) > 1e-8 {
				t.Errorf("α=%g z=%g: V = %.12g, Hankel %.12g", alpha, z, got, want)
			}
		}
	}
}

// TestGaussian compares the circular Gaussian with the numerical Hankel
// transform of exp(−4 ln2 r²/w²), whose closed form is
// exp(−(π w q)²/(4 ln 2)) (Bracewell 1965, ch. 12).
func TestGaussian(t *testing.T) {
	w := 2.0 * MasToRad
	c := mustNew(t, Gaussian, map[string]float64{"fwhm": 2})
	for _, q := range []float64{1e6, 5e7, 1e8, 2e8} {
		num := quad.Fixed(func(r float64) float64 {
			return math.Exp(-4*math.Ln2*r*r/(w*w)) * math.J0(2*math.Pi*q*r) * r
		}, 0, 6*w, 2000, quad.Legendre{}, 0)
		den := w * w / (8 * math.Ln2) // ∫ exp(−4 ln2 r²/w²) r dr
		if got := real(c.Vis(q/math.Sqrt2, q/math.Sqrt2)); math.Abs(got-num/den) > 1e-10 {
			t.Errorf("q=%g: V = %.12g, Hankel %.12g", q, got, num/den)
		}
	}
}

// TestRing: a thin ring of diameter d has V = J0(π d q) (Bracewell 1965,
// ch. 12); compared with the direct sum over points on the ring. Inclined
// by i with the major axis at position angle θ, it is the same ring
// squeezed by cos i across θ; the reference sum uses the points
// (east, north) = a(sin θ, cos θ) + b(cos θ, −sin θ).
func TestRing(t *testing.T) {
	d := 3.0
	for _, tc := range []struct{ inc, pa float64 }{{0, 0}, {60, 0}, {60, 30}, {45, 110}} {
		c := mustNew(t, Ring, map[string]float64{"diameter": d, "inc": tc.inc, "pa": tc.pa, "x": 0.4, "y": -0.7})
		sp, cp := math.Sincos(tc.pa * math.Pi / 180)
		ci := math.Cos(tc.inc * math.Pi / 180)
		for _, uv := range [][2]float64{{3e7, 0}, {0, 4e7}, {5e7, 6e7}, {-7e7, 2e7}} {
			const n = 4096
			var sum complex128
			for k := 0; k < n; k++ {
				s, co := math.Sincos(2 * math.Pi * float64(k) / n)
				a, b := d/2*co, d/2*ci*s
				x := (0.4 + a*sp + b*cp) * MasToRad
				y := (-0.7 + a*cp - b*sp) * MasToRad
				sum += cmplx.Exp(complex(0, -2*math.Pi*(uv[0]*x+uv[1]*y)))
			}
			sum /= n
			if got := c.Vis(uv[0], uv[1]); cmplx.Abs(got-sum) > 1e-12 {
				t.Errorf("inc=%g pa=%g uv=%v: V = %v, direct sum %v", tc.inc, tc.pa, uv, got, sum)
			}
		}
	}
	// Face-on ring: plain J0.
	c := mustNew(t, Ring, map[string]float64{"diameter": d})
	if got, want := real(c.Vis(4e7, 0)), math.J0(math.Pi*d*MasToRad*4e7); math.Abs(got-want) > 1e-15 {
		t.Errorf("ring V = %g, J0 gives %g", got, want)
	}
}

// TestEllipticalGaussianOrientation pins the position angle: with the
// major axis at 20° east of north, the rasterised brightness has more
// spread north–south than east–west and a positive ⟨x y⟩ (east and north
// offsets grow together), and the visibility falls fastest along the
// major axis direction (sin 20°, cos 20°) in (u, v).
func TestEllipticalGaussianOrientation(t *testing.T) {
	c := mustNew(t, Gaussian, map[string]float64{"fwhm": 6, "ratio": 0.4, "pa": 20})
	m := &Model{Components: []*Component{c}}
	const n = 64
	pix := 0.25 * MasToRad
	img := m.Image(n, n, pix)
	var sxx, syy, sxy float64
	for iy := 0; iy < n; iy++ {
		for ix := 0; ix < n; ix++ {
			x := -float64(ix-n/2) * pix
			y := float64(iy-n/2) * pix
			p := img[iy*n+ix]
			sxx += p * x * x
			syy += p * y * y
			sxy += p * x * y
		}
	}
	if !(syy > sxx && sxy > 0) {
		t.Errorf("moments xx=%g yy=%g xy=%g: major axis not 20° east of north", sxx, syy, sxy)
	}
	// Orientation from the moments: tan 2θ = 2 sxy / (syy − sxx), θ from north to east.
	if th := 0.5 * math.Atan2(2*sxy, syy-sxx) * 180 / math.Pi; math.Abs(th-20) > 0.1 {
		t.Errorf("moment position angle %g°, want 20°", th)
	}
	s, co := math.Sincos(20 * math.Pi / 180)
	q := 3e7
	along, across := real(c.Vis(q*s, q*co)), real(c.Vis(q*co, -q*s))
	wantAlong := math.Exp(-math.Pow(math.Pi*6*MasToRad*q, 2) / (4 * math.Ln2))
	wantAcross := math.Exp(-math.Pow(math.Pi*0.4*6*MasToRad*q, 2) / (4 * math.Ln2))
	if math.Abs(along-wantAlong) > 1e-14 || math.Abs(across-wantAcross) > 1e-14 {
		t.Errorf("along %g (want %g), across %g (want %g)", along, wantAlong, across, wantAcross)
	}
}

// TestOffsetSign: a point 2 mas east of the centre has
// V = exp(−2πi u x0) (CONVENTIONS.md) and lands left of the centre pixel.
func TestOffsetSign(t *testing.T) {
	c := mustNew(t, Point, map[string]float64{"x": 2})
	u := 1e8
	want := cmplx.Exp(complex(0, -2*math.Pi*u*2*MasToRad))
	if got := c.Vis(u, 0); cmplx.Abs(got-want) > 1e-14 {
		t.Errorf("V = %v, want %v", got, want)
	}
	m := &Model{Components: []*Component{c}}
	img := m.Image(16, 16, 1*MasToRad)
	if img[8*16+6] != 1 {
		t.Errorf("point at x = +2 mas not in pixel (6, 8): %v", img[8*16:9*16])
	}
}

// TestBinary: two points with flux ratio r separated by s along east give
// V² between 1 and ((1−r)/(1+r))², with period 1/s in u (Monnier 2003,
// Rep. Prog. Phys. 66, 789, sect. 3).
func TestBinary(t *testing.T) {
	r, s := 0.3, 5.0
	m := &Model{Components: []*Component{
		mustNew(t, Point, nil),
		mustNew(t, Point, map[string]float64{"x": s, "flux": r}),
	}}
	period := 1 / (s * MasToRad)
	lo := math.Pow((1-r)/(1+r), 2)
	for k := 0; k < 5; k++ {
		v2max := sq(cmplx.Abs(m.Vis(float64(k)*period, 3e7)))
		v2min := sq(cmplx.Abs(m.Vis((float64(k)+0.5)*period, -2e7)))
		if math.Abs(v2max-1) > 1e-12 || math.Abs(v2min-lo) > 1e-12 {
			t.Errorf("k=%d: V² max %g (want 1), min %g (want %g)", k, v2max, v2min, lo)
		}
	}
}

func sq(x float64) float64 { return x * x }

// TestBackground: a background of flux b next to a compact flux f scales
// every non-zero-frequency visibility by f/(f+b) and leaves V(0,0) = 1.
func TestBackground(t *testing.T) {
	m := &Model{Components: []*Component{
		mustNew(t, UniformDisc, map[string]float64{"diameter": 2, "flux": 0.8}),
		mustNew(t, Background, map[string]float64{"flux": 0.2}),
	}}
	ud := mustNew(t, UniformDisc, map[string]float64{"diameter": 2})
	if v := m.Vis(0, 0); v != 1 {
		t.Errorf("V(0,0) = %v", v)
	}
	for _, u := range []float64{1e6, 5e7, 1e8} {
		if got, want := real(m.Vis(u, u/2)), 0.8*real(ud.Vis(u, u/2)); math.Abs(got-want) > 1e-15 {
			t.Errorf("u=%g: V = %g, want %g", u, got, want)
		}
	}
}

// TestClosurePhaseCentroSymmetric: a centro-symmetric model has a real
// visibility, so closure phases are 0° or 180° (common practice, no
// source); an off-centre companion breaks this.
func TestClosurePhaseCentroSymmetric(t *testing.T) {
	sym := &Model{Components: []*Component{
		mustNew(t, LinearLD, map[string]float64{"diameter": 3, "u_ld": 0.4}),
		mustNew(t, Gaussian, map[string]float64{"fwhm": 8, "ratio": 0.5, "pa": 33, "flux": 0.3}),
		mustNew(t, Ring, map[string]float64{"diameter": 9, "inc": 50, "pa": 70, "flux": 0.2}),
	}}
	asym := sym.Clone()
	asym.Components = append(asym.Components, mustNew(t, Point, map[string]float64{"x": 3, "y": 1, "flux": 0.1}))
	var maxAsym float64
	for k := 0; k < 50; k++ {
		u1, v1 := 1e7*float64(k%7+1), -2e7*float64(k%5)+3e6
		u2, v2 := -4e6*float64(k%3), 1.5e7*float64(k%4+1)
		cp := func(m *Model) float64 {
			b := m.Vis(u1, v1) * m.Vis(u2, v2) * cmplx.Conj(m.Vis(u1+u2, v1+v2))
			return cmplx.Phase(b) * 180 / math.Pi
		}
		p := cp(sym)
		if d := math.Min(math.Abs(p), 180-math.Abs(p)); d > 1e-9 {
			t.Errorf("symmetric model closure phase %g°", p)
		}
		maxAsym = math.Max(maxAsym, math.Min(math.Abs(cp(asym)), 180-math.Abs(cp(asym))))
	}
	if maxAsym < 1 {
		t.Errorf("asymmetric model closure phases all within %g° of 0/180", maxAsym)
	}
}

// TestImageMatchesVis: the direct-sum visibility of the rasterised image
// agrees with the analytic one at frequencies well below the pixel
// frequency, for an asymmetric composite model; rasterisation error
// (disc edges, sub-sampling) sets the tolerance (common practice, no
// source).
func TestImageMatchesVis(t *testing.T) {
	m := &Model{Components: []*Component{
		mustNew(t, LinearLD, map[string]float64{"diameter": 4, "u_ld": 0.5}),
		mustNew(t, Gaussian, map[string]float64{"fwhm": 0.8, "x": 1, "y": 0.5, "flux": 0.1}),
		mustNew(t, Gaussian, map[string]float64{"fwhm": 3, "ratio": 0.5, "pa": 40, "x": -3, "flux": 0.2}),
		mustNew(t, Point, map[string]float64{"x": 2.3, "y": -3.1, "flux": 0.05}),
		mustNew(t, Ring, map[string]float64{"diameter": 6, "inc": 30, "pa": 10, "flux": 0.1}),
	}}
	const n = 128
	pix := 0.1 * MasToRad
	img := m.Image(n, n, pix)
	var lo = math.Inf(1)
	for _, p := range img {
		lo = math.Min(lo, p)
	}
	if lo < 0 {
		t.Errorf("negative pixel %g", lo)
	}
	for _, uv := range [][2]float64{{1e7, 0}, {0, 2e7}, {3e7, -2e7}, {-4e7, -1e7}, {2e7, 5e7}} {
		var sum complex128
		for iy := 0; iy < n; iy++ {
			for ix := 0; ix < n; ix++ {
				x := -float64(ix-n/2) * pix
				y := float64(iy-n/2) * pix
				sum += complex(img[iy*n+ix], 0) * cmplx.Exp(complex(0, -2*math.Pi*(uv[0]*x+uv[1]*y)))
			}
		}
		if got := m.Vis(uv[0], uv[1]); cmplx.Abs(got-sum) > 2e-3 {
			t.Errorf("uv=%v: analytic %v, image %v (|Δ| = %.2g)", uv, got, sum, cmplx.Abs(got-sum))
		}
	}
}

// TestSetDomain: values outside a parameter's domain are rejected.
func TestSetDomain(t *testing.T) {
	c := mustNew(t, LinearLD, map[string]float64{"diameter": 1, "u_ld": 0.2})
	for _, tc := range []struct {
		name string
		v    float64
	}{{"diameter", -1}, {"u_ld", 1.2}, {"x", math.NaN()}, {"size", 1}} {
		if err := c.Set(tc.name, tc.v); err == nil {
			t.Errorf("Set(%s, %g) accepted", tc.name, tc.v)
		}
	}
	if _, err := New(UniformDisc, nil); err == nil {
		t.Error("ud without diameter accepted")
	}
	e := mustNew(t, Gaussian, map[string]float64{"fwhm": 1})
	if err := e.Set("ratio", 0); err == nil {
		t.Error("ratio 0 accepted")
	}
}

func BenchmarkModelVis(b *testing.B) {
	m := &Model{Components: []*Component{
		mustNew(b, PowerLD, map[string]float64{"diameter": 4, "alpha": 0.3}),
		mustNew(b, Gaussian, map[string]float64{"fwhm": 0.8, "x": 1, "y": 0.5, "flux": 0.1}),
		mustNew(b, Point, map[string]float64{"x": 2.3, "y": -3.1, "flux": 0.05}),
	}}
	u := make([]float64, 1000)
	v := make([]float64, 1000)
	for i := range u {
		u[i] = float64(i) * 2e5
		v[i] = -float64(i) * 1e5
	}
	dst := make([]complex128, len(u))
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		m.VisMany(dst, u, v)
	}
}

func TestRadius(t *testing.T) {
	m := &Model{Components: []*Component{
		mustNew(t, UniformDisc, map[string]float64{"diameter": 4}),
		mustNew(t, Gaussian, map[string]float64{"fwhm": 1, "x": 3, "y": 4}),
		mustNew(t, Background, map[string]float64{"flux": 0.1}),
	}}
	if r := m.Radius(); math.Abs(r-6.5) > 1e-12 {
		t.Errorf("radius %g, want 6.5", r)
	}
	// A rasterised Gaussian of FWHM 1 mas keeps 1 − 2^(−9) of its flux
	// within 1.5 mas (the enclosed fraction of a circular Gaussian is
	// 1 − 2^(−4 (r/w)²)).
	g := &Model{Components: []*Component{mustNew(t, Gaussian, map[string]float64{"fwhm": 1})}}
	const n = 128
	img := g.Image(n, n, 0.05*MasToRad)
	var in float64
	for iy := 0; iy < n; iy++ {
		for ix := 0; ix < n; ix++ {
			if math.Hypot(float64(ix-n/2), float64(iy-n/2))*0.05 <= g.Radius() {
				in += img[iy*n+ix]
			}
		}
	}
	if want := 1 - math.Pow(2, -9); math.Abs(in-want) > 5e-4 {
		t.Errorf("flux within the radius %g, want %g", in, want)
	}
}
