package recon

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"vcz/dataset"
	"vcz/recon/optim"
)

// nullTrap returns data and a start image at which the exact closure-phase terms stop the
// optimizer, as a plane of a cube did (engine.escape). The image on an n×n grid (n = 8) is a
// uniform floor plus two equal points one pixel apart along x; at u = 1/(2·pixel), v = 0 both
// have V = 0: Σ_{ix=0}^{7} (−1)^ix = 0 for the floor, and (1 + e^{−iπ})/2 = 0 for the pair
// (shift theorem, Bracewell, The Fourier Transform and Its Applications, ch. 6, from memory).
// One point is made brighter by 10⁻¹² relative, so that the model visibility W₀ there is
// about 4·10⁻¹³, not exactly 0.
//
// Three things make it a trap, as on the cube plane that was stuck:
//   - V² measured below 0 at the null (by the noise): the V² term's minimum is W₀ = 0, so the
//     fit itself drives W₀ into the null;
//   - the closure phases of the triangles through the null miss the model's by 0.8 rad: the
//     gradient of 2(1 − cos φ)/σ² grows as 2 sin φ/(σ²|W₀|) (term_t3phi.go), to a norm of
//     about 10¹³ here;
//   - the first steepest-descent trial step, which moves x by 5 % of its norm (optim), changes
//     W₀ by some 10¹¹ times |W₀|, and once a step exceeds |W₀| the phase of W₀ turns by up to
//     90° whatever its length: the objective rises by about the same amount (here 4·10³) at
//     every such step. Against a predicted linear decrease far larger than that rise, the
//     quadratic model of the backtracking only halves the step, and 30 halvings leave it
//     hundreds of times |W₀|: the line search fails from every fresh start.
//
// Measured on this problem: |W₀| = 4.0·10⁻¹³, gradient norm 1.6·10¹³, |W₀| after the first
// trial step 0.21 and after 30 halvings 2·10⁻¹⁰, with the objective 4.4·10³ above the start.
func nullTrap() (d *dataset.Data, x0 []float64, g Grid) {
	const n, pixel = 8, 1 * Mas
	x0 = make([]float64, n*n)
	for i := range x0 {
		x0[i] = 0.2 / float64(n*n)
	}
	x0[4*n+3] += 0.4
	x0[4*n+4] += 0.4 * (1 + 1e-12)
	model := func(u, v float64) complex128 {
		// Pixel (ix, iy) at x = −(ix − n/2)·pixel, y = (iy − n/2)·pixel (CONVENTIONS.md), by
		// the direct sum of the van Cittert–Zernike theorem (CONVENTIONS.md).
		var s complex128
		var fl float64
		for iy := range n {
			for ix := range n {
				x, y := -float64(ix-n/2)*pixel, float64(iy-n/2)*pixel
				s += complex(x0[iy*n+ix], 0) * cmplx.Exp(complex(0, -2*math.Pi*(u*x+v*y)))
				fl += x0[iy*n+ix]
			}
		}
		return s / complex(fl, 0)
	}
	d = &dataset.Data{Targets: []string{"T"}}
	v2 := &d.Vis2
	rng := rand.New(rand.NewPCG(5, 5))
	var bu, bv []float64
	for k := range 12 {
		u, v := 0.5/pixel, 0.0
		if k > 0 {
			u, v = (2*rng.Float64()-1)*0.45/pixel, (2*rng.Float64()-1)*0.45/pixel
		}
		bu, bv = append(bu, u), append(bv, v)
		w := model(u, v)
		v2.U = append(v2.U, u)
		v2.V = append(v2.V, v)
		if k == 0 {
			// Measured below 0 by the noise.
			v2.Value, v2.Err = append(v2.Value, -0.002), append(v2.Err, 0.001)
		} else {
			// 0.8 of the model's: the image has to change.
			v2.Value, v2.Err = append(v2.Value, 0.8*(real(w)*real(w)+imag(w)*imag(w))), append(v2.Err, 0.01)
		}
		v2.Lambda = append(v2.Lambda, 1e-6)
		v2.DLambda = append(v2.DLambda, 1e-8)
		v2.MJD = append(v2.MJD, 60000)
		v2.Origin = append(v2.Origin, dataset.Origin{})
	}
	tr := &d.T3
	for k := range 8 {
		// Triangles 0–3 have the null as first side, 4–7 do not.
		i, j := 0, 1+k
		if k >= 4 {
			i, j = k-3, k+1
		}
		w := model(bu[i], bv[i]) * model(bu[j], bv[j]) * cmplx.Conj(model(bu[i]+bu[j], bv[i]+bv[j]))
		phi := cmplx.Phase(w) + 0.01
		if i == 0 {
			phi += 0.8
		}
		tr.U1 = append(tr.U1, bu[i])
		tr.V1 = append(tr.V1, bv[i])
		tr.U2 = append(tr.U2, bu[j])
		tr.V2 = append(tr.V2, bv[j])
		tr.Amp = append(tr.Amp, 0.2)
		tr.AmpErr = append(tr.AmpErr, 0.01)
		tr.AmpOK = append(tr.AmpOK, false)
		tr.Phi = append(tr.Phi, phi)
		tr.PhiErr = append(tr.PhiErr, 0.05)
		tr.PhiOK = append(tr.PhiOK, true)
		tr.Lambda = append(tr.Lambda, 1e-6)
		tr.DLambda = append(tr.DLambda, 1e-8)
		tr.MJD = append(tr.MJD, 60000)
		tr.Origin = append(tr.Origin, dataset.Origin{})
	}
	return d, x0, Grid{N: n, Pixel: pixel}
}

