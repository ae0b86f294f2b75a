package oifits

import (
	"fmt"
	"math"
)

// Bounds of plausible values, beyond which Decode warns (common practice, no source):
// optical and infrared interferometry observes from 0.1 to 30 µm, and a phase is an angle
// in degrees, whose values beyond a few turns mean a unit or a file gone wrong.
const (
	minPlausibleWave  = 0.1e-6 // m
	maxPlausibleWave  = 30e-6  // m
	maxPlausiblePhase = 720    // degrees
)

// implausible returns warnings for values the standard allows but no measurement gives:
// wavelengths outside 0.1–30 µm, baselines all under 1 cm or beyond 100 km, phases beyond
// ±720°, and tables whose every V² is negative. Each is one line naming the table.
func implausible(f *File) []string {
	var w []string
	for _, t := range f.Wavelengths {
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, x := range t.EffWave {
			lo, hi = math.Min(lo, x), math.Max(hi, x)
		}
		if lo < minPlausibleWave || hi > maxPlausibleWave {
			w = append(w, fmt.Sprintf("HDU %d: OI_WAVELENGTH '%s' has EFF_WAVE from %.3g to %.3g m, outside the 0.1–30 µm of optical and infrared interferometry; check the unit (metres)", t.HDU, t.InsName, lo, hi))
		}
	}
	phases := func(hdu int, ext, col string, rows [][]float64, flags [][]bool) {
		n := 0
		worst := 0.0
		for i, r := range rows {
			for c, x := range r {
				if flags[i][c] || math.IsNaN(x) {
					continue
				}
				if a := math.Abs(x); a > maxPlausiblePhase {
					n++
					worst = math.Max(worst, a)
				}
			}
		}
		if n > 0 {
			w = append(w, fmt.Sprintf("HDU %d: %s has %s of %s beyond ±%d° (up to %.3g°); phases are in degrees", hdu, ext, values(n), col, maxPlausiblePhase, worst))
		}
	}
	for _, t := range f.T3 {
		rows, flags := make([][]float64, len(t.Rows)), make([][]bool, len(t.Rows))
		for i, r := range t.Rows {
			rows[i], flags[i] = r.Phi, r.Flag
		}
		phases(t.HDU, extT3, "T3PHI", rows, flags)
	}
	for _, t := range f.Vis {
		rows, flags := make([][]float64, len(t.Rows)), make([][]bool, len(t.Rows))
		for i, r := range t.Rows {
			rows[i], flags[i] = r.Phi, r.Flag
		}
		phases(t.HDU, extVis, "VISPHI", rows, flags)
	}
	// baselines warns of a table whose projected baselines are all shorter than 1 cm or any
	// longer than 100 km: no optical interferometer has either, so the unit is likely wrong.
	baselines := func(hdu int, ext string, b []float64) {
		lo, hi := math.Inf(1), 0.0
		for _, x := range b {
			if !math.IsNaN(x) {
				hi = math.Max(hi, x)
				lo = math.Min(lo, x)
			}
		}
		if len(b) > 0 && (hi < 0.01 || hi > 1e5) {
			w = append(w, fmt.Sprintf("HDU %d: %s has projected baselines up to %.3g m, outside 1 cm–100 km; check the unit of UCOORD and VCOORD (metres)", hdu, ext, hi))
		}
	}
	for _, t := range f.Vis2 {
		var b []float64
		for _, r := range t.Rows {
			b = append(b, math.Hypot(r.UCoord, r.VCoord))
		}
		baselines(t.HDU, extVis2, b)
	}
	for _, t := range f.T3 {
		var b []float64
		for _, r := range t.Rows {
			b = append(b, math.Hypot(r.U1Coord, r.V1Coord), math.Hypot(r.U2Coord, r.V2Coord))
		}
		baselines(t.HDU, extT3, b)
	}
	for _, t := range f.Vis2 {
		pos, neg := 0, 0
		for _, r := range t.Rows {
			for c, x := range r.Data {
				switch {
				case r.Flag[c] || math.IsNaN(x):
				case x < 0:
					neg++
				default:
					pos++
				}
			}
		}
		if neg > 0 && pos == 0 {
			w = append(w, fmt.Sprintf("HDU %d: OI_VIS2 has only negative VIS2DATA (%s); squared visibilities lie between 0 and 1 but for noise", t.HDU, values(neg)))
		}
	}
	return w
}
