package dataset

import (
	"fmt"
	"math/rand/v2"
	"reflect"
	"slices"
	"strings"
)

// Unit is what a resampling of a data set draws with replacement.
type Unit uint8

// The resampling units.
const (
	// ByExposure draws whole exposures: every point of one file with one MJD, all its
	// channels, baselines and triangles together, since they share the calibration and the
	// atmosphere of that moment.
	ByExposure Unit = iota
	// ByRow draws every row of a data table on its own, all its channels together: one
	// baseline of one exposure (OI_VIS2, OI_VIS) or one triangle (OI_T3).
	ByRow
)

// unitWords are the user words of the units, in the order of the constants.
var unitWords = []string{"exposure", "baseline"}

// String returns the user word of u: "exposure" or "baseline".
func (u Unit) String() string {
	if int(u) < len(unitWords) {
		return unitWords[u]
	}
	return fmt.Sprintf("Unit(%d)", uint8(u))
}

// ParseUnit reads a resampling unit: "exposure" or "baseline" (also "triangle", which is the
// same unit: each row of its table), case-insensitively.
func ParseUnit(s string) (Unit, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "exposure", "exposures":
		return ByExposure, nil
	case "baseline", "baselines", "triangle", "triangles", "row", "rows":
		return ByRow, nil
	}
	return 0, fmt.Errorf("%q: want exposure or baseline", s)
}

// Groups are the resampling units of a data set: for each unit, the indices of its points in
// Vis2, T3 and Vis. Units are in the order of their first point (Vis2, then T3, then Vis).
type Groups struct {
	Unit  Unit
	Units []Group
}

// Group is one resampling unit: the indices of its points.
type Group struct {
	Vis2, T3, Vis []int
}

// Len returns the number of units.
func (g Groups) Len() int { return len(g.Units) }

// Group returns the resampling units of d: exposures (file and MJD) or table rows (file, HDU
// and row).
func (d *Data) Group(u Unit) Groups {
	type key struct {
		file, hdu, row int
		mjd            float64
	}
	mk := func(o Origin, mjd float64) key {
		if u == ByExposure {
			return key{file: o.File, mjd: mjd}
		}
		return key{file: o.File, hdu: o.HDU, row: o.Row}
	}
	g := Groups{Unit: u}
	index := map[key]int{}
	at := func(k key) *Group {
		i, ok := index[k]
		if !ok {
			i = len(g.Units)
			index[k] = i
			g.Units = append(g.Units, Group{})
		}
		return &g.Units[i]
	}
	for i, o := range d.Vis2.Origin {
		p := at(mk(o, d.Vis2.MJD[i]))
		p.Vis2 = append(p.Vis2, i)
	}
	for i, o := range d.T3.Origin {
		p := at(mk(o, d.T3.MJD[i]))
		p.T3 = append(p.T3, i)
	}
	for i, o := range d.Vis.Origin {
		p := at(mk(o, d.Vis.MJD[i]))
		p.Vis = append(p.Vis, i)
	}
	return g
}

// Draw returns the units of replicate k of a bootstrap with the given seed: g.Len() indices
// of units drawn uniformly with replacement (Efron & Tibshirani 1993, An Introduction to the
// Bootstrap, ch. 6), sorted. The random stream is a PCG generator (math/rand/v2) seeded with
// (seed, k), so a replicate depends only on the seed and its number, never on which others
// are drawn or in what order.
func (g *Groups) Draw(seed uint64, k int) []int {
	n := g.Len()
	r := rand.New(rand.NewPCG(seed, uint64(k)))
	out := make([]int, n)
	for i := range out {
		out[i] = r.IntN(n)
	}
	slices.Sort(out)
	return out
}

// Resample returns a data set made of the units draw names (indices into g.Units, repeats
// allowed), each with all its points, in the order of draw. Files, targets, instruments
// and notices are those of d; the counts of valid points are those of the new set, the
// flagged and non-finite counts those of d.
func (d *Data) Resample(g *Groups, draw []int) *Data {
	var i2, i3, iv []int
	for _, u := range draw {
		if u < 0 || u >= len(g.Units) {
			panic(fmt.Sprintf("dataset: Resample: unit %d of %d", u, len(g.Units)))
		}
		p := &g.Units[u]
		i2 = append(i2, p.Vis2...)
		i3 = append(i3, p.T3...)
		iv = append(iv, p.Vis...)
	}
	out := &Data{
		Files:       slices.Clone(d.Files),
		Targets:     slices.Clone(d.Targets),
		Instruments: slices.Clone(d.Instruments),
		Vis2Count:   d.Vis2Count, T3Count: d.T3Count, VisCount: d.VisCount,
		Notices: slices.Clone(d.Notices),
	}
	takeRows(&out.Vis2, &d.Vis2, i2)
	takeRows(&out.T3, &d.T3, i3)
	takeRows(&out.Vis, &d.Vis, iv)
	out.Vis2Count.Valid, out.T3Count.Valid, out.VisCount.Valid = len(i2), len(i3), len(iv)
	return out
}

// takeRows sets every slice field of the struct *dst to the elements idx of the same field
// of *src. The points are parallel slices, one field per column; taking every slice field
// keeps a column added later in step with the others.
func takeRows[T any](dst, src *T, idx []int) {
	s := reflect.ValueOf(src).Elem()
	t := reflect.ValueOf(dst).Elem()
	for f := 0; f < s.NumField(); f++ {
		col := s.Field(f)
		if col.Kind() != reflect.Slice {
			continue
		}
		if col.Len() == 0 {
			// A column a data set built in memory left empty stays empty.
			continue
		}
		out := reflect.MakeSlice(col.Type(), len(idx), len(idx))
		for i, j := range idx {
			out.Index(i).Set(col.Index(j))
		}
		t.Field(f).Set(out)
	}
}
