package fit

import (
	"testing"

	"vcz/recon"
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
		if _, err := GridSearch(d, primary, GridOptions{SepMax: 10, Fit: Options{Use: recon.Vis2 | recon.T3Phi}}); err != nil {
			b.Fatal(err)
		}
	}
}
