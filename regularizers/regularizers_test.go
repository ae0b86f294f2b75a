package regularizers

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
)

// randomImage returns nx*ny pixels uniform in [lo, hi) from a fixed seed.
func randomImage(nx, ny int, lo, hi float64, seed uint64) []float64 {
	rnd := rand.New(rand.NewPCG(seed, 7))
	x := make([]float64, nx*ny)
	for i := range x {
		x[i] = lo + (hi-lo)*rnd.Float64()
	}
	return x
}

// checkGradient compares the analytic gradient with central finite
// differences (gonum diff/fd) to 1e-6 relative to the largest component.
func checkGradient(t *testing.T, r Regularizer, x []float64, step float64) {
	t.Helper()
	grad := make([]float64, len(x))
	v := r.Eval(grad, x)
	if v2 := r.Eval(nil, x); v2 != v {
		t.Errorf("value with gradient %v differs from value without %v", v, v2)
	}
	num := fd.Gradient(nil, func(y []float64) float64 { return r.Eval(nil, y) }, x,
		&fd.Settings{Formula: fd.Central, Step: step})
	var scale, worst float64
	for i := range grad {
		scale = max(scale, math.Abs(grad[i]))
		worst = max(worst, math.Abs(grad[i]-num[i]))
	}
	if scale == 0 {
		t.Fatalf("gradient is zero everywhere; test is void")
	}
	if worst > 1e-6*scale {
		t.Errorf("max |grad - fd| = %g, > 1e-6 * max |grad| = %g", worst, 1e-6*scale)
	}
}

func TestGradients(t *testing.T) {
	const nx, ny = 9, 6 // not square, so swapped axes show
	n := nx * ny
	prior := randomImage(nx, ny, 0.3, 1.5, 11)
	unit := func(x []float64) []float64 { // image of total flux 1
		var s float64
		for _, v := range x {
			s += v
		}
		out := make([]float64, len(x))
		for i, v := range x {
			out[i] = v / s
		}
		return out
	}
	x := randomImage(nx, ny, 0.2, 1.2, 1)
	xu := unit(x)
	// An image with pixels below the MaxEnt floor, to check the tangent continuation.
	xlow := randomImage(nx, ny, 0, 0.6, 2)
	tests := []struct {
		name string
		r    Regularizer
		x    []float64
		step float64
	}{
		{"MaxEnt/flat/unit-flux", &MaxEnt{NX: nx, NY: ny}, xu, 1e-5 / float64(n)},
		{"MaxEnt/prior", &MaxEnt{NX: nx, NY: ny, Prior: prior}, x, 1e-5},
		{"MaxEnt/below-floor", &MaxEnt{NX: nx, NY: ny, Prior: prior, Floor: 0.4}, xlow, 1e-6},
		{"TV/default/unit-flux", &TV{NX: nx, NY: ny}, xu, 1e-5 / float64(n)},
		{"TV/eps0.05", &TV{NX: nx, NY: ny, Eps: 0.05, Mean: 1}, x, 1e-5},
		{"TV/eps1", &TV{NX: nx, NY: ny, Eps: 1, Mean: 0.7}, x, 1e-5},
		{"Smooth", &Smooth{NX: nx, NY: ny}, x, 1e-5},
		{"Compact/default", &Compact{NX: nx, NY: ny}, x, 1e-5},
		{"Compact/r0=2.5", &Compact{NX: nx, NY: ny, R0: 2.5}, x, 1e-5},
		{"PriorDistance", &PriorDistance{NX: nx, NY: ny, Prior: prior}, x, 1e-5},
		{"Sum", &Sum{Terms: []Term{
			{0.3, &MaxEnt{NX: nx, NY: ny, Prior: prior}},
			{2, &TV{NX: nx, NY: ny, Eps: 0.1, Mean: 1}},
			{0, &Smooth{NX: nx, NY: ny}},
			{0.05, &Compact{NX: nx, NY: ny}},
		}}, x, 1e-5},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			checkGradient(t, tc.r, tc.x, tc.step)
		})
	}
}

