package fit

import (
	"testing"

	"vcz/dataset"
)

// BenchmarkFitUD fits the diameter of a uniform disc to 360 V² and 480
// closure triangles (noiseless, start 10 % off).
func BenchmarkFitUD(b *testing.B) {
	d := synth(modelVis(mustLoad(b, "ud:diameter=3.1")), exactNoise)
	start := mustLoad(b, "ud:diameter~2.8")
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Fit(d, start, Options{}); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkFitBinary fits a disc and a companion (diameter, x, y, flux)
// from 8 seeded starts.
func BenchmarkFitBinary(b *testing.B) {
	d := synth(modelVis(mustLoad(b, "ud:diameter=1.2;point:x=4,y=-3,flux=0.3")), exactNoise)
	start := mustLoad(b, "ud:diameter~1.1;point:x~-3,y~2,flux~0.2(0..1)")
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Fit(d, start, Options{Starts: 8, Seed: 1}); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkGridSearch maps 40 × 72 companion positions next to a fixed
// disc.
func BenchmarkGridSearch(b *testing.B) {
	d := synth(modelVis(mustLoad(b, "ud:diameter=2;point:x=3,y=4,flux=0.02")), exactNoise)
	primary := mustLoad(b, "ud:diameter=2")
	b.ReportAllocs()
	for b.Loop() {
		if _, err := GridSearch(d, primary, GridOptions{SepMax: 10, Fit: Options{Use: dataset.Vis2 | dataset.T3Phi}}); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkScanSeeds maps χ² over the free position of a companion next
// to a disc (the map that seeds the extra starts of Fit) and picks 15
// minima.
func BenchmarkScanSeeds(b *testing.B) {
	d := synth(modelVis(mustLoad(b, "ud:diameter=1.2;point:x=4,y=-3,flux=0.3")), exactNoise)
	start := mustLoad(b, "ud:diameter~1.1;point:x~1,y~1,flux~0.1(0..1)")
	pr, err := newProblem(newTerms(d, 0, 1, centres), start)
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	for b.Loop() {
		if s := pr.scanSeeds(pr.x0, 15); len(s) != 15 {
			b.Fatalf("%d seeds", len(s))
		}
	}
}
