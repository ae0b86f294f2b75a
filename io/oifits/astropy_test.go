package oifits

import (
	"encoding/json"
	"fmt"
	"math"
	"path/filepath"
	"reflect"
	"sort"
	"strings"
	"testing"

	"vcz/io/fitsfile/fitstest"
)

const astropyScript = "../../testdata/oifits/astropy_oifits.py"

// dumpTable mirrors one entry of the JSON dump of astropy_oifits.py.
type dumpTable struct {
	HDU      int              `json:"hdu"`
	ExtName  string           `json:"extname"`
	Keywords map[string]any   `json:"keywords"`
	Units    map[string]any   `json:"units"`
	Columns  map[string][]any `json:"columns"`
	History  []string         `json:"history"`
	Image    bool             `json:"image"`
}

// jsonValue turns NaN and infinities into the strings the Python dump
// uses, and everything else into what encoding/json makes of it.
func jsonValue(v any) any {
	switch x := v.(type) {
	case float64:
		switch {
		case math.IsNaN(x):
			return "NaN"
		case math.IsInf(x, 1):
			return "Inf"
		case math.IsInf(x, -1):
			return "-Inf"
		}
		return x
	case []float64:
		out := make([]any, len(x))
		for i, f := range x {
			out[i] = jsonValue(f)
		}
		return out
	case int:
		return float64(x)
	case []int:
		out := make([]any, len(x))
		for i, n := range x {
			out[i] = float64(n)
		}
		return out
	case []bool:
		out := make([]any, len(x))
		for i, b := range x {
			out[i] = b
		}
		return out
	}
	return v
}

