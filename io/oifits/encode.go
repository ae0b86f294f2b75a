package oifits

import (
	"fmt"
	"io"
	"math"
	"time"

	"vcz/io/fitsfile"
	"vcz/io/safefile"
)

// WriteFile writes f to path as OIFITS v2, atomically (package
// io/safefile): on error no partial file is left behind.
func WriteFile(path string, f *File) error {
	return safefile.Write(path, func(w io.Writer) error { return Encode(w, f) })
}

// Encode writes f to w as OIFITS v2 (Duvert, Young & Hummel 2017). It
// validates f first, as Decode would (validation errors are *Error).
//
// Tables are written in the order OI_TARGET, OI_ARRAY, OI_WAVELENGTH,
// OI_VIS2, OI_T3, OI_VIS, OI_FLUX; the HDU fields of f are ignored.
// Columns use the formats of the standard, so EQUINOX, DIAMETER, EFF_WAVE,
// EFF_BAND, PARALLAX and PARA_ERR (format E) are rounded to 32-bit floats.
//
// Primary-header keywords the standard makes mandatory (its table 2) are
// filled when f.Primary leaves them empty: CONTENT is always 'OIFITS2';
// DATE is the current UTC time; DATE-OBS is the earliest DATE-OBS of the
// data tables; TELESCOP, INSTRUME and OBJECT come from the only ARRNAME,
// INSNAME and TARGET, or are 'MULTI' when there are several; PROCSOFT is
// 'vcz'; ORIGIN, OBSERVER, INSMODE, REFERENC, PROG_ID and OBSTECH are
// 'UNKNOWN'. An empty DATE-OBS of a data table is derived from the
// earliest MJD of its rows. ARRNAME, optional in v1 but mandatory in v2,
// is filled with the name of the only OI_ARRAY when a data table leaves it
// empty; with no or several OI_ARRAY tables that is an error.
func Encode(w io.Writer, f *File) error {
	if err := validate(f); err != nil {
		return err
	}
	if err := checkArrNames(f); err != nil {
		return err
	}
	e := &encoder{fw: fitsfile.NewWriter(w), f: f}
	if err := e.encode(); err != nil {
		return fmt.Errorf("oifits: writing %s: %w", f.Name, err)
	}
	return nil
}

// checkArrNames reports an error when a data table has no ARRNAME and
// the file has no single OI_ARRAY to take it from.
func checkArrNames(f *File) error {
	if len(f.Arrays) == 1 {
		return nil
	}
	fail := func(ext string, i int) error {
		return &Error{File: f.Name, ExtName: ext, Err: fmt.Errorf("table %d has no ARRNAME, which OIFITS 2 requires, and the file has %d OI_ARRAY tables to take it from", i+1, len(f.Arrays))}
	}
	for i, t := range f.Vis2 {
		if t.ArrName == "" {
			return fail(extVis2, i)
		}
	}
	for i, t := range f.T3 {
		if t.ArrName == "" {
			return fail(extT3, i)
		}
	}
	for i, t := range f.Vis {
		if t.ArrName == "" {
			return fail(extVis, i)
		}
	}
	return nil
}

// arrName returns the ARRNAME to write for a data table.
func (e *encoder) arrName(given string) string {
	if given == "" && len(e.f.Arrays) == 1 {
		return e.f.Arrays[0].Name
	}
	return given
}

type encoder struct {
	fw     *fitsfile.Writer
	f      *File
	extver map[string]int
}

// table writes one binary table with an EXTVER that numbers the tables of
// the same EXTNAME 1, 2, ..., so that each HDU has a unique name/version
// pair as the FITS standard recommends (Pence et al. 2010, sect. 4.4.2.6).
func (e *encoder) table(ext string, rows int, cols []fitsfile.ColumnSpec, cards []fitsfile.Card) error {
	if e.extver == nil {
		e.extver = map[string]int{}
	}
	e.extver[ext]++
	cards = append([]fitsfile.Card{{Key: "EXTVER", Value: e.extver[ext], Comment: "version of this EXTNAME"}}, cards...)
	return e.fw.WriteTable(ext, rows, cols, cards)
}

