package workflow

import (
	"math"
	"math/rand/v2"
	"sort"
	"testing"

	"gonum.org/v1/gonum/mat"

	"vcz/dataset"
	"vcz/recon"
	"vcz/regularizers"
)

// linearProblem is a reconstruction that is linear least squares: complex visibilities of
// known flux fitted as complex numbers (recon.TermOptions.ComplexVis, no flux normalisation)
// with quadratic smoothness, of a 10 × 10 image bright everywhere so that no positivity
// bound is active. The data are the exact direct sum V = Σ x_p exp(−2πi(u x_p + v y_p))
// (CONVENTIONS.md) at 300 exposures of 4 baselines in one channel (many
// exposures, each spread over the (u,v) plane, so that the bootstrap's estimate of the data's
// scatter is itself precise), with complex Gaussian
// noise of σ per component. It returns the problem, the matrix A of the direct sum
// (real and imaginary rows stacked) and σ.
func linearProblem(t testing.TB, mu float64) (recon.Problem, *mat.Dense, float64) {
	const (
		n, exposures, baselines, channels = 10, 300, 4, 1
		sigma                             = 2e-3
	)
	pixel := 0.5 * recon.Mas
	truth := make([]float64, n*n)
	for iy := 0; iy < n; iy++ {
		for ix := 0; ix < n; ix++ {
			dx, dy := float64(ix-n/2)+0.7, float64(iy-n/2)-1.2
			truth[iy*n+ix] = 0.004 + 0.02*math.Exp(-(dx*dx+dy*dy)/6)
		}
	}
	rng := rand.New(rand.NewPCG(11, 12))
	fmax := 0.45 / pixel // below the grid's Nyquist frequency 1/(2·pixel)
	d := &dataset.Data{Files: []string{"linear"}, Targets: []string{"T"}}
	p := &d.Vis
	var rows [][]float64
	for e := 0; e < exposures; e++ {
		for b := 0; b < baselines; b++ {
			r := fmax / 1.2 * math.Sqrt(rng.Float64())
			th := 2 * math.Pi * rng.Float64()
			for c := 0; c < channels; c++ {
				s := 1 + 0.1*float64(c)
				u, v := s*r*math.Cos(th), s*r*math.Sin(th)
				re, im := make([]float64, n*n), make([]float64, n*n)
				var vt complex128
				for iy := 0; iy < n; iy++ {
					for ix := 0; ix < n; ix++ {
						x, y := -float64(ix-n/2)*pixel, float64(iy-n/2)*pixel
						sn, cs := math.Sincos(-2 * math.Pi * (u*x + v*y))
						re[iy*n+ix], im[iy*n+ix] = cs, sn
						vt += complex(truth[iy*n+ix]*cs, truth[iy*n+ix]*sn)
					}
				}
				rows = append(rows, re, im)
				vo := vt + complex(sigma*rng.NormFloat64(), sigma*rng.NormFloat64())
				amp := math.Hypot(real(vo), imag(vo))
				p.U, p.V = append(p.U, u), append(p.V, v)
				p.Lambda, p.DLambda = append(p.Lambda, 2e-6/s), append(p.DLambda, 1e-8)
				p.MJD = append(p.MJD, 60000+float64(e)/100)
				p.Amp, p.AmpErr = append(p.Amp, amp), append(p.AmpErr, sigma)
				p.Phi, p.PhiErr = append(p.Phi, math.Atan2(imag(vo), real(vo))), append(p.PhiErr, sigma/amp)
				p.AmpOK, p.PhiOK = append(p.AmpOK, true), append(p.PhiOK, true)
				p.AmpTyp, p.PhiTyp = append(p.AmpTyp, dataset.AmpAbsolute), append(p.PhiTyp, dataset.PhiAbsolute)
				p.Origin = append(p.Origin, dataset.Origin{File: 0, HDU: 3, Row: e*baselines + b + 1, Channel: c})
			}
		}
	}
	d.VisCount = dataset.Counts{Valid: p.Len()}
	a := mat.NewDense(len(rows), n*n, nil)
	for i, r := range rows {
		a.SetRow(i, r)
	}
	prob := recon.Problem{Data: d, Grid: recon.Grid{N: n, Pixel: pixel}, Terms: recon.TermOptions{ComplexVis: true},
		Reg:    func(g recon.Grid) (recon.Regularizer, error) { return &regularizers.Smooth{NX: g.N, NY: g.N}, nil },
		Weight: mu, Unnormalized: true, Start: recon.Start{Kind: recon.StartGaussian}}
	return prob, a, sigma
}