// TestMaxEntValues checks properties of the entropy S = -Eval from
// Skilling & Bryan (1984, MNRAS 211, 111): S = 0 at x = m and
// S < 0 for any other positive image, so x = m is its global maximum; and
// the limit x ln x -> 0 at x = 0.
func TestMaxEntValues(t *testing.T) {
	const nx, ny = 8, 8
	m := randomImage(nx, ny, 0.5, 2, 3)
	r := &MaxEnt{NX: nx, NY: ny, Prior: m}
	grad := make([]float64, nx*ny)
	if v := r.Eval(grad, m); math.Abs(v) > 1e-13 {
		t.Errorf("-S(m) = %g, want 0", v)
	}
	for i, g := range grad {
		if math.Abs(g) > 1e-15 {
			t.Fatalf("gradient at x = m is %g at pixel %d, want 0", g, i)
		}
	}
	for seed := range uint64(20) {
		x := randomImage(nx, ny, 0, 3, 100+seed)
		if v := r.Eval(nil, x); !(v > 0) {
			t.Errorf("seed %d: -S = %g, want > 0 for x != m", seed, v)
		}
	}
	// One pixel differing from m by a factor e: the term is m(e ln e - e + 1) = m.
	x := append([]float64(nil), m...)
	x[5] = m[5] * math.E
	if v, want := r.Eval(nil, x), m[5]; math.Abs(v-want) > 1e-13*want {
		t.Errorf("-S = %.15g, want m = %.15g", v, want)
	}
	// x = 0: the term tends to m as x ln x -> 0; with the floor it is m(1 - Floor).
	x[5] = 0
	want := m[5] * (1 - DefaultMaxEntFloor)
	if v := r.Eval(grad, x); math.Abs(v-want) > 1e-13 {
		t.Errorf("-S with a zero pixel = %.15g, want %.15g", v, want)
	}
	if g := grad[5]; g != math.Log(DefaultMaxEntFloor) {
		t.Errorf("gradient at a zero pixel = %g, want ln(Floor) = %g", g, math.Log(DefaultMaxEntFloor))
	}
	// Continuity at the floor: the tangent continuation meets the exact term.
	xf := 0.25 * m[5]
	r.Floor = 0.25
	x[5] = xf
	above := r.Eval(nil, x)
	x[5] = math.Nextafter(xf, 0)
	below := r.Eval(nil, x)
	if math.Abs(above-below) > 1e-14 {
		t.Errorf("value jumps at the floor: %.17g vs %.17g", above, below)
	}
}

// TestTVFlat checks TV of a flat image: every difference is zero, so
// each pixel contributes e and TV = N e (follows from the definition).
func TestTVFlat(t *testing.T) {
	tests := []struct {
		nx, ny    int
		eps, mean float64
		level     float64
		want      float64
	}{
		{16, 16, 0, 0, 1.0 / 256, 256 * DefaultTVEps / 256},
		{10, 7, 0.2, 3, 3, 70 * 0.2 * 3},
		{10, 7, 0.2, 3, -5, 70 * 0.2 * 3},
	}
	for _, tc := range tests {
		r := &TV{NX: tc.nx, NY: tc.ny, Eps: tc.eps, Mean: tc.mean}
		x := make([]float64, tc.nx*tc.ny)
		for i := range x {
			x[i] = tc.level
		}
		grad := make([]float64, len(x))
		if v := r.Eval(grad, x); math.Abs(v-tc.want) > 1e-12*tc.want {
			t.Errorf("%dx%d eps %g mean %g: TV = %.15g, want N*e = %.15g", tc.nx, tc.ny, tc.eps, tc.mean, v, tc.want)
		}
		for i, g := range grad {
			if g != 0 {
				t.Fatalf("gradient of flat image is %g at %d", g, i)
			}
		}
	}
}

// TestTVStep checks TV of a vertical step edge of height h with e << h:
// each pixel left of the edge has dx = h, so TV ~ NY h + N e (total
// variation of a step is its height times its length; Rudin, Osher &
// Fatemi 1992).
func TestTVStep(t *testing.T) {
	const nx, ny = 12, 9
	const h = 2.0
	r := &TV{NX: nx, NY: ny, Eps: 1e-6, Mean: 1}
	x := make([]float64, nx*ny)
	for iy := range ny {
		for ix := range nx {
			if ix >= nx/2 {
				x[iy*nx+ix] = h
			}
		}
	}
	want := ny*h + float64(nx*ny-ny)*1e-6
	if v := r.Eval(nil, x); math.Abs(v-want) > 1e-9 {
		t.Errorf("TV of a step = %.12g, want %.12g", v, want)
	}
}