func orDefault(s, def string) string {
	if s == "" {
		return def
	}
	return s
}

// single returns the only distinct value of names, "MULTI" when there are
// several, or "UNKNOWN" when none.
func single(names []string) string {
	out := ""
	for _, n := range names {
		if n == "" {
			continue
		}
		if out != "" && n != out {
			return "MULTI"
		}
		out = n
	}
	return orDefault(out, "UNKNOWN")
}

// mjdToDate converts a modified Julian date to "YYYY-MM-DD"; MJD 0 is
// 1858-11-17 (Pence et al. 2010, sect. 9.4.1).
func mjdToDate(mjd float64) string {
	epoch := time.Date(1858, 11, 17, 0, 0, 0, 0, time.UTC)
	return epoch.Add(time.Duration(math.Floor(mjd) * 24 * float64(time.Hour))).Format("2006-01-02")
}

// dateObs returns the table's DATE-OBS, or the date of its earliest MJD.
func dateObs(given string, mjds func(func(float64))) string {
	if given != "" {
		return given
	}
	lo := math.Inf(1)
	mjds(func(m float64) { lo = min(lo, m) })
	if math.IsInf(lo, 1) || math.IsNaN(lo) || lo < -1e6 || lo > 1e6 {
		return time.Now().UTC().Format("2006-01-02")
	}
	return mjdToDate(lo)
}

func (e *encoder) encode() error {
	f := e.f
	p := f.Primary
	var ins, arr, obj, dates []string
	for _, w := range f.Wavelengths {
		ins = append(ins, w.InsName)
	}
	for _, a := range f.Arrays {
		arr = append(arr, a.Name)
	}
	for _, t := range f.Targets {
		obj = append(obj, t.Name)
	}
	for _, t := range f.Vis2 {
		dates = append(dates, e.vis2Date(&t))
	}
	for _, t := range f.T3 {
		dates = append(dates, e.t3Date(&t))
	}
	for _, t := range f.Vis {
		dates = append(dates, e.visDate(&t))
	}
	for _, t := range f.Flux {
		dates = append(dates, e.fluxDate(&t))
	}
	first := ""
	for _, d := range dates {
		if first == "" || d < first {
			first = d
		}
	}
	cards := []fitsfile.Card{
		{Key: "ORIGIN", Value: orDefault(p.Origin, "UNKNOWN"), Comment: "institution responsible for the file"},
		{Key: "DATE", Value: orDefault(p.Date, time.Now().UTC().Format("2006-01-02T15:04:05")), Comment: "file creation date"},
		{Key: "DATE-OBS", Value: orDefault(p.DateObs, orDefault(first, "UNKNOWN")), Comment: "start of the first observation"},
		{Key: "CONTENT", Value: "OIFITS2", Comment: "OIFITS version 2 (Duvert et al. 2017)"},
		{Key: "TELESCOP", Value: orDefault(p.Telescop, single(arr)), Comment: "facility"},
		{Key: "INSTRUME", Value: orDefault(p.Instrume, single(ins)), Comment: "instrument"},
		{Key: "OBSERVER", Value: orDefault(p.Observer, "UNKNOWN"), Comment: "observer"},
		{Key: "OBJECT", Value: orDefault(p.Object, single(obj)), Comment: "target"},
		{Key: "INSMODE", Value: orDefault(p.InsMode, "UNKNOWN"), Comment: "instrument mode"},
		{Key: "REFERENC", Value: orDefault(p.Referenc, "UNKNOWN"), Comment: "bibliographic reference"},
		{Key: "PROG_ID", Value: orDefault(p.ProgID, "UNKNOWN"), Comment: "programme identifier"},
		{Key: "PROCSOFT", Value: orDefault(p.ProcSoft, "vcz"), Comment: "software that wrote the file"},
		{Key: "OBSTECH", Value: orDefault(p.ObsTech, "UNKNOWN"), Comment: "observing technique"},
	}
	for _, h := range p.History {
		cards = append(cards, fitsfile.Card{Key: "HISTORY", Comment: h})
	}
	for _, c := range p.Comments {
		cards = append(cards, fitsfile.Card{Key: "COMMENT", Comment: c})
	}
	if err := e.fw.WriteImage(nil, nil, cards); err != nil {
		return err
	}
	steps := []func() error{e.writeTargets}
	for i := range f.Arrays {
		steps = append(steps, func() error { return e.writeArray(&f.Arrays[i]) })
	}
	for i := range f.Wavelengths {
		steps = append(steps, func() error { return e.writeWavelength(&f.Wavelengths[i]) })
	}
	for i := range f.Vis2 {
		steps = append(steps, func() error { return e.writeVis2(&f.Vis2[i]) })
	}
	for i := range f.T3 {
		steps = append(steps, func() error { return e.writeT3(&f.T3[i]) })
	}
	for i := range f.Vis {
		steps = append(steps, func() error { return e.writeVis(&f.Vis[i]) })
	}
	for i := range f.Flux {
		steps = append(steps, func() error { return e.writeFlux(&f.Flux[i]) })
	}
	for _, s := range steps {
		if err := s(); err != nil {
			return err
		}
	}
	return nil
}

