package dataset

import (
	"math"
	"slices"
	"testing"
)

// exposureData builds a data set of three exposures of one file (MJD 1, 2, 3), each with two
// V² rows of two channels and one triangle of two channels, and a fourth exposure at MJD 1 in a
// second file. Each point's Value (or Phi) is 1000·file + 100·MJD + 10·row + channel, so the
// test can tell where a point came from.
func exposureData() *Data {
	d := &Data{Files: []string{"a", "b"}, Targets: []string{"T"}}
	add2 := func(file, row int, mjd float64) {
		for c := 0; c < 2; c++ {
			p := &d.Vis2
			p.U = append(p.U, float64(row))
			p.V = append(p.V, 0)
			p.Lambda = append(p.Lambda, 1e-6)
			p.DLambda = append(p.DLambda, 1e-7)
			p.MJD = append(p.MJD, mjd)
			p.Value = append(p.Value, 1000*float64(file)+100*mjd+10*float64(row)+float64(c))
			p.Err = append(p.Err, 0.1)
			p.Origin = append(p.Origin, Origin{File: file, HDU: 3, Row: row, Channel: c})
		}
	}
	add3 := func(file, row int, mjd float64) {
		for c := 0; c < 2; c++ {
			p := &d.T3
			for _, s := range []*[]float64{&p.U1, &p.V1, &p.U2, &p.V2, &p.Amp, &p.AmpErr} {
				*s = append(*s, 0)
			}
			p.Lambda = append(p.Lambda, 1e-6)
			p.DLambda = append(p.DLambda, 1e-7)
			p.MJD = append(p.MJD, mjd)
			p.Phi = append(p.Phi, 1000*float64(file)+100*mjd+10*float64(row)+float64(c))
			p.PhiErr = append(p.PhiErr, 0.1)
			p.AmpOK = append(p.AmpOK, false)
			p.PhiOK = append(p.PhiOK, true)
			p.Origin = append(p.Origin, Origin{File: file, HDU: 4, Row: row, Channel: c})
		}
	}
	row2, row3 := 1, 1
	for _, e := range []struct {
		file int
		mjd  float64
	}{{0, 1}, {0, 2}, {0, 3}, {1, 1}} {
		add2(e.file, row2, e.mjd)
		add2(e.file, row2+1, e.mjd)
		row2 += 2
		add3(e.file, row3, e.mjd)
		row3++
	}
	d.Vis2Count = Counts{Valid: d.Vis2.Len(), Flagged: 3}
	d.T3Count = Counts{Valid: d.T3.Len()}
	return d
}

func TestGroup(t *testing.T) {
	d := exposureData()
	for _, c := range []struct {
		unit  Unit
		units int
		// vis2 and t3 of the first unit
		vis2, t3 []int
	}{
		// Four exposures: the same MJD in two files are two exposures.
		{ByExposure, 4, []int{0, 1, 2, 3}, []int{0, 1}},
		// Eight V² rows and four triangles.
		{ByRow, 12, []int{0, 1}, nil},
	} {
		g := d.Group(c.unit)
		if g.Len() != c.units {
			t.Errorf("%v: %d units, want %d", c.unit, g.Len(), c.units)
			continue
		}
		if u := g.Units[0]; !slices.Equal(u.Vis2, c.vis2) || !slices.Equal(u.T3, c.t3) {
			t.Errorf("%v: first unit %+v, want V² %v, T3 %v", c.unit, u, c.vis2, c.t3)
		}
		// Every point is in exactly one unit.
		n2, n3 := 0, 0
		for _, u := range g.Units {
			n2 += len(u.Vis2)
			n3 += len(u.T3)
		}
		if n2 != d.Vis2.Len() || n3 != d.T3.Len() {
			t.Errorf("%v: units hold %d V² and %d T3, want %d and %d", c.unit, n2, n3, d.Vis2.Len(), d.T3.Len())
		}
	}
}

