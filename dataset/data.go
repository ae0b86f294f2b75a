package dataset

import (
	"math"
	"sort"
)

// AmpType says what an OI_VIS amplitude means (OIFITS v2 keyword AMPTYP; Duvert, Young &
// Hummel 2017, table 6).
type AmpType uint8

// The amplitude types. Files without AMPTYP (all of OIFITS v1) are taken as absolute.
const (
	AmpAbsolute AmpType = iota
	AmpDifferential
	AmpCorrelatedFlux
)

// PhiType says what an OI_VIS phase means (OIFITS v2 keyword PHITYP). Files without PHITYP are
// taken as absolute.
type PhiType uint8

// The phase types.
const (
	PhiAbsolute PhiType = iota
	PhiDifferential
)

// Origin says where a data point came from: the index of the file in the list given to
// FromFiles, the HDU number of its table (1-based, primary = 1), the row (1-based) and the
// spectral channel (0-based).
type Origin struct {
	File, HDU, Row, Channel int
}

// Counts are the numbers of points of one table type: Valid points are kept, Flagged points
// (FLAG = T) and NonFinite points (value or error NaN or infinite) are dropped. A point that is
// flagged is counted as flagged only. Points outside the selection are not counted.
type Counts struct {
	Valid, Flagged, NonFinite int
}

// Total returns the number of points counted.
func (c Counts) Total() int { return c.Valid + c.Flagged + c.NonFinite }

// Vis2Points are the squared visibilities of a data set, one entry per (row, channel), as
// parallel slices. U and V are in cycles per radian (UCOORD/λ, VCOORD/λ), Lambda and DLambda in
// metres, MJD in days, Value and Err dimensionless.
type Vis2Points struct {
	U, V, Lambda, DLambda, MJD, Value, Err []float64
	Origin                                 []Origin
}

// Len returns the number of points.
func (p *Vis2Points) Len() int { return len(p.Value) }

// T3Points are the closure triangles of a data set. The bispectrum of a triangle is
// B = V(U1,V1)·V(U2,V2)·conj(V(U1+U2, V1+V2)) (CONVENTIONS.md). Phi and PhiErr are in
// radians. A triangle whose amplitude is unusable (NaN, as many files write when T3AMP is not
// measured) has AmpOK false and its Amp and AmpErr are NaN; likewise PhiOK for the phase. Every
// kept triangle has at least one of the two.
type T3Points struct {
	U1, V1, U2, V2, Lambda, DLambda, MJD []float64
	Amp, AmpErr, Phi, PhiErr             []float64
	AmpOK, PhiOK                         []bool
	Origin                               []Origin
}

// Len returns the number of triangles.
func (p *T3Points) Len() int { return len(p.Lambda) }

// VisPoints are the complex visibilities of a data set: amplitude and phase (radians) with
// their types, and AmpOK / PhiOK as for T3Points.
type VisPoints struct {
	U, V, Lambda, DLambda, MJD []float64
	Amp, AmpErr, Phi, PhiErr   []float64
	AmpOK, PhiOK               []bool
	AmpTyp                     []AmpType
	PhiTyp                     []PhiType
	Origin                     []Origin
}

// Len returns the number of points.
func (p *VisPoints) Len() int { return len(p.Lambda) }

// Instrument describes one instrument (INSNAME) that contributes points.
type Instrument struct {
	Name                 string
	Channels             int
	LambdaMin, LambdaMax float64 // m, over the channels of its OI_WAVELENGTH table
}

// Data is a merged, selected data set ready for a forward model. All slices are owned by the
// Data; FromFiles builds it, and tests may fill it directly.
type Data struct {
	Files       []string     // file names, in the order given
	Targets     []string     // distinct target names of the kept points, sorted
	Instruments []Instrument // instruments of the kept points, sorted by name

	Vis2 Vis2Points
	T3   T3Points
	Vis  VisPoints

	// Counts per table type of the selected points (see Counts).
	Vis2Count, T3Count, VisCount Counts
	// Notices says what was left out and why, one line each.
	Notices []string
}

// Len returns the number of usable measurements of the given types: a triangle counts once for
// its amplitude and once for its phase, and likewise a complex visibility.
func (d *Data) Len(types DataType) int {
	n := 0
	for _, r := range typeTable {
		if types&r.Type != 0 {
			n += r.count(d)
		}
	}
	return n
}

