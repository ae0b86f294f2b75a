package simulate

import (
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"strings"
	"time"

	"vcz/io/oifits"
)

// Report summarises a simulation.
type Report struct {
	HourAngles        int       // hour angles observed
	Skipped           int       // hour angles skipped, target below the elevation limit
	SkippedHourAngles []float64 // those hour angles (h)
	Stations          int       // stations combined
	Baselines         int       // baselines per hour angle
	Triangles         int       // closing triangles per hour angle
	Channels          int       // spectral channels
	Vis2, T3, Vis     int       // data points written (rows × channels) per table type
	Diff              int       // differential visibilities written (Plan.WriteDiff)
	MaxProjected      float64   // longest projected baseline (m)
	MinProjected      float64   // shortest projected baseline (m)
	// BandAveraged says that each channel's visibility is its average over the band
	// (Plan.Smearing), not the value at its centre.
	BandAveraged bool
}

// String writes the report as a few lines for the terminal.
func (r Report) String() string {
	var b strings.Builder
	fmt.Fprintf(&b, "%d stations, %d baselines, %d closing triangles, %d channels\n", r.Stations, r.Baselines, r.Triangles, r.Channels)
	fmt.Fprintf(&b, "%d hour angles observed, %d skipped below the elevation limit", r.HourAngles, r.Skipped)
	if r.Skipped > 0 {
		s := make([]string, len(r.SkippedHourAngles))
		for i, h := range r.SkippedHourAngles {
			s[i] = fmt.Sprintf("%+.2f", h)
		}
		fmt.Fprintf(&b, " (%s h)", strings.Join(s, ", "))
	}
	fmt.Fprintf(&b, "\nprojected baselines %.1f to %.1f m\n", r.MinProjected, r.MaxProjected)
	if r.BandAveraged {
		b.WriteString("visibilities averaged over each channel's band\n")
	} else {
		b.WriteString("visibilities at each channel's centre, not averaged over its band\n")
	}
	fmt.Fprintf(&b, "points written: %d V², %d closure phases/T3 amplitudes, %d complex visibilities", r.Vis2, r.T3, r.Vis)
	if r.Diff > 0 {
		fmt.Fprintf(&b, ", %d differential visibilities", r.Diff)
	}
	b.WriteString("\n")
	return b.String()
}

// Noise streams: each table type draws from its own generator, seeded
// with the plan's seed and a fixed stream number, so the noise of one
// table does not depend on which other tables are written.
const (
	streamVis2 = 1 + iota
	streamT3
	streamVis
	streamDiff
)