// goDump builds the dump of f in the form astropy_oifits.py prints, for the
// tables and columns this package represents.
func goDump(f *File) map[int]*dumpTable {
	out := map[int]*dumpTable{}
	add := func(hdu int, ext string, kw map[string]any, cols map[string][]any) {
		for k, v := range kw {
			if v == "" {
				delete(kw, k)
			}
		}
		out[hdu] = &dumpTable{HDU: hdu, ExtName: ext, Keywords: kw, Columns: cols}
	}
	cols := func(names ...string) map[string][]any {
		m := map[string][]any{}
		for _, n := range names {
			m[n] = []any{}
		}
		return m
	}
	put := func(m map[string][]any, name string, v any) { m[name] = append(m[name], jsonValue(v)) }
	// Vector cells of one element are scalars in the dump of a scalar column
	// (astropy gives a scalar for TFORM "D"), so compare them leniently.
	{
		c := cols()
		for _, t := range f.Targets {
			put(c, "TARGET_ID", t.ID)
			put(c, "TARGET", t.Name)
			put(c, "RAEP0", t.RAEp0)
			put(c, "DECEP0", t.DecEp0)
			put(c, "EQUINOX", t.Equinox)
			put(c, "RA_ERR", t.RAErr)
			put(c, "DEC_ERR", t.DecErr)
			put(c, "SYSVEL", t.SysVel)
			put(c, "VELTYP", t.VelTyp)
			put(c, "VELDEF", t.VelDef)
			put(c, "PMRA", t.PMRA)
			put(c, "PMDEC", t.PMDec)
			put(c, "PMRA_ERR", t.PMRAErr)
			put(c, "PMDEC_ERR", t.PMDecErr)
			put(c, "PARALLAX", t.Parallax)
			put(c, "PARA_ERR", t.ParaErr)
			put(c, "SPECTYP", t.SpecTyp)
			put(c, "CATEGORY", t.Category)
		}
		add(-1, extTarget, map[string]any{"OI_REVN": float64(f.Revision)}, c)
	}
	for _, a := range f.Arrays {
		c := cols()
		for _, s := range a.Stations {
			put(c, "TEL_NAME", s.TelName)
			put(c, "STA_NAME", s.StaName)
			put(c, "STA_INDEX", s.Index)
			put(c, "DIAMETER", s.Diameter)
			put(c, "STAXYZ", s.XYZ[:])
			put(c, "FOV", s.FOV)
			put(c, "FOVTYPE", s.FOVType)
		}
		add(a.HDU, extArray, map[string]any{"ARRNAME": a.Name, "FRAME": a.Frame, "ARRAYX": a.XYZ[0], "ARRAYY": a.XYZ[1], "ARRAYZ": a.XYZ[2]}, c)
	}
	for _, w := range f.Wavelengths {
		c := cols()
		for i := range w.EffWave {
			put(c, "EFF_WAVE", w.EffWave[i])
			put(c, "EFF_BAND", w.EffBand[i])
		}
		add(w.HDU, extWavelength, map[string]any{"INSNAME": w.InsName}, c)
	}
	common := func(c map[string][]any, id int, time, mjd, it float64, sta []int, flag []bool) {
		put(c, "TARGET_ID", id)
		put(c, "TIME", time)
		put(c, "MJD", mjd)
		put(c, "INT_TIME", it)
		put(c, "STA_INDEX", sta)
		put(c, "FLAG", flag)
	}
	kw := func(date, arr, ins, corr string) map[string]any {
		return map[string]any{"DATE-OBS": date, "ARRNAME": arr, "INSNAME": ins, "CORRNAME": corr}
	}
	for _, t := range f.Vis2 {
		c := cols()
		for _, r := range t.Rows {
			common(c, r.TargetID, r.Time, r.MJD, r.IntTime, r.StaIndex[:], r.Flag)
			put(c, "VIS2DATA", r.Data)
			put(c, "VIS2ERR", r.Err)
			put(c, "UCOORD", r.UCoord)
			put(c, "VCOORD", r.VCoord)
		}
		add(t.HDU, extVis2, kw(t.DateObs, t.ArrName, t.InsName, t.CorrName), c)
	}
	for _, t := range f.T3 {
		c := cols()
		for _, r := range t.Rows {
			common(c, r.TargetID, r.Time, r.MJD, r.IntTime, r.StaIndex[:], r.Flag)
			put(c, "T3AMP", r.Amp)
			put(c, "T3AMPERR", r.AmpErr)
			put(c, "T3PHI", r.Phi)
			put(c, "T3PHIERR", r.PhiErr)
			put(c, "U1COORD", r.U1Coord)
			put(c, "V1COORD", r.V1Coord)
			put(c, "U2COORD", r.U2Coord)
			put(c, "V2COORD", r.V2Coord)
		}
		add(t.HDU, extT3, kw(t.DateObs, t.ArrName, t.InsName, t.CorrName), c)
	}
	for _, t := range f.Vis {
		c := cols()
		for _, r := range t.Rows {
			common(c, r.TargetID, r.Time, r.MJD, r.IntTime, r.StaIndex[:], r.Flag)
			put(c, "VISAMP", r.Amp)
			put(c, "VISAMPERR", r.AmpErr)
			put(c, "VISPHI", r.Phi)
			put(c, "VISPHIERR", r.PhiErr)
			put(c, "UCOORD", r.UCoord)
			put(c, "VCOORD", r.VCoord)
		}
		k := kw(t.DateObs, t.ArrName, t.InsName, t.CorrName)
		k["AMPTYP"], k["PHITYP"] = t.AmpTyp, t.PhiTyp
		add(t.HDU, extVis, k, c)
	}
	for _, t := range f.Flux {
		c := cols()
		for _, r := range t.Rows {
			put(c, "TARGET_ID", r.TargetID)
			put(c, "MJD", r.MJD)
			put(c, "INT_TIME", r.IntTime)
			put(c, "FLUXDATA", r.Data)
			put(c, "FLUXERR", r.Err)
			put(c, "STA_INDEX", r.StaIndex)
			put(c, "FLAG", r.Flag)
		}
		k := kw(t.DateObs, t.ArrName, t.InsName, t.CorrName)
		k["CALSTAT"], k["FOVTYPE"] = t.CalStat, t.FOVType
		if t.FOV != 0 {
			k["FOV"] = t.FOV
		}
		add(t.HDU, extFlux, k, c)
	}
	return out
}

