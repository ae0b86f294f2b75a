package simulate

import (
	"errors"
	"fmt"
	"io/fs"
	"math"
	"path/filepath"
	"strings"

	"github.com/BurntSushi/toml"

	"vcz/io/safefile"
	"vcz/recon/model"
)

// Station is one telescope position of the array, in metres east, north
// and up from the array's reference point.
type Station struct {
	Name      string  // STA_NAME
	Telescope string  // TEL_NAME; the station name when empty
	East      float64 // m
	North     float64 // m
	Up        float64 // m
	Diameter  float64 // m; 0 when unknown
}

// Noise sets the Gaussian errors of the simulated data. Each error is
// written to the *ERR column, and when Add is set a draw from N(0, σ²) is
// added to the value. Amplitude errors combine a relative part and a
// floor in quadrature: σ = √((rel·value)² + floor²); phase errors are
// given by phaseError.
type Noise struct {
	Add            bool
	V2Relative     float64 // relative error of VIS2DATA
	V2Floor        float64 // absolute error floor of VIS2DATA, > 0
	ClosurePhase   float64 // floor of T3PHIERR (deg), > 0; see phaseError
	T3AmpRelative  float64 // relative error of T3AMP
	T3AmpFloor     float64 // absolute error floor of T3AMP, > 0
	VisAmpRelative float64 // relative error of VISAMP
	VisAmpFloor    float64 // absolute error floor of VISAMP, > 0
	VisPhase       float64 // floor of VISPHIERR (deg), > 0; see phaseError
}

// Plan is an observing plan: where, what, when, at which wavelengths, with
// what noise, and which tables to write. Angles are in degrees, lengths in
// metres, wavelengths in metres, hour angles in hours.
type Plan struct {
	ArrayName      string // ARRNAME
	Instrument     string // INSNAME
	SiteName       string
	Latitude       float64 // deg, north positive
	Longitude      float64 // deg, east positive
	Altitude       float64 // m above the ellipsoid
	ElevationLimit float64 // deg; hour angles with the target lower are skipped
	Stations       []Station
	Combine        []string // stations combined; all when empty

	TargetName string
	RA, Dec    float64 // deg (J2000)

	MJD        float64   // the night: observations start on this UT day
	HourAngles []float64 // hours, in observing order
	IntTime    float64   // INT_TIME (s)

	Wavelengths []float64 // channel centres (m)
	Bandwidths  []float64 // channel widths (m), same length
	// Smearing says whether each channel's visibility is the average over its band
	// (bandwidth smearing, smear.go of Run), as an instrument measures it, or the value at
	// its centre. The zero value, SmearDefault, averages.
	Smearing Smearing

	Noise Noise
	Seed  uint64

	WriteVis2, WriteT3, WriteVis bool
	// WriteDiff writes an OI_VIS table of differential visibilities (AMPTYP = PHITYP =
	// 'differential'; run.go, writeDiff).
	WriteDiff bool
}

// Smearing says whether Run averages each channel's visibility over its band.
type Smearing int8

// The smearing settings of a plan.
const (
	// SmearDefault averages over the band, a chromatic sky (ChromaticSky) as a gray one.
	SmearDefault Smearing = iota
	// SmearOn averages over the band, as SmearDefault.
	SmearOn
	// SmearOff takes each channel's visibility at its centre.
	SmearOff
)