// TestSmoothRamp checks Smooth on x = a ix + b iy + c: every horizontal
// difference is a ((nx-1) ny of them), every vertical one b (nx (ny-1)),
// so Q = (nx-1) ny a^2 + nx (ny-1) b^2 (follows from the definition).
func TestSmoothRamp(t *testing.T) {
	tests := []struct {
		nx, ny  int
		a, b, c float64
	}{
		{8, 8, 1, 0, 0},
		{9, 5, 0.5, -2, 3},
		{1, 6, 7, 0.25, 1},
	}
	for _, tc := range tests {
		r := &Smooth{NX: tc.nx, NY: tc.ny}
		x := make([]float64, tc.nx*tc.ny)
		for iy := range tc.ny {
			for ix := range tc.nx {
				x[iy*tc.nx+ix] = tc.a*float64(ix) + tc.b*float64(iy) + tc.c
			}
		}
		want := float64((tc.nx-1)*tc.ny)*tc.a*tc.a + float64(tc.nx*(tc.ny-1))*tc.b*tc.b
		if v := r.Eval(nil, x); math.Abs(v-want) > 1e-12*max(want, 1) {
			t.Errorf("%+v: Q = %.15g, want %.15g", tc, v, want)
		}
	}
}

// TestCompactValues checks that Compact vanishes for flux in the centre
// pixel (nx/2, ny/2) and gives (r/R0)^2 v^2 for a pixel at distance r = 5
// (a 3-4-5 triangle) from it.
func TestCompactValues(t *testing.T) {
	for _, sz := range [][2]int{{16, 16}, {15, 12}} {
		nx, ny := sz[0], sz[1]
		r := &Compact{NX: nx, NY: ny, R0: 2}
		x := make([]float64, nx*ny)
		x[(ny/2)*nx+nx/2] = 3
		if v := r.Eval(nil, x); v != 0 {
			t.Errorf("%dx%d: centre pixel gives %g, want 0", nx, ny, v)
		}
		x[(ny/2)*nx+nx/2] = 0
		x[(ny/2+4)*nx+nx/2-3] = 3
		if v, want := r.Eval(nil, x), 25.0/4*9; math.Abs(v-want) > 1e-12 {
			t.Errorf("%dx%d: pixel at r = 5 gives %g, want %g", nx, ny, v, want)
		}
		// Changing R0 after the first call must refresh the cached weights.
		r.R0 = 5
		if v, want := r.Eval(nil, x), 9.0; math.Abs(v-want) > 1e-12 {
			t.Errorf("%dx%d: after R0 change %g, want %g", nx, ny, v, want)
		}
	}
}

func TestPriorDistanceZeroAtPrior(t *testing.T) {
	g, err := GaussianPrior(12, 10, 3, 1, 0)
	if err != nil {
		t.Fatal(err)
	}
	r := &PriorDistance{NX: 12, NY: 10, Prior: g}
	if v := r.Eval(nil, g); v != 0 {
		t.Errorf("distance of the prior to itself = %g", v)
	}
	x := append([]float64(nil), g...)
	x[7] += 0.01
	if v, want := r.Eval(nil, x), 1e-4/g[7]; math.Abs(v-want) > 1e-9*want {
		t.Errorf("distance = %g, want %g", v, want)
	}
}

// TestSumMatchesTerms checks that Sum equals the weighted sum of its
// terms, value and gradient.
func TestSumMatchesTerms(t *testing.T) {
	const nx, ny = 7, 5
	x := randomImage(nx, ny, 0.1, 1, 5)
	a, b := &Smooth{NX: nx, NY: ny}, &TV{NX: nx, NY: ny, Mean: 0.5}
	s := &Sum{Terms: []Term{{2, a}, {0.5, b}}}
	gs, ga, gb := make([]float64, nx*ny), make([]float64, nx*ny), make([]float64, nx*ny)
	for i := range gs {
		gs[i] = math.NaN() // must be overwritten
	}
	v := s.Eval(gs, x)
	want := 2*a.Eval(ga, x) + 0.5*b.Eval(gb, x)
	if math.Abs(v-want) > 1e-13*want {
		t.Errorf("Sum = %g, want %g", v, want)
	}
	for i := range gs {
		if w := 2*ga[i] + 0.5*gb[i]; math.Abs(gs[i]-w) > 1e-13*max(1, math.Abs(w)) {
			t.Fatalf("gradient[%d] = %g, want %g", i, gs[i], w)
		}
	}
	if got := s.String(); got != "2*smooth+0.5*tv(eps=0.01)" {
		t.Errorf("String() = %q", got)
	}
}