func revn(n int) fitsfile.Card {
	return fitsfile.Card{Key: "OI_REVN", Value: n, Comment: "revision of the table definition"}
}

func str(key, val, comment string) fitsfile.Card {
	return fitsfile.Card{Key: key, Value: val, Comment: comment}
}

// width returns the width of a string column: at least min, at least the
// longest value.
func width(minWidth int, vals []string) int {
	w := minWidth
	for _, v := range vals {
		w = max(w, len(v))
	}
	return w
}

func (e *encoder) writeTargets() error {
	ts := e.f.Targets
	n := len(ts)
	var (
		id                                  = make([]int, n)
		name, velTyp, velDef, specTyp, cat  = make([]string, n), make([]string, n), make([]string, n), make([]string, n), make([]string, n)
		ra, dec, eq, raErr, decErr, vel     = make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
		pmra, pmdec, pmraErr, pmdecErr, par = make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
		parErr                              = make([]float64, n)
		anyCat                              bool
	)
	for i, t := range ts {
		id[i], name[i], velTyp[i], velDef[i], specTyp[i], cat[i] = t.ID, t.Name, t.VelTyp, t.VelDef, t.SpecTyp, t.Category
		ra[i], dec[i], eq[i], raErr[i], decErr[i], vel[i] = t.RAEp0, t.DecEp0, t.Equinox, t.RAErr, t.DecErr, t.SysVel
		pmra[i], pmdec[i], pmraErr[i], pmdecErr[i], par[i], parErr[i] = t.PMRA, t.PMDec, t.PMRAErr, t.PMDecErr, t.Parallax, t.ParaErr
		anyCat = anyCat || t.Category != ""
	}
	cols := []fitsfile.ColumnSpec{
		{Name: "TARGET_ID", Type: 'I', Data: id, Comment: "index used in data tables"},
		{Name: "TARGET", Type: 'A', Repeat: width(16, name), Data: name},
		{Name: "RAEP0", Type: 'D', Unit: "deg", Data: ra},
		{Name: "DECEP0", Type: 'D', Unit: "deg", Data: dec},
		{Name: "EQUINOX", Type: 'E', Unit: "yr", Data: eq},
		{Name: "RA_ERR", Type: 'D', Unit: "deg", Data: raErr},
		{Name: "DEC_ERR", Type: 'D', Unit: "deg", Data: decErr},
		{Name: "SYSVEL", Type: 'D', Unit: "m/s", Data: vel},
		{Name: "VELTYP", Type: 'A', Repeat: width(8, velTyp), Data: velTyp},
		{Name: "VELDEF", Type: 'A', Repeat: width(8, velDef), Data: velDef},
		{Name: "PMRA", Type: 'D', Unit: "deg/yr", Data: pmra},
		{Name: "PMDEC", Type: 'D', Unit: "deg/yr", Data: pmdec},
		{Name: "PMRA_ERR", Type: 'D', Unit: "deg/yr", Data: pmraErr},
		{Name: "PMDEC_ERR", Type: 'D', Unit: "deg/yr", Data: pmdecErr},
		{Name: "PARALLAX", Type: 'E', Unit: "deg", Data: par},
		{Name: "PARA_ERR", Type: 'E', Unit: "deg", Data: parErr},
		{Name: "SPECTYP", Type: 'A', Repeat: width(16, specTyp), Data: specTyp},
	}
	if anyCat {
		cols = append(cols, fitsfile.ColumnSpec{Name: "CATEGORY", Type: 'A', Repeat: width(3, cat), Data: cat})
	}
	return e.table(extTarget, n, cols, []fitsfile.Card{revn(2)})
}

