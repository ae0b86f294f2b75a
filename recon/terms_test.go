package recon

import (
	"gonum.org/v1/gonum/integrate/quad"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"
	"vcz/dataset"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/stat"

	"vcz/nufft"
)

func exactTransform(n int, pixel float64, u, v []float64) (Transform, error) {
	return nufft.NewExact(n, n, pixel, u, v, nufft.Options{Workers: 1})
}

// randomData makes a data set of every type on random baselines (cycles/rad up to fmax),
// with triangles built on the V² baselines and some baselines given with the opposite sign, so
// that deduplication and conjugation are exercised. Values are random around plausible levels.
func randomData(rng *rand.Rand, fmax float64) *dataset.Data {
	d := &dataset.Data{}
	nb := 12
	bu, bv := make([]float64, nb), make([]float64, nb)
	for i := range bu {
		bu[i] = (2*rng.Float64() - 1) * fmax
		bv[i] = (2*rng.Float64() - 1) * fmax
		d.Vis2.U = append(d.Vis2.U, bu[i])
		d.Vis2.V = append(d.Vis2.V, bv[i])
		d.Vis2.Value = append(d.Vis2.Value, rng.Float64())
		d.Vis2.Err = append(d.Vis2.Err, 0.02+0.05*rng.Float64())
		d.Vis2.Lambda = append(d.Vis2.Lambda, 1e-6)
		d.Vis2.DLambda = append(d.Vis2.DLambda, 1e-8)
		d.Vis2.MJD = append(d.Vis2.MJD, 60000)
		d.Vis2.Origin = append(d.Vis2.Origin, dataset.Origin{})
	}
	for k := 0; k < 10; k++ {
		i, j := rng.IntN(nb), rng.IntN(nb)
		t := &d.T3
		t.U1 = append(t.U1, bu[i])
		t.V1 = append(t.V1, bv[i])
		s := 1.0
		if k%2 == 1 {
			s = -1
		}
		t.U2 = append(t.U2, s*bu[j])
		t.V2 = append(t.V2, s*bv[j])
		t.Amp = append(t.Amp, 0.3*rng.Float64())
		t.AmpErr = append(t.AmpErr, 0.01+0.02*rng.Float64())
		t.Phi = append(t.Phi, (2*rng.Float64()-1)*math.Pi)
		t.PhiErr = append(t.PhiErr, 0.05+0.2*rng.Float64())
		t.AmpOK = append(t.AmpOK, k%3 != 0)
		t.PhiOK = append(t.PhiOK, true)
		t.Lambda = append(t.Lambda, 1e-6)
		t.DLambda = append(t.DLambda, 1e-8)
		t.MJD = append(t.MJD, 60000)
		t.Origin = append(t.Origin, dataset.Origin{})
	}
	for k := 0; k < 9; k++ {
		p := &d.Vis
		p.U = append(p.U, (2*rng.Float64()-1)*fmax)
		p.V = append(p.V, (2*rng.Float64()-1)*fmax)
		p.Amp = append(p.Amp, rng.Float64())
		p.AmpErr = append(p.AmpErr, 0.05)
		p.Phi = append(p.Phi, (2*rng.Float64()-1)*math.Pi)
		p.PhiErr = append(p.PhiErr, 0.1+0.1*rng.Float64())
		p.AmpOK = append(p.AmpOK, true)
		p.PhiOK = append(p.PhiOK, true)
		at := dataset.AmpAbsolute
		if k%3 == 2 {
			at = dataset.AmpCorrelatedFlux
		}
		pt := dataset.PhiAbsolute
		if k == 4 {
			pt = dataset.PhiDifferential
		}
		p.AmpTyp = append(p.AmpTyp, at)
		p.PhiTyp = append(p.PhiTyp, pt)
		p.Lambda = append(p.Lambda, 1e-6)
		p.DLambda = append(p.DLambda, 1e-8)
		p.MJD = append(p.MJD, 60000)
		p.Origin = append(p.Origin, dataset.Origin{})
	}
	// Differential phases and amplitudes: three rows of five channels across 1.5–2.5 µm, and
	// a row of a single channel that their terms leave out.
	for row, nc := range []int{5, 5, 5, 1} {
		bx, by := (2*rng.Float64()-1)*fmax*1.5e-6, (2*rng.Float64()-1)*fmax*1.5e-6 // baseline (m)
		for c := range nc {
			p := &d.Vis
			l := (1.5 + 0.25*float64(c)) * 1e-6
			p.U = append(p.U, bx/l)
			p.V = append(p.V, by/l)
			p.Amp = append(p.Amp, 0.8+0.4*rng.Float64())
			p.AmpErr = append(p.AmpErr, 0.03)
			p.Phi = append(p.Phi, 0.3*rng.NormFloat64())
			p.PhiErr = append(p.PhiErr, 0.05+0.1*rng.Float64())
			p.AmpOK = append(p.AmpOK, true)
			p.PhiOK = append(p.PhiOK, true)
			p.AmpTyp = append(p.AmpTyp, dataset.AmpDifferential)
			p.PhiTyp = append(p.PhiTyp, dataset.PhiDifferential)
			p.Lambda = append(p.Lambda, l)
			p.DLambda = append(p.DLambda, 1e-8)
			p.MJD = append(p.MJD, 60000)
			p.Origin = append(p.Origin, dataset.Origin{HDU: 3, Row: row + 1, Channel: c})
		}
	}
	return d
}

