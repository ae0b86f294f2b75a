package oifits

import (
	"vcz/io/fitsfile"
)

// Column layouts follow Pauls et al. (2005), tables 4-10, for revision 1
// and Duvert et al. (2017), tables 5-13, for revision 2.

func (d *decoder) readTarget(h *fitsfile.HDU) error {
	if len(d.f.Targets) > 0 {
		return &Error{File: d.name, HDU: h.Index, ExtName: extTarget, Err: errorf("a second OI_TARGET table; the standard allows only one")}
	}
	t, err := d.open(h, 1, 2)
	if err != nil {
		return err
	}
	d.f.Revision = t.revn
	req := func(name string, k colKind) *fitsfile.Column {
		c, e := t.column(name, k, 1, true)
		if e != nil && err == nil {
			err = e
		}
		return c
	}
	cID := req("TARGET_ID", kindInt)
	cName, e := t.column("TARGET", kindString, anyRepeat, true)
	err = firstErr(err, e)
	cRA, cDec, cEq := req("RAEP0", kindFloat), req("DECEP0", kindFloat), req("EQUINOX", kindFloat)
	cRAErr, cDecErr := req("RA_ERR", kindFloat), req("DEC_ERR", kindFloat)
	cVel := req("SYSVEL", kindFloat)
	cVelTyp, e1 := t.column("VELTYP", kindString, anyRepeat, true)
	cVelDef, e2 := t.column("VELDEF", kindString, anyRepeat, true)
	cPMRA, cPMDec := req("PMRA", kindFloat), req("PMDEC", kindFloat)
	cPMRAErr, cPMDecErr := req("PMRA_ERR", kindFloat), req("PMDEC_ERR", kindFloat)
	cPar, cParErr := req("PARALLAX", kindFloat), req("PARA_ERR", kindFloat)
	cSpec, e3 := t.column("SPECTYP", kindString, anyRepeat, true)
	cCat, e4 := t.column("CATEGORY", kindString, anyRepeat, false)
	if err = firstErr(err, e1, e2, e3, e4); err != nil {
		return err
	}
	seen := map[int]int{}
	targets := make([]Target, t.t.Rows)
	for r := range targets {
		tg := &targets[r]
		var errs [18]error
		tg.ID, errs[0] = t.int(cID, r)
		tg.Name, errs[1] = t.str(cName, r)
		tg.RAEp0, errs[2] = t.float(cRA, r)
		tg.DecEp0, errs[3] = t.float(cDec, r)
		tg.Equinox, errs[4] = t.float(cEq, r)
		tg.RAErr, errs[5] = t.float(cRAErr, r)
		tg.DecErr, errs[6] = t.float(cDecErr, r)
		tg.SysVel, errs[7] = t.float(cVel, r)
		tg.VelTyp, errs[8] = t.str(cVelTyp, r)
		tg.VelDef, errs[9] = t.str(cVelDef, r)
		tg.PMRA, errs[10] = t.float(cPMRA, r)
		tg.PMDec, errs[11] = t.float(cPMDec, r)
		tg.PMRAErr, errs[12] = t.float(cPMRAErr, r)
		tg.PMDecErr, errs[13] = t.float(cPMDecErr, r)
		tg.Parallax, errs[14] = t.float(cPar, r)
		tg.ParaErr, errs[15] = t.float(cParErr, r)
		tg.SpecTyp, errs[16] = t.str(cSpec, r)
		tg.Category, errs[17] = t.str(cCat, r)
		if err := firstErr(errs[:]...); err != nil {
			return err
		}
		if tg.ID < 1 {
			return t.errf(r+1, "TARGET_ID", "TARGET_ID is %d; must be 1 or more", tg.ID)
		}
		if prev, dup := seen[tg.ID]; dup {
			return t.errf(r+1, "TARGET_ID", "TARGET_ID %d is used again (first in row %d)", tg.ID, prev)
		}
		seen[tg.ID] = r + 1
	}
	if len(targets) == 0 {
		return t.errf(0, "", "OI_TARGET has no rows")
	}
	d.f.Targets = targets
	return nil
}