// TestBootstrapLinearCovariance checks that the bootstrap measures what it should. For the
// linear problem J(x) = ‖Ax − y‖²/σ² + μ·Q(x), the estimate is x̂ = H⁻¹·2Aᵀy/σ² with the
// Hessian H = 2AᵀA/σ² + μ∇²Q, so its covariance is H⁻¹(4AᵀA/σ²)H⁻¹ (propagation of the
// data covariance σ²I through a linear map; e.g. Hansen 2010, Discrete Inverse Problems,
// sect. 3.4, for Tikhonov estimates), computed here with gonum/mat. The bootstrap standard
// deviation of each pixel, over 300 resamplings of whole exposures, must agree with the
// square root of its diagonal within 20 % (the tolerance). The ratio scatters by
// by 1/√(2K) = 4 % from K replicates, and more from estimating the data's scatter from the
// units themselves (the spread of a variance estimated from m samples, √(2/m), halved for its
// square root, larger when a few units dominate a pixel). Measured: with 40 exposures of 10
// baselines, ratios from 0.72 to 1.29; with 600 exposures of one baseline, up to 1.23; with
// 300 exposures of 4 baselines, 0.86–1.19 over two seeds: the bootstrap needs many units,
// each much like the others.
func TestBootstrapLinearCovariance(t *testing.T) {
	if testing.Short() {
		t.Skip("300 reconstructions")
	}
	prob, a, sigma := linearProblem(t, 0)
	n := prob.Grid.N
	np := n * n
	// ∇²Q from the regularizer's gradient, exact for a quadratic: column j is
	// ∇Q(e_j) − ∇Q(0).
	q := &regularizers.Smooth{NX: n, NY: n}
	l := mat.NewDense(np, np, nil)
	g, x := make([]float64, np), make([]float64, np)
	for j := 0; j < np; j++ {
		x[j] = 1
		q.Eval(g, x)
		l.SetCol(j, g)
		x[j] = 0
	}
	var ata mat.Dense
	ata.Mul(a.T(), a)
	// μ: the smoothness of about a tenth of the data's curvature on average (common
	// practice, no source).
	mu := 0.1 * 2 * mat.Trace(&ata) / sigma / sigma / mat.Trace(l)
	prob.Weight = mu
	var h mat.Dense
	h.Scale(2/sigma/sigma, &ata)
	var ml mat.Dense
	ml.Scale(mu, l)
	h.Add(&h, &ml)
	var hi mat.Dense
	if err := hi.Inverse(&h); err != nil {
		t.Fatal(err)
	}
	var m, cov mat.Dense
	m.Scale(4/sigma/sigma, &ata)
	cov.Product(&hi, &m, &hi)

	s := recon.Settings{MaxIter: 3000, FTol: 1e-13, Starts: 1, Workers: 1}
	full, err := recon.Solve(prob, s)
	if err != nil {
		t.Fatal(err)
	}
	minPix := math.Inf(1)
	for _, v := range full.Image {
		minPix = math.Min(minPix, v)
	}
	b, err := RunBootstrap(prob, s, full, BootstrapOptions{Replicates: 300, Seed: 3})
	if err != nil {
		t.Fatal(err)
	}
	if b.Aligned {
		t.Error("absolute phases fix the position: the replicates should not be moved")
	}
	ratios := make([]float64, np)
	for p := 0; p < np; p++ {
		ratios[p] = b.Std[p] / math.Sqrt(cov.At(p, p))
	}
	for _, im := range b.Images {
		for _, v := range im {
			if v <= 0 {
				t.Fatalf("a replicate has a pixel at its bound (%g): the problem is not linear", v)
			}
		}
	}
	sorted := append([]float64(nil), ratios...)
	sort.Float64s(sorted)
	t.Logf("μ %.3g, smallest pixel %.3g, std ratio bootstrap/analytic: min %.3f median %.3f max %.3f, %d replicates not converged",
		mu, minPix, sorted[0], sorted[np/2], sorted[np-1], len(b.NotConverged))
	for p, r := range ratios {
		if math.Abs(r-1) > 0.2 {
			t.Errorf("pixel %d: bootstrap std %.4g, analytic %.4g (ratio %.3f)", p, b.Std[p], math.Sqrt(cov.At(p, p)), r)
		}
	}
}