// TestRunLeavesPhaseNull starts a run at the trap of nullTrap. The optimizer alone finds no
// step there from a fresh start (checked first, so that the test holds the trap), and the run
// used to report convergence without an iteration. It must leave the point and lower the
// objective.
func TestRunLeavesPhaseNull(t *testing.T) {
	d, x0, g := nullTrap()
	e, err := newEngine(Problem{Data: d, Transform: exactTransform}, Settings{}, GridChoice{Grid: g})
	if err != nil {
		t.Fatal(err)
	}
	use := dataset.T3Phi | dataset.Vis2
	e.obj.SetUse(use)
	f := e.f(0)
	f0 := f(nil, x0)
	trap, err := optim.Minimize(optim.Problem{Func: f, Lower: e.lower, Upper: e.upper}, x0, optim.Settings{FTol: -1, Memory: lbfgsMemory})
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("optimizer alone: %v after %d iterations (objective %g → %g)", trap.Status, trap.Iter, f0, trap.F)
	if trap.Status != optim.LineSearchFailure || trap.Iter != 0 {
		t.Fatalf("the start is no trap: %v after %d iterations (objective %g → %g)", trap.Status, trap.Iter, f0, trap.F)
	}
	r, err := e.run(x0, 0, use, 200, "test")
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("run: objective %.6g → %.6g in %d iterations (%d in all runs), converged %v", f0, r.F, r.Iter, e.total, r.Converged)
	if !(r.F < 0.9*f0) || r.Iter == 0 {
		t.Errorf("the run stayed at the near-zero visibility: objective %g → %g in %d iterations", f0, r.F, r.Iter)
	}
}

