package output

import (
	"bytes"
	"strings"
	"testing"

	"vcz/dataset"
	"vcz/io/oifits"
	"vcz/recon/simulate"
)

// MJD 51544.5 is JD 2 451 545.0, the epoch J2000.0 of 2000 January 1 at 12 h (IAU 1976
// resolution; MJD = JD − 2 400 000.5, IAU 1973 resolution); MJD 0 is 1858 November 17.
func TestMJDDate(t *testing.T) {
	for _, c := range []struct {
		mjd  float64
		want string
	}{{51544.5, "2000-01-01"}, {0, "1858-11-17"}, {51544.99999, "2000-01-01"}, {51545, "2000-01-02"}} {
		if got := MJDDate(c.mjd); got != c.want {
			t.Errorf("MJDDate(%g) = %s, want %s", c.mjd, got, c.want)
		}
	}
}

// The demo night, written and read back so that its tables have HDU numbers: one group with
// the six stations of the example array, all C(6, 2) = 15 pairs and C(6, 3) = 20 triples
// observed, as many points per type as the data set counts, and a second copy shifted by
// two days making a second night.
func TestBreakdown(t *testing.T) {
	f0, _, err := simulate.DemoData()
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := oifits.Encode(&buf, f0); err != nil {
		t.Fatal(err)
	}
	raw := buf.Bytes()
	f1, err := oifits.Decode(bytes.NewReader(raw), "a.oifits")
	if err != nil {
		t.Fatal(err)
	}
	f2, err := oifits.Decode(bytes.NewReader(raw), "b.oifits")
	if err != nil {
		t.Fatal(err)
	}
	for i := range f2.Vis2 {
		for j := range f2.Vis2[i].Rows {
			f2.Vis2[i].Rows[j].MJD += 2
		}
	}
	for i := range f2.T3 {
		for j := range f2.T3[i].Rows {
			f2.T3[i].Rows[j].MJD += 2
		}
	}
	files := []*oifits.File{f1, f2}
	d, err := dataset.FromFiles(files, dataset.Selection{})
	if err != nil {
		t.Fatal(err)
	}
	gs := Breakdown(files, d)
	if len(gs) != 2 {
		t.Fatalf("%d groups, want 2", len(gs))
	}
	for k, g := range gs {
		if g.Night != k+1 || len(g.Stations) != 6 || g.Baselines != 15 || g.Triangles != 20 || len(g.OIFITS) != 1 || g.OIFITS[0] != 2 || len(g.Arrays) != 1 {
			t.Errorf("group %d: night %d, stations %v, %d baselines, %d triangles, OIFITS %v, arrays %v; want night %d, 6 stations, 15, 20, [2], one array",
				k, g.Night, g.Stations, g.Baselines, g.Triangles, g.OIFITS, g.Arrays, k+1)
		}
		for _, s := range g.Types {
			ty, _ := dataset.ParseDataTypes(s.Type)
			if 2*s.N != d.Len(ty) || !(s.ErrMin <= s.ErrMedian && s.ErrMedian <= s.ErrMax) {
				t.Errorf("group %d, %s: %d points (the two nights hold %d), errors %g ≤ %g ≤ %g", k, s.Type, s.N, d.Len(ty), s.ErrMin, s.ErrMedian, s.ErrMax)
			}
			if ty.Info().Phase != (s.SNRMedian == 0) {
				t.Errorf("group %d, %s: SNR %g (phases have none, other types one)", k, s.Type, s.SNRMedian)
			}
		}
	}
	if gs[1].MJD.Min-gs[0].MJD.Min != 2 {
		t.Errorf("nights start at MJD %g and %g, want 2 days apart", gs[0].MJD.Min, gs[1].MJD.Min)
	}
	if txt := BreakdownText(gs); strings.Count(txt, "\n  night ") != 1 || !strings.Contains(txt, "15 baselines, 20 triangles") {
		t.Errorf("text:\n%s", txt)
	}
	// The same night under a second instrument name: each V² point is traced to its
	// instrument, half of them to each.
	f3, err := oifits.Decode(bytes.NewReader(raw), "c.oifits")
	if err != nil {
		t.Fatal(err)
	}
	for i := range f3.Wavelengths {
		f3.Wavelengths[i].InsName = "ALT-" + f3.Wavelengths[i].InsName
	}
	for i := range f3.Vis2 {
		f3.Vis2[i].InsName = "ALT-" + f3.Vis2[i].InsName
	}
	for i := range f3.T3 {
		f3.T3[i].InsName = "ALT-" + f3.T3[i].InsName
	}
	files = []*oifits.File{f1, f3}
	d, err = dataset.FromFiles(files, dataset.Selection{})
	if err != nil {
		t.Fatal(err)
	}
	_, idx := Measurements(d, dataset.Vis2)
	group, names := InstrumentGroups(files, d, dataset.Vis2, idx)
	n0 := 0
	for _, g := range group {
		if g == 0 {
			n0++
		}
	}
	if len(names) != 2 || names[0] != "ALT-"+names[1] || 2*n0 != len(idx) {
		t.Errorf("instruments %v, %d of %d points in the first", names, n0, len(idx))
	}
	// Data built in memory point to no table: no stations, the points still counted.
	if gs := Breakdown(nil, everyTypeData()); len(gs) != 1 || len(gs[0].Stations) != 0 || len(gs[0].Types) != dataset.NTypes {
		t.Errorf("data without files: %+v", gs)
	}
}