// Plan files are TOML; these types mirror the file so that the decoder
// can report keys it did not use.
type planFile struct {
	Array      string   `toml:"array"`
	Instrument string   `toml:"instrument"`
	Seed       *int64   `toml:"seed"`
	Write      []string `toml:"write"`
	Site       struct {
		Name           string   `toml:"name"`
		Latitude       *float64 `toml:"latitude"`
		Longitude      float64  `toml:"longitude"`
		Altitude       float64  `toml:"altitude"`
		ElevationLimit *float64 `toml:"elevation_limit"`
	} `toml:"site"`
	Station []struct {
		Name      string   `toml:"name"`
		Telescope string   `toml:"telescope"`
		East      *float64 `toml:"east"`
		North     *float64 `toml:"north"`
		Up        float64  `toml:"up"`
		Diameter  float64  `toml:"diameter"`
	} `toml:"station"`
	Target struct {
		Name string   `toml:"name"`
		RA   *float64 `toml:"ra"`
		Dec  *float64 `toml:"dec"`
	} `toml:"target"`
	Observation struct {
		Combine         []string  `toml:"combine"`
		MJD             *float64  `toml:"mjd"`
		HourAngleStart  *float64  `toml:"hour_angle_start"`
		HourAngleEnd    *float64  `toml:"hour_angle_end"`
		HourAngleStep   *float64  `toml:"hour_angle_step"`
		HourAngles      []float64 `toml:"hour_angles"`
		IntegrationTime *float64  `toml:"integration_time"`
	} `toml:"observation"`
	Wavelengths struct {
		Centre   []float64 `toml:"centre"`
		Width    []float64 `toml:"width"`
		From     *float64  `toml:"from"`
		To       *float64  `toml:"to"`
		Channels *int      `toml:"channels"`
		Smearing *bool     `toml:"smearing"`
	} `toml:"wavelengths"`
	Noise struct {
		Add            *bool    `toml:"add"`
		V2Relative     *float64 `toml:"vis2_relative"`
		V2Floor        *float64 `toml:"vis2_floor"`
		ClosurePhase   *float64 `toml:"t3phi_floor"`
		T3AmpRelative  *float64 `toml:"t3amp_relative"`
		T3AmpFloor     *float64 `toml:"t3amp_floor"`
		VisAmpRelative *float64 `toml:"visamp_relative"`
		VisAmpFloor    *float64 `toml:"visamp_floor"`
		VisPhase       *float64 `toml:"visphi_floor"`
	} `toml:"noise"`
}

// Default noise levels, used for keys a plan leaves out (typical of
// calibrated near-infrared data; common practice, no source).
var defaultNoise = Noise{
	Add: true, V2Relative: 0.05, V2Floor: 0.002, ClosurePhase: 1.0,
	T3AmpRelative: 0.05, T3AmpFloor: 0.002, VisAmpRelative: 0.03, VisAmpFloor: 0.002, VisPhase: 1.0,
}

// PlanError is an error in a plan file, with the 1-based line of the key
// concerned (0 when it has none).
type PlanError struct {
	File string
	Line int
	Key  string // dotted key, "" when none
	Err  error
}

func (e *PlanError) Error() string {
	var b strings.Builder
	b.WriteString(e.File)
	if e.Line > 0 {
		fmt.Fprintf(&b, ":%d", e.Line)
	}
	b.WriteString(": ")
	if e.Key != "" {
		b.WriteString(e.Key + ": ")
	}
	b.WriteString(e.Err.Error())
	return b.String()
}

func (e *PlanError) Unwrap() error { return e.Err }

// LoadPlan reads and checks a plan file; see PlanHelp for its keys.
func LoadPlan(path string) (*Plan, error) {
	src, err := safefile.ReadFile(path)
	if err != nil {
		// "plan.toml: no such file or directory", as the data files' errors read.
		var pe *fs.PathError
		if errors.As(err, &pe) {
			err = fmt.Errorf("%s: %w", path, pe.Err)
		}
		return nil, err
	}
	return ParsePlan(src, filepath.Base(path))
}