// directVis is the van Cittert–Zernike sum of CONVENTIONS.md, written out independently of
// the transform: V(u,v) = Σ I exp(−2πi(u x + v y)) / Σ I.
func directVis(img []float64, n int, pixel, u, v float64) complex128 {
	var s complex128
	f := 0.0
	for iy := 0; iy < n; iy++ {
		for ix := 0; ix < n; ix++ {
			x := -float64(ix-n/2) * pixel
			y := float64(iy-n/2) * pixel
			s += complex(img[iy*n+ix], 0) * cmplx.Exp(complex(0, -2*math.Pi*(u*x+v*y)))
			f += img[iy*n+ix]
		}
	}
	return s / complex(f, 0)
}

// TestModelAgainstDirectSum checks the model visibilities and bispectra against the direct
// sum of CONVENTIONS.md on even and odd grids, through the exact transform, the default and
// the gridding transform (nufft.Plan) at its tolerance; the model calls the transform at
// points shifted by half a period of the grid (halfShift), which the sum does not.
func TestModelAgainstDirectSum(t *testing.T) {
	for _, n := range []int{8, 9, 10} {
		testModelAgainstDirectSum(t, n)
	}
}

func testModelAgainstDirectSum(t *testing.T, n int) {
	rng := rand.New(rand.NewPCG(1, 2))
	const pixel = 1e-9
	d := randomData(rng, 0.5/pixel/2)
	img := make([]float64, n*n)
	for i := range img {
		img[i] = rng.Float64()
	}
	plan := func(n int, pixel float64, u, v []float64) (Transform, error) {
		return nufft.NewPlan(n, n, pixel, u, v, nufft.Options{Workers: 1})
	}
	for _, mk := range []struct {
		name string
		f    TransformFunc
		tol  float64
	}{{"exact", exactTransform, 1e-12}, {"default", NewTransform(1), 1e-5}, {"plan", plan, 1e-5}} {
		m, err := NewForwardModel(d, Grid{N: n, Pixel: pixel}, true, mk.f)
		if err != nil {
			t.Fatal(err)
		}
		m.Forward(img)
		worst := 0.0
		for i, r := range m.vis2 {
			want := directVis(img, n, pixel, d.Vis2.U[i], d.Vis2.V[i])
			worst = math.Max(worst, cmplx.Abs(m.at(r)-want))
		}
		for i, r := range m.t3 {
			// B = V(u1,v1)·V(u2,v2)·conj(V(u1+u2, v1+v2)) (CONVENTIONS.md).
			t3 := &d.T3
			want := directVis(img, n, pixel, t3.U1[i], t3.V1[i]) * directVis(img, n, pixel, t3.U2[i], t3.V2[i]) *
				cmplx.Conj(directVis(img, n, pixel, t3.U1[i]+t3.U2[i], t3.V1[i]+t3.V2[i]))
			worst = math.Max(worst, cmplx.Abs(m.at(r[0])*m.at(r[1])*m.at(r[2])-want))
		}
		if worst > mk.tol {
			t.Errorf("n = %d, %s: largest difference from the direct sum %g", n, mk.name, worst)
		}
		distinct, shared := m.Points()
		// 12 V² + 10 triangles × 3 + 9 + 16 VIS = 67 baselines; the triangles' first two sides
		// are V² baselines, so at least 20 are shared.
		if distinct+shared != 67 || shared < 20 {
			t.Errorf("%s: %d distinct, %d shared", mk.name, distinct, shared)
		}
	}
}