// Run simulates the plan's observations of sky and returns them as an
// OIFITS file (OI_TARGET, OI_ARRAY with all stations, OI_WAVELENGTH and
// the requested data tables), ready for oifits.WriteFile, with a report.
//
// For each hour angle with the target above the elevation limit, every
// pair of combined stations i < j (in plan order) gives a baseline from
// station i to station j, projected with UVW; each channel's (u, v) is the
// projection divided by the wavelength; V is the sky's visibility there, or
// its average over the channel's band unless plan.Smearing says otherwise (smear.go; for a
// chromatic sky the coherent flux over the band divided by the flux over it). VIS2DATA is |V|², VISAMP and
// VISPHI are |V| and arg V, and each closing triangle i < j < k gives the
// bispectrum B = V(u1,v1) V(u2,v2) conj(V(u1+u2, v1+v2)) with (u1, v1) the
// baseline i→j and (u2, v2) the baseline j→k (CONVENTIONS.md). Errors and
// noise follow plan.Noise; the noise is a deterministic function of
// plan.Seed. Observation times (MJD) are the UT at which the target
// reaches each hour angle, starting on the UT day plan.MJD.
//
// Primary.Date is left empty so that the same plan and seed give the same
// file content; the writer fills it in.
func Run(p *Plan, sky Sky) (*oifits.File, Report, error) {
	var rep Report
	if err := p.Validate(); err != nil {
		return nil, rep, fmt.Errorf("simulate: plan: %w", err)
	}
	deg := math.Pi / 180
	lat, dec := p.Latitude*deg, p.Dec*deg
	comb := p.combined()
	var pairs [][2]int
	pairIndex := map[[2]int]int{}
	for a := 0; a < len(comb); a++ {
		for b := a + 1; b < len(comb); b++ {
			pairIndex[[2]int{a, b}] = len(pairs)
			pairs = append(pairs, [2]int{comb[a], comb[b]})
		}
	}
	var tris [][3]int // indices into comb
	for a := 0; a < len(comb); a++ {
		for b := a + 1; b < len(comb); b++ {
			for c := b + 1; c < len(comb); c++ {
				tris = append(tris, [3]int{a, b, c})
			}
		}
	}
	nc := len(p.Wavelengths)
	rep.Stations, rep.Baselines, rep.Triangles, rep.Channels = len(comb), len(pairs), len(tris), nc

	// Observing times and the hour angles kept.
	t0 := transitMJD(p.MJD, p.RA/15, p.Longitude/15, p.HourAngles[0])
	var has, mjds []float64
	for _, h := range p.HourAngles {
		mjd := t0 + (h-p.HourAngles[0])/siderealRatio/24
		if Elevation(h*15*deg, dec, lat) < p.ElevationLimit*deg {
			rep.Skipped++
			rep.SkippedHourAngles = append(rep.SkippedHourAngles, h)
			continue
		}
		has = append(has, h)
		mjds = append(mjds, mjd)
	}
	rep.HourAngles = len(has)
	if len(has) == 0 {
		return nil, rep, fmt.Errorf("simulate: the target (dec %g°) is below the elevation limit of %g° at every hour angle of the plan", p.Dec, p.ElevationLimit)
	}

	// Projected baselines (m) and the spatial frequencies of every
	// (hour angle, baseline, channel), index (k*len(pairs)+j)*nc+c.
	np := len(pairs)
	uc := make([]float64, len(has)*np)
	vc := make([]float64, len(has)*np)
	u := make([]float64, len(has)*np*nc)
	v := make([]float64, len(u))
	rep.MinProjected = math.Inf(1)
	for k, h := range has {
		for j, pr := range pairs {
			a, b := p.Stations[pr[0]], p.Stations[pr[1]]
			enu := [3]float64{b.East - a.East, b.North - a.North, b.Up - a.Up}
			bu, bv, _ := UVW(enu, h*15*deg, dec, lat)
			uc[k*np+j], vc[k*np+j] = bu, bv
			l := math.Hypot(bu, bv)
			rep.MaxProjected = math.Max(rep.MaxProjected, l)
			rep.MinProjected = math.Min(rep.MinProjected, l)
			for c, lam := range p.Wavelengths {
				u[(k*np+j)*nc+c] = bu / lam
				v[(k*np+j)*nc+c] = bv / lam
			}
		}
	}
	vis := make([]complex128, len(u))
	cs, chromatic := sky.(chromaticSky)
	switch {
	case chromatic:
		lambda := make([]float64, len(u))
		for i := range lambda {
			lambda[i] = p.Wavelengths[i%nc]
		}
		var err error
		if p.Smearing != SmearOff {
			rep.BandAveraged = true
			band := make([]float64, len(u))
			for i := range band {
				band[i] = p.Bandwidths[i%nc]
			}
			err = cs.bandAverage(vis, u, v, lambda, band)
		} else {
			err = cs.VisibilitiesAt(vis, u, v, lambda)
		}
		if err != nil {
			return nil, rep, fmt.Errorf("simulate: %w", err)
		}
	case p.Smearing != SmearOff:
		rep.BandAveraged = true
		rel := make([]float64, len(u))
		for i := range rel {
			c := i % nc
			rel[i] = p.Bandwidths[c] / p.Wavelengths[c]
		}
		if err := bandAverage(sky, vis, u, v, rel); err != nil {
			return nil, rep, fmt.Errorf("simulate: %w", err)
		}
	default:
		if err := sky.Visibilities(vis, u, v); err != nil {
			return nil, rep, fmt.Errorf("simulate: %w", err)
		}
	}

	f := newFile(p, mjds[0])
	staIndex := func(i int) int { return i + 1 } // STA_INDEX is 1-based in plan order
	nz := p.Noise
	if p.WriteVis2 {
		rng := rand.New(rand.NewPCG(p.Seed, streamVis2))
		tab := oifits.Vis2{DateObs: f.Primary.DateObs, ArrName: p.ArrayName, InsName: p.Instrument}
		for k := range has {
			for j, pr := range pairs {
				row := oifits.Vis2Row{TargetID: 1, MJD: mjds[k], IntTime: p.IntTime,
					UCoord: uc[k*np+j], VCoord: vc[k*np+j], StaIndex: [2]int{staIndex(pr[0]), staIndex(pr[1])},
					Data: make([]float64, nc), Err: make([]float64, nc), Flag: make([]bool, nc)}
				for c := 0; c < nc; c++ {
					z := vis[(k*np+j)*nc+c]
					v2 := real(z)*real(z) + imag(z)*imag(z)
					s := math.Hypot(nz.V2Relative*v2, nz.V2Floor)
					row.Err[c] = s
					row.Data[c] = v2
					if nz.Add {
						row.Data[c] += s * rng.NormFloat64()
					}
				}
				tab.Rows = append(tab.Rows, row)
			}
		}
		rep.Vis2 = len(tab.Rows) * nc
		f.Vis2 = append(f.Vis2, tab)
	}
	if p.WriteT3 {
		rng := rand.New(rand.NewPCG(p.Seed, streamT3))
		tab := oifits.T3{DateObs: f.Primary.DateObs, ArrName: p.ArrayName, InsName: p.Instrument}
		for k := range has {
			for _, t := range tris {
				jab := pairIndex[[2]int{t[0], t[1]}]
				jbc := pairIndex[[2]int{t[1], t[2]}]
				jac := pairIndex[[2]int{t[0], t[2]}]
				row := oifits.T3Row{TargetID: 1, MJD: mjds[k], IntTime: p.IntTime,
					U1Coord: uc[k*np+jab], V1Coord: vc[k*np+jab], U2Coord: uc[k*np+jbc], V2Coord: vc[k*np+jbc],
					StaIndex: [3]int{staIndex(comb[t[0]]), staIndex(comb[t[1]]), staIndex(comb[t[2]])},
					Amp:      make([]float64, nc), AmpErr: make([]float64, nc), Phi: make([]float64, nc), PhiErr: make([]float64, nc),
					Flag: make([]bool, nc)}
				for c := 0; c < nc; c++ {
					bs := vis[(k*np+jab)*nc+c] * vis[(k*np+jbc)*nc+c] * cmplx.Conj(vis[(k*np+jac)*nc+c])
					row.Amp[c], row.AmpErr[c], row.Phi[c], row.PhiErr[c] = noisyAmpPhase(bs, nz.T3AmpRelative, nz.T3AmpFloor, nz.ClosurePhase, nz.Add, rng)
				}
				tab.Rows = append(tab.Rows, row)
			}
		}
		rep.T3 = len(tab.Rows) * nc
		f.T3 = append(f.T3, tab)
	}
	// visTable makes an OI_VIS table of noisy amplitudes and phases from the noise
	// stream; each row is passed to finish (nil for none) before it is kept.
	visTable := func(stream uint64, at, pt string, finish func(*oifits.VisRow)) oifits.Vis {
		rng := rand.New(rand.NewPCG(p.Seed, stream))
		tab := oifits.Vis{DateObs: f.Primary.DateObs, ArrName: p.ArrayName, InsName: p.Instrument, AmpTyp: at, PhiTyp: pt}
		for k := range has {
			for j, pr := range pairs {
				row := oifits.VisRow{TargetID: 1, MJD: mjds[k], IntTime: p.IntTime,
					UCoord: uc[k*np+j], VCoord: vc[k*np+j], StaIndex: [2]int{staIndex(pr[0]), staIndex(pr[1])},
					Amp: make([]float64, nc), AmpErr: make([]float64, nc), Phi: make([]float64, nc), PhiErr: make([]float64, nc),
					Flag: make([]bool, nc)}
				for c := 0; c < nc; c++ {
					row.Amp[c], row.AmpErr[c], row.Phi[c], row.PhiErr[c] = noisyAmpPhase(vis[(k*np+j)*nc+c], nz.VisAmpRelative, nz.VisAmpFloor, nz.VisPhase, nz.Add, rng)
				}
				if finish != nil {
					finish(&row)
				}
				tab.Rows = append(tab.Rows, row)
			}
		}
		return tab
	}
	if p.WriteVis {
		tab := visTable(streamVis, oifits.AmpAbsolute, oifits.PhiAbsolute, nil)
		rep.Vis = len(tab.Rows) * nc
		f.Vis = append(f.Vis, tab)
	}
	if p.WriteDiff {
		tab := visTable(streamDiff, oifits.AmpDifferential, oifits.PhiDifferential, func(row *oifits.VisRow) { differential(row, p.Wavelengths) })
		rep.Diff = len(tab.Rows) * nc
		f.Vis = append(f.Vis, tab)
	}
	return f, rep, nil
}

