package dataset

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
// It returns an *Error, naming the file, table, row and column, when a data table refers to
// an instrument without an OI_WAVELENGTH table, a channel has a non-positive wavelength, a
// row's columns do not have one value per channel or a usable point has an error that is not
// positive, and one without a position when sel.Target matches no target of any file. A file
// decoded by io/oifits has passed all but the wavelength check already (its package
// documentation, "Validation"); the checks stay for files built in memory.
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
		for _, w := range f.Warnings {
			d.Notices = append(d.Notices, f.Name+": "+w)
		}
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
		// bad returns the error for a problem at a position of file f.
		bad := func(ext string, hdu, row int, col, format string, args ...any) error {
			return &Error{File: f.Name, HDU: hdu, ExtName: ext, Row: row, Column: col, Err: fmt.Errorf(format, args...)}
		}
		lookup := func(ext string, hdu int, ins string) (*oifits.Wavelength, error) {
			w := waves[ins]
			if w == nil {
				return nil, bad(ext, hdu, 0, "INSNAME", "INSNAME %q has no OI_WAVELENGTH table", ins)
			}
			for c, l := range w.EffWave {
				if !(l > 0) || math.IsInf(l, 0) {
					return nil, bad("OI_WAVELENGTH", w.HDU, c+1, "EFF_WAVE", "EFF_WAVE is %g; wavelengths must be positive", l)
				}
			}
			if len(w.EffBand) != len(w.EffWave) {
				return nil, bad("OI_WAVELENGTH", w.HDU, 0, "EFF_BAND", "EFF_BAND has %d values for %d channels", len(w.EffBand), len(w.EffWave))
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
		// channels reads the channels of row r of an OI_T3 or OI_VIS table (k) of instrument
		// ins: it counts the flagged and unusable ones in count and appends each usable one
		// to set; the caller appends their (u, v), and whatever else its table has, for the
		// wavelengths added to set.
		channels := func(k ampPhaseCols, set ampPhaseSet, count *Counts, hdu, r int, ins string, w *oifits.Wavelength, tid int, mjd float64,
			amp, ampErr, phi, phiErr []float64, flag []bool, wantAmp, wantPhi bool) error {
			for c, l := range w.EffWave {
				if !waveOK(l) {
					continue
				}
				if flag[c] {
					count.Flagged++
					continue
				}
				v, err := k.channel(f.Name, hdu, r, c, amp, ampErr, phi, phiErr, wantAmp, wantPhi)
				if err != nil {
					return err
				}
				if !v.ampOK && !v.phiOK {
					count.NonFinite++
					continue
				}
				count.Valid++
				v.appendTo(set, l, w.EffBand[c], mjd, Origin{File: fi, HDU: hdu, Row: r, Channel: c})
				use(ins, w, c, tid)
			}
			return nil
		}
		width := func(ext string, hdu, row int, col string, got, n int) error {
			if got != n {
				return bad(ext, hdu, row, col, "%s has %d values for %d channels", col, got, n)
			}
			return nil
		}

		if types&Vis2 != 0 {
			for _, tb := range f.Vis2 {
				if !insOK(tb.InsName) {
					continue
				}
				w, err := lookup("OI_VIS2", tb.HDU, tb.InsName)
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
						width("OI_VIS2", tb.HDU, r+1, "FLAG", len(row.Flag), nw),
						coordsOK(f.Name, "OI_VIS2", tb.HDU, r+1, uvCols, row.UCoord, row.VCoord)} {
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
							return nil, notPositive(f.Name, "OI_VIS2", tb.HDU, r+1, "VIS2ERR", row.Err[c])
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
				w, err := lookup("OI_T3", tb.HDU, tb.InsName)
				if err != nil {
					return nil, err
				}
				nw := len(w.EffWave)
				for r, row := range tb.Rows {
					if !targetOK(row.TargetID) || !mjdOK(row.MJD) {
						continue
					}
					if err := t3Cols.widths(width, tb.HDU, r+1, nw, row.Amp, row.AmpErr, row.Phi, row.PhiErr, row.Flag); err != nil {
						return nil, err
					}
					if err := coordsOK(f.Name, "OI_T3", tb.HDU, r+1, uv12Cols, row.U1Coord, row.V1Coord, row.U2Coord, row.V2Coord); err != nil {
						return nil, err
					}
					uvOK := finite(row.U1Coord) && finite(row.V1Coord) && finite(row.U2Coord) && finite(row.V2Coord)
					p := &d.T3
					set := ampPhaseSet{&p.Lambda, &p.DLambda, &p.MJD, &p.Amp, &p.AmpErr, &p.Phi, &p.PhiErr, &p.AmpOK, &p.PhiOK, &p.Origin}
					n0 := len(p.Lambda)
					if err := channels(t3Cols, set, &d.T3Count, tb.HDU, r+1, tb.InsName, w, row.TargetID, row.MJD, row.Amp, row.AmpErr, row.Phi, row.PhiErr, row.Flag,
						types&T3Amp != 0 && uvOK, types&T3Phi != 0 && uvOK); err != nil {
						return nil, err
					}
					for _, l := range p.Lambda[n0:] {
						p.U1, p.V1 = append(p.U1, row.U1Coord/l), append(p.V1, row.V1Coord/l)
						p.U2, p.V2 = append(p.U2, row.U2Coord/l), append(p.V2, row.V2Coord/l)
					}
				}
			}
		}

		if types&(VisAmp|VisPhi) != 0 {
			for _, tb := range f.Vis {
				if !insOK(tb.InsName) {
					continue
				}
				w, err := lookup("OI_VIS", tb.HDU, tb.InsName)
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
					if err := visCols.widths(width, tb.HDU, r+1, nw, row.Amp, row.AmpErr, row.Phi, row.PhiErr, row.Flag); err != nil {
						return nil, err
					}
					if err := coordsOK(f.Name, "OI_VIS", tb.HDU, r+1, uvCols, row.UCoord, row.VCoord); err != nil {
						return nil, err
					}
					uvOK := finite(row.UCoord) && finite(row.VCoord)
					p := &d.Vis
					set := ampPhaseSet{&p.Lambda, &p.DLambda, &p.MJD, &p.Amp, &p.AmpErr, &p.Phi, &p.PhiErr, &p.AmpOK, &p.PhiOK, &p.Origin}
					n0 := len(p.Lambda)
					if err := channels(visCols, set, &d.VisCount, tb.HDU, r+1, tb.InsName, w, row.TargetID, row.MJD, row.Amp, row.AmpErr, row.Phi, row.PhiErr, row.Flag,
						types&VisAmp != 0 && uvOK, types&VisPhi != 0 && uvOK); err != nil {
						return nil, err
					}
					for _, l := range p.Lambda[n0:] {
						p.U, p.V = append(p.U, row.UCoord/l), append(p.V, row.VCoord/l)
						p.AmpTyp, p.PhiTyp = append(p.AmpTyp, at), append(p.PhiTyp, pt)
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
		return nil, &Error{Err: fmt.Errorf("target %q not found; the files have %s", sel.Target, strings.Join(all, ", "))}
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

// notPositive returns the error for an error column col whose value e, on a usable point, is
// not positive. io/oifits rejects such values when it decodes a file; files built in memory
// (simulations, tests) reach FromFiles without that check.
func notPositive(file, ext string, hdu, row int, col string, e float64) error {
	return &Error{File: file, HDU: hdu, ExtName: ext, Row: row, Column: col, Err: fmt.Errorf("%s is %g; errors must be positive", col, e)}
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// maxCoord is the largest UCOORD or VCOORD taken, in metres: the diameter of the Earth,
// 1.27e7 m, bounds every baseline of a ground-based array, and a larger value is a corrupt
// row (or a wrong unit far beyond the unit warning of io/oifits) whose spatial frequency
// would set the pixel grid.
const maxCoord = 1.3e7

// coordsOK returns an error naming the first coordinate of a row beyond maxCoord in size;
// cols names the coordinates in order.
func coordsOK(file, ext string, hdu, row int, cols []string, v ...float64) error {
	for i, x := range v {
		if math.Abs(x) > maxCoord {
			return &Error{File: file, HDU: hdu, ExtName: ext, Row: row, Column: cols[i],
				Err: fmt.Errorf("%s is %g m, longer than any baseline on the Earth (%g m)", cols[i], x, maxCoord)}
		}
	}
	return nil
}

var (
	uvCols   = []string{"UCOORD", "VCOORD"}
	uv12Cols = []string{"U1COORD", "V1COORD", "U2COORD", "V2COORD"}
)

// ampPhaseCols names the amplitude and phase columns of an OI_T3 or OI_VIS table, whose
// channels FromFiles reads alike.
type ampPhaseCols struct{ ext, amp, phi string }

var (
	t3Cols  = ampPhaseCols{"OI_T3", "T3AMP", "T3PHI"}
	visCols = ampPhaseCols{"OI_VIS", "VISAMP", "VISPHI"}
)

// widths checks that every column of a row has one value per channel, with width's error.
func (k ampPhaseCols) widths(width func(ext string, hdu, row int, col string, got, n int) error, hdu, row, nw int, amp, ampErr, phi, phiErr []float64, flag []bool) error {
	for _, c := range []struct {
		name string
		n    int
	}{{k.amp, len(amp)}, {k.amp + "ERR", len(ampErr)}, {k.phi, len(phi)}, {k.phi + "ERR", len(phiErr)}, {"FLAG", len(flag)}} {
		if err := width(k.ext, hdu, row, c.name, c.n, nw); err != nil {
			return err
		}
	}
	return nil
}

// ampPhase is one channel's amplitude and phase (radians) with their errors, NaN where not
// usable.
type ampPhase struct {
	a, ae, ph, pe float64
	ampOK, phiOK  bool
}

// channel reads channel c of a row: the amplitude is usable when wantAmp and both it and its
// error are finite, likewise the phase; a usable value with an error that is not positive is
// an error naming the file, table, row and column.
func (k ampPhaseCols) channel(file string, hdu, row, c int, amp, ampErr, phi, phiErr []float64, wantAmp, wantPhi bool) (ampPhase, error) {
	v := ampPhase{a: math.NaN(), ae: math.NaN(), ph: math.NaN(), pe: math.NaN()}
	v.ampOK = wantAmp && finite(amp[c]) && finite(ampErr[c])
	v.phiOK = wantPhi && finite(phi[c]) && finite(phiErr[c])
	if v.ampOK && !(ampErr[c] > 0) {
		return v, notPositive(file, k.ext, hdu, row, k.amp+"ERR", ampErr[c])
	}
	if v.phiOK && !(phiErr[c] > 0) {
		return v, notPositive(file, k.ext, hdu, row, k.phi+"ERR", phiErr[c])
	}
	if v.ampOK {
		v.a, v.ae = amp[c], ampErr[c]
	}
	if v.phiOK {
		v.ph, v.pe = phi[c]*math.Pi/180, phiErr[c]*math.Pi/180
	}
	return v, nil
}

// ampPhaseSet points at the slices that the points of OI_T3 and OI_VIS tables share.
type ampPhaseSet struct {
	lambda, dlambda, mjd, amp, ampErr, phi, phiErr *[]float64
	ampOK, phiOK                                   *[]bool
	origin                                         *[]Origin
}

// appendTo appends v, at wavelength l of bandwidth dl and date mjd, from o, to s.
func (v ampPhase) appendTo(s ampPhaseSet, l, dl, mjd float64, o Origin) {
	*s.lambda = append(*s.lambda, l)
	*s.dlambda = append(*s.dlambda, dl)
	*s.mjd = append(*s.mjd, mjd)
	*s.amp = append(*s.amp, v.a)
	*s.ampErr = append(*s.ampErr, v.ae)
	*s.phi = append(*s.phi, v.ph)
	*s.phiErr = append(*s.phiErr, v.pe)
	*s.ampOK = append(*s.ampOK, v.ampOK)
	*s.phiOK = append(*s.phiOK, v.phiOK)
	*s.origin = append(*s.origin, o)
}