// TestGradientOverwritten checks that Eval overwrites grad rather than
// adding to it.
func TestGradientOverwritten(t *testing.T) {
	const nx, ny = 6, 6
	x := randomImage(nx, ny, 0.1, 1, 9)
	for _, r := range []Regularizer{&MaxEnt{NX: nx, NY: ny}, &TV{NX: nx, NY: ny}, &Smooth{NX: nx, NY: ny},
		&Compact{NX: nx, NY: ny}, &PriorDistance{NX: nx, NY: ny, Prior: x},
		&Sum{Terms: []Term{{1, &Smooth{NX: nx, NY: ny}}}}} {
		g1 := make([]float64, nx*ny)
		g2 := make([]float64, nx*ny)
		for i := range g2 {
			g2[i] = 1e300
		}
		r.Eval(g1, x)
		r.Eval(g2, x)
		for i := range g1 {
			if g1[i] != g2[i] {
				t.Fatalf("%v: grad not overwritten at %d: %g vs %g", r, i, g1[i], g2[i])
			}
		}
	}
}

func TestLengthPanics(t *testing.T) {
	for _, r := range []Regularizer{&MaxEnt{NX: 4, NY: 4}, &TV{NX: 4, NY: 4}, &Smooth{NX: 4, NY: 4},
		&Compact{NX: 4, NY: 4}, &PriorDistance{NX: 4, NY: 4, Prior: make([]float64, 16)}} {
		func() {
			defer func() {
				msg, _ := recover().(string)
				if len(msg) < 13 || msg[:13] != "regularizers:" {
					t.Errorf("%T: panic %q, want a regularizers: message", r, msg)
				}
			}()
			r.Eval(nil, make([]float64, 15))
		}()
	}
}

func TestNoAllocs(t *testing.T) {
	const nx, ny = 32, 32
	x := randomImage(nx, ny, 0.1, 1, 4)
	grad := make([]float64, nx*ny)
	prior := randomImage(nx, ny, 0.5, 1, 6)
	for _, r := range []Regularizer{&MaxEnt{NX: nx, NY: ny, Prior: prior}, &TV{NX: nx, NY: ny}, &Smooth{NX: nx, NY: ny},
		&Compact{NX: nx, NY: ny}, &PriorDistance{NX: nx, NY: ny, Prior: prior},
		&Sum{Terms: []Term{{1, &TV{NX: nx, NY: ny}}, {2, &Compact{NX: nx, NY: ny}}}}} {
		r.Eval(grad, x) // first call may allocate scratch
		if a := testing.AllocsPerRun(20, func() { r.Eval(grad, x) }); a != 0 {
			t.Errorf("%v: %v allocations per Eval", r, a)
		}
	}
}

// BenchmarkEval measures each regularizer at 256x256 with the gradient.
func BenchmarkEval(b *testing.B) {
	const nx, ny = 256, 256
	x := randomImage(nx, ny, 0.1, 1, 4)
	prior, _ := GaussianPrior(nx, ny, 40, 1, 0)
	grad := make([]float64, nx*ny)
	for _, r := range []Regularizer{&MaxEnt{NX: nx, NY: ny, Prior: prior}, &TV{NX: nx, NY: ny}, &Smooth{NX: nx, NY: ny},
		&Compact{NX: nx, NY: ny}, &PriorDistance{NX: nx, NY: ny, Prior: prior},
		&Sum{Terms: []Term{{1, &MaxEnt{NX: nx, NY: ny, Prior: prior}}, {1, &TV{NX: nx, NY: ny}}}}} {
		b.Run(fmt.Sprint(r), func(b *testing.B) {
			r.Eval(grad, x)
			b.ReportAllocs()
			for b.Loop() {
				r.Eval(grad, x)
			}
		})
	}
}
