package recon

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	rf "reflect"
	"slices"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"gonum.org/v1/gonum/diff/fd"

	"vcz/dataset"
)

// mergeData appends the points of ds into one data set (the test's multi-channel data made
// one channel at a time).
func mergeData(ds ...*dataset.Data) *dataset.Data {
	out := &dataset.Data{Targets: ds[0].Targets}
	for _, d := range ds {
		for _, pair := range [][2]any{{&out.Vis2, &d.Vis2}, {&out.T3, &d.T3}, {&out.Vis, &d.Vis}} {
			dv, sv := rf.ValueOf(pair[0]).Elem(), rf.ValueOf(pair[1]).Elem()
			for f := range sv.NumField() {
				if sv.Field(f).Kind() == rf.Slice {
					dv.Field(f).Set(rf.AppendSlice(dv.Field(f), sv.Field(f)))
				}
			}
		}
	}
	out.Vis2Count.Valid, out.T3Count.Valid, out.VisCount.Valid = out.Vis2.Len(), out.T3.Len(), out.Vis.Len()
	return out
}

// observeChromatic observes, channel by channel, a source whose visibility vis(λ) depends on
// the wavelength, with the array and noise of o (o.lmin, o.lmax and o.nchan give the
// channels).
func observeChromatic(seed uint64, ntel int, radius float64, vis func(l float64) func(u, v float64) complex128, o synthOpts) *dataset.Data {
	rng := rand.New(rand.NewPCG(seed, seed))
	a := newSynthArray(rng, ntel, radius)
	var ds []*dataset.Data
	for c := range o.nchan {
		l := o.lmin + (o.lmax-o.lmin)*float64(c)/float64(o.nchan-1)
		oc := o
		oc.nchan, oc.lmin, oc.lmax = 1, l, l
		ds = append(ds, observe(rng, a, vis(l), oc))
	}
	return mergeData(ds...)
}

func TestParseChannels(t *testing.T) {
	for _, tc := range []struct {
		text string
		want Channels
		bad  bool
	}{
		{"", Channels{}, false},
		{"1", Channels{}, false},
		{"all", Channels{All: true}, false},
		{"12", Channels{Groups: 12}, false},
		{"1-4,5-8, 9 ,10-12", Channels{List: [][2]int{{1, 4}, {5, 8}, {9, 9}, {10, 12}}}, false},
		{"0", Channels{}, true},
		{"-3", Channels{}, true},
		{"4-1", Channels{}, true},
		{"1-4,3-6", Channels{}, true},
		{"a-b", Channels{}, true},
		{"1-4,,5", Channels{}, true},
	} {
		c, err := ParseChannels(tc.text)
		if (err != nil) != tc.bad {
			t.Errorf("ParseChannels(%q): error %v, want error %v", tc.text, err, tc.bad)
			continue
		}
		if tc.bad {
			continue
		}
		if !rf.DeepEqual(c, tc.want) {
			t.Errorf("ParseChannels(%q) = %+v, want %+v", tc.text, c, tc.want)
		}
		if back, err := ParseChannels(c.String()); err != nil || !rf.DeepEqual(back, c) {
			t.Errorf("ParseChannels(%q).String() = %q reads back as %+v, %v", tc.text, c.String(), back, err)
		}
	}
}