// Available returns the data types that have at least one usable measurement.
func (d *Data) Available() DataType {
	var t DataType
	for _, r := range typeTable {
		if r.count(d) > 0 {
			t |= r.Type
		}
	}
	return t
}

// Summary gives the figures `vcz inspect` prints. Lengths are in metres, frequencies in cycles
// per radian (divide by 1e6 for Mλ), angles in radians.
type Summary struct {
	Files       []string
	Targets     []string
	Instruments []Instrument

	Vis2, T3, Vis Counts

	// BaselineMin and BaselineMax are the shortest and longest projected baselines (m) over all
	// kept points, the three baselines of each closure triangle included.
	BaselineMin, BaselineMax float64
	// FreqMin and FreqMax are the smallest and largest spatial frequencies √(u²+v²).
	FreqMin, FreqMax float64
	// LambdaMin and LambdaMax are the extreme wavelengths (m) of the kept points.
	LambdaMin, LambdaMax float64
	// Resolution is the nominal resolution λmin/(2·Bmax), LargestScale the largest constrained
	// scale λmax/Bmin (CONVENTIONS.md; common practice, no source).
	Resolution, LargestScale float64
	// MJDMin and MJDMax bound the observing epochs; Nights is the number of groups of epochs
	// separated by gaps longer than NightGap.
	MJDMin, MJDMax float64
	Nights         int
}

// NightGap is the gap between epochs (days) that starts a new night in Summary: half a day,
// which separates observations of consecutive nights at any site while keeping one night,
// however long, together (common practice, no source).
const NightGap = 0.5

// Summarize computes the summary of a data set: counts and geometry only (the grid a
// reconstruction would choose is recon.ChooseGrid's). With no usable point the geometric
// figures are zero.
func (d *Data) Summarize() Summary {
	s := Summary{
		Files:       append([]string(nil), d.Files...),
		Targets:     append([]string(nil), d.Targets...),
		Instruments: append([]Instrument(nil), d.Instruments...),
		Vis2:        d.Vis2Count, T3: d.T3Count, Vis: d.VisCount,
	}
	bmin, bmax := math.Inf(1), 0.0
	fmin, fmax := math.Inf(1), 0.0
	lmin, lmax := math.Inf(1), 0.0
	var mjds []float64
	add := func(u, v, lambda float64) {
		f := math.Hypot(u, v)
		b := f * lambda
		if f > 0 {
			bmin = math.Min(bmin, b)
			fmin = math.Min(fmin, f)
		}
		bmax = math.Max(bmax, b)
		fmax = math.Max(fmax, f)
		lmin = math.Min(lmin, lambda)
		lmax = math.Max(lmax, lambda)
	}
	p := &d.Vis2
	for i := range p.Value {
		add(p.U[i], p.V[i], p.Lambda[i])
		mjds = append(mjds, p.MJD[i])
	}
	t := &d.T3
	for i := range t.Lambda {
		add(t.U1[i], t.V1[i], t.Lambda[i])
		add(t.U2[i], t.V2[i], t.Lambda[i])
		add(t.U1[i]+t.U2[i], t.V1[i]+t.V2[i], t.Lambda[i])
		mjds = append(mjds, t.MJD[i])
	}
	c := &d.Vis
	for i := range c.Lambda {
		add(c.U[i], c.V[i], c.Lambda[i])
		mjds = append(mjds, c.MJD[i])
	}
	if len(mjds) == 0 {
		return s
	}
	if math.IsInf(bmin, 1) { // only zero baselines
		bmin, fmin = 0, 0
	}
	s.BaselineMin, s.BaselineMax = bmin, bmax
	s.FreqMin, s.FreqMax = fmin, fmax
	s.LambdaMin, s.LambdaMax = lmin, lmax
	if bmax > 0 {
		s.Resolution = lmin / (2 * bmax)
	}
	if bmin > 0 {
		s.LargestScale = lmax / bmin
	}
	sort.Float64s(mjds)
	s.MJDMin, s.MJDMax = mjds[0], mjds[len(mjds)-1]
	s.Nights = 1
	for i := 1; i < len(mjds); i++ {
		if mjds[i]-mjds[i-1] > NightGap {
			s.Nights++
		}
	}
	return s
}
