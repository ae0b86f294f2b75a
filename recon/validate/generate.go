package validate

import (
	"bytes"
	"fmt"
	"hash/fnv"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"strings"
	"vcz/dataset"

	"vcz/io/oifits"
	"vcz/recon/simulate"
)

// Array is an interferometer set-up: an observing plan (stations, site, target position, hour
// angles, channels) and the resolution of its (u,v) coverage. Only the geometry of the plan is
// used; its noise settings are ignored.
type Array struct {
	Name string // short label used in case names, e.g. "six"
	Plan *simulate.Plan
	// Resolution is λmin/(2·Bmax) and LargestScale λmax/Bmin of the coverage (rad), with
	// Bmax and Bmin the longest and shortest projected baselines of the night.
	Resolution, LargestScale float64
}

// LoadArray reads the observing plan at path (a TOML plan file, simulate.LoadPlan) and
// measures its coverage.
func LoadArray(name, path string) (*Array, error) {
	p, err := simulate.LoadPlan(path)
	if err != nil {
		return nil, fmt.Errorf("validate: array %s: %w", name, err)
	}
	return NewArray(name, p)
}

// NewArray measures the coverage of plan p and returns the array. The plan is kept, not
// copied.
func NewArray(name string, p *simulate.Plan) (*Array, error) {
	f, err := skeleton(p, false)
	if err != nil {
		return nil, fmt.Errorf("validate: array %s: %w", name, err)
	}
	bmin, bmax := math.Inf(1), 0.0
	for _, t := range f.Vis2 {
		for _, r := range t.Rows {
			b := math.Hypot(r.UCoord, r.VCoord)
			bmin, bmax = math.Min(bmin, b), math.Max(bmax, b)
		}
	}
	lmin, lmax := math.Inf(1), 0.0
	for _, l := range p.Wavelengths {
		lmin, lmax = math.Min(lmin, l), math.Max(lmax, l)
	}
	if !(bmax > 0) || !(bmin > 0) {
		return nil, fmt.Errorf("validate: array %s: no baselines", name)
	}
	return &Array{Name: name, Plan: p, Resolution: lmin / (2 * bmax), LargestScale: lmax / bmin}, nil
}

// NightPlan returns a copy of plan p observed for a long night: the plan's band split into
// channels channels of equal width and exposures hour angles spread evenly over the plan's
// first to last hour angle. With the six-telescope example plan, 48 channels and 20
// exposures it gives 15 × 48 × 20 = 14 400 V² and 20 × 48 × 20 = 19 200 closure phases.
func NightPlan(p *simulate.Plan, channels, exposures int) *simulate.Plan {
	q := *p
	lo, hi := math.Inf(1), 0.0
	for i, l := range p.Wavelengths {
		lo = math.Min(lo, l-p.Bandwidths[i]/2)
		hi = math.Max(hi, l+p.Bandwidths[i]/2)
	}
	w := (hi - lo) / float64(channels)
	q.Wavelengths, q.Bandwidths = make([]float64, channels), make([]float64, channels)
	for c := range channels {
		q.Wavelengths[c] = lo + (float64(c)+0.5)*w
		q.Bandwidths[c] = w
	}
	h0, h1 := p.HourAngles[0], p.HourAngles[len(p.HourAngles)-1]
	q.HourAngles = make([]float64, exposures)
	for k := range exposures {
		q.HourAngles[k] = h0
		if exposures > 1 {
			q.HourAngles[k] = h0 + (h1-h0)*float64(k)/float64(exposures-1)
		}
	}
	q.Stations = append([]simulate.Station(nil), p.Stations...)
	q.Combine = append([]string(nil), p.Combine...)
	return &q
}

// unitSky is a point source at the phase centre, V = 1 everywhere: skeleton asks the plan's
// simulator for its table layout and (u,v) geometry only, and every value it writes is
// replaced.
type unitSky struct{}

func (unitSky) Visibilities(dst []complex128, _, _ []float64) error {
	for k := range dst {
		dst[k] = 1
	}
	return nil
}

// skeleton returns the OIFITS file of plan p with its reference tables and its data tables'
// rows — times, (u,v) coordinates, station indices — and placeholder values: the observing
// geometry of the plan, nothing else.
func skeleton(p *simulate.Plan, vis bool) (*oifits.File, error) {
	q := *p
	q.Noise.Add = false
	q.Smearing = simulate.SmearOff // the values are replaced: no band averages needed
	q.WriteVis2, q.WriteT3, q.WriteVis = true, true, vis
	f, _, err := simulate.Run(&q, unitSky{})
	return f, err
}

