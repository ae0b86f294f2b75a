package recon

import (
	"math"
	"testing"
)

// blobImage is an n × n image of unit-flux Gaussians of σ = s pixels at the given pixel
// centres with the given fluxes.
func blobImage(n int, s float64, at [][2]int, flux []float64) []float64 {
	c := make([][2]float64, len(at))
	for k, a := range at {
		c[k] = [2]float64{float64(a[0]), float64(a[1])}
	}
	return blobImageAt(n, s, c, flux)
}

// blobImageAt is blobImage with centres anywhere.
func blobImageAt(n int, s float64, at [][2]float64, flux []float64) []float64 {
	img := make([]float64, n*n)
	for k, c := range at {
		for iy := 0; iy < n; iy++ {
			for ix := 0; ix < n; ix++ {
				dx, dy := float64(ix)-c[0], float64(iy)-c[1]
				img[iy*n+ix] += flux[k] * math.Exp(-(dx*dx+dy*dy)/(2*s*s))
			}
		}
	}
	return img
}

func TestFidelity(t *testing.T) {
	const n = 32
	a := blobImage(n, 1.5, [][2]int{{14, 17}}, []float64{1})
	// Identical images: NCC 1 and L1 0 by the definitions.
	ncc, l1, sh := Fidelity(a, a, n, 1, 2)
	if math.Abs(ncc-1) > 1e-12 || l1 > 1e-12 || sh != [2]float64{} {
		t.Errorf("identical: ncc %g l1 %g shift %v", ncc, l1, sh)
	}
	// A copy moved by (3, −2) pixels and scaled by 5 aligns perfectly: the peak of the
	// cross-correlation is at the displacement, and both images are normalised to unit flux.
	b := blobImage(n, 1.5, [][2]int{{17, 15}}, []float64{5})
	ncc, l1, sh = Fidelity(b, a, n, 1, 2)
	if math.Abs(ncc-1) > 1e-9 || l1 > 1e-9 || math.Abs(sh[0]-3) > 1e-9 || math.Abs(sh[1]+2) > 1e-9 {
		t.Errorf("shifted: ncc %g l1 %g shift %v", ncc, l1, sh)
	}
	// Two well separated blobs, 0.7 at the true position and 0.3 elsewhere: L1 is
	// |0.7 − 1| + 0.3 = 0.6, and with S = Σg² of the unit blob and m = 1/n², NCC is
	// (0.7S − m)/√((S − m)(0.58S − m)) (the definition of the zero-mean correlation).
	c := blobImage(n, 1.5, [][2]int{{14, 17}, {4, 4}}, []float64{0.7, 0.3})
	ncc, l1, sh = Fidelity(c, a, n, 1, 0)
	sum := 0.0
	for _, v := range a {
		sum += v
	}
	s := 0.0
	for _, v := range a {
		s += (v / sum) * (v / sum)
	}
	m := 1.0 / (n * n)
	want := (0.7*s - m) / math.Sqrt((s-m)*(0.58*s-m))
	// The second blob lies 4 pixels (2.7σ) from the edge, so part of it is cut: 2e-3.
	if math.Abs(l1-0.6) > 2e-3 || math.Abs(ncc-want) > 1e-4 || math.Hypot(sh[0], sh[1]) > 1e-9 {
		t.Errorf("two blobs: ncc %g (want %g) l1 %g (want 0.6) shift %v", ncc, want, l1, sh)
	}
	// A copy displaced by a fraction of a pixel, (2.4, −1.3): the refined peak finds the
	// displacement to a few hundredths of a pixel, and the cubic-convolution shift leaves L1 at the
	// level of the interpolation error of a Gaussian of σ = 2.5 pixels (under 2 %).
	f := blobImageAt(n, 1.5, [][2]float64{{16.4, 15.7}}, []float64{1})
	ncc, l1, sh = Fidelity(f, a, n, 1, 4)
	if math.Abs(sh[0]-2.4) > 0.05 || math.Abs(sh[1]+1.3) > 0.05 || l1 > 0.02 || ncc < 0.999 {
		t.Errorf("sub-pixel: ncc %g l1 %g shift %v, want (2.4, −1.3)", ncc, l1, sh)
	}
	// Convolution of a point with the beam gives a Gaussian of σ = FWHM/(2√(2 ln 2)); its
	// second moment along x is σ² (pixels), up to the truncation at 4σ.
	p := make([]float64, n*n)
	p[16*n+16] = 1
	g := blurNormalized(p, n, 1, 3)
	mx := 0.0
	for iy := 0; iy < n; iy++ {
		for ix := 0; ix < n; ix++ {
			mx += g[iy*n+ix] * float64((ix-16)*(ix-16))
		}
	}
	sig := 3 / (2 * math.Sqrt(2*math.Ln2))
	if math.Abs(mx/(sig*sig)-1) > 2e-3 {
		t.Errorf("second moment %g, want σ² = %g", mx, sig*sig)
	}
}
