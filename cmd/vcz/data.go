package main

import (
	"errors"
	"flag"
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"vcz/io/oifits"
	"vcz/recon"
)

// selectionFlags are the data-selection options shared by the commands that
// read OIFITS files.
type selectionFlags struct {
	target string
	wave   string
	mjd    string
	ins    string
	use    string
}

func (s *selectionFlags) register(fs *flag.FlagSet, withTypes bool) {
	fs.StringVar(&s.target, "target", "", "keep only this target (name, or TARGET_ID)")
	fs.StringVar(&s.wave, "wave", "", "keep channels in this wavelength range, e.g. 1.5um:1.8um (units nm, um, m)")
	fs.StringVar(&s.mjd, "mjd", "", "keep rows in this MJD range, e.g. 60100.0:60100.9 (either side may be empty)")
	fs.StringVar(&s.ins, "ins", "", "keep only these instruments (INSNAME, comma-separated)")
	if withTypes {
		fs.StringVar(&s.use, "use", "", "data types to fit, comma-separated from "+recon.AllTypes.Words()+" (default: all present)")
	}
}

// selection turns the flags into a recon.Selection.
func (s *selectionFlags) selection() (recon.Selection, error) {
	var sel recon.Selection
	sel.Target = s.target
	if s.wave != "" {
		lo, hi, err := parseRange(s.wave, parseWavelength)
		if err != nil {
			return sel, fmt.Errorf("-wave %q: %v", s.wave, err)
		}
		sel.WaveMin, sel.WaveMax = lo, hi
	}
	if s.mjd != "" {
		lo, hi, err := parseRange(s.mjd, func(x string) (float64, error) { return strconv.ParseFloat(x, 64) })
		if err != nil {
			return sel, fmt.Errorf("-mjd %q: %v", s.mjd, err)
		}
		sel.MJDMin, sel.MJDMax = lo, hi
	}
	if s.ins != "" {
		for _, n := range strings.Split(s.ins, ",") {
			if n = strings.TrimSpace(n); n != "" {
				sel.InsNames = append(sel.InsNames, n)
			}
		}
	}
	if s.use != "" {
		t, err := parseTypes(s.use)
		if err != nil {
			return sel, fmt.Errorf("-use %q: %v", s.use, err)
		}
		sel.Types = t
	}
	return sel, nil
}

// parseTypes reads the -use list of data types (recon.ParseDataTypes).
func parseTypes(s string) (recon.DataType, error) { return recon.ParseDataTypes(s) }

// parseRange parses "lo:hi" where either side may be empty (no limit).
func parseRange(s string, parse func(string) (float64, error)) (lo, hi float64, err error) {
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
	if lo != 0 && hi != 0 && hi < lo {
		return 0, 0, errors.New("the upper limit is below the lower one")
	}
	return lo, hi, nil
}

// parseWavelength reads a wavelength with a unit (nm, um, µm, m); a bare
// number is in micrometres.
func parseWavelength(s string) (float64, error) {
	return parseWithUnit(s, "um", map[string]float64{"nm": 1e-9, "um": 1e-6, "µm": 1e-6, "micron": 1e-6, "m": 1})
}

// parseAngle reads an angle with a unit (uas, mas, arcsec, deg, rad); a bare
// number is in milliarcseconds. The result is in radians.
func parseAngle(s string) (float64, error) {
	return parseWithUnit(s, "mas", map[string]float64{
		"uas": recon.Mas / 1000, "µas": recon.Mas / 1000, "mas": recon.Mas,
		"arcsec": recon.Mas * 1000, "as": recon.Mas * 1000, "deg": math.Pi / 180, "rad": 1,
	})
}

func parseWithUnit(s, def string, units map[string]float64) (float64, error) {
	s = strings.TrimSpace(s)
	i := len(s)
	for i > 0 && !strings.ContainsRune("0123456789.", rune(s[i-1])) {
		i--
	}
	num, unit := s[:i], strings.TrimSpace(s[i:])
	if unit == "" {
		unit = def
	}
	f, ok := units[unit]
	if !ok {
		names := make([]string, 0, len(units))
		for k := range units {
			names = append(names, k)
		}
		sort.Strings(names)
		return 0, fmt.Errorf("unknown unit %q in %q (use %s)", unit, s, strings.Join(names, ", "))
	}
	x, err := strconv.ParseFloat(num, 64)
	if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
		return 0, fmt.Errorf("%q is not a number with a unit", s)
	}
	return x * f, nil
}

// readData reads OIFITS files and selects their points. Errors name the
// file and are marked as bad input.
func readData(paths []string, sel recon.Selection) ([]*oifits.File, *recon.Data, error) {
	if len(paths) == 0 {
		return nil, nil, badInputf("no OIFITS file given")
	}
	files := make([]*oifits.File, 0, len(paths))
	for _, p := range paths {
		f, err := oifits.ReadFile(p)
		if err != nil {
			return nil, nil, badInput(err)
		}
		files = append(files, f)
	}
	d, err := recon.FromFiles(files, sel)
	if err != nil {
		return nil, nil, badInput(err)
	}
	return files, d, nil
}
