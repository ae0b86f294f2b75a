package output

import (
	"fmt"
	"math"
	"sort"
	"strings"
	"time"

	"vcz/dataset"
	"vcz/io/oifits"
)

// InspectGroup is the part of a data set observed in one night with one instrument: where and
// with what it was observed, and the errors of each data type.
type InspectGroup struct {
	// Night numbers the nights of the whole data set from 1, in time order; a night is a group
	// of epochs separated by gaps of at most dataset.NightGap.
	Night int `json:"night"`
	// Date is the UTC calendar date of the group's first epoch, YYYY-MM-DD.
	Date       string       `json:"date"`
	MJD        InspectRange `json:"mjd"`
	Instrument string       `json:"instrument"`
	// Arrays are the ARRNAME of the tables, OIFITS the revisions of their files (1 or 2).
	Arrays []string `json:"arrays"`
	OIFITS []int    `json:"oifits_revisions"`
	// Stations are the STA_NAME (TEL_NAME when empty, "#n" for an index without an OI_ARRAY
	// row) of every station used, sorted; Baselines and Triangles count the distinct station
	// pairs (of V², visibilities and the sides of triangles) and triples (of closure
	// triangles).
	Stations  []string           `json:"stations"`
	Baselines int                `json:"baselines"`
	Triangles int                `json:"triangles"`
	Types     []InspectTypeStats `json:"types"`
}

// InspectTypeStats are the usable points of one data type in a group and their errors, in
// the type's unit (degrees for phases).
type InspectTypeStats struct {
	Type      string  `json:"type"`
	N         int     `json:"n"`
	ErrMin    float64 `json:"error_min"`
	ErrMedian float64 `json:"error_median"`
	ErrMax    float64 `json:"error_max"`
	// SNRMedian is the median of |value|/error; it is left out for phases, whose value does
	// not scale with the signal.
	SNRMedian float64 `json:"snr_median,omitempty"`
}