func (e *encoder) writeArray(a *Array) error {
	n := len(a.Stations)
	tel, sta, fovType := make([]string, n), make([]string, n), make([]string, n)
	idx := make([]int, n)
	diam, xyz, fov := make([]float64, n), make([]float64, 3*n), make([]float64, n)
	for i, s := range a.Stations {
		tel[i], sta[i], fovType[i], idx[i], diam[i], fov[i] = s.TelName, s.StaName, s.FOVType, s.Index, s.Diameter, s.FOV
		copy(xyz[3*i:], s.XYZ[:])
	}
	cards := []fitsfile.Card{revn(2),
		str("ARRNAME", a.Name, "array name, referenced by data tables"),
		str("FRAME", a.Frame, "coordinate frame"),
		{Key: "ARRAYX", Value: a.XYZ[0], Comment: "[m] array centre x"},
		{Key: "ARRAYY", Value: a.XYZ[1], Comment: "[m] array centre y"},
		{Key: "ARRAYZ", Value: a.XYZ[2], Comment: "[m] array centre z"},
	}
	cols := []fitsfile.ColumnSpec{
		{Name: "TEL_NAME", Type: 'A', Repeat: width(16, tel), Data: tel},
		{Name: "STA_NAME", Type: 'A', Repeat: width(16, sta), Data: sta},
		{Name: "STA_INDEX", Type: 'I', Data: idx},
		{Name: "DIAMETER", Type: 'E', Unit: "m", Data: diam},
		{Name: "STAXYZ", Type: 'D', Repeat: 3, Unit: "m", Data: xyz},
		{Name: "FOV", Type: 'D', Unit: "arcsec", Data: fov},
		{Name: "FOVTYPE", Type: 'A', Repeat: width(6, fovType), Data: fovType},
	}
	return e.table(extArray, n, cols, cards)
}

func (e *encoder) writeWavelength(w *Wavelength) error {
	cols := []fitsfile.ColumnSpec{
		{Name: "EFF_WAVE", Type: 'E', Unit: "m", Data: w.EffWave},
		{Name: "EFF_BAND", Type: 'E', Unit: "m", Data: w.EffBand},
	}
	return e.table(extWavelength, len(w.EffWave), cols,
		[]fitsfile.Card{revn(2), str("INSNAME", w.InsName, "instrument set-up, referenced by data tables")})
}

// nwave returns NWAVE of the wavelength table named ins (validated).
func (e *encoder) nwave(ins string) int {
	for _, w := range e.f.Wavelengths {
		if w.InsName == ins {
			return len(w.EffWave)
		}
	}
	return 0
}

