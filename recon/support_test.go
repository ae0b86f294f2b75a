package recon

import (
	"math"
	"testing"
)

// TestSolveSupport checks that a support holds every pixel whose centre lies farther than the
// radius from the centre pixel at exactly zero and leaves flux inside: the pixel positions
// x = −(ix − N/2)·pixel, y = (iy − N/2)·pixel of CONVENTIONS.md, the distance computed here
// directly.
func TestSolveSupport(t *testing.T) {
	d := standardObs(4, discVis(5*Mas))
	const n, pixel, radius = 32, 0.5 * Mas, 4 * Mas
	r, err := Solve(Problem{Data: d, Grid: Grid{N: n, Pixel: pixel}, Reg: tvReg, Weight: 100, Support: radius},
		Settings{MaxIter: 30, Starts: 1, Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	inside := 0.0
	for iy := range n {
		for ix := range n {
			x, y := -float64(ix-n/2)*pixel, float64(iy-n/2)*pixel
			v := r.Image[iy*n+ix]
			if math.Hypot(x, y) > radius*(1+1e-12) && v != 0 {
				t.Fatalf("pixel (%d, %d) at %.3g mas outside the support of %.3g mas holds %g", ix, iy, math.Hypot(x, y)/Mas, radius/Mas, v)
			}
			if math.Hypot(x, y) <= radius {
				inside += v
			}
		}
	}
	if math.Abs(inside-1) > 1e-9 {
		t.Errorf("flux inside the support %g, want the whole normalised flux 1", inside)
	}
}