// TestSplitChannels checks the groups of 12 channels: every point in exactly one plane, in
// its channel's group, groups of adjacent channels as equal as possible, and the errors.
func TestSplitChannels(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 3))
	a := newSynthArray(rng, 4, 40)
	d := observe(rng, a, discVis(3*Mas), synthOpts{nchan: 12, nha: 3, lmin: 1.5e-6, lmax: 2.6e-6, hspan: 1, sigV2: 0.01, sigPhi: 0.05, t3: true, vis: true, sigVA: 0.02, sigVP: 0.05})
	waves := Wavelengths(d)
	if len(waves) != 12 || !slices.IsSorted(waves) {
		t.Fatalf("wavelengths %v", waves)
	}
	for _, tc := range []struct {
		c     Channels
		sizes []int
	}{
		{Channels{All: true}, []int{1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1}},
		{Channels{Groups: 5}, []int{3, 3, 2, 2, 2}},
		{Channels{List: [][2]int{{1, 4}, {6, 6}}}, []int{4, 1}},
		{Channels{}, []int{12}},
	} {
		planes, err := SplitChannels(d, tc.c)
		if err != nil {
			t.Fatalf("%v: %v", tc.c, err)
		}
		if len(planes) != len(tc.sizes) {
			t.Fatalf("%v: %d planes, want %d", tc.c, len(planes), len(tc.sizes))
		}
		n2, n3, nv := 0, 0, 0
		for k, p := range planes {
			got := len(Wavelengths(p.Data))
			if got != tc.sizes[k] {
				t.Errorf("%v: plane %d has %d channels, want %d", tc.c, k+1, got, tc.sizes[k])
			}
			for _, l := range p.Data.Vis2.Lambda {
				if l < p.Lo || l > p.Hi {
					t.Errorf("%v: plane %d (%g–%g) holds λ = %g", tc.c, k+1, p.Lo, p.Hi, l)
				}
			}
			if !(p.Coord >= p.Lo && p.Coord <= p.Hi) {
				t.Errorf("%v: plane %d at %g outside %g–%g", tc.c, k+1, p.Coord, p.Lo, p.Hi)
			}
			// Every column of the points is carried along.
			if p.Data.Vis.Len() != len(p.Data.Vis.PhiTyp) || p.Data.T3.Len() != len(p.Data.T3.Origin) {
				t.Errorf("%v: plane %d has columns of different lengths", tc.c, k+1)
			}
			n2 += p.Data.Vis2.Len()
			n3 += p.Data.T3.Len()
			nv += p.Data.Vis.Len()
		}
		if tc.c.List == nil && (n2 != d.Vis2.Len() || n3 != d.T3.Len() || nv != d.Vis.Len()) {
			t.Errorf("%v: planes hold %d, %d, %d points of %d, %d, %d", tc.c, n2, n3, nv, d.Vis2.Len(), d.T3.Len(), d.Vis.Len())
		}
	}
	for _, c := range []Channels{{Groups: 13}, {List: [][2]int{{11, 13}}}} {
		if _, err := SplitChannels(d, c); err == nil {
			t.Errorf("%v: no error", c)
		} else {
			t.Logf("%v: %v", c, err)
		}
	}
}

// TestSpectralRegularizers checks the values against the formulas written out for a small
// cube and the gradients against central finite differences (gonum diff/fd).
func TestSpectralRegularizers(t *testing.T) {
	const P, n = 3, 5
	rng := rand.New(rand.NewPCG(5, 5))
	x := make([]float64, P*n)
	for i := range x {
		x[i] = rng.Float64()
	}
	// S = Σ_k Σ_p (x_{k+1,p} − x_{k,p})², written out.
	want := 0.0
	for p := range n {
		for k := 1; k < P; k++ {
			d := x[k*n+p] - x[(k-1)*n+p]
			want += d * d
		}
	}
	eps := 0.05
	// L = Σ_p √(Σ_k x_{k,p}² + ε²), written out.
	wantL := 0.0
	for p := range n {
		wantL += math.Sqrt(x[p]*x[p] + x[n+p]*x[n+p] + x[2*n+p]*x[2*n+p] + eps*eps)
	}
	for _, tc := range []struct {
		name string
		r    Regularizer
		want float64
	}{
		{"smooth", &SpectralSmoothness{Planes: P, NPix: n}, want},
		{"joint", &JointSparsity{Planes: P, NPix: n, Eps: eps}, wantL},
	} {
		g := make([]float64, P*n)
		v := tc.r.Eval(g, x)
		if math.Abs(v-tc.want) > 1e-14*tc.want {
			t.Errorf("%s: value %.17g, formula %.17g", tc.name, v, tc.want)
		}
		fdg := make([]float64, P*n)
		fd.Gradient(fdg, func(x []float64) float64 { return tc.r.Eval(nil, x) }, x, &fd.Settings{Formula: fd.Central, Step: 1e-6})
		if e := relErr(g, fdg); e > 1e-8 {
			t.Errorf("%s: gradient relative error %.3g against finite differences", tc.name, e)
		}
	}
	// A gray cube has no spectral roughness.
	gray := append(append(append([]float64(nil), x[:n]...), x[:n]...), x[:n]...)
	if v := (&SpectralSmoothness{Planes: P, NPix: n}).Eval(nil, gray); v != 0 {
		t.Errorf("smoothness of a gray cube %g", v)
	}
}

