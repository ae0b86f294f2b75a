package recon

import (
	"math"
	"slices"
	"testing"

	"vcz/dataset"
	"vcz/io/oifits"
	"vcz/recon/simulate"
)

// TestChooseCubeFactor runs the factor search on model curves χ²ᵣ(α) = f0 + A·α/(α + αc),
// which rise from a floor f0 with the weight as χ²ᵣ does, and checks the factor chosen
// against the exact inverse of the curve at the aim, α* = αc·s/(1 − s) with s = (aim −
// f0)/A (algebra on the model, no source), and the bounds of the search: at most
// CubeWeightSteps factors, each run from the cube of an earlier step, and the aim computed
// by the formula of chooseWeight from the least χ²ᵣ tried.
func TestChooseCubeFactor(t *testing.T) {
	for _, tc := range []struct {
		name          string
		f0, a, ac     float64
		tau, scatter  float64
		wantEdge      string
		wantFactorMin float64 // the chosen factor must lie at or above this (0: any)
	}{
		// Overfit planes: the floor far below τ, the aim above the cube at α = 1.
		{name: "overfit", f0: 0.45, a: 2, ac: 20, tau: 0.93, scatter: 0.016, wantFactorMin: 1},
		// The gray weight of a chromatic object: nothing moves below α ≈ 10³.
		{name: "chromatic", f0: 0.556, a: 2, ac: 1e4, tau: 0.96, scatter: 0.016, wantFactorMin: 100},
		// Underfit at α = 1: the cube fits worse than the aim, a smaller factor is needed.
		{name: "underfit", f0: 0.8, a: 3, ac: 0.5, tau: 1, scatter: 0.02},
		// The floor above τ (a model that cannot fit): the aim is just above the floor.
		{name: "floor above", f0: 1.3, a: 1, ac: 3, tau: 1, scatter: 0.02},
		// A curve that never reaches the aim within the range (α ≤ 10⁶): the upper edge.
		{name: "flat", f0: 0.5, a: 0.02, ac: 1e9, tau: 1, scatter: 0.01, wantEdge: "upper"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			curve := func(al float64) float64 { return tc.f0 + tc.a*al/(al+tc.ac) }
			runs := 0
			run := func(alpha float64, from int, label string) (float64, int, bool, error) {
				runs++
				if from < -1 || from >= runs {
					t.Errorf("run %d starts from step %d", runs, from)
				}
				return curve(alpha), 10, true, nil
			}
			fs, err := chooseCubeFactor(curve(1), 10, true, 0, tc.tau, tc.scatter, run)
			if err != nil {
				t.Fatal(err)
			}
			if len(fs.path) > CubeWeightSteps || len(fs.path) != runs+1 {
				t.Errorf("%d steps (%d runs), at most %d", len(fs.path), runs, CubeWeightSteps)
			}
			floor := math.Inf(1)
			for _, st := range fs.path {
				floor = math.Min(floor, st.Chi2r)
			}
			aim := floor + max(FloorShare*(tc.tau-floor), FloorMargin*floor, FloorNoise*tc.scatter)
			if math.Abs(fs.target-aim) > 1e-12 || fs.floor != floor {
				t.Errorf("floor %.6g aim %.6g, want %.6g and %.6g", fs.floor, fs.target, floor, aim)
			}
			got := fs.path[fs.best]
			t.Logf("%d factors; floor %.4f, aim %.4f; chose α %.4g at χ²ᵣ %.4f; edge %q", len(fs.path), fs.floor, fs.target, got.Factor, got.Chi2r, fs.edge)
			if fs.edge != tc.wantEdge {
				t.Errorf("edge %q, want %q", fs.edge, tc.wantEdge)
			}
			if tc.wantEdge != "" {
				return
			}
			tol := 0.25 * (aim - floor)
			if math.Abs(got.Chi2r-aim) > tol {
				t.Errorf("χ²ᵣ %.5g at α %.4g, aim %.5g ± %.3g", got.Chi2r, got.Factor, aim, tol)
			}
			s := (aim - tc.f0) / tc.a
			want := tc.ac * s / (1 - s)
			// Within the tolerance band in χ²ᵣ means within the inverse of that band in α.
			lo, hi := (aim-tol-tc.f0)/tc.a, (aim+tol-tc.f0)/tc.a
			if alo, ahi := tc.ac*lo/(1-lo), tc.ac*hi/(1-hi); got.Factor < alo || got.Factor > ahi {
				t.Errorf("α %.4g, exact %.4g (band %.4g–%.4g)", got.Factor, want, alo, ahi)
			}
			if got.Factor < tc.wantFactorMin {
				t.Errorf("α %.4g below %g", got.Factor, tc.wantFactorMin)
			}
		})
	}
}