func (d *decoder) readArray(h *fitsfile.HDU) error {
	t, err := d.open(h, 1, 2)
	if err != nil {
		return err
	}
	a := Array{HDU: h.Index}
	var errs [10]error
	a.Name, errs[0] = t.keyword("ARRNAME", true)
	a.Frame, errs[1] = t.keyword("FRAME", true)
	a.XYZ[0], errs[2] = t.floatKeyword("ARRAYX", true)
	a.XYZ[1], errs[3] = t.floatKeyword("ARRAYY", true)
	a.XYZ[2], errs[4] = t.floatKeyword("ARRAYZ", true)
	if err := firstErr(errs[:5]...); err != nil {
		return err
	}
	for _, o := range d.f.Arrays {
		if o.Name == a.Name {
			return t.errf(0, "", "ARRNAME '%s' is already used by the OI_ARRAY table in HDU %d", a.Name, o.HDU)
		}
	}
	cTel, e0 := t.column("TEL_NAME", kindString, anyRepeat, true)
	cSta, e1 := t.column("STA_NAME", kindString, anyRepeat, true)
	cIdx, e2 := t.column("STA_INDEX", kindInt, 1, true)
	cDiam, e3 := t.column("DIAMETER", kindFloat, 1, true)
	cXYZ, e4 := t.column("STAXYZ", kindFloat, 3, true)
	// FOV and FOVTYPE are mandatory in revision 2 (Duvert et al. 2017, table 6).
	cFOV, e5 := t.column("FOV", kindFloat, 1, t.revn >= 2)
	cFOVType, e6 := t.column("FOVTYPE", kindString, anyRepeat, t.revn >= 2)
	if err := firstErr(e0, e1, e2, e3, e4, e5, e6); err != nil {
		return err
	}
	a.Stations = make([]Station, t.t.Rows)
	seen := map[int]int{}
	for r := range a.Stations {
		s := &a.Stations[r]
		s.TelName, errs[0] = t.str(cTel, r)
		s.StaName, errs[1] = t.str(cSta, r)
		s.Index, errs[2] = t.int(cIdx, r)
		s.Diameter, errs[3] = t.float(cDiam, r)
		errs[4] = t.floats(s.XYZ[:], cXYZ, r)
		s.FOV, errs[5] = t.float(cFOV, r)
		s.FOVType, errs[6] = t.str(cFOVType, r)
		if err := firstErr(errs[:7]...); err != nil {
			return err
		}
		if prev, dup := seen[s.Index]; dup {
			return t.errf(r+1, "STA_INDEX", "STA_INDEX %d is used again (first in row %d)", s.Index, prev)
		}
		seen[s.Index] = r + 1
	}
	d.f.Arrays = append(d.f.Arrays, a)
	return nil
}

func (d *decoder) readWavelength(h *fitsfile.HDU) error {
	t, err := d.open(h, 1, 2)
	if err != nil {
		return err
	}
	w := Wavelength{HDU: h.Index}
	if w.InsName, err = t.keyword("INSNAME", true); err != nil {
		return err
	}
	if d.waves == nil {
		d.waves = map[string]*Wavelength{}
	}
	if o := d.waves[w.InsName]; o != nil {
		return t.errf(0, "", "INSNAME '%s' is already used by the OI_WAVELENGTH table in HDU %d", w.InsName, o.HDU)
	}
	cWave, e0 := t.column("EFF_WAVE", kindFloat, 1, true)
	cBand, e1 := t.column("EFF_BAND", kindFloat, 1, true)
	if err := firstErr(e0, e1); err != nil {
		return err
	}
	if t.t.Rows == 0 {
		return t.errf(0, "", "OI_WAVELENGTH '%s' has no rows", w.InsName)
	}
	w.EffWave = make([]float64, t.t.Rows)
	w.EffBand = make([]float64, t.t.Rows)
	for r := range w.EffWave {
		if err := firstErr(t.floats(w.EffWave[r:r+1], cWave, r), t.floats(w.EffBand[r:r+1], cBand, r)); err != nil {
			return err
		}
	}
	d.f.Wavelengths = append(d.f.Wavelengths, w)
	// The map points into the slice; rebuild it because append may move it.
	for i := range d.f.Wavelengths {
		d.waves[d.f.Wavelengths[i].InsName] = &d.f.Wavelengths[i]
	}
	return nil
}

// dataHeader holds the keywords and columns shared by the data tables.
type dataHeader struct {
	DateObs, ArrName, InsName, CorrName string
	wave                                *Wavelength

	target, time, mjd, intTime, sta, flag *fitsfile.Column
}

