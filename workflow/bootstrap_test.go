package workflow

import (
	"math"
	"testing"

	"vcz/dataset"
	"vcz/recon"
	"vcz/runspec"
)

// TestBootstrapSameBits checks that the maps depend on the seed only: one replicate at a time
// or two at once give the same bits, and another seed other maps.
func TestBootstrapSameBits(t *testing.T) {
	files, d := demoData(t)
	im, err := NewImage(files, d, runspec.Spec{Grid: 32, Iterations: 60, Starts: 1})
	if err != nil {
		t.Fatal(err)
	}
	full, err := recon.Solve(im.Problem, im.Settings)
	if err != nil {
		t.Fatal(err)
	}
	run := func(budget int, seed uint64) *Bootstrap {
		b, err := im.Bootstrap(full, BootstrapOptions{Replicates: 4, Seed: seed, Budget: budget})
		if err != nil {
			t.Fatal(err)
		}
		return b
	}
	a, b, c := run(1, 5), run(2, 5), run(2, 6)
	if a.Good() != 4 || !a.Aligned || a.Units != d.Group(dataset.ByExposure).Len() {
		t.Fatalf("good %d, aligned %v, units %d", a.Good(), a.Aligned, a.Units)
	}
	same := func(x, y []float64) bool {
		for i := range x {
			if math.Float64bits(x[i]) != math.Float64bits(y[i]) {
				return false
			}
		}
		return true
	}
	for k := range a.Images {
		if !same(a.Images[k], b.Images[k]) {
			t.Errorf("replicate %d differs between budgets 1 and 2", k)
		}
	}
	if !same(a.Mean, b.Mean) || !same(a.Std, b.Std) || !same(a.Significance, b.Significance) {
		t.Error("maps differ between budgets 1 and 2")
	}
	if same(a.Std, c.Std) {
		t.Error("another seed gave the same maps")
	}
}