// TestClosurePhaseSign pins the sign of the closure phase on an asymmetric image: a point at
// the centre (flux 1) and one of flux f at x east: V(u) = (1 + f·exp(−2πi u x))/(1+f).
func TestClosurePhaseSign(t *testing.T) {
	const n, pixel = 16, 1e-9
	img := make([]float64, n*n)
	img[(n/2)*n+n/2] = 1
	img[(n/2)*n+n/2-3] = 0.5 // ix = n/2−3 → x = +3 pixels (east)
	x := 3 * pixel
	d := &dataset.Data{}
	u1, u2 := 0.1/pixel, 0.07/pixel
	d.T3 = dataset.T3Points{U1: []float64{u1}, V1: []float64{0}, U2: []float64{u2}, V2: []float64{0.02 / pixel},
		Amp: []float64{1}, AmpErr: []float64{1}, Phi: []float64{0}, PhiErr: []float64{1},
		AmpOK: []bool{true}, PhiOK: []bool{true}, Lambda: []float64{1e-6}, DLambda: []float64{0}, MJD: []float64{0}, Origin: []dataset.Origin{{}}}
	m, err := NewForwardModel(d, Grid{N: n, Pixel: pixel}, true, exactTransform)
	if err != nil {
		t.Fatal(err)
	}
	m.Forward(img)
	vis := func(u float64) complex128 { return (1 + 0.5*cmplx.Exp(complex(0, -2*math.Pi*u*x))) / 1.5 }
	want := cmplx.Phase(vis(u1) * vis(u2) * cmplx.Conj(vis(u1+u2)))
	r := m.t3[0]
	got := cmplx.Phase(m.at(r[0]) * m.at(r[1]) * m.at(r[2]))
	if math.Abs(got-want) > 1e-12 || math.Abs(want) < 0.1 {
		t.Errorf("closure phase %g rad, want %g rad", got, want)
	}
}

func TestObjectiveGradient(t *testing.T) {
	const n, pixel = 8, 1e-9
	for seed := uint64(1); seed <= 3; seed++ {
		rng := rand.New(rand.NewPCG(seed, 7))
		d := randomData(rng, 0.5/pixel/2)
		for _, tc := range []struct {
			name   string
			norm   bool
			opt    TermOptions
			smooth float64
		}{
			{"all", true, TermOptions{}, 0},
			{"all smoothed", true, TermOptions{}, DefaultPhaseSmoothing},
			{"t3phi smoothed", true, TermOptions{Use: dataset.T3Phi}, 1},
			{"visphi smoothed", true, TermOptions{Use: dataset.VisPhi}, 1},
			{"weighted smoothed", true, TermOptions{Weights: Weights{2, 0.5, 3, 0.7, 1.5}}, 3},
			{"weighted", true, TermOptions{Weights: Weights{2, 0.5, 3, 0.7, 1.5}}, 0},
			{"complex", true, TermOptions{ComplexVis: true}, 0},
			{"complex unnormalised", false, TermOptions{ComplexVis: true}, 0},
			{"vis2", true, TermOptions{Use: dataset.Vis2}, 0},
			{"t3amp", true, TermOptions{Use: dataset.T3Amp}, 0},
			{"t3phi", true, TermOptions{Use: dataset.T3Phi}, 0},
			{"visamp", true, TermOptions{Use: dataset.VisAmp}, 0},
			{"visphi", true, TermOptions{Use: dataset.VisPhi}, 0},
			{"visdiff", true, TermOptions{Use: dataset.VisDiff}, 0},
			{"visdiff unnormalised", false, TermOptions{Use: dataset.VisDiff | dataset.VisAmp}, 0},
		} {
			m, err := NewForwardModel(d, Grid{N: n, Pixel: pixel}, tc.norm, exactTransform)
			if err != nil {
				t.Fatal(err)
			}
			o := NewObjective(d, m, tc.opt)
			o.SetPhaseSmoothing(tc.smooth)
			if seed == 2 {
				o.minParallel = 0 // the data split in parallel parts
			}
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
				t.Errorf("seed %d %s: gradient relative error %.3g", seed, tc.name, e)
			}
		}
	}
}