// readDataHeader reads the keywords and common columns of OI_VIS2, OI_T3
// and OI_VIS (nsta stations per row). ARRNAME is optional in revision 1
// (Pauls et al. 2005, table 7) and mandatory in revision 2.
func (t *table) readDataHeader(nsta int) (*dataHeader, error) {
	var dh dataHeader
	var errs [12]error
	dh.DateObs, errs[0] = t.keyword("DATE-OBS", true)
	dh.ArrName, errs[1] = t.keyword("ARRNAME", t.revn >= 2)
	dh.InsName, errs[2] = t.keyword("INSNAME", true)
	dh.CorrName, errs[3] = t.keyword("CORRNAME", false)
	if err := firstErr(errs[:4]...); err != nil {
		return nil, err
	}
	dh.wave = t.d.waves[dh.InsName]
	if dh.wave == nil {
		return nil, t.errf(0, "", "INSNAME '%s' matches no OI_WAVELENGTH table", dh.InsName)
	}
	dh.target, errs[0] = t.column("TARGET_ID", kindInt, 1, true)
	dh.time, errs[1] = t.column("TIME", kindFloat, 1, t.ext != extFlux)
	dh.mjd, errs[2] = t.column("MJD", kindFloat, 1, true)
	dh.intTime, errs[3] = t.column("INT_TIME", kindFloat, 1, true)
	if nsta > 0 {
		dh.sta, errs[4] = t.column("STA_INDEX", kindInt, nsta, true)
	}
	dh.flag, errs[5] = t.vector("FLAG", kindBool, dh.wave, true)
	return &dh, firstErr(errs[:6]...)
}

// rowCommon reads the common fields of row r.
func (t *table) rowCommon(dh *dataHeader, r int, target *int, time, mjd, intTime *float64, sta []int, flag []bool) error {
	var errs [6]error
	*target, errs[0] = t.int(dh.target, r)
	if time != nil {
		*time, errs[1] = t.float(dh.time, r)
	}
	*mjd, errs[2] = t.float(dh.mjd, r)
	*intTime, errs[3] = t.float(dh.intTime, r)
	if sta != nil {
		errs[4] = t.ints(sta, dh.sta, r)
	}
	errs[5] = t.bools(flag, dh.flag, r)
	return firstErr(errs[:]...)
}

// chunks hands out consecutive slices of one backing array, so a table's
// vectors take one allocation per column instead of one per row.
type chunks struct {
	f []float64
	b []bool
}

func (c *chunks) floats(n int) []float64 {
	s := c.f[:n:n]
	c.f = c.f[n:]
	return s
}

func (c *chunks) bools(n int) []bool {
	s := c.b[:n:n]
	c.b = c.b[n:]
	return s
}

// newChunks allocates room for rows*nwave values in each of nf float
// vectors and one flag vector. The table's data are at least that large
// in bytes (each value takes 4 or 8 bytes in the file), so this is bounded
// by the file size.
func newChunks(rows, nwave, nf int) *chunks {
	return &chunks{f: make([]float64, rows*nwave*nf), b: make([]bool, rows*nwave)}
}

// openData opens an OI_VIS2, OI_T3 or OI_VIS table (revision 1 or 2) of baselines or
// triangles of nsta stations and reads its keywords and common columns.
func (d *decoder) openData(h *fitsfile.HDU, nsta int) (*table, *dataHeader, error) {
	t, err := d.open(h, 1, 2)
	if err != nil {
		return nil, nil, err
	}
	dh, err := t.readDataHeader(nsta)
	if err != nil {
		return nil, nil, err
	}
	return t, dh, nil
}

func (d *decoder) readVis2(h *fitsfile.HDU) error {
	t, dh, err := d.openData(h, 2)
	if err != nil {
		return err
	}
	cData, e0 := t.vector("VIS2DATA", kindFloat, dh.wave, true)
	cErr, e1 := t.vector("VIS2ERR", kindFloat, dh.wave, true)
	cU, e2 := t.column("UCOORD", kindFloat, 1, true)
	cV, e3 := t.column("VCOORD", kindFloat, 1, true)
	if err := firstErr(e0, e1, e2, e3); err != nil {
		return err
	}
	nw := len(dh.wave.EffWave)
	v := Vis2{HDU: h.Index, DateObs: dh.DateObs, ArrName: dh.ArrName, InsName: dh.InsName, CorrName: dh.CorrName}
	v.Rows = make([]Vis2Row, t.t.Rows)
	ch := newChunks(t.t.Rows, nw, 2)
	for r := range v.Rows {
		row := &v.Rows[r]
		row.Data, row.Err, row.Flag = ch.floats(nw), ch.floats(nw), ch.bools(nw)
		var e [5]error
		e[0] = t.rowCommon(dh, r, &row.TargetID, &row.Time, &row.MJD, &row.IntTime, row.StaIndex[:], row.Flag)
		e[1] = t.floats(row.Data, cData, r)
		e[2] = t.floats(row.Err, cErr, r)
		row.UCoord, e[3] = t.float(cU, r)
		row.VCoord, e[4] = t.float(cV, r)
		if err := firstErr(e[:]...); err != nil {
			return err
		}
	}
	d.f.Vis2 = append(d.f.Vis2, v)
	return nil
}