// ErrorModel is a way of making the errors of the data; see the package documentation.
type ErrorModel int

// The error models.
const (
	// NullGrow: V² σ = max(rel·V², V2Floor) with rel drawn in [2 %, 5 %] per row;
	// closure-phase σ = √(φ0² + (NullK/|B|)²) (NullK/|B| in radians) with φ0 drawn in
	// [1°, 5°] per row, at most 180°: phases are poorly known near nulls.
	NullGrow ErrorModel = iota
	// Flat: the same V² errors; closure-phase σ = φ0 everywhere, also where |B| is tiny.
	Flat
	// Calib: Flat plus errors that are not in the error bars: a V² scale factor per exposure
	// (time stamp) and a closure-phase offset per triangle.
	Calib
)

// ErrorModels lists the error models.
var ErrorModels = []ErrorModel{NullGrow, Flat, Calib}

func (m ErrorModel) String() string {
	switch m {
	case NullGrow:
		return "nullgrow"
	case Flat:
		return "flat"
	case Calib:
		return "calib"
	}
	return fmt.Sprintf("ErrorModel(%d)", int(m))
}

// Parameters of the error models. The levels are typical of calibrated near-infrared data
// (common practice, no source).
const (
	V2RelMin, V2RelMax = 0.02, 0.05   // relative V² error, drawn per row
	V2Floor            = 0.0015       // absolute V² error floor
	PhiMin, PhiMax     = 1.0, 5.0     // phase error floor φ0 (deg), drawn per row
	NullK              = 0.003        // amplitude noise of B or V behind the 1/|B| term of NullGrow
	MaxPhiErr          = 180.0        // cap of phase errors (deg)
	T3RelMin, T3RelMax = 0.03, 0.07   // relative T3AMP error, drawn per row
	T3Floor            = 0.002        // absolute T3AMP error floor
	VisRelMin          = V2RelMin / 2 // relative VISAMP error, drawn per row in [VisRelMin, VisRelMax]
	VisRelMax          = V2RelMax / 2
	VisFloor           = 0.003 // absolute VISAMP error floor
	CalibScale         = 0.03  // standard deviation of the V² scale factor per exposure (Calib)
	CalibPhiMin        = 1.0   // closure- and visibility-phase offsets of Calib (deg), drawn
	CalibPhiMax        = 2.0   // per triangle or baseline in [CalibPhiMin, CalibPhiMax], either sign
	FlagFraction       = 0.02  // fraction of points of each table flagged and corrupted
)

// phaseSigma returns the phase error (deg) of a quantity of amplitude amp under model m with
// floor phi0 (deg). Under NullGrow the second term is the small-noise phase error σ_A/A
// radians of a complex number of amplitude A with additive noise σ_A per component (common
// practice, no source).
func phaseSigma(m ErrorModel, phi0, amp float64) float64 {
	if m != NullGrow {
		return phi0
	}
	if !(amp > 0) {
		return MaxPhiErr
	}
	return math.Min(math.Hypot(phi0, NullK/amp*180/math.Pi), MaxPhiErr)
}

// Case is one data set of the suite: a scene seen by an array with an error model.
type Case struct {
	Scene Scene
	Array *Array
	Model ErrorModel
}

// Name is "scene/array/model", e.g. "Tessaly/four/flat".
func (c Case) Name() string { return c.Scene.Name + "/" + c.Array.Name + "/" + c.Model.String() }

// seed is the case's fixed seed: a hash of the scene and array names, the same for every
// error model, so that the models differ only in what they are meant to differ in.
func (c Case) seed() uint64 {
	h := fnv.New64a()
	h.Write([]byte(c.Scene.Name + "\x00" + c.Array.Name))
	return h.Sum64()
}

// Random streams of a case, each from its own generator so that one kind of draw does not
// shift another.
const (
	streamParams = 1 + iota // per-row error levels
	streamNoise             // the Gaussian noise
	streamCalib             // scale factors and offsets of Calib
	streamFlags             // which points are flagged and how they are corrupted
)

// Dataset is a generated data set.
type Dataset struct {
	Case Case
	// File is the generated file before encoding; Bytes its encoded form.
	File  *oifits.File
	Bytes []byte
	// Data is Bytes read back with oifits.Decode and dataset.FromFiles (everything selected).
	Data *dataset.Data
	// Points and Flagged count the points written and flagged per table type: V², closure
	// triangles, complex visibilities.
	Points, Flagged [3]int
	// NaN counts the flagged points written with a NaN value.
	NaN int
}