// TestPhaseSmoothing checks that the smoothed phase terms change the objective but not the χ²
// reported, and that they approach the exact terms as the scale η shrinks: the smoothed term
// 2(|z| − Re z)/(√(|z|² + η²)σ²) tends to 2(1 − cos φ)/σ² for η/|z| → 0.
func TestPhaseSmoothing(t *testing.T) {
	const n, pixel = 8, 1e-9
	rng := rand.New(rand.NewPCG(5, 7))
	d := randomData(rng, 0.5/pixel/2)
	m, err := NewForwardModel(d, Grid{N: n, Pixel: pixel}, true, exactTransform)
	if err != nil {
		t.Fatal(err)
	}
	o := NewObjective(d, m, TermOptions{Use: dataset.T3Phi | dataset.VisPhi})
	x := make([]float64, n*n)
	for i := range x {
		x[i] = 0.2 + rng.Float64()
	}
	exact := o.Eval(nil, x)
	c3, cv := o.Chi2(dataset.T3Phi), o.Chi2(dataset.VisPhi)
	o.SetPhaseSmoothing(1)
	smooth := o.Eval(nil, x)
	if o.Chi2(dataset.T3Phi) != c3 || o.Chi2(dataset.VisPhi) != cv {
		t.Errorf("smoothing changed the reported χ²: %g, %g against %g, %g", o.Chi2(dataset.T3Phi), o.Chi2(dataset.VisPhi), c3, cv)
	}
	if !(smooth != exact) {
		t.Errorf("smoothed objective %g equals the exact one", smooth)
	}
	prev := math.Abs(smooth - exact)
	for _, f := range []float64{1e-1, 1e-2, 1e-3, 1e-4, 1e-6, 1e-8} {
		o.SetPhaseSmoothing(f)
		diff := math.Abs(o.Eval(nil, x) - exact)
		if !(diff < prev) {
			t.Errorf("η × %g: difference %g did not shrink from %g", f, diff, prev)
		}
		prev = diff
	}
	if prev > 1e-6*exact {
		t.Errorf("with tiny η the smoothed objective differs by %g from %g", prev, exact)
	}
}