// chromaticSky is a Sky whose visibility depends on the wavelength (ChromaticSky): at the
// channel centres lambda, or averaged over bands of widths band (smear.go).
type chromaticSky interface {
	VisibilitiesAt(dst []complex128, u, v, lambda []float64) error
	bandAverage(vis []complex128, u, v, lambda, band []float64) error
}

// differential turns a row of absolute amplitudes and phases (degrees) at the wavelengths
// lambda into differential ones, with all its channels as the reference (OIFITS v2, Duvert,
// Young & Hummel 2017, sect. 4.3): the amplitudes and their errors divided by the mean
// amplitude, and from the phases, unwrapped along the row, their least-squares line
// a + b/λ removed (the mean and the achromatic slope in wavenumber of an optical path
// difference), reduced to (−180°, 180°]. A row of a single channel keeps amplitude 1 and
// phase 0.
func differential(row *oifits.VisRow, lambda []float64) {
	n := float64(len(lambda))
	mean := 0.0
	for _, a := range row.Amp {
		mean += a / n
	}
	sx, sy, sxx, sxy := 0.0, 0.0, 0.0, 0.0
	prev := 0.0
	for c := range row.Phi {
		if c > 0 {
			row.Phi[c] = prev + wrapDeg(row.Phi[c]-prev)
		}
		prev = row.Phi[c]
		x := 1 / lambda[c]
		sx += x
		sy += row.Phi[c]
		sxx += x * x
		sxy += x * row.Phi[c]
	}
	b := 0.0
	if den := n*sxx - sx*sx; den > 0 && n > 1 {
		b = (n*sxy - sx*sy) / den
	}
	a := (sy - b*sx) / n
	for c := range row.Phi {
		row.Phi[c] = wrapDeg(row.Phi[c] - a - b/lambda[c])
		if mean > 0 {
			row.Amp[c] /= mean
			row.AmpErr[c] /= mean
		}
	}
}