// Breakdown splits the usable points of d, read from files (in the order given to
// dataset.FromFiles), by night and instrument, in time order and then by instrument name.
func Breakdown(files []*oifits.File, d *dataset.Data) []InspectGroup {
	type point struct {
		mjd    float64
		o      dataset.Origin
		t      dataset.DataType
		val, e float64
	}
	var pts []point
	for _, t := range dataset.DataTypes() {
		m, idx := Measurements(d, t)
		for k, i := range idx {
			mjd, o, ok := pointOrigin(d, t, i)
			if ok {
				pts = append(pts, point{mjd, o, t, m.Value[k], m.Err[k]})
			}
		}
	}
	if len(pts) == 0 {
		return []InspectGroup{}
	}
	// Nights as dataset.Summarize counts them: sorted epochs, a new night after a gap longer
	// than NightGap.
	mjds := make([]float64, len(pts))
	for i, p := range pts {
		mjds[i] = p.mjd
	}
	sort.Float64s(mjds)
	var starts []float64
	for i, m := range mjds {
		if i == 0 || m-mjds[i-1] > dataset.NightGap {
			starts = append(starts, m)
		}
	}
	night := func(mjd float64) int { return sort.Search(len(starts), func(i int) bool { return starts[i] > mjd }) }

	type key struct {
		night int
		ins   string
	}
	type acc struct {
		g        InspectGroup
		arrays   map[string]bool
		revs     map[int]bool
		stations map[string]bool
		pairs    map[[2]string]bool
		triples  map[[3]string]bool
		errs     map[dataset.DataType][]float64
		snr      map[dataset.DataType][]float64
	}
	groups := map[key]*acc{}
	for _, p := range pts {
		tb, f := findTable(files, p.o)
		k := key{night(p.mjd), tb.ins}
		a := groups[k]
		if a == nil {
			a = &acc{g: InspectGroup{Night: k.night, Instrument: tb.ins, MJD: InspectRange{p.mjd, p.mjd}},
				arrays: map[string]bool{}, revs: map[int]bool{}, stations: map[string]bool{}, pairs: map[[2]string]bool{},
				triples: map[[3]string]bool{}, errs: map[dataset.DataType][]float64{}, snr: map[dataset.DataType][]float64{}}
			groups[k] = a
		}
		a.g.MJD.Min, a.g.MJD.Max = math.Min(a.g.MJD.Min, p.mjd), math.Max(a.g.MJD.Max, p.mjd)
		if f != nil {
			a.revs[f.Revision] = true
		}
		if tb.arr != "" {
			a.arrays[tb.arr] = true
		}
		names := make([]string, len(tb.sta))
		for i, s := range tb.sta {
			names[i] = stationName(f, tb.arr, s)
			a.stations[names[i]] = true
		}
		sort.Strings(names)
		switch len(names) {
		case 2:
			a.pairs[[2]string{names[0], names[1]}] = true
		case 3:
			a.triples[[3]string{names[0], names[1], names[2]}] = true
			for _, q := range [][2]string{{names[0], names[1]}, {names[0], names[2]}, {names[1], names[2]}} {
				a.pairs[q] = true
			}
		}
		a.errs[p.t] = append(a.errs[p.t], p.e)
		if !p.t.Info().Phase {
			a.snr[p.t] = append(a.snr[p.t], math.Abs(p.val)/p.e)
		}
	}
	out := make([]InspectGroup, 0, len(groups))
	for _, a := range groups {
		g := a.g
		g.Date = MJDDate(g.MJD.Min)
		g.Arrays = sortedKeys(a.arrays)
		for r := range a.revs {
			g.OIFITS = append(g.OIFITS, r)
		}
		sort.Ints(g.OIFITS)
		g.Stations = sortedKeys(a.stations)
		g.Baselines, g.Triangles = len(a.pairs), len(a.triples)
		g.Types = []InspectTypeStats{}
		for _, t := range dataset.DataTypes() {
			e := a.errs[t]
			if len(e) == 0 {
				continue
			}
			sort.Float64s(e)
			s := InspectTypeStats{Type: t.String(), N: len(e), ErrMin: e[0], ErrMedian: median(e), ErrMax: e[len(e)-1]}
			if q := a.snr[t]; len(q) > 0 {
				sort.Float64s(q)
				s.SNRMedian = median(q)
			}
			g.Types = append(g.Types, s)
		}
		if g.OIFITS == nil {
			g.OIFITS = []int{}
		}
		out = append(out, g)
	}
	sort.Slice(out, func(i, j int) bool {
		if out[i].Night != out[j].Night {
			return out[i].Night < out[j].Night
		}
		return out[i].Instrument < out[j].Instrument
	})
	return out
}

// InstrumentGroups returns the instrument (INSNAME) of the points idx of data type t in d,
// read from files through their origins, as an index into names (sorted); names has one entry
// "" when the files do not tell (data built in memory).
func InstrumentGroups(files []*oifits.File, d *dataset.Data, t dataset.DataType, idx []int) (group []int, names []string) {
	ins := make([]string, len(idx))
	seen := map[string]bool{}
	for k, i := range idx {
		if _, o, ok := pointOrigin(d, t, i); ok {
			tb, _ := findTable(files, o)
			ins[k] = tb.ins
		}
		seen[ins[k]] = true
	}
	names = sortedKeys(seen)
	group = make([]int, len(idx))
	for k, s := range ins {
		group[k] = sort.SearchStrings(names, s)
	}
	return group, names
}

// pointOrigin returns the epoch and origin of point i of data type t's table in d; the
// origin's File is −1 when d does not record it (data built in memory).
func pointOrigin(d *dataset.Data, t dataset.DataType, i int) (mjd float64, o dataset.Origin, ok bool) {
	var mjds []float64
	var os []dataset.Origin
	switch t.Info().Table {
	case "OI_VIS2":
		mjds, os = d.Vis2.MJD, d.Vis2.Origin
	case "OI_T3":
		mjds, os = d.T3.MJD, d.T3.Origin
	case "OI_VIS":
		mjds, os = d.Vis.MJD, d.Vis.Origin
	default:
		return 0, o, false
	}
	o.File = -1
	if i < len(os) {
		o = os[i]
	}
	return mjds[i], o, true
}

// tableRow is what Breakdown needs of a data row: its instrument, array and stations.
type tableRow struct {
	ins, arr string
	sta      []int
}