func TestResample(t *testing.T) {
	d := exposureData()
	g := d.Group(ByExposure)
	r := d.Resample(&g, []int{1, 1, 3})
	// Exposure 1 (file 0, MJD 2) twice, then exposure 3 (file 1, MJD 1).
	want2 := []float64{230, 231, 240, 241, 230, 231, 240, 241, 1170, 1171, 1180, 1181}
	if !slices.Equal(r.Vis2.Value, want2) {
		t.Errorf("V² values %v, want %v", r.Vis2.Value, want2)
	}
	want3 := []float64{220, 221, 220, 221, 1140, 1141}
	if !slices.Equal(r.T3.Phi, want3) {
		t.Errorf("T3 phases %v, want %v", r.T3.Phi, want3)
	}
	// Every column moves with its point.
	for i, o := range r.Vis2.Origin {
		if want := 1000*float64(o.File) + 100*r.Vis2.MJD[i] + 10*float64(o.Row) + float64(o.Channel); r.Vis2.Value[i] != want {
			t.Errorf("V² point %d: value %g, origin %+v", i, r.Vis2.Value[i], o)
		}
		if r.Vis2.U[i] != float64(o.Row) || r.Vis2.Err[i] != 0.1 || r.Vis2.DLambda[i] != 1e-7 {
			t.Errorf("V² point %d: columns out of step", i)
		}
	}
	if len(r.T3.PhiOK) != 6 || !r.T3.PhiOK[0] || r.T3.AmpOK[0] {
		t.Errorf("T3 flags not taken along")
	}
	if r.Vis.Len() != 0 || r.Vis.Lambda != nil {
		t.Errorf("empty VIS columns should stay empty")
	}
	if c := r.Vis2Count; c.Valid != 12 || c.Flagged != 3 {
		t.Errorf("V² counts %+v", c)
	}
	// The original is untouched.
	if d.Vis2.Value[0] != 110 || d.Vis2.Len() != 16 {
		t.Errorf("Resample changed its input")
	}
}

// TestDraw checks that a replicate depends only on (seed, k) and that the draws are uniform
// with replacement: a unit is missed by each of n uniform draws with probability 1 − 1/n, so
// the expected share of distinct units is 1 − (1 − 1/n)ⁿ (elementary; the 0.632 of Efron &
// Tibshirani 1993, An Introduction to the Bootstrap, sect. 17.7, as recalled).
func TestDraw(t *testing.T) {
	g := Groups{Units: make([]Group, 50)}
	a := g.Draw(7, 3)
	if !slices.Equal(a, g.Draw(7, 3)) {
		t.Fatal("the same seed and replicate drew differently")
	}
	if slices.Equal(a, g.Draw(7, 4)) || slices.Equal(a, g.Draw(8, 3)) {
		t.Error("another replicate or seed drew the same units")
	}
	if !slices.IsSorted(a) || len(a) != 50 {
		t.Errorf("draw %v: want 50 sorted indices", a)
	}
	const reps = 2000
	distinct := 0.0
	for k := 0; k < reps; k++ {
		distinct += float64(len(slices.Compact(g.Draw(1, k))))
	}
	got := distinct / (reps * 50)
	want := 1 - math.Pow(1-1.0/50, 50)
	// The share of one draw has a standard deviation below 0.05 (a sum of 50 indicators
	// with variance ≤ 1/4, negatively correlated): the mean of 2000 is within 0.004 at 3σ.
	if math.Abs(got-want) > 0.004 {
		t.Errorf("share of distinct units %.4f, want %.4f", got, want)
	}
}

func TestParseUnit(t *testing.T) {
	for _, c := range []struct {
		in   string
		want Unit
		ok   bool
	}{{"exposure", ByExposure, true}, {" Baseline", ByRow, true}, {"triangle", ByRow, true}, {"night", 0, false}} {
		u, err := ParseUnit(c.in)
		if (err == nil) != c.ok || (c.ok && u != c.want) {
			t.Errorf("ParseUnit(%q) = %v, %v", c.in, u, err)
		}
	}
	if ByExposure.String() != "exposure" || ByRow.String() != "baseline" {
		t.Error("unit words")
	}
}
