package recon

import (
	"math"
	"testing"

	"vcz/dataset"
	"vcz/recon/optim"
)

// TestUnstickPlane checks when unstickPlane retries a plane's run and what it keeps: a run
// that ended with a failed line search, on data with closure phases, is retried from its
// image (a flat disc, far from the fit) and replaced by a run of lower exact objective, whose
// F is the exact objective at its image (the smoothing is off again, term_phase.go); a run
// that ended otherwise, or one without phase data, is kept as it is.
func TestUnstickPlane(t *testing.T) {
	d := standardObs(4, discVis(4*Mas))
	g := Grid{N: 24, Pixel: 0.5 * Mas}
	e, err := newEngine(Problem{Data: d, Reg: tvReg, Grid: g}, Settings{Seed: 1}, GridChoice{Grid: g})
	if err != nil {
		t.Fatal(err)
	}
	e.curv = &optim.State{}
	x0 := make([]float64, g.N*g.N)
	for iy := range g.N {
		for ix := range g.N {
			if math.Hypot(float64(ix-g.N/2), float64(iy-g.N/2)) < 6 {
				x0[iy*g.N+ix] = 1
			}
		}
	}
	fl := 0.0
	for _, v := range x0 {
		fl += v
	}
	for i := range x0 {
		x0[i] /= fl
	}
	f := e.f(1)
	use := e.obj.Use()
	if use&dataset.T3Phi == 0 {
		t.Fatal("the data have no closure phases")
	}
	r := runOut{}
	r.X, r.F, r.Status = x0, f(nil, x0), optim.LineSearchFailure
	got, changed, err := unstickPlane(e, r, use, 40, 80, "test")
	if err != nil {
		t.Fatal(err)
	}
	if !changed || !(got.F < r.F) || got.F != f(nil, got.X) {
		t.Errorf("retried: changed %v, F %.6g from %.6g, exact objective at its image %.6g", changed, got.F, r.F, f(nil, got.X))
	}
	t.Logf("objective %.6g → %.6g in %d iterations", r.F, got.F, got.Iter)
	for _, c := range []struct {
		status optim.Status
		use    dataset.DataType
	}{
		{optim.IterationLimit, use},
		{optim.FunctionConvergence, use},
		{optim.LineSearchFailure, use &^ (dataset.T3Phi | dataset.VisPhi)},
	} {
		q := r
		q.Status = c.status
		got, changed, err := unstickPlane(e, q, c.use, 40, 80, "test")
		if err != nil || changed || got.F != q.F || &got.X[0] != &q.X[0] {
			t.Errorf("status %v, types %v: retried (changed %v, F %.6g, error %v)", c.status, c.use, changed, got.F, err)
		}
	}
}