func (d *decoder) readT3(h *fitsfile.HDU) error {
	t, dh, err := d.openData(h, 3)
	if err != nil {
		return err
	}
	var e [8]error
	var cAmp, cAmpErr, cPhi, cPhiErr, cU1, cV1, cU2, cV2 *fitsfile.Column
	cAmp, e[0] = t.vector("T3AMP", kindFloat, dh.wave, true)
	cAmpErr, e[1] = t.vector("T3AMPERR", kindFloat, dh.wave, true)
	cPhi, e[2] = t.vector("T3PHI", kindFloat, dh.wave, true)
	cPhiErr, e[3] = t.vector("T3PHIERR", kindFloat, dh.wave, true)
	cU1, e[4] = t.column("U1COORD", kindFloat, 1, true)
	cV1, e[5] = t.column("V1COORD", kindFloat, 1, true)
	cU2, e[6] = t.column("U2COORD", kindFloat, 1, true)
	cV2, e[7] = t.column("V2COORD", kindFloat, 1, true)
	if err := firstErr(e[:]...); err != nil {
		return err
	}
	nw := len(dh.wave.EffWave)
	v := T3{HDU: h.Index, DateObs: dh.DateObs, ArrName: dh.ArrName, InsName: dh.InsName, CorrName: dh.CorrName}
	v.Rows = make([]T3Row, t.t.Rows)
	ch := newChunks(t.t.Rows, nw, 4)
	for r := range v.Rows {
		row := &v.Rows[r]
		row.Amp, row.AmpErr, row.Phi, row.PhiErr = ch.floats(nw), ch.floats(nw), ch.floats(nw), ch.floats(nw)
		row.Flag = ch.bools(nw)
		var e [9]error
		e[0] = t.rowCommon(dh, r, &row.TargetID, &row.Time, &row.MJD, &row.IntTime, row.StaIndex[:], row.Flag)
		e[1] = t.floats(row.Amp, cAmp, r)
		e[2] = t.floats(row.AmpErr, cAmpErr, r)
		e[3] = t.floats(row.Phi, cPhi, r)
		e[4] = t.floats(row.PhiErr, cPhiErr, r)
		row.U1Coord, e[5] = t.float(cU1, r)
		row.V1Coord, e[6] = t.float(cV1, r)
		row.U2Coord, e[7] = t.float(cU2, r)
		row.V2Coord, e[8] = t.float(cV2, r)
		if err := firstErr(e[:]...); err != nil {
			return err
		}
	}
	d.f.T3 = append(d.f.T3, v)
	return nil
}

func (d *decoder) readVis(h *fitsfile.HDU) error {
	t, dh, err := d.openData(h, 2)
	if err != nil {
		return err
	}
	v := Vis{HDU: h.Index, DateObs: dh.DateObs, ArrName: dh.ArrName, InsName: dh.InsName, CorrName: dh.CorrName}
	var e [6]error
	v.AmpTyp, e[0] = t.keyword("AMPTYP", false)
	v.PhiTyp, e[1] = t.keyword("PHITYP", false)
	if err := firstErr(e[:2]...); err != nil {
		return err
	}
	switch v.AmpTyp {
	case "", AmpAbsolute, AmpDifferential, AmpCorrelatedFlux:
	default:
		return t.errf(0, "", "AMPTYP is '%s'; must be '%s', '%s' or '%s'", v.AmpTyp, AmpAbsolute, AmpDifferential, AmpCorrelatedFlux)
	}
	switch v.PhiTyp {
	case "", PhiAbsolute, PhiDifferential:
	default:
		return t.errf(0, "", "PHITYP is '%s'; must be '%s' or '%s'", v.PhiTyp, PhiAbsolute, PhiDifferential)
	}
	var cAmp, cAmpErr, cPhi, cPhiErr, cU, cV *fitsfile.Column
	cAmp, e[0] = t.vector("VISAMP", kindFloat, dh.wave, true)
	cAmpErr, e[1] = t.vector("VISAMPERR", kindFloat, dh.wave, true)
	cPhi, e[2] = t.vector("VISPHI", kindFloat, dh.wave, true)
	cPhiErr, e[3] = t.vector("VISPHIERR", kindFloat, dh.wave, true)
	cU, e[4] = t.column("UCOORD", kindFloat, 1, true)
	cV, e[5] = t.column("VCOORD", kindFloat, 1, true)
	if err := firstErr(e[:]...); err != nil {
		return err
	}
	v.AmpUnit = cAmp.Unit
	nw := len(dh.wave.EffWave)
	v.Rows = make([]VisRow, t.t.Rows)
	ch := newChunks(t.t.Rows, nw, 4)
	for r := range v.Rows {
		row := &v.Rows[r]
		row.Amp, row.AmpErr, row.Phi, row.PhiErr = ch.floats(nw), ch.floats(nw), ch.floats(nw), ch.floats(nw)
		row.Flag = ch.bools(nw)
		var e [7]error
		e[0] = t.rowCommon(dh, r, &row.TargetID, &row.Time, &row.MJD, &row.IntTime, row.StaIndex[:], row.Flag)
		e[1] = t.floats(row.Amp, cAmp, r)
		e[2] = t.floats(row.AmpErr, cAmpErr, r)
		e[3] = t.floats(row.Phi, cPhi, r)
		e[4] = t.floats(row.PhiErr, cPhiErr, r)
		row.UCoord, e[5] = t.float(cU, r)
		row.VCoord, e[6] = t.float(cV, r)
		if err := firstErr(e[:]...); err != nil {
			return err
		}
	}
	d.f.Vis = append(d.f.Vis, v)
	return nil
}

