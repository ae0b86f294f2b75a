package workflow

import (
	"math"
	"path/filepath"
	"strings"
	"testing"

	"vcz/dataset"
	"vcz/output"
	"vcz/recon"
	"vcz/recon/batch"
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

// TestBootstrapShards checks that replicates made by two shards and kept in files give the
// same maps, bit for bit, as one run; that a file of another run is not used; and that a
// rerun finds every replicate in the files.
func TestBootstrapShards(t *testing.T) {
	files, d := demoData(t)
	im, err := NewImage(files, d, runspec.Spec{Grid: 32, Iterations: 60, Starts: 1})
	if err != nil {
		t.Fatal(err)
	}
	full, err := recon.Solve(im.Problem, im.Settings)
	if err != nil {
		t.Fatal(err)
	}
	opt := BootstrapOptions{Replicates: 4, Seed: 2}
	one, err := im.Bootstrap(full, opt)
	if err != nil {
		t.Fatal(err)
	}
	store := ReplicateFiles{Stem: filepath.Join(t.TempDir(), "rec"), Hash: "run-a", N: 32, Pixel: full.Grid.Pixel}
	// A stale file of another run for replicate 2.
	other := store
	other.Hash = "run-b"
	if err := other.Save(1, Replicate{Image: make([]float64, 32*32), Iter: 3}); err != nil {
		t.Fatal(err)
	}
	for k := 1; k <= 2; k++ {
		o := opt
		o.Shard, o.Store = batch.Shard{K: k, N: 2}, store
		b, err := im.Bootstrap(full, o)
		if err != nil {
			t.Fatal(err)
		}
		if b.Loaded != 0 || b.Mean != nil {
			t.Errorf("shard %d/2: %d loaded, maps %v; want none", k, b.Loaded, b.Mean != nil)
		}
	}
	o := opt
	o.Store = store
	all, err := im.Bootstrap(full, o)
	if err != nil {
		t.Fatal(err)
	}
	if all.Loaded != 4 {
		t.Errorf("collect loaded %d of 4 replicates", all.Loaded)
	}
	for p := range one.Std {
		if math.Float64bits(one.Std[p]) != math.Float64bits(all.Std[p]) || math.Float64bits(one.Mean[p]) != math.Float64bits(all.Mean[p]) {
			t.Fatalf("pixel %d: maps from the files differ from one run", p)
		}
	}
	if len(one.NotConverged) != len(all.NotConverged) {
		t.Errorf("not converged: %v from one run, %v from the files", one.NotConverged, all.NotConverged)
	}
}

// TestBootstrapSummaryText: the peak significance of the text report says it is mean/σ with
// σ estimated from the replicates that gave an image.
func TestBootstrapSummaryText(t *testing.T) {
	s := &BootstrapSummary{Replicates: 4, Good: 3, Unit: "exposure", Units: 8, MaxSignif: 1160, Outputs: &output.BootstrapPaths{}}
	var buf strings.Builder
	s.WriteText(&buf)
	if !strings.Contains(buf.String(), "peak significance 1.16e+03 (mean/σ, σ estimated from 3 replicates)") {
		t.Errorf("report %q", buf.String())
	}
}