// dataCards returns the keywords of a data table.
func dataCards(rev int, date, arr, ins, corr string) []fitsfile.Card {
	c := []fitsfile.Card{revn(rev), str("DATE-OBS", date, "start of observation")}
	if arr != "" {
		c = append(c, str("ARRNAME", arr, "array, links to OI_ARRAY"))
	}
	c = append(c, str("INSNAME", ins, "instrument, links to OI_WAVELENGTH"))
	if corr != "" {
		c = append(c, str("CORRNAME", corr, "correlations, links to OI_CORR"))
	}
	return c
}

// common holds the columns shared by OI_VIS2, OI_T3 and OI_VIS.
type common struct {
	target, sta              []int
	time, mjd, intTime, u, v []float64
	flag                     []bool
}

func newCommon(rows, nsta, nw int) *common {
	return &common{target: make([]int, rows), sta: make([]int, rows*nsta),
		time: make([]float64, rows), mjd: make([]float64, rows), intTime: make([]float64, rows),
		u: make([]float64, rows), v: make([]float64, rows), flag: make([]bool, 0, rows*nw)}
}

func (c *common) head() []fitsfile.ColumnSpec {
	return []fitsfile.ColumnSpec{
		{Name: "TARGET_ID", Type: 'I', Data: c.target},
		{Name: "TIME", Type: 'D', Unit: "s", Data: c.time},
		{Name: "MJD", Type: 'D', Unit: "day", Data: c.mjd},
		{Name: "INT_TIME", Type: 'D', Unit: "s", Data: c.intTime},
	}
}

func (e *encoder) vis2Date(t *Vis2) string {
	return dateObs(t.DateObs, func(f func(float64)) {
		for _, r := range t.Rows {
			f(r.MJD)
		}
	})
}

func (e *encoder) writeVis2(t *Vis2) error {
	n, nw := len(t.Rows), e.nwave(t.InsName)
	c := newCommon(n, 2, nw)
	data, errs := make([]float64, 0, n*nw), make([]float64, 0, n*nw)
	for i, r := range t.Rows {
		c.target[i], c.time[i], c.mjd[i], c.intTime[i], c.u[i], c.v[i] = r.TargetID, r.Time, r.MJD, r.IntTime, r.UCoord, r.VCoord
		copy(c.sta[2*i:], r.StaIndex[:])
		data, errs, c.flag = append(data, r.Data...), append(errs, r.Err...), append(c.flag, r.Flag...)
	}
	cols := append(c.head(),
		fitsfile.ColumnSpec{Name: "VIS2DATA", Type: 'D', Repeat: nw, Data: data},
		fitsfile.ColumnSpec{Name: "VIS2ERR", Type: 'D', Repeat: nw, Data: errs},
		fitsfile.ColumnSpec{Name: "UCOORD", Type: 'D', Unit: "m", Data: c.u},
		fitsfile.ColumnSpec{Name: "VCOORD", Type: 'D', Unit: "m", Data: c.v},
		fitsfile.ColumnSpec{Name: "STA_INDEX", Type: 'I', Repeat: 2, Data: c.sta},
		fitsfile.ColumnSpec{Name: "FLAG", Type: 'L', Repeat: nw, Data: c.flag},
	)
	return e.table(extVis2, n, cols, dataCards(2, e.vis2Date(t), e.arrName(t.ArrName), t.InsName, t.CorrName))
}

func (e *encoder) t3Date(t *T3) string {
	return dateObs(t.DateObs, func(f func(float64)) {
		for _, r := range t.Rows {
			f(r.MJD)
		}
	})
}