// readFlux reads OI_FLUX, which exists only in OIFITS 2 and has its own
// revision number 1 (Duvert et al. 2017, table 11).
func (d *decoder) readFlux(h *fitsfile.HDU) error {
	t, err := d.open(h, 1)
	if err != nil {
		return err
	}
	var e [8]error
	v := Flux{HDU: h.Index}
	v.DateObs, e[0] = t.keyword("DATE-OBS", true)
	v.InsName, e[1] = t.keyword("INSNAME", true)
	v.ArrName, e[2] = t.keyword("ARRNAME", false)
	v.CorrName, e[3] = t.keyword("CORRNAME", false)
	v.CalStat, e[4] = t.keyword("CALSTAT", true)
	v.FOVType, e[5] = t.keyword("FOVTYPE", false)
	v.FOV, e[6] = t.floatKeyword("FOV", false)
	if err := firstErr(e[:7]...); err != nil {
		return err
	}
	if v.CalStat != "C" && v.CalStat != "U" {
		return t.errf(0, "", "CALSTAT is '%s'; must be 'C' or 'U'", v.CalStat)
	}
	w := d.waves[v.InsName]
	if w == nil {
		return t.errf(0, "", "INSNAME '%s' matches no OI_WAVELENGTH table", v.InsName)
	}
	dh := &dataHeader{wave: w}
	dh.target, e[0] = t.column("TARGET_ID", kindInt, 1, true)
	dh.mjd, e[1] = t.column("MJD", kindFloat, 1, true)
	dh.intTime, e[2] = t.column("INT_TIME", kindFloat, 1, true)
	// STA_INDEX is needed only for uncalibrated spectra.
	dh.sta, e[3] = t.column("STA_INDEX", kindInt, 1, v.CalStat == "U")
	dh.flag, e[4] = t.vector("FLAG", kindBool, w, true)
	cData, e5 := t.vector("FLUXDATA", kindFloat, w, true)
	cErr, e6 := t.vector("FLUXERR", kindFloat, w, true)
	if err := firstErr(e[0], e[1], e[2], e[3], e[4], e5, e6); err != nil {
		return err
	}
	v.Unit = cData.Unit
	nw := len(w.EffWave)
	v.Rows = make([]FluxRow, t.t.Rows)
	ch := newChunks(t.t.Rows, nw, 2)
	for r := range v.Rows {
		row := &v.Rows[r]
		row.Data, row.Err, row.Flag = ch.floats(nw), ch.floats(nw), ch.bools(nw)
		var sta [1]int
		var e [4]error
		e[0] = t.rowCommon(dh, r, &row.TargetID, nil, &row.MJD, &row.IntTime, nil, row.Flag)
		e[1] = t.floats(row.Data, cData, r)
		e[2] = t.floats(row.Err, cErr, r)
		e[3] = t.ints(sta[:], dh.sta, r)
		row.StaIndex = sta[0]
		if err := firstErr(e[:]...); err != nil {
			return err
		}
	}
	d.f.Flux = append(d.f.Flux, v)
	return nil
}