// TestSmoothedPhaseUnbiased checks that the smoothed phase terms vanish, with their gradient,
// wherever the model phases equal the measured ones, at every amplitude and for every
// smoothing: the wrap-safe term 2(1 − cos(φ − φₒ))/σ² is zero at φ = φₒ (its definition), and
// a surrogate that is not would prefer other images than the one that fits (a bias). The
// data's phases are set to those of a random image, whose model amplitudes span small and
// large values.
func TestSmoothedPhaseUnbiased(t *testing.T) {
	const n, pixel = 8, 1e-9
	rng := rand.New(rand.NewPCG(11, 7))
	d := randomData(rng, 0.5/pixel/2)
	m, err := NewForwardModel(d, Grid{N: n, Pixel: pixel}, true, exactTransform)
	if err != nil {
		t.Fatal(err)
	}
	x := make([]float64, n*n)
	for i := range x {
		x[i] = 0.2 + rng.Float64()
	}
	m.Forward(x)
	minAmp := math.Inf(1)
	for i := range d.T3.Phi {
		r := m.t3[i]
		b := m.at(r[0]) * m.at(r[1]) * m.at(r[2])
		d.T3.Phi[i] = cmplx.Phase(b)
		minAmp = math.Min(minAmp, cmplx.Abs(b))
	}
	for i := range d.Vis.Phi {
		v := m.at(m.cvis[i])
		d.Vis.Phi[i] = cmplx.Phase(v)
		d.Vis.PhiTyp[i] = dataset.PhiAbsolute
	}
	o := NewObjective(d, m, TermOptions{Use: dataset.T3Phi | dataset.VisPhi})
	g := make([]float64, n*n)
	for _, f := range []float64{1e-3, DefaultPhaseSmoothing, 1, 1e3} {
		o.SetPhaseSmoothing(f)
		v := o.Eval(g, x)
		gmax := 0.0
		for _, gi := range g {
			gmax = math.Max(gmax, math.Abs(gi))
		}
		if math.Abs(v) > 1e-9 || gmax > 1e-6 {
			t.Errorf("smoothing %g: objective %g and gradient %g at matching phases, want 0 (smallest |B| %.2g)", f, v, gmax, minAmp)
		}
	}
}

// TestExpectedPhaseTerm checks E[2(1 − cos ε)]/σ² for ε ~ N(0, σ²) against a numerical
// integral over the normal density (gonum's Gauss–Legendre quadrature over ±12σ), and its
// small-σ limit 1.
func TestExpectedPhaseTerm(t *testing.T) {
	for _, sig := range []float64{1e-6, 1e-3, 0.05, 0.5, math.Pi / 3, 2, math.Pi} {
		f := func(e float64) float64 {
			// 2(1 − cos ε) = 4 sin²(ε/2), without the cancellation at small ε.
			sn := math.Sin(e / 2)
			return 4 * sn * sn / (sig * sig) * math.Exp(-e*e/(2*sig*sig)) / (sig * math.Sqrt(2*math.Pi))
		}
		want := quad.Fixed(f, -12*sig, 12*sig, 2000, nil, 0)
		if got := expectedPhaseTerm(sig); math.Abs(got-want) > 1e-9 {
			t.Errorf("σ = %g: %g, want %g", sig, got, want)
		}
	}
}

// TestParallelParts checks that the evaluation split in parallel parts gives the value,
// χ² and gradient of the serial one, to rounding.
func TestParallelParts(t *testing.T) {
	const n, pixel = 8, 1e-9
	rng := rand.New(rand.NewPCG(9, 7))
	d := randomData(rng, 0.5/pixel/2)
	m, err := NewForwardModel(d, Grid{N: n, Pixel: pixel}, true, exactTransform)
	if err != nil {
		t.Fatal(err)
	}
	o := NewObjective(d, m, TermOptions{})
	x := make([]float64, n*n)
	for i := range x {
		x[i] = 0.2 + rng.Float64()
	}
	g1, g2 := make([]float64, n*n), make([]float64, n*n)
	f1 := o.Eval(g1, x)
	c1 := o.chi2
	o.minParallel = 0
	f2 := o.Eval(g2, x)
	if math.Abs(f1-f2) > 1e-12*math.Abs(f1) || relErr(g2, g1) > 1e-12 {
		t.Errorf("parallel: f %g against %g, gradient relative error %g", f2, f1, relErr(g2, g1))
	}
	for i := range c1 {
		if math.Abs(c1[i]-o.chi2[i]) > 1e-12*math.Abs(c1[i]) {
			t.Errorf("χ² of %v: %g against %g", typeList[i], o.chi2[i], c1[i])
		}
	}
}

func relErr(a, b []float64) float64 {
	num, den := 0.0, 0.0
	for i := range a {
		num += (a[i] - b[i]) * (a[i] - b[i])
		den += b[i] * b[i]
	}
	return math.Sqrt(num / den)
}

