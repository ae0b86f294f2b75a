package recon

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"vcz/io/oifits"
)

// Selection chooses which points of a set of files enter a Data. Its zero value selects
// everything. Limits are inclusive; a zero limit is no limit.
type Selection struct {
	// Target is a target name (compared case-insensitively, surrounding blanks ignored) or,
	// when it is a decimal integer that names no target, a TARGET_ID applied in every file.
	// "" keeps every target.
	Target string
	// WaveMin and WaveMax bound the effective wavelength of a channel (m).
	WaveMin, WaveMax float64
	// MJDMin and MJDMax bound the epoch of a row (days).
	MJDMin, MJDMax float64
	// InsNames, when non-empty, keeps only tables with one of these INSNAMEs (exact match).
	InsNames []string
	// Types keeps only these data types; 0 keeps all. Dropping T3Amp but keeping T3Phi keeps
	// the triangles with their amplitudes marked unusable, and so on.
	Types DataType
}

// FromFiles merges the data tables of several files into one Data, in SI units and radians,
// keeping the points that Selection chooses. Flagged points and points whose value or error is
// not finite are dropped and counted (Data.Vis2Count, T3Count, VisCount). OI_VIS tables
// without AMPTYP or PHITYP (all OIFITS v1 files) are taken as absolute, as the v1 standard
// defines VISAMP and VISPHI (Pauls et al. 2005, sect. 6.5).
//
// It returns an error, naming the file and table, when a data table refers to an instrument
// without an OI_WAVELENGTH table or a channel has a non-positive wavelength, and when
// sel.Target matches no target of any file.
func FromFiles(files []*oifits.File, sel Selection) (*Data, error) {
	d := &Data{}
	types := sel.Types
	if types == 0 {
		types = AllTypes
	}
	targetSeen := false
	names := map[string]bool{}
	insUsed := map[string]Instrument{}
	for fi, f := range files {
		d.Files = append(d.Files, f.Name)
		waves := map[string]*oifits.Wavelength{}
		for i := range f.Wavelengths {
			waves[f.Wavelengths[i].InsName] = &f.Wavelengths[i]
		}
		// Target IDs of this file that the selection keeps, and their names.
		tname := map[int]string{}
		keep := map[int]bool{}
		for _, t := range f.Targets {
			tname[t.ID] = strings.TrimSpace(t.Name)
		}
		want := strings.TrimSpace(sel.Target)
		byName := false
		if want != "" {
			for _, t := range f.Targets {
				if strings.EqualFold(strings.TrimSpace(t.Name), want) {
					keep[t.ID] = true
					byName = true
				}
			}
			for _, g := range files { // a name matching in any file takes precedence over an id
				for _, t := range g.Targets {
					if strings.EqualFold(strings.TrimSpace(t.Name), want) {
						byName = true
					}
				}
			}
			if !byName {
				if id, err := strconv.Atoi(want); err == nil {
					if _, ok := tname[id]; ok {
						keep[id] = true
					}
				}
			}
			if len(keep) > 0 {
				targetSeen = true
			}
		}
		targetOK := func(id int) bool { return want == "" || keep[id] }
		insOK := func(name string) bool {
			if len(sel.InsNames) == 0 {
				return true
			}
			for _, n := range sel.InsNames {
				if n == name {
					return true
				}
			}
			return false
		}
		mjdOK := func(mjd float64) bool {
			return !(sel.MJDMin != 0 && mjd < sel.MJDMin) && !(sel.MJDMax != 0 && mjd > sel.MJDMax)
		}
		waveOK := func(l float64) bool {
			return !(sel.WaveMin != 0 && l < sel.WaveMin) && !(sel.WaveMax != 0 && l > sel.WaveMax)
		}
		lookup := func(ext string, hdu int, ins string, nrows, nwave int) (*oifits.Wavelength, error) {
			w := waves[ins]
			if w == nil {
				return nil, fmt.Errorf("%s: %s (HDU %d): INSNAME %q has no OI_WAVELENGTH table", f.Name, ext, hdu, ins)
			}
			for c, l := range w.EffWave {
				if !(l > 0) || math.IsInf(l, 0) {
					return nil, fmt.Errorf("%s: OI_WAVELENGTH (HDU %d) row %d: EFF_WAVE is %g; wavelengths must be positive", f.Name, w.HDU, c+1, l)
				}
			}
			if len(w.EffBand) != len(w.EffWave) {
				return nil, fmt.Errorf("%s: OI_WAVELENGTH (HDU %d): EFF_BAND has %d values for %d channels", f.Name, w.HDU, len(w.EffBand), len(w.EffWave))
			}
			return w, nil
		}
		use := func(ins string, w *oifits.Wavelength, c int, tid int) {
			in := insUsed[ins]
			if in.Name == "" {
				in = Instrument{Name: ins, Channels: len(w.EffWave), LambdaMin: math.Inf(1)}
				for _, l := range w.EffWave {
					in.LambdaMin = math.Min(in.LambdaMin, l)
					in.LambdaMax = math.Max(in.LambdaMax, l)
				}
				insUsed[ins] = in
			}
			names[tname[tid]] = true
		}
		width := func(ext string, hdu, row int, col string, got, n int) error {
			if got != n {
				return fmt.Errorf("%s: %s (HDU %d) row %d: %s has %d values for %d channels", f.Name, ext, hdu, row, col, got, n)
			}
			return nil
		}

		if types&Vis2 != 0 {
			for _, tb := range f.Vis2 {
				if !insOK(tb.InsName) {
					continue
				}
				w, err := lookup("OI_VIS2", tb.HDU, tb.InsName, len(tb.Rows), 0)
				if err != nil {
					return nil, err
				}
				nw := len(w.EffWave)
				for r, row := range tb.Rows {
					if !targetOK(row.TargetID) || !mjdOK(row.MJD) {
						continue
					}
					for _, e := range []error{
						width("OI_VIS2", tb.HDU, r+1, "VIS2DATA", len(row.Data), nw),
						width("OI_VIS2", tb.HDU, r+1, "VIS2ERR", len(row.Err), nw),
						width("OI_VIS2", tb.HDU, r+1, "FLAG", len(row.Flag), nw)} {
						if e != nil {
							return nil, e
						}
					}
					for c := 0; c < nw; c++ {
						l := w.EffWave[c]
						if !waveOK(l) {
							continue
						}
						switch {
						case row.Flag[c]:
							d.Vis2Count.Flagged++
						case !finite(row.Data[c]) || !finite(row.Err[c]) || !finite(row.UCoord) || !finite(row.VCoord):
							d.Vis2Count.NonFinite++
						case !(row.Err[c] > 0):
							return nil, fmt.Errorf("%s: OI_VIS2 (HDU %d) row %d: VIS2ERR is %g; errors must be positive", f.Name, tb.HDU, r+1, row.Err[c])
						default:
							d.Vis2Count.Valid++
							p := &d.Vis2
							p.U = append(p.U, row.UCoord/l)
							p.V = append(p.V, row.VCoord/l)
							p.Lambda = append(p.Lambda, l)
							p.DLambda = append(p.DLambda, w.EffBand[c])
							p.MJD = append(p.MJD, row.MJD)
							p.Value = append(p.Value, row.Data[c])
							p.Err = append(p.Err, row.Err[c])
							p.Origin = append(p.Origin, Origin{File: fi, HDU: tb.HDU, Row: r + 1, Channel: c})
							use(tb.InsName, w, c, row.TargetID)
						}
					}
				}
			}
		}

		if types&(T3Amp|T3Phi) != 0 {
			for _, tb := range f.T3 {
				if !insOK(tb.InsName) {
					continue
				}
				w, err := lookup("OI_T3", tb.HDU, tb.InsName, len(tb.Rows), 0)
				if err != nil {
					return nil, err
				}
				nw := len(w.EffWave)
				for r, row := range tb.Rows {
					if !targetOK(row.TargetID) || !mjdOK(row.MJD) {
						continue
					}
					for _, e := range []error{
						width("OI_T3", tb.HDU, r+1, "T3AMP", len(row.Amp), nw),
						width("OI_T3", tb.HDU, r+1, "T3AMPERR", len(row.AmpErr), nw),
						width("OI_T3", tb.HDU, r+1, "T3PHI", len(row.Phi), nw),
						width("OI_T3", tb.HDU, r+1, "T3PHIERR", len(row.PhiErr), nw),
						width("OI_T3", tb.HDU, r+1, "FLAG", len(row.Flag), nw)} {
						if e != nil {
							return nil, e
						}
					}
					uvOK := finite(row.U1Coord) && finite(row.V1Coord) && finite(row.U2Coord) && finite(row.V2Coord)
					for c := 0; c < nw; c++ {
						l := w.EffWave[c]
						if !waveOK(l) {
							continue
						}
						if row.Flag[c] {
							d.T3Count.Flagged++
							continue
						}
						ampOK := types&T3Amp != 0 && uvOK && finite(row.Amp[c]) && finite(row.AmpErr[c])
						phiOK := types&T3Phi != 0 && uvOK && finite(row.Phi[c]) && finite(row.PhiErr[c])
						if ampOK && !(row.AmpErr[c] > 0) {
							return nil, fmt.Errorf("%s: OI_T3 (HDU %d) row %d: T3AMPERR is %g; errors must be positive", f.Name, tb.HDU, r+1, row.AmpErr[c])
						}
						if phiOK && !(row.PhiErr[c] > 0) {
							return nil, fmt.Errorf("%s: OI_T3 (HDU %d) row %d: T3PHIERR is %g; errors must be positive", f.Name, tb.HDU, r+1, row.PhiErr[c])
						}
						if !ampOK && !phiOK {
							d.T3Count.NonFinite++
							continue
						}
						d.T3Count.Valid++
						p := &d.T3
						p.U1 = append(p.U1, row.U1Coord/l)
						p.V1 = append(p.V1, row.V1Coord/l)
						p.U2 = append(p.U2, row.U2Coord/l)
						p.V2 = append(p.V2, row.V2Coord/l)
						p.Lambda = append(p.Lambda, l)
						p.DLambda = append(p.DLambda, w.EffBand[c])
						p.MJD = append(p.MJD, row.MJD)
						a, ae, ph, pe := math.NaN(), math.NaN(), math.NaN(), math.NaN()
						if ampOK {
							a, ae = row.Amp[c], row.AmpErr[c]
						}
						if phiOK {
							ph, pe = row.Phi[c]*math.Pi/180, row.PhiErr[c]*math.Pi/180
						}
						p.Amp = append(p.Amp, a)
						p.AmpErr = append(p.AmpErr, ae)
						p.Phi = append(p.Phi, ph)
						p.PhiErr = append(p.PhiErr, pe)
						p.AmpOK = append(p.AmpOK, ampOK)
						p.PhiOK = append(p.PhiOK, phiOK)
						p.Origin = append(p.Origin, Origin{File: fi, HDU: tb.HDU, Row: r + 1, Channel: c})
						use(tb.InsName, w, c, row.TargetID)
					}
				}
			}
		}

		if types&(VisAmp|VisPhi) != 0 {
			for _, tb := range f.Vis {
				if !insOK(tb.InsName) {
					continue
				}
				w, err := lookup("OI_VIS", tb.HDU, tb.InsName, len(tb.Rows), 0)
				if err != nil {
					return nil, err
				}
				at, pt := AmpAbsolute, PhiAbsolute
				switch strings.ToLower(strings.TrimSpace(tb.AmpTyp)) {
				case oifits.AmpDifferential:
					at = AmpDifferential
				case oifits.AmpCorrelatedFlux:
					at = AmpCorrelatedFlux
				}
				if strings.EqualFold(strings.TrimSpace(tb.PhiTyp), oifits.PhiDifferential) {
					pt = PhiDifferential
				}
				nw := len(w.EffWave)
				for r, row := range tb.Rows {
					if !targetOK(row.TargetID) || !mjdOK(row.MJD) {
						continue
					}
					for _, e := range []error{
						width("OI_VIS", tb.HDU, r+1, "VISAMP", len(row.Amp), nw),
						width("OI_VIS", tb.HDU, r+1, "VISAMPERR", len(row.AmpErr), nw),
						width("OI_VIS", tb.HDU, r+1, "VISPHI", len(row.Phi), nw),
						width("OI_VIS", tb.HDU, r+1, "VISPHIERR", len(row.PhiErr), nw),
						width("OI_VIS", tb.HDU, r+1, "FLAG", len(row.Flag), nw)} {
						if e != nil {
							return nil, e
						}
					}
					uvOK := finite(row.UCoord) && finite(row.VCoord)
					for c := 0; c < nw; c++ {
						l := w.EffWave[c]
						if !waveOK(l) {
							continue
						}
						if row.Flag[c] {
							d.VisCount.Flagged++
							continue
						}
						ampOK := types&VisAmp != 0 && uvOK && finite(row.Amp[c]) && finite(row.AmpErr[c])
						phiOK := types&VisPhi != 0 && uvOK && finite(row.Phi[c]) && finite(row.PhiErr[c])
						if ampOK && !(row.AmpErr[c] > 0) {
							return nil, fmt.Errorf("%s: OI_VIS (HDU %d) row %d: VISAMPERR is %g; errors must be positive", f.Name, tb.HDU, r+1, row.AmpErr[c])
						}
						if phiOK && !(row.PhiErr[c] > 0) {
							return nil, fmt.Errorf("%s: OI_VIS (HDU %d) row %d: VISPHIERR is %g; errors must be positive", f.Name, tb.HDU, r+1, row.PhiErr[c])
						}
						if !ampOK && !phiOK {
							d.VisCount.NonFinite++
							continue
						}
						d.VisCount.Valid++
						p := &d.Vis
						p.U = append(p.U, row.UCoord/l)
						p.V = append(p.V, row.VCoord/l)
						p.Lambda = append(p.Lambda, l)
						p.DLambda = append(p.DLambda, w.EffBand[c])
						p.MJD = append(p.MJD, row.MJD)
						a, ae, ph, pe := math.NaN(), math.NaN(), math.NaN(), math.NaN()
						if ampOK {
							a, ae = row.Amp[c], row.AmpErr[c]
						}
						if phiOK {
							ph, pe = row.Phi[c]*math.Pi/180, row.PhiErr[c]*math.Pi/180
						}
						p.Amp = append(p.Amp, a)
						p.AmpErr = append(p.AmpErr, ae)
						p.Phi = append(p.Phi, ph)
						p.PhiErr = append(p.PhiErr, pe)
						p.AmpOK = append(p.AmpOK, ampOK)
						p.PhiOK = append(p.PhiOK, phiOK)
						p.AmpTyp = append(p.AmpTyp, at)
						p.PhiTyp = append(p.PhiTyp, pt)
						p.Origin = append(p.Origin, Origin{File: fi, HDU: tb.HDU, Row: r + 1, Channel: c})
						use(tb.InsName, w, c, row.TargetID)
					}
				}
			}
		}
	}
	if strings.TrimSpace(sel.Target) != "" && !targetSeen {
		var all []string
		for _, f := range files {
			for _, t := range f.Targets {
				all = append(all, fmt.Sprintf("%q (id %d in %s)", strings.TrimSpace(t.Name), t.ID, f.Name))
			}
		}
		return nil, fmt.Errorf("target %q not found; the files have %s", sel.Target, strings.Join(all, ", "))
	}
	for n := range names {
		d.Targets = append(d.Targets, n)
	}
	sort.Strings(d.Targets)
	for _, in := range insUsed {
		d.Instruments = append(d.Instruments, in)
	}
	sort.Slice(d.Instruments, func(i, j int) bool { return d.Instruments[i].Name < d.Instruments[j].Name })
	return d, nil
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }
