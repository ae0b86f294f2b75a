package recon

import (
	"math"
	"testing"

	"vcz/dataset"
	"vcz/io/oifits"
)

// smallFiles builds two small files by hand: file a has 2 V² rows × 2 channels (one point
// flagged, one NaN), one T3 row and one VIS row; file b has one V² row of another target.
func smallFiles() []*oifits.File {
	nan := math.NaN()
	wave := []oifits.Wavelength{{HDU: 2, InsName: "INS", EffWave: []float64{1e-6, 2e-6}, EffBand: []float64{1e-7, 1e-7}}}
	a := &oifits.File{
		Name:        "a.oifits",
		Targets:     []oifits.Target{{ID: 1, Name: "Alpha"}, {ID: 2, Name: "Beta"}},
		Wavelengths: wave,
		Vis2: []oifits.Vis2{{HDU: 3, InsName: "INS", Rows: []oifits.Vis2Row{
			{TargetID: 1, MJD: 60000.1, Data: []float64{0.5, 0.4}, Err: []float64{0.01, 0.02},
				UCoord: 30, VCoord: 40, Flag: []bool{false, true}},
			{TargetID: 1, MJD: 60000.2, Data: []float64{0.6, nan}, Err: []float64{0.01, 0.02},
				UCoord: 6, VCoord: 8, Flag: []bool{false, false}},
		}}},
		T3: []oifits.T3{{HDU: 4, InsName: "INS", Rows: []oifits.T3Row{
			{TargetID: 1, MJD: 60001.0, Amp: []float64{nan, nan}, AmpErr: []float64{nan, nan},
				Phi: []float64{90, -45}, PhiErr: []float64{1, 2},
				U1Coord: 30, V1Coord: 40, U2Coord: -24, V2Coord: -32, Flag: []bool{false, false}},
		}}},
		Vis: []oifits.Vis{{HDU: 5, InsName: "INS", PhiTyp: "differential", Rows: []oifits.VisRow{
			{TargetID: 2, MJD: 60001.1, Amp: []float64{0.7, 0.8}, AmpErr: []float64{0.1, 0.1},
				Phi: []float64{10, 20}, PhiErr: []float64{5, 5}, UCoord: 60, VCoord: 80, Flag: []bool{false, false}},
		}}},
	}
	b := &oifits.File{
		Name:        "b.oifits",
		Targets:     []oifits.Target{{ID: 1, Name: "beta "}},
		Wavelengths: wave,
		Vis2: []oifits.Vis2{{HDU: 3, InsName: "INS", Rows: []oifits.Vis2Row{
			{TargetID: 1, MJD: 60003.0, Data: []float64{0.9, 0.8}, Err: []float64{0.05, 0.05},
				UCoord: 3, VCoord: 4, Flag: []bool{false, false}},
		}}},
	}
	return []*oifits.File{a, b}
}

// TestChooseGridSummary checks that the grid's pixel is a quarter of the nominal resolution
// of the data set's summary, λmin/(2·Bmax) (CONVENTIONS.md; common practice, no source).
func TestChooseGridSummary(t *testing.T) {
	d, err := dataset.FromFiles(smallFiles(), dataset.Selection{})
	if err != nil {
		t.Fatal(err)
	}
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