// TestChi2Values checks the χ² of each term on a point-source image (V = 1 everywhere,
// closure phases 0) against the formulas evaluated by hand.
func TestChi2Values(t *testing.T) {
	const n, pixel = 8, 1e-9
	rng := rand.New(rand.NewPCG(9, 9))
	d := randomData(rng, 1/pixel/4)
	m, err := NewForwardModel(d, Grid{N: n, Pixel: pixel}, true, exactTransform)
	if err != nil {
		t.Fatal(err)
	}
	o := NewObjective(d, m, TermOptions{})
	x := make([]float64, n*n)
	x[(n/2)*n+n/2] = 3 // a point at the phase centre: V = 1 (CONVENTIONS.md)
	o.Eval(nil, x)
	var want [nTypes]float64
	for i := range d.Vis2.Value {
		r := (1 - d.Vis2.Value[i]) / d.Vis2.Err[i]
		want[0] += r * r
	}
	for i := range d.T3.Amp {
		if d.T3.AmpOK[i] {
			r := (1 - d.T3.Amp[i]) / d.T3.AmpErr[i]
			want[1] += r * r
		}
		want[2] += 2 * (1 - math.Cos(d.T3.Phi[i])) / (d.T3.PhiErr[i] * d.T3.PhiErr[i])
	}
	num, den := 0.0, 0.0
	for i := range d.Vis.Amp {
		if d.Vis.AmpTyp[i] == dataset.AmpCorrelatedFlux {
			w := 1 / (d.Vis.AmpErr[i] * d.Vis.AmpErr[i])
			num += d.Vis.Amp[i] * w
			den += w
		}
	}
	s := num / den // the least-squares scale for |V| = 1
	// A differential quantity is fitted when its row has enough channels: randomData's rows
	// 1 to 3 (HDU 3) have five, its other differential data are alone in their rows. With
	// V = 1 the model's differential amplitudes are 1 and its differential phases 0.
	multi := func(i int) bool { return d.Vis.Origin[i].HDU == 3 && d.Vis.Origin[i].Row <= 3 }
	for i := range d.Vis.Amp {
		a := 1.0
		if d.Vis.AmpTyp[i] == dataset.AmpCorrelatedFlux {
			a = s
		}
		r := (a - d.Vis.Amp[i]) / d.Vis.AmpErr[i]
		if d.Vis.AmpTyp[i] != dataset.AmpDifferential || multi(i) {
			want[3] += r * r
		}
		phi := 2 * (1 - math.Cos(d.Vis.Phi[i])) / (d.Vis.PhiErr[i] * d.Vis.PhiErr[i])
		switch {
		case d.Vis.PhiTyp[i] == dataset.PhiAbsolute:
			want[4] += phi
		case multi(i):
			want[5] += phi
		}
	}
	for i, ty := range typeList {
		if got := o.Chi2(ty); math.Abs(got-want[i]) > 1e-9*want[i] {
			t.Errorf("χ² %s = %.12g, want %.12g", ty, got, want[i])
		}
	}
	if o.N(dataset.VisPhi) != 8 || o.N(dataset.VisDiff) != 15 || len(o.Notices()) != 3 {
		t.Errorf("N(visphi) = %d, N(visdiff) = %d, notices %q", o.N(dataset.VisPhi), o.N(dataset.VisDiff), o.Notices())
	}
	if math.Abs(o.FluxScale()-s) > 1e-12 {
		t.Errorf("flux scale %g, want %g", o.FluxScale(), s)
	}
}

