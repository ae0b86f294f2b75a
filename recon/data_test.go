package recon

import (
	"math"
	"testing"
)

// TestChooseGridSummary checks that the grid's pixel is a quarter of the nominal resolution
// of the data set's summary, λmin/(2·Bmax) (CONVENTIONS.md; common practice, no source).
func TestChooseGridSummary(t *testing.T) {
	d := standardObs(1, discVis(5*Mas))
	s := d.Summarize()
	g, err := ChooseGrid(d, GridOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if want := s.Resolution / 4; math.Abs(g.Pixel-want) > 1e-9*want {
		t.Errorf("Grid pixel = %.12g, want %.12g", g.Pixel, want)
	}
	if g.Resolution != s.Resolution || g.LargestScale != s.LargestScale {
		t.Errorf("grid resolution %g and largest scale %g, summary %g and %g", g.Resolution, g.LargestScale, s.Resolution, s.LargestScale)
	}
	if !Friendly(g.N) || g.N < 32 {
		t.Errorf("grid N = %d", g.N)
	}
}

func TestFriendly(t *testing.T) {
	for _, tc := range []struct {
		n    int
		want bool
	}{{2, true}, {30, true}, {32, true}, {48, true}, {14, false}, {15, false}, {100, true}, {0, false}, {126, false}} {
		if Friendly(tc.n) != tc.want {
			t.Errorf("Friendly(%d) = %v", tc.n, !tc.want)
		}
	}
}