// TestCubePlaneLeavesPhaseNull runs a cube of two planes from start images (CubeProblem.Starts,
// as for the epochs of a batch), so that every sweep fits the exact data terms. Plane 1 starts
// at the trap of nullTrap, plane 2 at the same image with the null filled in (its two points
// unequal by 10 %), both with nullTrap's data. Plane 1 used to keep its start image through
// every sweep (no iteration, reported as converged), as a plane of a cube did through every
// later sweep and weight factor; it must lower its χ² below that of its start.
func TestCubePlaneLeavesPhaseNull(t *testing.T) {
	d, x0, g := nullTrap()
	x1 := append([]float64(nil), x0...)
	x1[4*g.N+4] *= 1.1
	use := dataset.T3Phi | dataset.Vis2
	start := func(x []float64) float64 {
		m, err := NewForwardModel(d, g, true, exactTransform)
		if err != nil {
			t.Fatal(err)
		}
		o := NewObjective(d, m, TermOptions{})
		o.SetUse(use)
		o.Eval(nil, x)
		return o.TotalChi2r()
	}
	planes := []CubePlane{{Data: d, Coord: 1e-6, Label: "trap"}, {Data: d, Coord: 1.1e-6, Label: "filled"}}
	cp := CubeProblem{Problem: Problem{Grid: g, Transform: exactTransform}, Planes: planes,
		Spectral: SpectralSmooth, SpectralWeight: 1e-3, Starts: [][]float64{x0, x1}, PlaneWeights: []float64{0, 0}}
	r, err := SolveCube(cp, Settings{Seed: 1, MaxIter: 100})
	if err != nil {
		t.Fatal(err)
	}
	for k, x := range [][]float64{x0, x1} {
		c0 := start(x)
		t.Logf("plane %d: χ²ᵣ %.4g at the start, %.4g at the end", k+1, c0, r.Planes[k].Chi2r)
		if !(r.Planes[k].Chi2r < 0.9*c0) {
			t.Errorf("plane %d (%s) kept its start: χ²ᵣ %.4g, %.4g at the start", k+1, planes[k].Label, r.Planes[k].Chi2r, c0)
		}
	}
}

// TestNearNull checks the test by which escape tells a null from a minimum. At the start of
// nullTrap the side at u = 1/(2·pixel) has |W₀| ≈ 4·10⁻¹³ of a flux of 1, below nullRatio;
// with the two points unequal by 10 % (x1 of TestCubePlaneLeavesPhaseNull) the pair leaves
// |W₀| = 0.04/1.04 ≈ 0.039 there (the floor still sums to 0), far above. Both values are
// checked first against the exact direct sum V = Σ I·exp(−2πi(u·x + v·y))/Σ I (CONVENTIONS.md).
func TestNearNull(t *testing.T) {
	d, x0, g := nullTrap()
	x1 := append([]float64(nil), x0...)
	x1[4*g.N+4] *= 1.1
	e, err := newEngine(Problem{Data: d, Transform: exactTransform}, Settings{}, GridChoice{Grid: g})
	if err != nil {
		t.Fatal(err)
	}
	direct := func(x []float64, u, v float64) float64 {
		var s complex128
		var fl float64
		for iy := range g.N {
			for ix := range g.N {
				px, py := -float64(ix-g.N/2)*g.Pixel, float64(iy-g.N/2)*g.Pixel
				s += complex(x[iy*g.N+ix], 0) * cmplx.Exp(complex(0, -2*math.Pi*(u*px+v*py)))
				fl += x[iy*g.N+ix]
			}
		}
		return cmplx.Abs(s) / fl
	}
	for _, c := range []struct {
		name string
		x    []float64
		lo   float64 // |W₀| lies in [lo, 2·lo)
		want bool
	}{{"trap", x0, 3e-13, true}, {"filled", x1, 0.03, false}} {
		w := direct(c.x, d.Vis2.U[0], d.Vis2.V[0])
		if !(w >= c.lo && w < 2*c.lo) {
			t.Fatalf("%s: |W₀| = %g by the direct sum, want [%g, %g)", c.name, w, c.lo, 2*c.lo)
		}
		if got := e.nearNull(c.x, 0); got != c.want {
			t.Errorf("%s (|W₀| = %.3g): nearNull %v, want %v", c.name, w, got, c.want)
		}
	}
}