// TestPredict checks the observables of a binary of two point sources against the two-point
// visibility (1 + f·exp(−2πi(u x + v y)))/(1 + f) and B = V1·V2·conj(V3) (CONVENTIONS.md).
func TestPredict(t *testing.T) {
	const n, pixel = 32, 1e-9
	img := make([]float64, n*n)
	img[(n/2)*n+n/2] = 2
	img[(n/2+4)*n+n/2-5] = 1 // 5 pixels east, 4 north, flux ratio 0.5
	vis := binaryVis(0.5, 5*pixel, 4*pixel)
	rng := rand.New(rand.NewPCG(4, 4))
	d := randomData(rng, 0.3/pixel)
	p, err := Predict(d, Grid{N: n, Pixel: pixel}, img, exactTransform)
	if err != nil {
		t.Fatal(err)
	}
	for i := range d.Vis2.U {
		if want := cmplx.Abs(vis(d.Vis2.U[i], d.Vis2.V[i])); math.Abs(p.Of(dataset.Vis2)[i]-want*want) > 1e-12 {
			t.Errorf("V² %d: %g, want %g", i, p.Of(dataset.Vis2)[i], want*want)
		}
	}
	for i := range d.T3.U1 {
		tt := &d.T3
		b := vis(tt.U1[i], tt.V1[i]) * vis(tt.U2[i], tt.V2[i]) * cmplx.Conj(vis(tt.U1[i]+tt.U2[i], tt.V1[i]+tt.V2[i]))
		if math.Abs(p.Of(dataset.T3Amp)[i]-cmplx.Abs(b)) > 1e-12 || math.Abs(WrapPhase(p.Of(dataset.T3Phi)[i]-cmplx.Phase(b))) > 1e-9 {
			t.Errorf("T3 %d: %g %g, want %g %g", i, p.Of(dataset.T3Amp)[i], p.Of(dataset.T3Phi)[i], cmplx.Abs(b), cmplx.Phase(b))
		}
	}
	for i := range d.Vis.U {
		v := vis(d.Vis.U[i], d.Vis.V[i])
		if d.Vis.AmpTyp[i] == dataset.AmpDifferential {
			continue
		}
		if math.Abs(p.Of(dataset.VisAmp)[i]-cmplx.Abs(v)) > 1e-12 || math.Abs(WrapPhase(p.Of(dataset.VisPhi)[i]-cmplx.Phase(v))) > 1e-9 {
			t.Errorf("VIS %d: %g %g, want %g %g", i, p.Of(dataset.VisAmp)[i], p.Of(dataset.VisPhi)[i], cmplx.Abs(v), cmplx.Phase(v))
		}
	}
	// Differential amplitudes and phases, row by row (randomData puts them in the rows of
	// HDU 3, channels in order of wavelength): the amplitude over its mean over the row, and
	// the phase, unwrapped along the row by the phase steps arg(V_c·conj V_{c−1}), minus its
	// least-squares line in 1/λ fitted by gonum's stat.LinearRegression (OIFITS v2: Duvert,
	// Young & Hummel 2017, sect. 4.3).
	rows := map[int][]int{}
	for i, o := range d.Vis.Origin {
		if o.HDU == 3 {
			rows[o.Row] = append(rows[o.Row], i)
		}
	}
	for _, r := range rows {
		var x, ph []float64
		mean := 0.0
		for k, i := range r {
			v := vis(d.Vis.U[i], d.Vis.V[i])
			mean += cmplx.Abs(v) / float64(len(r))
			x = append(x, 1/d.Vis.Lambda[i])
			if k == 0 {
				ph = append(ph, cmplx.Phase(v))
			} else {
				j := r[k-1]
				ph = append(ph, ph[k-1]+cmplx.Phase(v*cmplx.Conj(vis(d.Vis.U[j], d.Vis.V[j]))))
			}
		}
		a, b := 0.0, 0.0
		if len(r) > 1 {
			a, b = stat.LinearRegression(x, ph, nil, false)
		} else {
			a = ph[0]
		}
		for k, i := range r {
			v := vis(d.Vis.U[i], d.Vis.V[i])
			wantA, wantP := cmplx.Abs(v)/mean, WrapPhase(ph[k]-a-b*x[k])
			if math.Abs(p.Of(dataset.VisAmp)[i]-wantA) > 1e-12 || math.Abs(WrapPhase(p.Of(dataset.VisDiff)[i]-wantP)) > 1e-9 {
				t.Errorf("differential VIS %d: %g %g, want %g %g", i, p.Of(dataset.VisAmp)[i], p.Of(dataset.VisDiff)[i], wantA, wantP)
			}
		}
	}
	if w := WrapPhase(3 * math.Pi); math.Abs(w-math.Pi) > 1e-12 {
		t.Errorf("WrapPhase(3π) = %g", w)
	}
}