// cubeObjectiveFor builds the cube objective of planes on grid g with the exact transform.
func cubeObjectiveFor(t *testing.T, planes []CubePlane, g Grid, reg RegularizerFunc, mu float64, spec Regularizer, eta float64) *CubeObjective {
	t.Helper()
	c := &CubeObjective{NPix: g.N * g.N, Spectral: spec, Eta: eta}
	for _, p := range planes {
		m, err := NewForwardModel(p.Data, g, true, exactTransform)
		if err != nil {
			t.Fatal(err)
		}
		o := NewObjective(p.Data, m, TermOptions{})
		pt := &CubePlaneTerm{Obj: o, Mu: mu, Rho: float64(p.Data.Len(o.Use()))}
		if reg != nil {
			if pt.Reg, err = reg(g); err != nil {
				t.Fatal(err)
			}
		}
		c.Planes = append(c.Planes, pt)
	}
	return c
}

// randomPlanes returns P planes of randomData (target "T") with frequencies up to fmax.
func randomPlanes(rng *rand.Rand, P int, fmax float64) []CubePlane {
	var planes []CubePlane
	for range P {
		d := randomData(rng, fmax)
		d.Targets = []string{"T"}
		planes = append(planes, CubePlane{Data: d})
	}
	return planes
}

// TestCubeObjectiveGradient checks the cube objective's gradient against central finite
// differences (gonum diff/fd), with each spectral term, and that it does not depend on the
// number of workers.
func TestCubeObjectiveGradient(t *testing.T) {
	const n, pixel, P = 8, 1e-9, 3
	rng := rand.New(rand.NewPCG(9, 9))
	planes := randomPlanes(rng, P, 0.25/pixel)
	g := Grid{N: n, Pixel: pixel}
	x := make([]float64, P*n*n)
	for i := range x {
		x[i] = (0.2 + rng.Float64()) / float64(n*n) * (1 + 0.1*float64(i/(n*n)))
	}
	for _, tc := range []struct {
		name string
		spec Regularizer
	}{
		{"smooth", &SpectralSmoothness{Planes: P, NPix: n * n}},
		{"joint", &JointSparsity{Planes: P, NPix: n * n}},
		{"none", nil},
	} {
		c := cubeObjectiveFor(t, planes, g, tvReg, 37, tc.spec, 5e3)
		c.Workers = 1
		grad := make([]float64, len(x))
		v := c.Eval(grad, x)
		want := make([]float64, len(x))
		fd.Gradient(want, func(x []float64) float64 { return c.Eval(nil, x) }, x, &fd.Settings{Formula: fd.Central, Step: 1e-8})
		if e := relErr(grad, want); e > 1e-6 {
			t.Errorf("%s: gradient relative error %.3g", tc.name, e)
		}
		c.Workers = 3
		grad3 := make([]float64, len(x))
		if v3 := c.Eval(grad3, x); v3 != v || !slices.Equal(grad, grad3) {
			t.Errorf("%s: 3 workers give %.17g, 1 worker %.17g (gradients equal: %v)", tc.name, v3, v, slices.Equal(grad, grad3))
		}
	}
}

// TestCubeOnePlaneIsGray checks that a cube of one plane without spectral term is the gray
// engine's objective, value and gradient to the bit, and that SolveCube of one plane gives
// Solve's image to the bit.
func TestCubeOnePlaneIsGray(t *testing.T) {
	const n, pixel = 8, 1e-9
	rng := rand.New(rand.NewPCG(8, 8))
	d := randomData(rng, 0.25/pixel)
	d.Targets = []string{"T"}
	g := Grid{N: n, Pixel: pixel}
	p := Problem{Data: d, Reg: tvReg, Transform: exactTransform}
	e, err := newEngine(p, Settings{}, GridChoice{Grid: g})
	if err != nil {
		t.Fatal(err)
	}
	c := cubeObjectiveFor(t, []CubePlane{{Data: d}}, g, tvReg, 37, &SpectralSmoothness{Planes: 1, NPix: n * n}, 0)
	c.Planes[0].Rho = e.rho
	x := make([]float64, n*n)
	for i := range x {
		x[i] = (0.2 + rng.Float64()) / float64(n*n) * 1.3
	}
	g1, g2 := make([]float64, n*n), make([]float64, n*n)
	v1 := e.f(37)(g1, x)
	v2 := c.Eval(g2, x)
	if v1 != v2 || !slices.Equal(g1, g2) {
		t.Errorf("one-plane cube %.17g, gray %.17g; gradients equal: %v", v2, v1, slices.Equal(g1, g2))
	}

	d2 := standardObs(4, discVis(4*Mas))
	s := Settings{Seed: 1, PathIter: 40, MaxIter: 80, WeightSteps: 4}
	pp := Problem{Data: d2, Reg: tvReg, Grid: Grid{N: 24, Pixel: 0.5 * Mas}}
	r1, err := Solve(pp, s)
	if err != nil {
		t.Fatal(err)
	}
	planes, err := SplitChannels(d2, Channels{})
	if err != nil {
		t.Fatal(err)
	}
	r2, err := SolveCube(CubeProblem{Problem: pp, Planes: planes}, s)
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(r1.Image, r2.Planes[0].Image) || r1.Objective != r2.Objective {
		t.Errorf("one-plane cube differs from the gray image (objective %.17g against %.17g)", r2.Objective, r1.Objective)
	}
}

