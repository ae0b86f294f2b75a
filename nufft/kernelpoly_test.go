package nufft

import (
	"math"
	"testing"
)

// TestKernelPoly checks the fitted tap polynomials of every width
// against the kernel evaluated from its Bessel series (itself checked
// against A&S 1964 table 9.8 in TestKernelFT), on points other than the
// fit's nodes and check grid, including both ends of the tap interval.
func TestKernelPoly(t *testing.T) {
	for w := minUnrolled; w <= maxUnrolled; w++ {
		k := newKernel(kaiserBessel, w)
		p := newKernelPoly(&k)
		vals := make([]float64, w)
		var worst float64
		for i := range 1001 {
			s := -1 + 2*float64(i)/1000
			if i > 0 && i < 1000 {
				s += 1e-4 * math.Sin(float64(i)) // off the check grid
			}
			p.eval(vals, s)
			a := (s + float64(w) - 1) / 2
			for d := range w {
				x := a - float64(d)
				want := k.eval(x)
				if math.Abs(2*x/float64(w)) >= 1 {
					want = k.norm // the untruncated kernel at its edge
				}
				worst = max(worst, math.Abs(vals[d]-want))
			}
		}
		t.Logf("w=%2d: degree %2d, largest error %.1e (target %.1e)", w, p.deg, worst, polyTarget(w))
		if worst > 1.5*polyTarget(w) {
			t.Errorf("w=%d: fitted weights off by %g, target %g", w, worst, polyTarget(w))
		}
	}
}