// Generate makes the data set of case c: the scene rendered on its fine grid, its exact
// visibilities at the plan's (u,v) points, values and errors from the error model with
// Gaussian noise, a fraction FlagFraction of points flagged and corrupted, encoded as OIFITS
// v2 and read back. The same case always gives the same bytes.
func Generate(c Case) (*Dataset, error) {
	f, err := skeleton(c.Array.Plan, c.Scene.Vis)
	if err != nil {
		return nil, fmt.Errorf("validate: %s: %w", c.Name(), err)
	}
	f.Name = strings.ReplaceAll(c.Name(), "/", "-") + ".fits"
	f.Targets[0].Name = c.Scene.Name
	f.Primary.Object = c.Scene.Name
	f.Primary.ProcSoft = "vcz validate"
	f.Primary.Date = f.Primary.DateObs // fixed, so that a case always gives the same bytes
	f.Primary.History = []string{"Validation data: exact sum over a finely sampled analytic scene, errors from the " + c.Model.String() + " model."}
	wave := f.Wavelengths[0].EffWave
	nc := len(wave)

	// Every spatial frequency: V² points, then three per triangle, then the OI_VIS points.
	var u, v []float64
	for _, t := range f.Vis2 {
		for _, r := range t.Rows {
			for _, l := range wave {
				u, v = append(u, r.UCoord/l), append(v, r.VCoord/l)
			}
		}
	}
	for _, t := range f.T3 {
		for _, r := range t.Rows {
			for _, l := range wave {
				u = append(u, r.U1Coord/l, r.U2Coord/l, (r.U1Coord+r.U2Coord)/l)
				v = append(v, r.V1Coord/l, r.V2Coord/l, (r.V1Coord+r.V2Coord)/l)
			}
		}
	}
	for _, t := range f.Vis {
		for _, r := range t.Rows {
			for _, l := range wave {
				u, v = append(u, r.UCoord/l), append(v, r.VCoord/l)
			}
		}
	}
	vis := make([]complex128, len(u))
	newSceneVis(c.Scene, c.Array.Resolution).vis(vis, u, v)

	seed := c.seed()
	params := rand.New(rand.NewPCG(seed, streamParams))
	noise := rand.New(rand.NewPCG(seed, streamNoise))
	calib := rand.New(rand.NewPCG(seed, streamCalib))
	uniform := func(lo, hi float64) float64 { return lo + (hi-lo)*params.Float64() }

	// Calibration errors of Calib: a V² factor per exposure, keyed by MJD, and a phase
	// offset per triangle or baseline, keyed by its stations. Drawn for every model (and
	// used by Calib only) so that the other streams stay aligned.
	scale := map[float64]float64{}
	mjdScale := func(mjd float64) float64 {
		g, ok := scale[mjd]
		if !ok {
			g = 1 + CalibScale*calib.NormFloat64()
			scale[mjd] = g
		}
		if c.Model != Calib {
			return 1
		}
		return g
	}
	offsets := map[[3]int]float64{}
	offset := func(key [3]int) float64 {
		o, ok := offsets[key]
		if !ok {
			o = CalibPhiMin + (CalibPhiMax-CalibPhiMin)*calib.Float64()
			if calib.IntN(2) == 0 {
				o = -o
			}
			offsets[key] = o
		}
		if c.Model != Calib {
			return 0
		}
		return o
	}

	k := 0
	ds := &Dataset{Case: c, File: f}
	for ti := range f.Vis2 {
		t := &f.Vis2[ti]
		for ri := range t.Rows {
			r := &t.Rows[ri]
			rel := uniform(V2RelMin, V2RelMax)
			g := mjdScale(r.MJD)
			for ch := range nc {
				v2 := real(vis[k])*real(vis[k]) + imag(vis[k])*imag(vis[k])
				k++
				s := math.Max(rel*v2, V2Floor)
				r.Err[ch] = s
				r.Data[ch] = g*v2 + s*noise.NormFloat64()
				r.Flag[ch] = false
			}
			ds.Points[0] += nc
		}
	}
	for ti := range f.T3 {
		t := &f.T3[ti]
		for ri := range t.Rows {
			r := &t.Rows[ri]
			rel := uniform(T3RelMin, T3RelMax)
			phi0 := uniform(PhiMin, PhiMax)
			g := mjdScale(r.MJD)
			o := offset(r.StaIndex)
			for ch := range nc {
				b := vis[k] * vis[k+1] * cmplx.Conj(vis[k+2])
				k += 3
				amp := cmplx.Abs(b)
				sa := math.Max(rel*amp, T3Floor)
				sp := phaseSigma(c.Model, phi0, amp)
				r.AmpErr[ch], r.PhiErr[ch] = sa, sp
				r.Amp[ch] = math.Pow(g, 1.5)*amp + sa*noise.NormFloat64()
				r.Phi[ch] = wrapDeg(cmplx.Phase(b)*180/math.Pi + o + sp*noise.NormFloat64())
				r.Flag[ch] = false
			}
			ds.Points[1] += nc
		}
	}
	for ti := range f.Vis {
		t := &f.Vis[ti]
		t.AmpTyp, t.PhiTyp = oifits.AmpAbsolute, oifits.PhiAbsolute
		for ri := range t.Rows {
			r := &t.Rows[ri]
			rel := uniform(VisRelMin, VisRelMax)
			phi0 := uniform(PhiMin, PhiMax)
			g := mjdScale(r.MJD)
			o := offset([3]int{r.StaIndex[0], r.StaIndex[1], 0})
			for ch := range nc {
				z := vis[k]
				k++
				amp := cmplx.Abs(z)
				sa := math.Max(rel*amp, VisFloor)
				sp := phaseSigma(c.Model, phi0, amp)
				r.AmpErr[ch], r.PhiErr[ch] = sa, sp
				r.Amp[ch] = math.Sqrt(g)*amp + sa*noise.NormFloat64()
				r.Phi[ch] = wrapDeg(cmplx.Phase(z)*180/math.Pi + o + sp*noise.NormFloat64())
				r.Flag[ch] = false
			}
			ds.Points[2] += nc
		}
	}
	flagPoints(ds, rand.New(rand.NewPCG(seed, streamFlags)))

	var buf bytes.Buffer
	if err := oifits.Encode(&buf, f); err != nil {
		return nil, fmt.Errorf("validate: %s: %w", c.Name(), err)
	}
	ds.Bytes = buf.Bytes()
	back, err := oifits.Decode(bytes.NewReader(ds.Bytes), f.Name)
	if err != nil {
		return nil, fmt.Errorf("validate: %s: reading back: %w", c.Name(), err)
	}
	if ds.Data, err = dataset.FromFiles([]*oifits.File{back}, dataset.Selection{}); err != nil {
		return nil, fmt.Errorf("validate: %s: %w", c.Name(), err)
	}
	return ds, nil
}

