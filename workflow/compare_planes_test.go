package workflow

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/stat"
)

// spreadFigure against a direct computation with gonum's population mean and standard
// deviation (stat.PopMeanStdDev) per pixel, on three random images with empty corners;
// and for two images constant over the object, a and b, the closed form |a − b|/(a + b).
func TestSpreadFigure(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 5))
	const n = 16
	imgs := make([][]float64, 3)
	for i := range imgs {
		imgs[i] = make([]float64, n*n)
		for p := range imgs[i] {
			if p%n > 2 && p/n > 2 {
				imgs[i][p] = rng.Float64()
			}
		}
	}
	peak := 0.0
	means := make([]float64, n*n)
	stds := make([]float64, n*n)
	for p := range means {
		v := []float64{imgs[0][p], imgs[1][p], imgs[2][p]}
		means[p], stds[p] = stat.PopMeanStdDev(v, nil)
		peak = math.Max(peak, means[p])
	}
	var sig, tot float64
	for p, m := range means {
		if m >= 0.05*peak {
			sig += stds[p]
			tot += m
		}
	}
	if got, want := spreadFigure(imgs), sig/tot; math.Abs(got-want) > 1e-12*want {
		t.Errorf("spread %.15g, direct %.15g", got, want)
	}
	a, b := make([]float64, n*n), make([]float64, n*n)
	for p := range a {
		if p%n < 8 {
			a[p], b[p] = 0.3, 0.5
		}
	}
	if got, want := spreadFigure([][]float64{a, b}), 0.2/0.8; math.Abs(got-want) > 1e-12 {
		t.Errorf("two constant images: spread %g, want %g", got, want)
	}
	if got := spreadFigure([][]float64{a, a}); got != 0 {
		t.Errorf("equal images: spread %g", got)
	}
}

// commonFlux of two images of flux 1 is 1 − ½‖x₁ − x₂‖₁ (min(a, b) = (a + b − |a − b|)/2);
// an image and a copy moved by (2, −1) pixels share all their flux once the copy is moved
// back by that shift (alignImages' convention), and less without it.
func TestCommonFlux(t *testing.T) {
	rng := rand.New(rand.NewPCG(6, 6))
	const n = 12
	x1, x2 := make([]float64, n*n), make([]float64, n*n)
	for p := range x1 {
		x1[p], x2[p] = rng.Float64(), rng.Float64()
	}
	floats.Scale(1/floats.Sum(x1), x1)
	floats.Scale(1/floats.Sum(x2), x2)
	diff := make([]float64, n*n)
	floats.SubTo(diff, x1, x2)
	if got, want := commonFlux([][]float64{x1, x2}, nil, n), 1-0.5*floats.Norm(diff, 1); math.Abs(got-want) > 1e-12 {
		t.Errorf("common flux %.15g, 1 − ½‖x₁ − x₂‖₁ = %.15g", got, want)
	}
	// A compact source inside the frame, and the same moved 2 east-index and 1 down.
	src, moved := make([]float64, n*n), make([]float64, n*n)
	src[5*n+5], src[5*n+6], src[6*n+5] = 0.5, 0.3, 0.2
	for p, v := range src {
		if v != 0 {
			moved[(p/n-1)*n+p%n+2] = v
		}
	}
	// alignImages moves image i by shifts[i]: out[iy][ix] = im[iy−dy][ix−dx].
	if got := commonFlux([][]float64{src, moved}, [][2]int{{0, 0}, {-2, 1}}, n); math.Abs(got-1) > 1e-15 {
		t.Errorf("aligned copy: common flux %g, want 1", got)
	}
	if got := commonFlux([][]float64{src, moved}, nil, n); got > 0.5 {
		t.Errorf("unaligned copy: common flux %g", got)
	}
	_, shifts := alignImages([][]float64{src, moved}, n, 4)
	if shifts[1] != [2]int{-2, 1} {
		t.Errorf("alignImages gives the shift %v, the test assumes (-2, 1)", shifts[1])
	}
}
