package recon

import (
	"math"
	"math/rand/v2"
	rf "reflect"
	"slices"
	"testing"

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

// TestCubeObjectiveGradient checks the cube objective's gradient against central finite
// differences (gonum diff/fd), with each spectral term, and that it does not depend on the
// number of workers.
func TestCubeObjectiveGradient(t *testing.T) {
	const n, pixel, P = 8, 1e-9, 3
	rng := rand.New(rand.NewPCG(9, 9))
	var planes []CubePlane
	for range P {
		d := randomData(rng, 0.25/pixel)
		d.Targets = []string{"T"}
		planes = append(planes, CubePlane{Data: d})
	}
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
