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
// wavelengths outside 0.1–30 µm, phases beyond ±720°, and tables whose every V² is
// negative. Each is one line naming the table.
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