// scalarize turns one-element lists into their element, because astropy
// returns a scalar for a column of repeat 1 whatever its role.
func scalarize(v any) any {
	if l, ok := v.([]any); ok && len(l) == 1 {
		return l[0]
	}
	return v
}

// compareDumps checks every column and keyword astropy saw against the Go
// side. Tables are matched by HDU number (OI_TARGET by name).
func compareDumps(t *testing.T, py []dumpTable, gd map[int]*dumpTable, label string) {
	t.Helper()
	seen := 0
	for _, p := range py {
		if p.HDU == 1 || p.Image {
			continue
		}
		key := p.HDU
		if p.ExtName == extTarget {
			key = -1
		}
		g := gd[key]
		if g == nil || g.ExtName != p.ExtName {
			t.Errorf("%s: HDU %d %s has no counterpart in the Go data", label, p.HDU, p.ExtName)
			continue
		}
		seen++
		for k, pv := range p.Keywords {
			if k == "OI_REVN" && p.ExtName != extTarget {
				continue
			}
			if gv, ok := g.Keywords[k]; !ok || !reflect.DeepEqual(gv, jsonValue(pv)) {
				t.Errorf("%s: HDU %d %s: keyword %s = %v (astropy), %v (Go)", label, p.HDU, p.ExtName, k, pv, gv)
			}
		}
		var names []string
		for n := range p.Columns {
			names = append(names, n)
		}
		sort.Strings(names)
		for _, n := range names {
			pc := p.Columns[n]
			gc, ok := g.Columns[n]
			if !ok {
				t.Errorf("%s: HDU %d %s: column %s not read", label, p.HDU, p.ExtName, n)
				continue
			}
			if len(pc) != len(gc) {
				t.Errorf("%s: HDU %d %s: column %s has %d rows (astropy), %d (Go)", label, p.HDU, p.ExtName, n, len(pc), len(gc))
				continue
			}
			for r := range pc {
				if a, b := scalarize(pc[r]), scalarize(gc[r]); !reflect.DeepEqual(a, b) {
					t.Errorf("%s: HDU %d %s row %d: %s = %v (astropy), %v (Go)", label, p.HDU, p.ExtName, r+1, n, a, b)
				}
			}
		}
	}
	if seen != len(gd) {
		t.Errorf("%s: astropy saw %d OI tables, Go has %d", label, seen, len(gd))
	}
}

func runDump(t *testing.T, args ...string) []dumpTable {
	t.Helper()
	out := fitstest.RunPython(t, astropyScript, args...)
	var d []dumpTable
	if err := json.Unmarshal(out, &d); err != nil {
		t.Fatalf("decoding the astropy dump: %v\n%s", err, out)
	}
	return d
}