// ParsePlan parses a plan from TOML source; name is used in errors, which
// carry the line of the offending key. Unknown keys are errors.
func ParsePlan(src []byte, name string) (*Plan, error) {
	var pf planFile
	md, err := toml.Decode(string(src), &pf)
	if err != nil {
		var pe toml.ParseError
		if errors.As(err, &pe) {
			return nil, &PlanError{File: name, Line: pe.Position.Line, Err: errors.New(pe.Message)}
		}
		return nil, &PlanError{File: name, Err: err}
	}
	if und := md.Undecoded(); len(und) > 0 {
		k := und[0]
		msg := "unknown key (see the plan key list in the help)"
		if now, ok := renamedPlanKeys[k.String()]; ok {
			msg = "unknown key; the noise keys are named after the data types now: " + now
		}
		return nil, &PlanError{File: name, Line: model.KeyLine(src, k, -1), Key: k.String(), Err: errors.New(msg)}
	}
	fail := func(key string, index int, format string, args ...any) error {
		parts := strings.Split(key, ".")
		return &PlanError{File: name, Line: model.KeyLine(src, parts, index), Key: key, Err: fmt.Errorf(format, args...)}
	}
	p := &Plan{
		ArrayName:  pf.Array,
		Instrument: pf.Instrument,
		SiteName:   pf.Site.Name,
		Longitude:  pf.Site.Longitude,
		Altitude:   pf.Site.Altitude,
		TargetName: pf.Target.Name,
		Noise:      defaultNoise,
		IntTime:    60,
	}
	if p.ArrayName == "" {
		p.ArrayName = "SIMULATED"
	}
	if p.Instrument == "" {
		p.Instrument = "SIMULATED"
	}
	if p.TargetName == "" {
		p.TargetName = "TARGET"
	}
	if pf.Seed != nil {
		if *pf.Seed < 0 {
			return nil, fail("seed", -1, "must not be negative")
		}
		p.Seed = uint64(*pf.Seed)
	}
	if pf.Site.Latitude == nil {
		return nil, fail("site", -1, "missing latitude")
	}
	p.Latitude = *pf.Site.Latitude
	if math.Abs(p.Latitude) > 90 {
		return nil, fail("site.latitude", -1, "%g is outside [-90, 90]", p.Latitude)
	}
	if pf.Site.ElevationLimit != nil {
		p.ElevationLimit = *pf.Site.ElevationLimit
		if p.ElevationLimit < 0 || p.ElevationLimit >= 90 {
			return nil, fail("site.elevation_limit", -1, "%g is outside [0, 90)", p.ElevationLimit)
		}
	}
	for i, s := range pf.Station {
		if s.Name == "" {
			return nil, fail("station", i, "station %d has no name", i+1)
		}
		if s.East == nil || s.North == nil {
			return nil, fail("station", i, "station %s needs east and north", s.Name)
		}
		p.Stations = append(p.Stations, Station{Name: s.Name, Telescope: s.Telescope, East: *s.East, North: *s.North, Up: s.Up, Diameter: s.Diameter})
	}
	p.Combine = pf.Observation.Combine
	if pf.Target.RA == nil || pf.Target.Dec == nil {
		return nil, fail("target", -1, "needs ra and dec")
	}
	p.RA, p.Dec = *pf.Target.RA, *pf.Target.Dec
	o := pf.Observation
	if o.MJD == nil {
		return nil, fail("observation", -1, "missing mjd")
	}
	p.MJD = *o.MJD
	if o.IntegrationTime != nil {
		p.IntTime = *o.IntegrationTime
	}
	hasRange := o.HourAngleStart != nil || o.HourAngleEnd != nil || o.HourAngleStep != nil
	switch {
	case hasRange && o.HourAngles != nil:
		return nil, fail("observation.hour_angles", -1, "give either hour_angles or hour_angle_start/end/step, not both")
	case o.HourAngles != nil:
		p.HourAngles = o.HourAngles
	case hasRange:
		if o.HourAngleStart == nil || o.HourAngleEnd == nil || o.HourAngleStep == nil {
			return nil, fail("observation", -1, "hour_angle_start, hour_angle_end and hour_angle_step go together")
		}
		a, b, st := *o.HourAngleStart, *o.HourAngleEnd, *o.HourAngleStep
		if !(st > 0) || b < a {
			return nil, fail("observation.hour_angle_step", -1, "needs step > 0 and end >= start")
		}
		n := int(math.Floor((b-a)/st+1e-9)) + 1
		if n > 100000 {
			return nil, fail("observation.hour_angle_step", -1, "%d hour angles is too many", n)
		}
		for k := 0; k < n; k++ {
			p.HourAngles = append(p.HourAngles, a+float64(k)*st)
		}
	default:
		return nil, fail("observation", -1, "needs hour_angles or hour_angle_start/end/step")
	}
	w := pf.Wavelengths
	switch {
	case w.Centre != nil && (w.From != nil || w.To != nil || w.Channels != nil):
		return nil, fail("wavelengths", -1, "give either centre (and width) or from/to/channels, not both")
	case w.Centre != nil:
		for _, c := range w.Centre {
			p.Wavelengths = append(p.Wavelengths, c*1e-6)
		}
		switch len(w.Width) {
		case 1:
			for range w.Centre {
				p.Bandwidths = append(p.Bandwidths, w.Width[0]*1e-6)
			}
		case len(w.Centre):
			for _, c := range w.Width {
				p.Bandwidths = append(p.Bandwidths, c*1e-6)
			}
		default:
			return nil, fail("wavelengths.width", -1, "needs one value or one per centre (%d)", len(w.Centre))
		}
	case w.From != nil && w.To != nil && w.Channels != nil:
		n := *w.Channels
		if n < 1 || n > 100000 || !(*w.To >= *w.From) {
			return nil, fail("wavelengths", -1, "needs channels >= 1 and to >= from")
		}
		step := 0.0
		if n > 1 {
			step = (*w.To - *w.From) / float64(n-1)
		}
		width := step
		if len(w.Width) == 1 {
			width = w.Width[0]
		} else if w.Width != nil {
			return nil, fail("wavelengths.width", -1, "with from/to/channels give a single width")
		} else if n == 1 {
			return nil, fail("wavelengths.width", -1, "a single channel needs a width")
		}
		for k := 0; k < n; k++ {
			p.Wavelengths = append(p.Wavelengths, (*w.From+float64(k)*step)*1e-6)
			p.Bandwidths = append(p.Bandwidths, width*1e-6)
		}
	default:
		return nil, fail("wavelengths", -1, "needs centre (and width) or from, to and channels")
	}
	if w.Smearing != nil {
		p.Smearing = SmearOff
		if *w.Smearing {
			p.Smearing = SmearOn
		}
	}
	nz := pf.Noise
	set := func(dst *float64, src *float64) {
		if src != nil {
			*dst = *src
		}
	}
	if nz.Add != nil {
		p.Noise.Add = *nz.Add
	}
	set(&p.Noise.V2Relative, nz.V2Relative)
	set(&p.Noise.V2Floor, nz.V2Floor)
	set(&p.Noise.ClosurePhase, nz.ClosurePhase)
	set(&p.Noise.T3AmpRelative, nz.T3AmpRelative)
	set(&p.Noise.T3AmpFloor, nz.T3AmpFloor)
	set(&p.Noise.VisAmpRelative, nz.VisAmpRelative)
	set(&p.Noise.VisAmpFloor, nz.VisAmpFloor)
	set(&p.Noise.VisPhase, nz.VisPhase)
	if pf.Write == nil {
		p.WriteVis2, p.WriteT3 = true, true
	}
	for _, s := range pf.Write {
		switch s {
		case "vis2":
			p.WriteVis2 = true
		case "t3":
			p.WriteT3 = true
		case "vis":
			p.WriteVis = true
		case "visdiff", "dvis": // dvis: the name of earlier versions
			p.WriteDiff = true
		default:
			return nil, fail("write", -1, "unknown data type %q (known: vis2, t3, vis, visdiff)", s)
		}
	}
	if err := p.Validate(); err != nil {
		var ke *keyError
		if errors.As(err, &ke) {
			return nil, fail(ke.key, ke.index, "%v", ke.err)
		}
		return nil, &PlanError{File: name, Err: err}
	}
	return p, nil
}