// TestOverfitWarning checks the bounds of the warning for planes that fit far below their
// expected χ²ᵣ τ (or the cube's aim when lower): below it over VerdictChi2Ratio and by more
// than three standard deviations of χ²ᵣ, τ·√(2/N) (a χ² of N degrees of freedom has
// variance 2N).
func TestOverfitWarning(t *testing.T) {
	for _, tc := range []struct {
		chi2r, tau, aim float64
		n               int
		warn            bool
	}{
		{0.60, 0.93, 0, 440, true},     // the chromatic demo's planes at α = 1
		{0.80, 0.93, 0, 440, false},    // above τ/1.25 = 0.744
		{0.70, 0.93, 0, 440, true},     // below 0.744 and 0.93·(1 − 3·0.0674) = 0.742
		{0.70, 1.00, 0, 50, false},     // below 0.8 but within 3σ = 0.6 of τ for 50 data
		{0.30, 1.00, 0, 50, true},      // below both
		{0.50, 0, 0, 100, false},       // no expected value
		{1.40, 1.00, 0, 1000, false},   // above: the other warning's case
		{0.60, 0.93, 0.68, 440, false}, // above the aim over 1.25, 0.544
		{0.50, 0.93, 0.68, 440, true},  // below it
		{0.70, 0.93, 1.20, 440, true},  // an aim above τ does not lower the bar
	} {
		p := &PlaneResult{Chi2r: tc.chi2r, Chi2rTarget: tc.tau, N: tc.n}
		p.Label = "channel 1"
		if w := overfitWarning(0, p, tc.aim); (w != "") != tc.warn {
			t.Errorf("χ²ᵣ %g, τ %g, aim %g, N %d: warning %q, want one: %v", tc.chi2r, tc.tau, tc.aim, tc.n, w, tc.warn)
		}
	}
}

// chromaticDemo is the chromatic object of TestCubeChromaticWeight (simulate.ParseChromatic):
// a uniform disc of 2 mas whose flux goes as λ⁻³ and a Gaussian of 6 mas FWHM of half the
// disc's flux at 1.6 µm going as λ⁺¹.
const chromaticDemo = `reference = 1.6
[[component]]
model = "ud:diameter=2"
spectral_index = -3
[[component]]
model = "gauss:fwhm=6,flux=0.5"
spectral_index = 1
`