func (e *encoder) writeT3(t *T3) error {
	n, nw := len(t.Rows), e.nwave(t.InsName)
	c := newCommon(n, 3, nw)
	u2, v2 := make([]float64, n), make([]float64, n)
	var amp, ampErr, phi, phiErr []float64
	for i, r := range t.Rows {
		c.target[i], c.time[i], c.mjd[i], c.intTime[i] = r.TargetID, r.Time, r.MJD, r.IntTime
		c.u[i], c.v[i], u2[i], v2[i] = r.U1Coord, r.V1Coord, r.U2Coord, r.V2Coord
		copy(c.sta[3*i:], r.StaIndex[:])
		amp, ampErr = append(amp, r.Amp...), append(ampErr, r.AmpErr...)
		phi, phiErr = append(phi, r.Phi...), append(phiErr, r.PhiErr...)
		c.flag = append(c.flag, r.Flag...)
	}
	cols := append(c.head(),
		fitsfile.ColumnSpec{Name: "T3AMP", Type: 'D', Repeat: nw, Data: nonNil(amp)},
		fitsfile.ColumnSpec{Name: "T3AMPERR", Type: 'D', Repeat: nw, Data: nonNil(ampErr)},
		fitsfile.ColumnSpec{Name: "T3PHI", Type: 'D', Repeat: nw, Unit: "deg", Data: nonNil(phi)},
		fitsfile.ColumnSpec{Name: "T3PHIERR", Type: 'D', Repeat: nw, Unit: "deg", Data: nonNil(phiErr)},
		fitsfile.ColumnSpec{Name: "U1COORD", Type: 'D', Unit: "m", Data: c.u},
		fitsfile.ColumnSpec{Name: "V1COORD", Type: 'D', Unit: "m", Data: c.v},
		fitsfile.ColumnSpec{Name: "U2COORD", Type: 'D', Unit: "m", Data: u2},
		fitsfile.ColumnSpec{Name: "V2COORD", Type: 'D', Unit: "m", Data: v2},
		fitsfile.ColumnSpec{Name: "STA_INDEX", Type: 'I', Repeat: 3, Data: c.sta},
		fitsfile.ColumnSpec{Name: "FLAG", Type: 'L', Repeat: nw, Data: nonNilBool(c.flag)},
	)
	return e.table(extT3, n, cols, dataCards(2, e.t3Date(t), e.arrName(t.ArrName), t.InsName, t.CorrName))
}

func (e *encoder) visDate(t *Vis) string {
	return dateObs(t.DateObs, func(f func(float64)) {
		for _, r := range t.Rows {
			f(r.MJD)
		}
	})
}

func (e *encoder) writeVis(t *Vis) error {
	n, nw := len(t.Rows), e.nwave(t.InsName)
	c := newCommon(n, 2, nw)
	var amp, ampErr, phi, phiErr []float64
	for i, r := range t.Rows {
		c.target[i], c.time[i], c.mjd[i], c.intTime[i], c.u[i], c.v[i] = r.TargetID, r.Time, r.MJD, r.IntTime, r.UCoord, r.VCoord
		copy(c.sta[2*i:], r.StaIndex[:])
		amp, ampErr = append(amp, r.Amp...), append(ampErr, r.AmpErr...)
		phi, phiErr = append(phi, r.Phi...), append(phiErr, r.PhiErr...)
		c.flag = append(c.flag, r.Flag...)
	}
	cards := dataCards(2, e.visDate(t), e.arrName(t.ArrName), t.InsName, t.CorrName)
	if t.AmpTyp != "" {
		cards = append(cards, str("AMPTYP", t.AmpTyp, "type of VISAMP"))
	}
	if t.PhiTyp != "" {
		cards = append(cards, str("PHITYP", t.PhiTyp, "type of VISPHI"))
	}
	cols := append(c.head(),
		fitsfile.ColumnSpec{Name: "VISAMP", Type: 'D', Repeat: nw, Unit: t.AmpUnit, Data: nonNil(amp)},
		fitsfile.ColumnSpec{Name: "VISAMPERR", Type: 'D', Repeat: nw, Unit: t.AmpUnit, Data: nonNil(ampErr)},
		fitsfile.ColumnSpec{Name: "VISPHI", Type: 'D', Repeat: nw, Unit: "deg", Data: nonNil(phi)},
		fitsfile.ColumnSpec{Name: "VISPHIERR", Type: 'D', Repeat: nw, Unit: "deg", Data: nonNil(phiErr)},
		fitsfile.ColumnSpec{Name: "UCOORD", Type: 'D', Unit: "m", Data: c.u},
		fitsfile.ColumnSpec{Name: "VCOORD", Type: 'D', Unit: "m", Data: c.v},
		fitsfile.ColumnSpec{Name: "STA_INDEX", Type: 'I', Repeat: 2, Data: c.sta},
		fitsfile.ColumnSpec{Name: "FLAG", Type: 'L', Repeat: nw, Data: nonNilBool(c.flag)},
	)
	return e.table(extVis, n, cols, cards)
}