// findTable returns the row of files an origin points to, and its file (nil and an empty
// row when the origin points nowhere, as for data built in memory).
func findTable(files []*oifits.File, o dataset.Origin) (tableRow, *oifits.File) {
	if o.File < 0 || o.File >= len(files) {
		return tableRow{}, nil
	}
	f := files[o.File]
	r := o.Row - 1
	for _, t := range f.Vis2 {
		if t.HDU == o.HDU && r >= 0 && r < len(t.Rows) {
			return tableRow{t.InsName, t.ArrName, t.Rows[r].StaIndex[:]}, f
		}
	}
	for _, t := range f.T3 {
		if t.HDU == o.HDU && r >= 0 && r < len(t.Rows) {
			return tableRow{t.InsName, t.ArrName, t.Rows[r].StaIndex[:]}, f
		}
	}
	for _, t := range f.Vis {
		if t.HDU == o.HDU && r >= 0 && r < len(t.Rows) {
			return tableRow{t.InsName, t.ArrName, t.Rows[r].StaIndex[:]}, f
		}
	}
	return tableRow{}, f
}

// stationName names station index s of array arr in f: STA_NAME, TEL_NAME when that is
// empty, "#s" when the file has no such row.
func stationName(f *oifits.File, arr string, s int) string {
	if f != nil {
		for _, a := range f.Arrays {
			if a.Name != arr && arr != "" {
				continue
			}
			for _, st := range a.Stations {
				if st.Index == s {
					if st.StaName != "" {
						return st.StaName
					}
					if st.TelName != "" {
						return st.TelName
					}
				}
			}
		}
	}
	return fmt.Sprintf("#%d", s)
}

// MJDDate returns the UTC calendar date (YYYY-MM-DD) of a modified Julian date: MJD 0 is
// 1858-11-17 at 0 h UTC (MJD = JD − 2 400 000.5).
func MJDDate(mjd float64) string {
	t := time.Date(1858, 11, 17, 0, 0, 0, 0, time.UTC).Add(time.Duration(math.Floor(mjd*86400*1e3)) * time.Millisecond)
	return t.Format("2006-01-02")
}

// median returns the median of sorted values (the mean of the middle two for an even count).
func median(s []float64) float64 {
	n := len(s)
	if n%2 == 1 {
		return s[n/2]
	}
	return (s[n/2-1] + s[n/2]) / 2
}

func sortedKeys(m map[string]bool) []string {
	out := make([]string, 0, len(m))
	for k := range m {
		out = append(out, k)
	}
	sort.Strings(out)
	return out
}

// BreakdownText writes the groups as a table for people, one line per group and one per data
// type below it.
func BreakdownText(gs []InspectGroup) string {
	var b strings.Builder
	for _, g := range gs {
		rev := make([]string, len(g.OIFITS))
		for i, r := range g.OIFITS {
			rev[i] = fmt.Sprintf("v%d", r)
		}
		fmt.Fprintf(&b, "  night %d, %s (MJD %.4f–%.4f): %s on %s, OIFITS %s\n", g.Night, g.Date, g.MJD.Min, g.MJD.Max,
			OrNone(g.Instrument), OrNone(strings.Join(g.Arrays, ", ")), OrNone(strings.Join(rev, ", ")))
		fmt.Fprintf(&b, "    stations %s; %d baselines, %d triangles\n", OrNone(strings.Join(g.Stations, " ")), g.Baselines, g.Triangles)
		for _, s := range g.Types {
			t, _ := dataset.ParseDataTypes(s.Type)
			u := t.Info().Unit
			sp := ""
			if u != "" && u != "°" {
				sp = " "
			}
			fmt.Fprintf(&b, "    %-7s %6d points, error %.3g%s%s (median; %.3g–%.3g%s%s)", s.Type, s.N, s.ErrMedian, sp, u, s.ErrMin, s.ErrMax, sp, u)
			if s.SNRMedian > 0 {
				fmt.Fprintf(&b, ", SNR %.3g (median)", s.SNRMedian)
			}
			b.WriteString("\n")
		}
	}
	return b.String()
}
