package runspec

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"
	"vcz/dataset"

	"vcz/recon"
)

// angleUnits and waveUnits are the units users may write, in radians and metres.
var (
	// Keys are lower case; the micro sign µ (U+00B5) and the Greek mu μ (U+03BC) are both
	// accepted for the prefix.
	angleUnits = map[string]float64{
		"uas": recon.Mas / 1000, "\u00b5as": recon.Mas / 1000, "\u03bcas": recon.Mas / 1000, "mas": recon.Mas,
		"arcsec": recon.Mas * 1000, "as": recon.Mas * 1000, "deg": math.Pi / 180, "rad": 1,
	}
	waveUnits = map[string]float64{"nm": 1e-9, "um": 1e-6, "\u00b5m": 1e-6, "\u03bcm": 1e-6, "micron": 1e-6, "m": 1}
)

// ParseAngle reads an angle with its unit (uas, µas, mas, arcsec, as, deg, rad; case does
// not matter). A bare number is an error: whether "3" meant mas or arcsec is a guess. The
// result is in radians.
func ParseAngle(s string) (float64, error) { return parseWithUnit(s, angleUnits) }

// ParseWavelength reads a wavelength with its unit (nm, um, µm, micron, m; case does not
// matter); a bare number is an error. The result is in metres.
func ParseWavelength(s string) (float64, error) { return parseWithUnit(s, waveUnits) }

// unitNames lists the units of a table for messages, µ and μ once.
func unitNames(units map[string]float64) string {
	names := make([]string, 0, len(units))
	for k := range units {
		if !strings.ContainsRune(k, '\u03bc') {
			names = append(names, k)
		}
	}
	sort.Strings(names)
	return strings.Join(names, ", ")
}

func parseWithUnit(s string, units map[string]float64) (float64, error) {
	s = strings.TrimSpace(s)
	i := len(s)
	for i > 0 && !strings.ContainsRune("0123456789.", rune(s[i-1])) {
		i--
	}
	num, unit := s[:i], strings.TrimSpace(s[i:])
	if unit == "" {
		return 0, fmt.Errorf("%q has no unit (use %s)", s, unitNames(units))
	}
	f, ok := units[strings.ToLower(unit)]
	if !ok {
		return 0, fmt.Errorf("unknown unit %q in %q (use %s)", unit, s, unitNames(units))
	}
	x, err := strconv.ParseFloat(num, 64)
	if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
		return 0, fmt.Errorf("%q is not a number with a unit", s)
	}
	return x * f, nil
}

// formatWithUnit writes x (in the base unit, factor 1) in the given unit with the fewest
// digits that parseWithUnit reads back as exactly x, and in the base unit when no
// precision does.
func formatWithUnit(x float64, unit string, units map[string]float64, base string) string {
	f := units[unit]
	for prec := 1; prec <= 17; prec++ {
		s := strconv.FormatFloat(x/f, 'g', prec, 64) + unit
		if y, err := parseWithUnit(s, units); err == nil && y == x {
			return s
		}
	}
	return strconv.FormatFloat(x, 'g', -1, 64) + base
}

// formatAngle writes an angle in radians in mas, exactly ("" for 0).
func formatAngle(x float64) string {
	if x == 0 {
		return ""
	}
	return formatWithUnit(x, "mas", angleUnits, "rad")
}

// formatWavelength writes a wavelength in metres in µm, exactly ("" for 0).
func formatWavelength(x float64) string {
	if x == 0 {
		return ""
	}
	return formatWithUnit(x, "um", waveUnits, "m")
}

// formatNumber writes x exactly ("" for 0).
func formatNumber(x float64) string {
	if x == 0 {
		return ""
	}
	return strconv.FormatFloat(x, 'f', -1, 64)
}

// ParseRange parses "lo:hi" where either side may be empty (no limit, returned as 0).
func ParseRange(s string, parse func(string) (float64, error)) (lo, hi float64, err error) {
	a, b, ok := strings.Cut(s, ":")
	if !ok {
		return 0, 0, errors.New("want LOW:HIGH")
	}
	if a = strings.TrimSpace(a); a != "" {
		if lo, err = parse(a); err != nil {
			return 0, 0, err
		}
	}
	if b = strings.TrimSpace(b); b != "" {
		if hi, err = parse(b); err != nil {
			return 0, 0, err
		}
	}
	// 0 stands for no limit, so an upper limit given as 0 would be dropped unseen.
	if b != "" && hi == 0 {
		return 0, 0, errors.New("an upper limit of 0 keeps nothing; leave the side empty for no limit")
	}
	if b != "" && hi < lo {
		return 0, 0, errors.New("the upper limit is below the lower one")
	}
	return lo, hi, nil
}

// formatRange is the text ParseRange reads as lo, hi ("" when both are 0).
func formatRange(lo, hi float64, format func(float64) string) string {
	if lo == 0 && hi == 0 {
		return ""
	}
	return format(lo) + ":" + format(hi)
}

// typeNames lists the names of the single data types, in the order of dataset.DataTypes.
func typeNames() []string {
	var w []string
	for _, t := range dataset.DataTypes() {
		w = append(w, t.String())
	}
	return w
}

// ParseTypes reads a comma-separated list of data types (vis2, t3amp, t3phi, visamp,
// visphi, and t3 and vis for both parts of a triangle or a visibility): the words of the
// table of data types of package recon.
func ParseTypes(s string) (dataset.DataType, error) { return dataset.ParseDataTypes(s) }

// formatTypes is the list ParseTypes reads as t ("" for 0).
func formatTypes(t dataset.DataType) string {
	var w []string
	for _, ty := range dataset.DataTypes() {
		if t&ty != 0 {
			w = append(w, ty.String())
		}
	}
	return strings.Join(w, ",")
}
