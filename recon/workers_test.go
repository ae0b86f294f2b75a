package recon

import (
	"math"
	"runtime"
	"testing"

	"vcz/nufft"
)

// TestSolveWorkers checks that the result of Solve does not depend on the number of transform
// workers: with Settings.Workers 1, 2 and 3 the image, the automatic weight and its search
// path, the χ² values and the iteration counts are bitwise identical. The 80-pixel grid makes
// the default transform the gridding one (nufft.Plan) and large enough to run in parallel;
// GOMAXPROCS is raised to 3 for the test so that 3 workers are not clamped.
func TestSolveWorkers(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(max(3, runtime.GOMAXPROCS(0))))
	d := standardObs(3, binaryVis(0.5, 8*Mas*math.Sin(0.5), 8*Mas*math.Cos(0.5)))
	p := Problem{Data: d, Reg: tvReg, GridOptions: GridOptions{N: 80}}
	var ref *Result
	for _, w := range []int{1, 2, 3} {
		s := Settings{Seed: 1, Workers: w, MaxIter: 60, PathIter: 25, WeightSteps: 5}
		r, err := Solve(p, s)
		if err != nil {
			t.Fatal(err)
		}
		// The transform Solve made for the final grid, to confirm it ran on w workers.
		m, err := NewForwardModel(d, r.Grid.Grid, true, NewTransform(w))
		if err != nil {
			t.Fatal(err)
		}
		pl, ok := m.tr.(*nufft.Plan)
		if !ok || pl.Workers() != w {
			t.Fatalf("%d workers: transform %T, want a *nufft.Plan on %d workers", w, m.tr, w)
		}
		t.Logf("%d workers: weight %.6g, χ²ᵣ %.6g, %d iterations, %d weight steps", w, r.Weight, r.Chi2r, r.TotalIter, len(r.Path))
		if ref == nil {
			ref = r
			continue
		}
		if r.Weight != ref.Weight || r.Chi2r != ref.Chi2r || r.Objective != ref.Objective || r.Reg != ref.Reg ||
			r.TotalIter != ref.TotalIter || r.Iter != ref.Iter || r.Evals != ref.Evals {
			t.Errorf("%d workers: weight %v, χ²ᵣ %v, objective %v, R %v, iterations %d/%d/%d; 1 worker: %v, %v, %v, %v, %d/%d/%d",
				w, r.Weight, r.Chi2r, r.Objective, r.Reg, r.TotalIter, r.Iter, r.Evals,
				ref.Weight, ref.Chi2r, ref.Objective, ref.Reg, ref.TotalIter, ref.Iter, ref.Evals)
		}
		if len(r.Chi2) != len(ref.Chi2) {
			t.Fatalf("%d workers: %d data types, 1 worker: %d", w, len(r.Chi2), len(ref.Chi2))
		}
		for i, c := range r.Chi2 {
			if c != ref.Chi2[i] {
				t.Errorf("%d workers: χ² of %v: %+v, 1 worker: %+v", w, c.Type, c, ref.Chi2[i])
			}
		}
		if len(r.Path) != len(ref.Path) {
			t.Fatalf("%d workers: %d weight steps, 1 worker: %d", w, len(r.Path), len(ref.Path))
		}
		for i, st := range r.Path {
			if st != ref.Path[i] {
				t.Errorf("%d workers: weight step %d: %+v, 1 worker: %+v", w, i, st, ref.Path[i])
			}
		}
		for i := range r.Image {
			if r.Image[i] != ref.Image[i] {
				t.Fatalf("%d workers: pixel %d is %v, 1 worker: %v", w, i, r.Image[i], ref.Image[i])
			}
		}
	}
}