// flagPoints flags round(FlagFraction·N) points of each table type, chosen at random, and
// corrupts them as bad data would be: a third get NaN values (and errors), the others values
// far off and errors of zero or NaN, which the reader must never use.
func flagPoints(ds *Dataset, rng *rand.Rand) {
	f := ds.File
	nc := len(f.Wavelengths[0].EffWave)
	for typ := range 3 {
		n := ds.Points[typ]
		m := int(math.Round(FlagFraction * float64(n)))
		perm := rng.Perm(n)[:m]
		for _, p := range perm {
			row, ch := p/nc, p%nc
			bad := rng.IntN(3) == 0
			garbage := func(lo, hi float64) float64 {
				if bad {
					return math.NaN()
				}
				return lo + (hi-lo)*rng.Float64()
			}
			badErr := func() float64 {
				if bad || rng.IntN(2) == 0 {
					return math.NaN()
				}
				return 0
			}
			if bad {
				ds.NaN++
			}
			switch typ {
			case 0:
				r := &f.Vis2[0].Rows[row]
				r.Flag[ch], r.Data[ch], r.Err[ch] = true, garbage(-2, 3), badErr()
			case 1:
				r := &f.T3[0].Rows[row]
				r.Flag[ch], r.Amp[ch], r.AmpErr[ch] = true, garbage(-1, 5), badErr()
				r.Phi[ch], r.PhiErr[ch] = garbage(-180, 180), badErr()
			case 2:
				r := &f.Vis[0].Rows[row]
				r.Flag[ch], r.Amp[ch], r.AmpErr[ch] = true, garbage(-1, 5), badErr()
				r.Phi[ch], r.PhiErr[ch] = garbage(-180, 180), badErr()
			}
		}
		ds.Flagged[typ] = m
	}
}

// wrapDeg maps an angle in degrees onto (−180°, 180°].
func wrapDeg(a float64) float64 {
	a = math.Mod(a, 360)
	if a > 180 {
		a -= 360
	} else if a <= -180 {
		a += 360
	}
	return a
}
