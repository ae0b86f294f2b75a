package model

import (
	"math"
	"strconv"
	"testing"
)

// TestRasterizeFlux: components wholly on the grid contribute exactly
// their flux; a disc cut in half by the grid edge loses half its flux
// (by symmetry); a component far off the grid, or far larger than it,
// costs no more than the grid and loses what lies outside.
func TestRasterizeFlux(t *testing.T) {
	const n = 64
	pix := 0.1 * MasToRad
	for _, spec := range []string{"ud:diameter=3", "ld:diameter=2,u_ld=0.6,x=1", "ld_power:diameter=0.05,alpha=0.5", "gauss:fwhm=1,ratio=0.3,pa=60", "ring:diameter=2,inc=40", "point:x=0.33,y=-0.71", "ud:diameter=0", "gauss:fwhm=0,x=0.1", "gauss:fwhm=0.001,ratio=0.01"} {
		m, err := ParseCompact(spec)
		if err != nil {
			t.Fatal(err)
		}
		img := make([]float64, n*n)
		if out := m.Rasterize(img, n, n, pix, 8); math.Abs(out) > 1e-12 {
			t.Errorf("%s: %g of the flux outside", spec, out)
		}
		var s float64
		for _, p := range img {
			s += p
		}
		if math.Abs(s-1) > 1e-12 {
			t.Errorf("%s: pixels sum to %g", spec, s)
		}
	}
	// A disc centred on the left edge column's centre line: x such that
	// its centre lies at the outer edge of pixel 0, half on the grid.
	edge := float64(n/2)*0.1 + 0.05 // mas east of the centre: the left edge of pixel 0
	m, _ := ParseCompact("ud:diameter=2,x=" + ftoa(edge))
	img := make([]float64, n*n)
	if out := m.Rasterize(img, n, n, pix, 8); math.Abs(out-0.5) > 2e-3 {
		t.Errorf("half-disc: %g outside, want 0.5", out)
	}
	huge, _ := ParseCompact("gauss:fwhm=1e5")
	img = make([]float64, n*n)
	if out := huge.Rasterize(img, n, n, pix, 8); !(out > 0.999999) {
		t.Errorf("huge Gaussian: %g outside", out)
	}
}

func ftoa(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }

func TestVisManyAllocs(t *testing.T) {
	m, _ := ParseCompact("ld_power:diameter=4,alpha=0.4;gauss:fwhm=1,x=1,flux=0.1;ring:diameter=5,inc=30,flux=0.1")
	u := []float64{1e7, 5e7, 2e8}
	v := []float64{-3e7, 1e6, 4e7}
	dst := make([]complex128, 3)
	if a := testing.AllocsPerRun(100, func() { m.VisMany(dst, u, v) }); a != 0 {
		t.Errorf("VisMany allocates %g times", a)
	}
}

func BenchmarkImage(b *testing.B) {
	m, _ := ParseCompact("ld:diameter=4,u_ld=0.35;gauss:fwhm=0.9,x=0.7,y=0.5,flux=0.06;ud:diameter=1,x=-0.8,y=-0.5,flux=-0.025")
	for _, n := range []int{64, 256} {
		b.Run(map[int]string{64: "64", 256: "256"}[n], func(b *testing.B) {
			b.ReportAllocs()
			for i := 0; i < b.N; i++ {
				m.Image(n, n, 8.0/float64(n)*MasToRad)
			}
		})
	}
}