// keyError is a validation error tied to a plan key, so that ParsePlan can
// add the line.
type keyError struct {
	key   string
	index int
	err   error
}

func (e *keyError) Error() string { return e.key + ": " + e.err.Error() }

func keyErr(key string, index int, format string, args ...any) error {
	return &keyError{key, index, fmt.Errorf(format, args...)}
}

// Validate checks a plan built in code or read from a file: at least two
// combined stations with distinct names, finite coordinates, wavelengths
// and widths positive, noise errors positive, and at least one table to
// write.
func (p *Plan) Validate() error {
	if math.IsNaN(p.Latitude) || math.Abs(p.Latitude) > 90 {
		return keyErr("site.latitude", -1, "%g is outside [-90, 90]", p.Latitude)
	}
	if math.Abs(p.Dec) > 90 || math.IsNaN(p.Dec) {
		return keyErr("target.dec", -1, "%g is outside [-90, 90]", p.Dec)
	}
	if math.IsNaN(p.RA) || math.IsInf(p.RA, 0) {
		return keyErr("target.ra", -1, "is not finite")
	}
	seen := map[string]bool{}
	for i, s := range p.Stations {
		if seen[s.Name] {
			return keyErr("station", i, "station name %q used twice", s.Name)
		}
		seen[s.Name] = true
		for _, c := range []float64{s.East, s.North, s.Up} {
			if math.IsNaN(c) || math.IsInf(c, 0) {
				return keyErr("station", i, "station %s: coordinates must be finite", s.Name)
			}
		}
	}
	used := map[string]bool{}
	for _, n := range p.Combine {
		if !seen[n] {
			return keyErr("observation.combine", -1, "no station named %q", n)
		}
		if used[n] {
			return keyErr("observation.combine", -1, "station %q listed twice", n)
		}
		used[n] = true
	}
	if n := len(p.combined()); n < 2 {
		return keyErr("station", -1, "at least two stations must be combined (have %d)", n)
	}
	if len(p.HourAngles) == 0 {
		return keyErr("observation", -1, "no hour angles")
	}
	for _, h := range p.HourAngles {
		if math.IsNaN(h) || math.Abs(h) > 12 {
			return keyErr("observation.hour_angles", -1, "hour angle %g outside [-12, 12] h", h)
		}
	}
	if math.IsNaN(p.MJD) || p.MJD < 0 || p.MJD > 1e6 {
		return keyErr("observation.mjd", -1, "%g is not a plausible MJD", p.MJD)
	}
	if !(p.IntTime > 0) {
		return keyErr("observation.integration_time", -1, "must be positive")
	}
	if len(p.Wavelengths) == 0 || len(p.Wavelengths) != len(p.Bandwidths) {
		return keyErr("wavelengths", -1, "needs as many widths as channels, at least one")
	}
	for i := range p.Wavelengths {
		if !(p.Wavelengths[i] > 0) || !(p.Bandwidths[i] > 0) || math.IsInf(p.Wavelengths[i], 0) {
			return keyErr("wavelengths", -1, "channel %d: centre and width must be positive", i+1)
		}
		if p.Smearing != SmearOff && !(p.Bandwidths[i] < 2*p.Wavelengths[i]) {
			return keyErr("wavelengths.width", -1, "channel %d: a band averaged over must be narrower than twice its centre (smearing = false takes the centres)", i+1)
		}
	}
	nz := p.Noise
	for _, c := range []struct {
		key string
		v   float64
		pos bool
	}{
		{"noise.vis2_relative", nz.V2Relative, false}, {"noise.vis2_floor", nz.V2Floor, true},
		{"noise.t3phi_floor", nz.ClosurePhase, true},
		{"noise.t3amp_relative", nz.T3AmpRelative, false}, {"noise.t3amp_floor", nz.T3AmpFloor, true},
		{"noise.visamp_relative", nz.VisAmpRelative, false}, {"noise.visamp_floor", nz.VisAmpFloor, true},
		{"noise.visphi_floor", nz.VisPhase, true},
	} {
		if math.IsNaN(c.v) || math.IsInf(c.v, 0) || c.v < 0 || (c.pos && c.v == 0) {
			if c.pos {
				return keyErr(c.key, -1, "%g: must be positive (errors written to the file must be)", c.v)
			}
			return keyErr(c.key, -1, "%g: must be zero or positive", c.v)
		}
	}
	if !p.WriteVis2 && !p.WriteT3 && !p.WriteVis && !p.WriteDiff {
		return keyErr("write", -1, "no data type to write")
	}
	return nil
}

// combined returns the indices (into Stations) of the combined stations,
// in the order of Stations.
func (p *Plan) combined() []int {
	var out []int
	for i, s := range p.Stations {
		if len(p.Combine) == 0 {
			out = append(out, i)
			continue
		}
		for _, n := range p.Combine {
			if n == s.Name {
				out = append(out, i)
				break
			}
		}
	}
	return out
}

// renamedPlanKeys are the noise keys of earlier versions, by their names now (spelled as the
// data types of -use).
var renamedPlanKeys = map[string]string{
	"noise.v2_relative":   "noise.vis2_relative",
	"noise.v2_floor":      "noise.vis2_floor",
	"noise.closure_phase": "noise.t3phi_floor",
	"noise.visphase":      "noise.visphi_floor",
}