// TestReadAstropyFiles reads OIFITS v1 and v2 files written independently
// with astropy.io.fits and checks every value against astropy's own
// reading of the same file.
func TestReadAstropyFiles(t *testing.T) {
	for _, version := range []string{"v1", "v2"} {
		t.Run(version, func(t *testing.T) {
			path := filepath.Join(t.TempDir(), "astropy-"+version+".oifits")
			py := runDump(t, "write", version, path)
			f, err := ReadFile(path)
			if err != nil {
				t.Fatal(err)
			}
			wantRev := map[string]int{"v1": 1, "v2": 2}[version]
			if f.Revision != wantRev {
				t.Errorf("Revision = %d, want %d", f.Revision, wantRev)
			}
			// The astropy file holds one image extension (HDU 6), which
			// must be skipped with a notice.
			if len(f.Skipped) != 1 || !strings.Contains(f.Skipped[0], "HDU 6: EXTRA_IMAGE") {
				t.Errorf("Skipped = %q", f.Skipped)
			}
			if version == "v1" && (f.Vis[0].AmpTyp != "" || f.T3[0].ArrName != "") {
				t.Errorf("v1: AMPTYP %q, T3 ARRNAME %q; want both empty", f.Vis[0].AmpTyp, f.T3[0].ArrName)
			}
			if version == "v2" {
				if f.Vis[0].AmpTyp != AmpDifferential || f.Vis[0].PhiTyp != PhiDifferential {
					t.Errorf("v2: AMPTYP %q PHITYP %q", f.Vis[0].AmpTyp, f.Vis[0].PhiTyp)
				}
				prim := py[0].Keywords
				if f.Primary.Object != prim["OBJECT"] || f.Primary.ProgID != prim["PROG_ID"] || f.Primary.Content != "OIFITS2" {
					t.Errorf("primary: %+v", f.Primary)
				}
			}
			if want := py[0].History; !reflect.DeepEqual(f.Primary.History, want) {
				t.Errorf("HISTORY = %q, want %q", f.Primary.History, want)
			}
			compareDumps(t, py, goDump(f), "astropy "+version)
		})
	}
}

// TestAstropyReadsOurFile writes the sample with Encode and checks that
// astropy reads the same values, keywords and units.
func TestAstropyReadsOurFile(t *testing.T) {
	path := filepath.Join(t.TempDir(), "ours.oifits")
	want := sampleFile()
	if err := WriteFile(path, want); err != nil {
		t.Fatal(err)
	}
	got, err := ReadFile(path) // to learn the HDU numbers Encode assigned
	if err != nil {
		t.Fatal(err)
	}
	py := runDump(t, "dump", path)
	compareDumps(t, py, goDump(got), "ours")
	// Units required by the standard (Duvert et al. 2017, tables 5-11).
	units := map[string]map[string]string{
		extTarget:     {"RAEP0": "deg", "DECEP0": "deg", "EQUINOX": "yr", "SYSVEL": "m/s", "PMRA": "deg/yr", "PARALLAX": "deg"},
		extArray:      {"DIAMETER": "m", "STAXYZ": "m", "FOV": "arcsec"},
		extWavelength: {"EFF_WAVE": "m", "EFF_BAND": "m"},
		extVis2:       {"TIME": "s", "MJD": "day", "INT_TIME": "s", "UCOORD": "m", "VCOORD": "m"},
		extT3:         {"T3PHI": "deg", "T3PHIERR": "deg", "U1COORD": "m", "V2COORD": "m"},
		extVis:        {"VISAMP": "Jy", "VISPHI": "deg", "VISPHIERR": "deg"},
		extFlux:       {"FLUXDATA": "ADU", "MJD": "day"},
	}
	for _, p := range py[1:] {
		for col, u := range units[p.ExtName] {
			if p.Units[col] != u {
				t.Errorf("%s (HDU %d): TUNIT of %s = %v, want %q", p.ExtName, p.HDU, col, p.Units[col], u)
			}
		}
		if rev := p.Keywords["OI_REVN"]; rev != map[bool]float64{true: 1, false: 2}[p.ExtName == extFlux] {
			t.Errorf("%s: OI_REVN = %v", p.ExtName, rev)
		}
	}
	prim := py[0].Keywords
	for _, k := range []string{"ORIGIN", "DATE", "DATE-OBS", "CONTENT", "TELESCOP", "INSTRUME", "OBSERVER", "OBJECT", "INSMODE", "REFERENC", "PROG_ID", "PROCSOFT", "OBSTECH"} {
		if _, ok := prim[k]; !ok {
			t.Errorf("primary header lacks %s", k)
		}
	}
	if fmt.Sprint(prim["CONTENT"]) != "OIFITS2" {
		t.Errorf("CONTENT = %v", prim["CONTENT"])
	}
}