// TestCubeChromaticWeight reconstructs, as a cube of one plane per channel, an object whose
// gray image is biased (chromaticDemo), observed by the demo plan of recon/simulate in 4
// channels from 1.50 to 1.72 µm (visibilities by the simulator's exact formulas per
// channel: 2J1(πθq)/(πθq) for the disc, Born & Wolf sect. 8.5.2, and exp(−(πθq)²/(4 ln 2))
// for the Gaussian, its Fourier transform), so the gray image cannot fit all channels. It
// compares the factor of the planes' weights chosen from the cube's fit with α = 1 (the gray
// weight shared by the planes' numbers of data, which a gray result without a floor, as
// from a given weight, keeps): with the search the planes' Σχ²/ΣN lies nearer its expected
// value and the planes lie nearer the truth rendered at each plane's wavelength (relative L1
// after a beam of λmin/(2·Bmax), Fidelity). Each plane's second-moment radius is logged
// against the analytic one of the model, √((f_d·D²/8 + f_g·2σ²)/(f_d + f_g)) (the second
// moments of a uniform disc of diameter D and of a circular Gaussian of standard deviation
// σ, direct integrals), which the field of view truncates.
func TestCubeChromaticWeight(t *testing.T) {
	sky, err := simulate.ParseChromatic([]byte(chromaticDemo), "chromatic.toml")
	if err != nil {
		t.Fatal(err)
	}
	plan, _ := simulate.Demo()
	plan.Wavelengths, plan.Bandwidths = nil, nil
	for k := range 4 {
		plan.Wavelengths = append(plan.Wavelengths, (1.50+0.22*float64(k)/3)*1e-6)
		plan.Bandwidths = append(plan.Bandwidths, 0.03e-6)
	}
	f, _, err := simulate.Run(plan, sky)
	if err != nil {
		t.Fatal(err)
	}
	d, err := dataset.FromFiles([]*oifits.File{f}, dataset.Selection{})
	if err != nil {
		t.Fatal(err)
	}
	planes, err := SplitChannels(d, Channels{Groups: 4})
	if err != nil {
		t.Fatal(err)
	}
	const l0, dDisc, wGauss = 1.6e-6, 2 * Mas, 6 * Mas
	fd := func(l float64) float64 { return math.Pow(l/l0, -3) }
	fg := func(l float64) float64 { return 0.5 * math.Pow(l/l0, 1) }
	sigma := wGauss * fwhmToSigma
	gray, err := Solve(Problem{Data: d, Reg: tvReg}, Settings{Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	if grayFits(gray) {
		t.Fatalf("the gray image fits (floor %.3g, expected %.3g): the test needs a biased one", gray.Chi2rFloor, gray.Chi2rTarget)
	}
	g := gray.Grid.Grid
	// truth renders the object at wavelength l: the disc by the share of each pixel inside
	// it (8 × 8 samples), the Gaussian at the pixel centres, on the grid of CONVENTIONS.md.
	truth := func(l float64) []float64 {
		img := make([]float64, g.N*g.N)
		var sd, sg float64
		disc, gauss := make([]float64, len(img)), make([]float64, len(img))
		for iy := range g.N {
			for ix := range g.N {
				x, y := -float64(ix-g.N/2)*g.Pixel, float64(iy-g.N/2)*g.Pixel
				for sy := range 8 {
					for sx := range 8 {
						xs, ys := x+(float64(sx)-3.5)/8*g.Pixel, y+(float64(sy)-3.5)/8*g.Pixel
						if math.Hypot(xs, ys) <= dDisc/2 {
							disc[iy*g.N+ix]++
						}
					}
				}
				gauss[iy*g.N+ix] = math.Exp(-(x*x + y*y) / (2 * sigma * sigma))
				sd += disc[iy*g.N+ix]
				sg += gauss[iy*g.N+ix]
			}
		}
		for i := range img {
			img[i] = fd(l)*disc[i]/sd + fg(l)*gauss[i]/sg
		}
		return img
	}
	size := func(l float64) float64 {
		return math.Sqrt((fd(l)*dDisc*dDisc/8 + fg(l)*2*sigma*sigma) / (fd(l) + fg(l)))
	}
	fixed := *gray
	fixed.Chi2rFloor = 0
	beam := d.Summarize().Resolution
	type score struct{ chi, tau, l1 float64 }
	var sc [2]score
	for i, gr := range []*Result{&fixed, gray} {
		r, err := SolveCube(CubeProblem{Problem: Problem{Data: d, Reg: tvReg}, Planes: planes, Gray: gr}, Settings{Seed: 1})
		if err != nil {
			t.Fatal(err)
		}
		var tn float64
		for k, p := range r.Planes {
			_, l1, _ := Fidelity(p.Image, truth(p.Coord), g.N, g.Pixel, beam)
			t.Logf("α %.3g: plane %d (%.3f µm): χ²ᵣ %.3f (expected %.3f), L1 %.4f, size %.3f mas (model %.3f)",
				r.WeightFactor, k+1, p.Coord*1e6, p.Chi2r, p.Chi2rTarget, l1, p.Size/Mas, size(p.Coord)/Mas)
			sc[i].l1 += l1 / float64(len(r.Planes))
			sc[i].tau += p.Chi2rTarget * float64(p.N)
			tn += float64(p.N)
		}
		sc[i].chi, sc[i].tau = r.Chi2r, sc[i].tau/tn
		t.Logf("α %.3g (path %+v, floor %.4f, aim %.4f): Σχ²/ΣN %.4f (expected %.4f), mean L1 %.4f; %d iterations in all; grid %d × %.3f mas; gray χ²ᵣ %.3f, floor %.3f; warnings %q",
			r.WeightFactor, r.WeightPath, r.Chi2rFloor, r.Chi2rAim, r.Chi2r, sc[i].tau, sc[i].l1, r.TotalIter, g.N, g.Pixel/Mas, gray.Chi2r, gray.Chi2rFloor, r.Warnings)
	}
	old, now := sc[0], sc[1]
	if !(math.Abs(now.chi-now.tau) < math.Abs(old.chi-old.tau)) {
		t.Errorf("Σχ²/ΣN %.4f with the factor chosen, %.4f at α = 1: not nearer the expected %.4f", now.chi, old.chi, now.tau)
	}
	if !(now.l1 < old.l1) {
		t.Errorf("mean L1 to the truth %.4f with the factor chosen, %.4f at α = 1", now.l1, old.l1)
	}
}

// oppositeIndices returns the data of a disc of 2 mas and spectral index −3 and a Gaussian of
// 4 mas and index +1 (flux ratio 1:0.5 at 1.6 µm) in 6 channels, whose gray image cannot fit
// all channels, split into 3 planes.
func oppositeIndices(t *testing.T) (*dataset.Data, []CubePlane) {
	t.Helper()
	vis := func(l float64) func(u, v float64) complex128 {
		a, b := math.Pow(l/1.6e-6, -3), 0.5*(l/1.6e-6)
		return func(u, v float64) complex128 {
			q := math.Hypot(u, v)
			return complex((a*UniformDiscV(2*Mas, q)+b*GaussianV(4*Mas, q))/(a+b), 0)
		}
	}
	d := observeChromatic(41, 5, 100, vis,
		synthOpts{nchan: 6, nha: 4, lmin: 1.5e-6, lmax: 2.4e-6, hspan: 1.2, sigV2: 0.01, sigPhi: 0.05, t3: true, noise: true})
	planes, err := SplitChannels(d, Channels{Groups: 3})
	if err != nil {
		t.Fatal(err)
	}
	return d, planes
}

// TestCubeFactorWorkers checks that the factor search does not depend on the number of
// workers of the transforms: a disc and a Gaussian of opposite spectral indices, whose gray
// image cannot fit all channels, give the same factors and the same bits with 1 and 3
// workers.
func TestCubeFactorWorkers(t *testing.T) {
	d, planes := oppositeIndices(t)
	var imgs [][]float64
	var paths [][]CubeWeightStep
	for _, w := range []int{1, 3} {
		s := Settings{Seed: 1, PathIter: 30, MaxIter: 60, WeightSteps: 4, Workers: w}
		r, err := SolveCube(CubeProblem{Problem: Problem{Data: d, Reg: tvReg, Grid: Grid{N: 24, Pixel: 0.4 * Mas}}, Planes: planes}, s)
		if err != nil {
			t.Fatal(err)
		}
		if len(r.WeightPath) < 2 {
			t.Fatalf("no factor search (gray χ²ᵣ %.3g, floor %.3g, expected %.3g)", r.Gray.Chi2r, r.Gray.Chi2rFloor, r.Gray.Chi2rTarget)
		}
		var all []float64
		for _, p := range r.Planes {
			all = append(all, p.Image...)
		}
		imgs, paths = append(imgs, all), append(paths, r.WeightPath)
	}
	if !slices.Equal(imgs[0], imgs[1]) || !slices.Equal(paths[0], paths[1]) {
		t.Errorf("the cube depends on the number of workers: factors %+v and %+v", paths[0], paths[1])
	}
}

// TestCubeJointEtaFollowsFactor checks that the automatic weight of JointSparsity follows the
// factor α of the planes' spatial weights that the search chooses: the cube's η is
// α·c·μ·R(x̄)/L(x̄, …, x̄), with μ, x̄ the gray weight and image and R and L evaluated here on
// them (the definition in SolveCube's doc, c = DefaultSpectralJoint). The data are those of
// TestCubeFactorWorkers, whose gray image cannot fit all channels.
func TestCubeJointEtaFollowsFactor(t *testing.T) {
	d, planes := oppositeIndices(t)
	g := Grid{N: 24, Pixel: 0.4 * Mas}
	s := Settings{Seed: 1, PathIter: 30, MaxIter: 60, WeightSteps: 4}
	r, err := SolveCube(CubeProblem{Problem: Problem{Data: d, Reg: tvReg, Grid: g}, Planes: planes, Spectral: SpectralJoint}, s)
	if err != nil {
		t.Fatal(err)
	}
	if len(r.WeightPath) < 2 || r.WeightFactor == 1 {
		t.Fatalf("factor %.3g after a path of %d: the test needs a factor other than 1", r.WeightFactor, len(r.WeightPath))
	}
	tv, _ := tvReg(g)
	xbar := r.Gray.Image
	all := make([]float64, 0, len(planes)*len(xbar))
	for range planes {
		all = append(all, xbar...)
	}
	l := (&JointSparsity{Planes: len(planes), NPix: len(xbar)}).Eval(nil, all)
	want := r.WeightFactor * DefaultSpectralJoint * r.Gray.Weight * tv.Eval(nil, xbar) / l
	t.Logf("α %.3g (path %+v): η %.4g, at α = 1 %.4g", r.WeightFactor, r.WeightPath, r.SpectralWeight, want/r.WeightFactor)
	if math.Abs(r.SpectralWeight/want-1) > 1e-12 {
		t.Errorf("η %.6g, want α·c·μ·R/L = %.6g", r.SpectralWeight, want)
	}
}