// maxPhaseError caps phaseError: a phase of error 180° carries almost no information.
const maxPhaseError = 180.0

// phaseError returns the error in degrees of a phase whose complex quantity has amplitude
// amp and an additive amplitude error floor: floorDeg and the noise phase floor/amp (radians)
// in quadrature, at most maxPhaseError. At high signal-to-noise a complex quantity of
// amplitude A with additive noise σ per component has a phase error of σ/A radians
// (Thompson, Moran & Swenson, Interferometry and Synthesis in Radio Astronomy, sect. 6.2,
// from memory), so a phase is poorly defined where the amplitude is near zero. The relative
// part of the amplitude error is left out: it stands for calibration of the amplitudes
// (the atmospheric transfer function), which cancels in closure phases.
func phaseError(floorDeg, ampFloor, amp float64) float64 {
	if !(amp > 0) {
		return maxPhaseError
	}
	return math.Min(math.Hypot(floorDeg, ampFloor/amp*180/math.Pi), maxPhaseError)
}

// wrapDeg maps an angle in degrees onto (−180, 180].
func wrapDeg(a float64) float64 {
	a = math.Mod(a, 360)
	if a > 180 {
		a -= 360
	} else if a <= -180 {
		a += 360
	}
	return a
}

// mjdDate formats the UT date of an MJD as "YYYY-MM-DD" (MJD 40587 is
// 1970-01-01, the Unix epoch; from memory).
func mjdDate(mjd float64) string {
	sec := (mjd - 40587) * 86400
	return time.Unix(int64(math.Floor(sec)), 0).UTC().Format("2006-01-02")
}

