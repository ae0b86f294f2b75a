package plots

import (
	"errors"
	"math"
	"testing"
)

// TestSpectral renders a plot of two series, one with a NaN point, and refuses series of
// mismatched lengths and an empty plot.
func TestSpectral(t *testing.T) {
	wave := []float64{1.6e-6, 1.8e-6, 2.0e-6}
	f, err := Spectral([]SpectralSeries{{Label: "size", Wave: wave, Y: []float64{1, 1.1, 1.2}},
		{Label: "x", Wave: wave, Y: []float64{0, math.NaN(), 0.1}}}, "mas", Options{Width: 400, Height: 300})
	if err != nil {
		t.Fatal(err)
	}
	if b := f.Image().Bounds(); b.Dx() != 400 || b.Dy() != 300 {
		t.Errorf("image %v", b)
	}
	if _, err := Spectral([]SpectralSeries{{Wave: wave, Y: []float64{1}}}, "mas", Options{}); err == nil {
		t.Error("mismatched lengths accepted")
	}
	if _, err := Spectral([]SpectralSeries{{Wave: wave[:1], Y: []float64{math.NaN()}}}, "mas", Options{}); !errors.Is(err, ErrNoData) {
		t.Errorf("empty plot: %v", err)
	}
}