// firstNull returns the spatial frequency of the first null of the V² of image img (n × n
// of the given pixel) as the data of d see it: the minimum, between qlo and qhi, of the
// mean |V|² (exact direct sum) along the directions of the V² points of d that lie in that
// range (at most 24 of them), refined by a parabola through the three smallest samples.
// Directions the data do not sample say nothing about the plane and are left out.
func firstNull(img []float64, n int, pixel float64, d *dataset.Data, qlo, qhi float64) float64 {
	const nq = 120
	var dirs [][2]float64
	p := &d.Vis2
	for i := range p.Len() {
		if q := math.Hypot(p.U[i], p.V[i]); q >= qlo && q <= qhi {
			dirs = append(dirs, [2]float64{p.U[i] / q, p.V[i] / q})
		}
	}
	if step := len(dirs)/24 + 1; step > 1 {
		var keep [][2]float64
		for i := 0; i < len(dirs); i += step {
			keep = append(keep, dirs[i])
		}
		dirs = keep
	}
	v2 := make([]float64, nq)
	q := func(i int) float64 { return qlo + (qhi-qlo)*float64(i)/float64(nq-1) }
	for i := range nq {
		for _, dr := range dirs {
			v := directVis(img, n, pixel, q(i)*dr[0], q(i)*dr[1])
			v2[i] += (real(v)*real(v) + imag(v)*imag(v)) / float64(len(dirs))
		}
	}
	k := 1
	for i := 1; i < nq-1; i++ {
		if v2[i] < v2[k] {
			k = i
		}
	}
	// Vertex of the parabola through (k−1, k, k+1).
	a, b, c := v2[k-1], v2[k], v2[k+1]
	off := 0.0
	if den := a - 2*b + c; den > 0 {
		off = 0.5 * (a - c) / den
	}
	return q(k) + off*(qhi-qlo)/float64(nq-1)
}

// j11 is the first zero of the Bessel function J1: the uniform disc of diameter θ has its
// first V² null at π·θ·q = 3.8317 (Born & Wolf, Principles of Optics, sect. 8.5.2; value
// from Abramowitz & Stegun, table 9.5).
const j11 = 3.83170597020751

