package oifits

import (
	"errors"
	"fmt"
	"math"
	"strconv"
)

func errorf(format string, args ...any) error { return fmt.Errorf(format, args...) }

// minError is the smallest error bar accepted: a residual of order 1 over an error of
// 1e-300 squares to 1e600, beyond float64 (common practice, no source: no measured
// quantity of an OIFITS file, in its standard units, is known to 100 digits).
const minError = 1e-100

// validate checks the links and values the standard requires of f (see
// the package documentation). Decode calls it after reading; Encode
// before writing.
func validate(f *File) error {
	fail := func(hdu int, ext string, row int, col string, format string, args ...any) error {
		return &Error{File: f.Name, HDU: hdu, ExtName: ext, Row: row, Column: col, Err: fmt.Errorf(format, args...)}
	}
	if len(f.Targets) == 0 {
		return &Error{File: f.Name, Err: errors.New("no OI_TARGET table; every OIFITS file needs one")}
	}
	targets := make(map[int]bool, len(f.Targets))
	for i, t := range f.Targets {
		if t.ID < 1 {
			return fail(0, extTarget, i+1, "TARGET_ID", "TARGET_ID is %d; must be 1 or more", t.ID)
		}
		if targets[t.ID] {
			return fail(0, extTarget, i+1, "TARGET_ID", "TARGET_ID %d is used more than once", t.ID)
		}
		targets[t.ID] = true
	}
	waves := map[string]int{}
	for _, w := range f.Wavelengths {
		if _, dup := waves[w.InsName]; dup {
			return fail(w.HDU, extWavelength, 0, "", "INSNAME '%s' is used by more than one OI_WAVELENGTH table", w.InsName)
		}
		if w.InsName == "" {
			return fail(w.HDU, extWavelength, 0, "", "mandatory keyword INSNAME is missing")
		}
		if len(w.EffWave) == 0 || len(w.EffBand) != len(w.EffWave) {
			return fail(w.HDU, extWavelength, 0, "", "OI_WAVELENGTH '%s' has %d EFF_WAVE and %d EFF_BAND values; need the same non-zero number", w.InsName, len(w.EffWave), len(w.EffBand))
		}
		waves[w.InsName] = len(w.EffWave)
	}
	arrays := map[string]bool{}
	stations := map[string]map[int]bool{}
	for _, a := range f.Arrays {
		if arrays[a.Name] {
			return fail(a.HDU, extArray, 0, "", "ARRNAME '%s' is used by more than one OI_ARRAY table", a.Name)
		}
		arrays[a.Name] = true
		stations[a.Name] = make(map[int]bool, len(a.Stations))
		for _, st := range a.Stations {
			stations[a.Name][st.Index] = true
		}
	}
	// mjd checks that a row's MJD is a finite number: rows are placed in
	// time by it (Pauls et al. 2005, table 5: the mean MJD of the
	// observation), and a NaN would drop the row from every epoch.
	mjd := func(hdu int, ext string, r int, v float64) error {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fail(hdu, ext, r, "MJD", "MJD is %v; must be a finite date", v)
		}
		return nil
	}
	// station checks that the STA_INDEX values of one row are stations of
	// the table's OI_ARRAY (Pauls et al. 2005, table 5; Duvert, Young &
	// Hummel 2017, table 7: STA_INDEX refers to OI_ARRAY). A table without
	// ARRNAME (allowed in v1) refers to the file's only OI_ARRAY, the one
	// Encode names for it, and is not checked when there are several; 0
	// marks an absent column.
	station := func(hdu int, ext string, r int, arr string, idx ...int) error {
		if arr == "" && len(f.Arrays) == 1 {
			arr = f.Arrays[0].Name
		}
		set, ok := stations[arr]
		if !ok {
			return nil
		}
		for _, i := range idx {
			if i != 0 && !set[i] {
				return fail(hdu, ext, r, "STA_INDEX", "STA_INDEX %d is not a station of OI_ARRAY '%s'", i, arr)
			}
		}
		return nil
	}
	// link checks the keywords of one data table and returns its NWAVE.
	link := func(hdu int, ext, ins, arr string) (int, error) {
		nw, ok := waves[ins]
		if !ok {
			return 0, fail(hdu, ext, 0, "", "INSNAME '%s' matches no OI_WAVELENGTH table", ins)
		}
		if arr != "" && !arrays[arr] {
			return 0, fail(hdu, ext, 0, "", "ARRNAME '%s' matches no OI_ARRAY table", arr)
		}
		return nw, nil
	}
	// row checks one row: target, vector lengths and errors, then its stations
	// (station) and its date (mjd).
	type pair struct {
		name, errName string
		val, err      []float64
	}
	row := func(hdu int, ext string, r, nw int, arr string, target int, date float64, flag []bool, sta []int, vecs ...pair) error {
		if !targets[target] {
			return fail(hdu, ext, r, "TARGET_ID", "TARGET_ID %d is not in OI_TARGET", target)
		}
		if len(flag) != nw {
			return fail(hdu, ext, r, "FLAG", "FLAG has %d elements; NWAVE is %d", len(flag), nw)
		}
		for _, p := range vecs {
			if len(p.val) != nw {
				return fail(hdu, ext, r, p.name, "%s has %d elements; NWAVE is %d", p.name, len(p.val), nw)
			}
			if len(p.err) != nw {
				return fail(hdu, ext, r, p.errName, "%s has %d elements; NWAVE is %d", p.errName, len(p.err), nw)
			}
			for c := range nw {
				if flag[c] || math.IsNaN(p.val[c]) || math.IsInf(p.val[c], 0) {
					continue
				}
				e := p.err[c]
				if e >= minError && !math.IsInf(e, 0) {
					continue
				}
				where := ""
				if nw > 1 {
					where = " in channel " + strconv.Itoa(c+1)
				}
				rule := "errors must be positive"
				switch {
				case math.IsNaN(e) || math.IsInf(e, 0):
					rule = "errors must be finite"
				case e > 0:
					rule = fmt.Sprintf("an error below %g is not a measurement's, and its χ² would overflow", minError)
				}
				return fail(hdu, ext, r, p.errName, "%s is %s%s; %s", p.errName, strconv.FormatFloat(e, 'g', -1, 64), where, rule)
			}
		}
		if err := station(hdu, ext, r, arr, sta...); err != nil {
			return err
		}
		return mjd(hdu, ext, r, date)
	}
	// table checks the keywords of one data table and each of its n rows: check(r, nw)
	// checks row r (from 1) against NWAVE nw.
	table := func(hdu int, ext, ins, arr string, n int, check func(r, nw int) error) error {
		nw, err := link(hdu, ext, ins, arr)
		if err != nil {
			return err
		}
		for i := range n {
			if err := check(i+1, nw); err != nil {
				return err
			}
		}
		return nil
	}
	for _, t := range f.Vis2 {
		if err := table(t.HDU, extVis2, t.InsName, t.ArrName, len(t.Rows), func(r, nw int) error {
			x := &t.Rows[r-1]
			return row(t.HDU, extVis2, r, nw, t.ArrName, x.TargetID, x.MJD, x.Flag, x.StaIndex[:], pair{"VIS2DATA", "VIS2ERR", x.Data, x.Err})
		}); err != nil {
			return err
		}
	}
	for _, t := range f.T3 {
		if err := table(t.HDU, extT3, t.InsName, t.ArrName, len(t.Rows), func(r, nw int) error {
			x := &t.Rows[r-1]
			return row(t.HDU, extT3, r, nw, t.ArrName, x.TargetID, x.MJD, x.Flag, x.StaIndex[:],
				pair{"T3AMP", "T3AMPERR", x.Amp, x.AmpErr}, pair{"T3PHI", "T3PHIERR", x.Phi, x.PhiErr})
		}); err != nil {
			return err
		}
	}
	for _, t := range f.Vis {
		if err := table(t.HDU, extVis, t.InsName, t.ArrName, len(t.Rows), func(r, nw int) error {
			x := &t.Rows[r-1]
			return row(t.HDU, extVis, r, nw, t.ArrName, x.TargetID, x.MJD, x.Flag, x.StaIndex[:],
				pair{"VISAMP", "VISAMPERR", x.Amp, x.AmpErr}, pair{"VISPHI", "VISPHIERR", x.Phi, x.PhiErr})
		}); err != nil {
			return err
		}
	}
	for _, t := range f.Flux {
		if err := table(t.HDU, extFlux, t.InsName, t.ArrName, len(t.Rows), func(r, nw int) error {
			x := &t.Rows[r-1]
			return row(t.HDU, extFlux, r, nw, t.ArrName, x.TargetID, x.MJD, x.Flag, []int{x.StaIndex}, pair{"FLUXDATA", "FLUXERR", x.Data, x.Err})
		}); err != nil {
			return err
		}
	}

	return nil
}