// newFile makes the file with its reference tables.
func newFile(p *Plan, firstMJD float64) *oifits.File {
	deg := math.Pi / 180
	lat, lon := p.Latitude*deg, p.Longitude*deg
	arr := oifits.Array{Name: p.ArrayName, Frame: "GEOCENTRIC", XYZ: geodeticToGeocentric(lat, lon, p.Altitude)}
	for i, s := range p.Stations {
		tel := s.Telescope
		if tel == "" {
			tel = s.Name
		}
		arr.Stations = append(arr.Stations, oifits.Station{TelName: tel, StaName: s.Name, Index: i + 1,
			Diameter: s.Diameter, XYZ: enuToGeocentric([3]float64{s.East, s.North, s.Up}, lat, lon)})
	}
	return &oifits.File{
		Revision: 2,
		Primary: oifits.Primary{
			Origin:   "vcz",
			DateObs:  mjdDate(firstMJD),
			Content:  "OIFITS2",
			Telescop: p.ArrayName,
			Instrume: p.Instrument,
			Object:   p.TargetName,
			ProcSoft: "vcz simulate",
			ObsTech:  "SIMULATED",
			History:  []string{"Simulated data: model visibilities with Gaussian noise from a seeded generator."},
		},
		Targets: []oifits.Target{{ID: 1, Name: p.TargetName, RAEp0: p.RA, DecEp0: p.Dec, Equinox: 2000,
			VelTyp: "UNKNOWN", VelDef: "OPTICAL", SpecTyp: "UNKNOWN", Category: "SCI"}},
		Arrays:      []oifits.Array{arr},
		Wavelengths: []oifits.Wavelength{{InsName: p.Instrument, EffWave: append([]float64(nil), p.Wavelengths...), EffBand: append([]float64(nil), p.Bandwidths...)}},
	}
}

// noisyAmpPhase returns the amplitude and phase (degrees) of z with their errors: amplitude
// error rel·|z| and floor added in quadrature, phase error from phaseError; with add set, one
// Gaussian draw of rng perturbs the amplitude and then one the phase.
func noisyAmpPhase(z complex128, rel, floor, phaseSigma float64, add bool, rng *rand.Rand) (amp, ampErr, phi, phiErr float64) {
	amp, phi = cmplx.Abs(z), cmplx.Phase(z)*r2d
	ampErr = math.Hypot(rel*amp, floor)
	phiErr = phaseError(phaseSigma, floor, amp)
	if add {
		amp += ampErr * rng.NormFloat64()
		phi = wrapDeg(phi + phiErr*rng.NormFloat64())
	}
	return amp, ampErr, phi, phiErr
}

// r2d converts radians to degrees.
const r2d = 180 / math.Pi