// TestCubeGrowingDisc reconstructs a uniform disc whose diameter grows by 20 % across the
// band, from V² and closure phases computed with the exact formula 2J1(πθq)/(πθq) (Born &
// Wolf sect. 8.5.2) per channel, as a cube of 8 planes of two channels each. Each plane's
// diameter, from the first null of its V² (θ = 3.8317/(π q_null)), is within 3 % of the
// true diameter at the plane's mean wavelength, and so is the uniform disc fitted to the
// plane image's V² at the data's (u,v) points; the gray image's fitted diameter is logged
// for comparison.
func TestCubeGrowingDisc(t *testing.T) {
	const lmin, lmax, theta0 = 1.5e-6, 2.4e-6, 6 * Mas
	theta := func(l float64) float64 { return theta0 * (1 + 0.2*(l-lmin)/(lmax-lmin)) }
	d := observeChromatic(11, 6, 70, func(l float64) func(u, v float64) complex128 { return discVis(theta(l)) },
		synthOpts{nchan: 16, nha: 8, lmin: lmin, lmax: lmax, hspan: 1.5, sigV2: 0.01, sigPhi: 0.05, t3: true, noise: true})
	planes, err := SplitChannels(d, Channels{Groups: 8})
	if err != nil {
		t.Fatal(err)
	}
	g := Grid{N: 48, Pixel: 0.35 * Mas}
	r, err := SolveCube(CubeProblem{Problem: Problem{Data: d, Reg: tvReg, Grid: g}, Planes: planes}, Settings{Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	qOf := func(th float64) float64 { return j11 / (math.Pi * th) }
	_, gfit, _ := fitSize(reconV2(t, d, r.Gray))
	t.Logf("gray: χ²ᵣ %.3f, UD fit %.3f mas (truth %.3f–%.3f mas); cube: η %.3g, %d iterations, %s", r.Gray.Chi2r,
		gfit/Mas, theta(lmin)/Mas, theta(lmax)/Mas, r.SpectralWeight, r.Iter, r.StopReason)
	for k, p := range r.Planes {
		want := theta(p.Coord)
		q := firstNull(p.Image, g.N, g.Pixel, p.Data, 0.7*qOf(want), 1.3*qOf(want))
		got := j11 / (math.Pi * q)
		rel := got/want - 1
		_, fit, _ := fitSize(reconV2(t, p.Data, &Result{Image: p.Image, Grid: r.Grid}))
		t.Logf("plane %d (%s, %.4f µm): χ²ᵣ %.3f, diameter %.3f mas, truth %.3f mas (%+.2f %%); UD fit %.3f mas (%+.2f %%)", k+1, p.Label, p.Coord*1e6, p.Chi2r, got/Mas, want/Mas, 100*rel, fit/Mas, 100*(fit/want-1))
		if math.Abs(rel) > 0.03 {
			t.Errorf("plane %d: diameter %.3f mas from the null, truth %.3f mas: %+.2f %% (limit 3 %%)", k+1, got/Mas, want/Mas, 100*rel)
		}
		if math.Abs(fit/want-1) > 0.03 {
			t.Errorf("plane %d: fitted diameter %.3f mas, truth %.3f mas (limit 3 %%)", k+1, fit/Mas, want/Mas)
		}
	}
}

// TestCubeGrayObject reconstructs a gray object (a disc with a point source, the same at
// every wavelength) as a cube of 4 planes. Each plane must agree with the gray image within
// the noise: its relative L1 difference to the gray image (Fidelity, beam λmin/(2·Bmax)) at
// most twice the difference between the gray images of two independent noise draws, and
// its second-moment size within 2 % of the gray image's. A plane holds a quarter of the
// data, so its own noise is about √4 = 2 times the gray image's (common practice, no
// source). Without the spectral term the planes scatter more (measured: the worst plane at
// L1 0.087 against 0.044 with it), which the test checks too.
func TestCubeGrayObject(t *testing.T) {
	vis := func(u, v float64) complex128 {
		// A disc of 4 mas and a point of 30 % of its flux 5 mas to the east and 2 mas north.
		q := math.Hypot(u, v)
		c := complex(0.3, 0) * cmplxExp(-2*math.Pi*(u*5*Mas+v*2*Mas))
		return (complex(UniformDiscV(4*Mas, q), 0) + c) / 1.3
	}
	obs := func(seed uint64) *dataset.Data {
		return observeChromatic(seed, 6, 50, func(float64) func(u, v float64) complex128 { return vis },
			synthOpts{nchan: 8, nha: 8, lmin: 1.5e-6, lmax: 2.4e-6, hspan: 1.5, sigV2: 0.01, sigPhi: 0.05, t3: true, noise: true})
	}
	d := obs(21)
	g := Grid{N: 48, Pixel: 0.35 * Mas}
	planes, err := SplitChannels(d, Channels{Groups: 4})
	if err != nil {
		t.Fatal(err)
	}
	other, err := Solve(Problem{Data: obs(22), Reg: tvReg, Grid: g}, Settings{Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	beam := d.Summarize().Resolution
	worst := map[Spectral]float64{}
	var gray *Result
	for _, sp := range []Spectral{SpectralSmooth, SpectralNone} {
		r, err := SolveCube(CubeProblem{Problem: Problem{Data: d, Reg: tvReg, Grid: g}, Planes: planes, Spectral: sp, Gray: gray}, Settings{Seed: 1})
		if err != nil {
			t.Fatal(err)
		}
		gray = r.Gray
		_, noiseL1, _ := Fidelity(other.Image, r.Gray.Image, g.N, g.Pixel, beam)
		_, _, _, gsize := planeMoments(r.Gray.Image, g.N, g.Pixel)
		t.Logf("%s: gray images of two noise draws: L1 %.4f; cube η %.3g, %s", sp, noiseL1, r.SpectralWeight, r.StopReason)
		for k, p := range r.Planes {
			ncc, l1, _ := Fidelity(p.Image, r.Gray.Image, g.N, g.Pixel, beam)
			worst[sp] = math.Max(worst[sp], l1)
			t.Logf("%s: plane %d (%s): χ²ᵣ %.3f, NCC %.4f, L1 %.4f, size %.3f mas (gray %.3f)", sp, k+1, p.Label, p.Chi2r, ncc, l1, p.Size/Mas, gsize/Mas)
			if sp == SpectralNone {
				continue
			}
			if l1 > 2*noiseL1 {
				t.Errorf("plane %d: L1 %.4f to the gray image, more than twice the noise's %.4f", k+1, l1, noiseL1)
			}
			if math.Abs(p.Size/gsize-1) > 0.02 {
				t.Errorf("plane %d: size %.3f mas, gray %.3f mas", k+1, p.Size/Mas, gsize/Mas)
			}
		}
	}
	if !(worst[SpectralSmooth] < worst[SpectralNone]) {
		t.Errorf("worst plane's L1 %.4f with the spectral term, %.4f without: the term does not tie the planes", worst[SpectralSmooth], worst[SpectralNone])
	}
}

func cmplxExp(phi float64) complex128 { s, c := math.Sincos(phi); return complex(c, s) }

// TestRunSweepPanic checks that a panic in a plane's run on another goroutine reaches the
// caller of runSweep, where the commands' panic net can report it, and stops the sweep
// without leaving the other goroutines waiting for the plane that failed.
func TestRunSweepPanic(t *testing.T) {
	deps, _ := planeDeps(9, &SpectralSmoothness{})
	for _, w := range []int{1, 3} {
		func() {
			defer func() {
				if v := recover(); v != "plane 4" {
					t.Errorf("%d workers: recovered %v, want the panic of plane 4", w, v)
				}
			}()
			runSweep(9, deps, w, make([]time.Duration, 9), func(k int) {
				if k == 4 {
					panic("plane 4")
				}
				time.Sleep(time.Millisecond)
			})
		}()
	}
}

// smallChromaticDisc returns the small chromatic data of the cube's tests of workers, stops and
// transform calls (a 4 mas disc at 2 µm growing with λ, 6 channels from 1.8 to 2.3 µm, 5
// telescopes, noisy V² and closure phases) and its split into groups planes.
func smallChromaticDisc(t *testing.T, groups int) (*dataset.Data, []CubePlane) {
	t.Helper()
	d := observeChromatic(31, 5, 50, func(l float64) func(u, v float64) complex128 { return discVis(4 * Mas * l / 2e-6) },
		synthOpts{nchan: 6, nha: 4, lmin: 1.8e-6, lmax: 2.3e-6, hspan: 1.2, sigV2: 0.01, sigPhi: 0.05, t3: true, noise: true})
	planes, err := SplitChannels(d, Channels{Groups: groups})
	if err != nil {
		t.Fatal(err)
	}
	return d, planes
}

// TestSolveCubeWorkers checks that the cube does not depend on the number of workers: the same
// data and settings give the same bits with one and with three, for each spectral term, which
// fit the planes one at a time (JointSparsity), an odd plane once its even neighbours are
// fitted (SpectralSmoothness) or all at once (none; planeDeps). With several planes running at
// once, the progress function is still called one call at a time, and every plane's run
// reports its last iteration (planeReporter).
func TestSolveCubeWorkers(t *testing.T) {
	d, planes := smallChromaticDisc(t, 3)
	for _, spec := range []Spectral{SpectralJoint, SpectralSmooth, SpectralNone} {
		var imgs [][]float64
		for _, w := range []int{1, 3} {
			var inside, overlaps atomic.Int32
			var mu sync.Mutex
			seen := map[string]bool{}
			s := Settings{Seed: 1, PathIter: 30, MaxIter: 60, WeightSteps: 3, Workers: w, Progress: func(p Progress) bool {
				if inside.Add(1) > 1 {
					overlaps.Add(1)
				}
				mu.Lock()
				seen[p.Stage] = true
				mu.Unlock()
				inside.Add(-1)
				return true
			}}
			r, err := SolveCube(CubeProblem{Problem: Problem{Data: d, Reg: tvReg, Grid: Grid{N: 24, Pixel: 0.5 * Mas}}, Planes: planes, Spectral: spec}, s)
			if err != nil {
				t.Fatal(err)
			}
			if n := overlaps.Load(); n > 0 {
				t.Errorf("%v, %d workers: the progress function was called during another call %d times", spec, w, n)
			}
			for k := range planes {
				if st := fmt.Sprintf("plane %d/%d", k+1, len(planes)); !seen[st] {
					t.Errorf("%v, %d workers: no report of stage %q", spec, w, st)
				}
			}
			var all []float64
			for _, p := range r.Planes {
				all = append(all, p.Image...)
			}
			imgs = append(imgs, all)
		}
		if !slices.Equal(imgs[0], imgs[1]) {
			t.Errorf("%v: the cube depends on the number of workers", spec)
		}
	}
}

// TestSolveCubeStops checks that a progress function that asks to stop stops a cube whose
// planes run at once: SolveCube returns ErrStopped, and the function is not called again after
// it said no.
func TestSolveCubeStops(t *testing.T) {
	d, planes := smallChromaticDisc(t, 6)
	var mu sync.Mutex
	planeCalls, after := 0, 0
	stopped := false
	s := Settings{Seed: 1, PathIter: 30, MaxIter: 60, WeightSteps: 3, Workers: 3, Progress: func(p Progress) bool {
		mu.Lock()
		defer mu.Unlock()
		if stopped {
			after++
			return false
		}
		if strings.HasPrefix(p.Stage, "plane ") {
			planeCalls++
			if planeCalls == 5 {
				stopped = true
				return false
			}
		}
		return true
	}}
	_, err := SolveCube(CubeProblem{Problem: Problem{Data: d, Reg: tvReg, Grid: Grid{N: 24, Pixel: 0.5 * Mas}}, Planes: planes}, s)
	if !errors.Is(err, ErrStopped) {
		t.Errorf("error %v, want ErrStopped", err)
	}
	if !stopped || after > 0 {
		t.Errorf("stopped %v; %d calls after the function said no", stopped, after)
	}
}

// TestPlaneDeps checks the order of the sweeps against the couplings of the spectral terms:
// two planes that one term holds together must never run at once, so one of them waits for the
// other; SpectralSmoothness holds neighbours only, so no other plane waits (red–black
// Gauss–Seidel); without a spectral term no plane waits; JointSparsity holds all planes: a chain.
func TestPlaneDeps(t *testing.T) {
	waits := func(deps [][]int, a, b int) bool { return slices.Contains(deps[a], b) }
	for _, p := range []int{1, 2, 5, 6} {
		deps, chain := planeDeps(p, &SpectralSmoothness{})
		if chain {
			t.Errorf("%d planes, smoothness: a chain", p)
		}
		for k := range p {
			for j := range p {
				near := j == k+1 || j == k-1
				if waits(deps, k, j) && !near {
					t.Errorf("%d planes, smoothness: plane %d waits for plane %d, not a neighbour", p, k, j)
				}
				if near && k < j && waits(deps, k, j) == waits(deps, j, k) {
					t.Errorf("%d planes, smoothness: neighbours %d and %d can run at once (or wait for each other)", p, k, j)
				}
			}
		}
		if deps, chain := planeDeps(p, nil); chain || slices.ContainsFunc(deps, func(d []int) bool { return len(d) > 0 }) {
			t.Errorf("%d planes, no spectral term: dependencies %v", p, deps)
		}
		deps, chain = planeDeps(p, &JointSparsity{})
		for k := 1; k < p; k++ {
			if !waits(deps, k, k-1) {
				t.Errorf("%d planes, joint sparsity: plane %d does not wait for plane %d", p, k, k-1)
			}
		}
		if !chain {
			t.Errorf("%d planes, joint sparsity: not a chain", p)
		}
	}
}

// TestRunSweep checks the scheduler of the sweeps: with one worker and with three, every
// plane runs once, never before the planes it waits for have ended, and with three some
// planes run at once.
func TestRunSweep(t *testing.T) {
	deps, _ := planeDeps(9, &SpectralSmoothness{})
	for _, w := range []int{1, 3} {
		var mu sync.Mutex
		ended := make([]bool, 9)
		runs := make([]int, 9)
		var now, most atomic.Int32
		runSweep(9, deps, w, make([]time.Duration, 9), func(k int) {
			most.Store(max(most.Load(), now.Add(1)))
			mu.Lock()
			for _, j := range deps[k] {
				if !ended[j] {
					t.Errorf("%d workers: plane %d started before plane %d ended", w, k, j)
				}
			}
			runs[k]++
			mu.Unlock()
			time.Sleep(time.Millisecond)
			mu.Lock()
			ended[k] = true
			mu.Unlock()
			now.Add(-1)
		})
		for k, n := range runs {
			if n != 1 {
				t.Errorf("%d workers: plane %d ran %d times", w, k, n)
			}
		}
		if m := most.Load(); (w == 1) != (m == 1) {
			t.Errorf("%d workers: at most %d planes at once", w, m)
		}
	}
}

// TestPlaneSpectral checks the one-plane parts of the spectral regularizers against the
// whole: for two images x and y of plane k, S(cube with x) − S(cube with y) equals
// evalPlane(x) − evalPlane(y), and the gradient of evalPlane is plane k's block of ∇S.
func TestPlaneSpectral(t *testing.T) {
	const P, n = 4, 6
	rng := rand.New(rand.NewPCG(6, 6))
	cube := make([]float64, P*n)
	for i := range cube {
		cube[i] = rng.Float64()
	}
	x, y := make([]float64, n), make([]float64, n)
	for i := range x {
		x[i], y[i] = rng.Float64(), rng.Float64()
	}
	for _, r := range []Regularizer{&SpectralSmoothness{Planes: P, NPix: n}, &JointSparsity{Planes: P, NPix: n, Eps: 0.03}} {
		ps := r.(planeSpectral)
		for k := range P {
			ps.prepare(cube, k)
			with := func(img []float64) []float64 {
				c := append([]float64(nil), cube...)
				copy(c[k*n:], img)
				return c
			}
			full := make([]float64, P*n)
			sx := r.Eval(full, with(x))
			sy := r.Eval(nil, with(y))
			g := make([]float64, n)
			px := ps.evalPlane(g, 0, 1, x)
			py := ps.evalPlane(nil, 0, 1, y)
			if d := (sx - sy) - (px - py); math.Abs(d) > 1e-12*math.Abs(sx) {
				t.Errorf("%T plane %d: differences %.17g and %.17g", r, k, sx-sy, px-py)
			}
			if e := relErr(g, full[k*n:(k+1)*n]); e > 1e-14 {
				t.Errorf("%T plane %d: gradient relative error %.3g", r, k, e)
			}
			// grad = a·grad + b·∂S/∂x: a = 0.5, b = 3 on a grad holding y.
			gab := append([]float64(nil), y...)
			ps.evalPlane(gab, 0.5, 3, x)
			want := make([]float64, n)
			for i := range want {
				want[i] = 0.5*y[i] + 3*full[k*n+i]
			}
			if e := relErr(gab, want); e > 1e-14 {
				t.Errorf("%T plane %d: a·grad + b·∂S/∂x has relative error %.3g", r, k, e)
			}
		}
	}
}

// TestCentreCube moves a cube whose planes sit off the centre: every plane moves by the same
// whole pixels, which bring the centroid of the planes' sum nearest to the centre pixel
// (CONVENTIONS.md: the centre is (n/2, n/2)), and their relative positions stay; a cube that
// fits visibility phases is not moved (they fix the position).
func TestCentreCube(t *testing.T) {
	const n, P = 16, 3
	npix := n * n
	x := make([]float64, P*npix)
	// Plane k: one point at (10+k, 4), the sum's centroid at (11, 4): a move of (−3, 4).
	for k := range P {
		x[k*npix+4*n+10+k] = 2
	}
	cube := make([]float64, len(x))
	for i, v := range x {
		cube[i] = v / 2
	}
	c := &CubeObjective{Planes: []*CubePlaneTerm{{Obj: NewObjective(&dataset.Data{}, nil, TermOptions{})}}}
	sh := centreCube(c, CubeProblem{}, x, cube, n)
	if sh != [2]int{-3, 4} {
		t.Fatalf("move %v, want [-3 4]", sh)
	}
	for k := range P {
		want := k*npix + 8*n + 7 + k
		if x[want] != 2 || cube[want] != 1 {
			t.Errorf("plane %d: its point is not at (%d, 8)", k, 7+k)
		}
	}
	if sh := centreCube(c, CubeProblem{}, x, cube, n); sh != [2]int{} {
		t.Errorf("a centred cube moved by %v", sh)
	}
	// Visibility phases fix the position: the same cube off the centre stays.
	withPhases := NewObjective(randomData(rand.New(rand.NewPCG(1, 1)), 1e8), nil, TermOptions{})
	if withPhases.Use()&dataset.VisPhi == 0 {
		t.Fatal("the test data have no visibility phases")
	}
	shiftCyclic(x[:npix], n, [2]int{3, 0})
	c.Planes[0].Obj = withPhases
	if sh := centreCube(c, CubeProblem{}, x, cube, n); sh != [2]int{} {
		t.Errorf("a cube fitting visibility phases moved by %v", sh)
	}
}