func (e *encoder) fluxDate(t *Flux) string {
	return dateObs(t.DateObs, func(f func(float64)) {
		for _, r := range t.Rows {
			f(r.MJD)
		}
	})
}

// writeFlux writes OI_FLUX with its own OI_REVN = 1 (Duvert et al. 2017,
// table 11). STA_INDEX is written for uncalibrated spectra (CALSTAT = 'U'),
// where the standard requires it, and omitted otherwise.
func (e *encoder) writeFlux(t *Flux) error {
	n, nw := len(t.Rows), e.nwave(t.InsName)
	c := newCommon(n, 1, nw)
	var data, errs []float64
	for i, r := range t.Rows {
		c.target[i], c.mjd[i], c.intTime[i], c.sta[i] = r.TargetID, r.MJD, r.IntTime, r.StaIndex
		data, errs, c.flag = append(data, r.Data...), append(errs, r.Err...), append(c.flag, r.Flag...)
	}
	cards := []fitsfile.Card{revn(1), str("DATE-OBS", e.fluxDate(t), "start of observation"),
		str("INSNAME", t.InsName, "instrument, links to OI_WAVELENGTH")}
	if t.ArrName != "" {
		cards = append(cards, str("ARRNAME", t.ArrName, "array, links to OI_ARRAY"))
	}
	if t.CorrName != "" {
		cards = append(cards, str("CORRNAME", t.CorrName, "correlations, links to OI_CORR"))
	}
	if t.FOV != 0 {
		cards = append(cards, fitsfile.Card{Key: "FOV", Value: t.FOV, Comment: "[arcsec] field of view"})
	}
	if t.FOVType != "" {
		cards = append(cards, str("FOVTYPE", t.FOVType, "definition of FOV"))
	}
	cards = append(cards, str("CALSTAT", t.CalStat, "C = calibrated, U = uncalibrated"))
	cols := []fitsfile.ColumnSpec{
		{Name: "TARGET_ID", Type: 'I', Data: c.target},
		{Name: "MJD", Type: 'D', Unit: "day", Data: c.mjd},
		{Name: "INT_TIME", Type: 'D', Unit: "s", Data: c.intTime},
		{Name: "FLUXDATA", Type: 'D', Repeat: nw, Unit: t.Unit, Data: nonNil(data)},
		{Name: "FLUXERR", Type: 'D', Repeat: nw, Unit: t.Unit, Data: nonNil(errs)},
	}
	if t.CalStat == "U" {
		cols = append(cols, fitsfile.ColumnSpec{Name: "STA_INDEX", Type: 'I', Data: c.sta})
	}
	cols = append(cols, fitsfile.ColumnSpec{Name: "FLAG", Type: 'L', Repeat: nw, Data: nonNilBool(c.flag)})
	return e.table(extFlux, n, cols, cards)
}

func nonNil(s []float64) []float64 {
	if s == nil {
		return []float64{}
	}
	return s
}

func nonNilBool(s []bool) []bool {
	if s == nil {
		return []bool{}
	}
	return s
}
