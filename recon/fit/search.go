package fit

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"

	"gonum.org/v1/gonum/stat/distuv"

	"vcz/dataset"
	"vcz/nufft"
	"vcz/recon/model"
)

// Field is the region over which a companion's position was searched, in
// mas east (x) and north (y) of the phase centre: the positions whose
// separation lies in [SepMin, SepMax] and, when Box is set, whose x and y
// lie in [XMin, XMax] × [YMin, YMax].
type Field struct {
	SepMin, SepMax         float64
	Box                    bool
	XMin, XMax, YMin, YMax float64
}

// inside reports whether (x, y) (mas) belongs to the field.
func (f Field) inside(x, y float64) bool {
	r := math.Hypot(x, y)
	if r < f.SepMin || r > f.SepMax {
		return false
	}
	return !f.Box || (x >= f.XMin && x <= f.XMax && y >= f.YMin && y <= f.YMax)
}

// bounds returns the rectangle (mas) that holds the field.
func (f Field) bounds() (xlo, xhi, ylo, yhi float64) {
	xlo, xhi, ylo, yhi = -f.SepMax, f.SepMax, -f.SepMax, f.SepMax
	if f.Box {
		xlo, xhi = math.Max(xlo, f.XMin), math.Min(xhi, f.XMax)
		ylo, yhi = math.Max(ylo, f.YMin), math.Min(yhi, f.YMax)
	}
	return
}

// StartsField returns the field that Fit's seeded starts search for
// component c of the model m when its x and y are both free (the box of
// the position map, Options.Starts), with the data types use of d. It
// fails when they are not both free or d has no baseline.
func StartsField(d *dataset.Data, m *model.Model, use dataset.DataType, c int) (Field, error) {
	var xp, yp model.Param
	var okx, oky bool
	for _, r := range m.Refs(true) {
		p, err := m.Param(r)
		if err != nil || r.Comp != c {
			continue
		}
		switch r.Name {
		case "x":
			xp, okx = p, true
		case "y":
			yp, oky = p, true
		}
	}
	if !okx || !oky {
		return Field{}, fmt.Errorf("fit: component %d: the position is not free", c+1)
	}
	t := newTerms(d, use, 1, centres)
	qmin := math.Inf(1)
	for i := range t.u {
		if q := math.Hypot(t.u[i], t.v[i]); q > 0 {
			qmin = math.Min(qmin, q)
		}
	}
	if math.IsInf(qmin, 1) {
		return Field{}, errors.New("fit: no baseline")
	}
	f := Field{Box: true}
	f.XMin, f.XMax, f.YMin, f.YMax = scanBox(qmin, xp.Value, yp.Value, xp.Min, xp.Max, yp.Min, yp.Max)
	for _, x := range []float64{f.XMin, f.XMax} {
		for _, y := range []float64{f.YMin, f.YMax} {
			f.SepMax = math.Max(f.SepMax, math.Hypot(x, y))
		}
	}
	return f, nil
}

// SearchOptions configure CalibrateSearch. The zero values of Draws and
// Seed mean 1000 draws and seed 1.
type SearchOptions struct {
	Field Field
	Draws int
	Seed  uint64
	// TwoSided allows companions of negative flux (a free flux without a
	// lower bound at 0): the search then keeps the largest |score| rather
	// than the largest positive one.
	TwoSided bool
}

// Calibration is the distribution of the largest Δχ² that a search for a
// point companion over a field finds in data of the null model alone
// (the look-elsewhere effect), from simulated noise draws.
type Calibration struct {
	// Draws is the number of noise draws and Positions the number of grid
	// positions of the field (Step mas apart along x and y).
	Draws, Positions int
	Step             float64
	// Max holds the largest Δχ² of each draw, in increasing order.
	Max []float64
	// Trials is the effective number of independent positions N_eff that
	// makes p_global = 1 − (1 − p₁)^N_eff match the simulated tail at its
	// tenth-largest maximum, p₁ the p-value of one fixed position (it
	// grows with the threshold; PValue extrapolates accordingly).
	Trials float64
	// AreaTrials is the field's area over the resolution element
	// (1/(2 q_max))², q_max the longest spatial frequency of the data:
	// the trials correction without simulation (common practice, no
	// source).
	AreaTrials float64
	twoSided   bool
	amp        float64 // A of the tail p₁(x) + A √x e^{−x/2} (PValue)
}

// calMaxData bounds the data of a search calibration: beyond it, every
// k-th datum of each type is used, as the position map of the starts
// does (scanMaxData). The set-up costs about 4 evaluations of the
// residuals per (u,v) point, so it grows as the square of the data.
const calMaxData = 3000

// CalibrateSearch simulates the largest Δχ² that a search for a point
// companion over opt.Field finds when the data hold the null model only:
// the model null (its free parameters refitted, as Significance does)
// observed with the (u,v) points and error bars of d and Gaussian noise,
// opt.Draws times.
//
// It works to first order in the noise and in the companion's flux
// ratio f, the regime of a companion at the edge of detection. With
// residuals z ~ N(0, 1) of the null model (the errors scaled to χ²ᵣ = 1,
// as NewDetection scales them) and g_p = ∂r/∂f the change of the
// residuals with a companion at position p (visibility (V₀ + f e_p)/(1 +
// f), e_p = exp(−2πi(u x + v y))), refitting f and the null model's free
// parameters lowers χ² by Δχ²(p) = (ĝ_p·z)², ĝ_p the unit vector along
// g_p after removing its projection on the columns of the null model's
// Jacobian (the score statistic; Rao 1948, Proc. Camb. Phil. Soc. 44,
// 50), only for ĝ_p·z of the sign of a positive flux unless TwoSided.
// The map ĝ_p·z over the field is, for each draw, one adjoint transform
// of C_i = Σ_j z_j ∂r_j/∂V_i (nufft, tolerance 1e-6) on a grid of step
// 1/(4 q_max), a quarter of the fringe spacing of the longest baseline;
// the maximum of each local peak is refined by a parabola through the
// peak cell and its neighbours along x and along y (common practice, no
// source), so the coarse grid does not lose the peaks' tops. ∂r/∂V is
// taken by central differences of the residuals at every frequency: the
// set-up costs about 4 residual evaluations per (u,v) point. Beyond
// calMaxData data a regular subset of each type is used: the maximum
// of the normalised scores depends on the data through the correlation
// of the score between positions, set by the (u,v) coverage and the
// relative weights, which a regular subset keeps to a good
// approximation: next to 2 040 data, every third datum gave a median,
// 95th and 99th percentile of the simulated maxima 0.4 %, 4.6 % and 1.6 %
// below those of the full set (4 000 draws each), a field-wide p-value
// somewhat too small (a few hundredths of σ).
func CalibrateSearch(d *dataset.Data, null *model.Model, use dataset.DataType, opt SearchOptions) (*Calibration, error) {
	f := opt.Field
	if !(f.SepMax > f.SepMin) || f.SepMin < 0 || (f.Box && !(f.XMax > f.XMin && f.YMax > f.YMin)) {
		return nil, fmt.Errorf("fit: search calibration: empty field (separations %g to %g mas)", f.SepMin, f.SepMax)
	}
	if opt.Draws <= 0 {
		opt.Draws = 1000
	}
	if opt.Seed == 0 {
		opt.Seed = 1
	}
	if err := null.Validate(); err != nil {
		return nil, err
	}
	// The simulated searches take the models at each channel's centre: smearing changes
	// the signal of a companion a little, not the noise whose maxima are calibrated.
	t := newTerms(d, use, 1, centres)
	if t.Len() > calMaxData {
		t = newTerms(d, use, 1+t.Len()/calMaxData, centres)
	}
	n := t.Len()
	if n == 0 {
		return nil, errors.New("fit: search calibration: no data of the selected types")
	}
	qmax := 0.0
	for i := range t.u {
		qmax = math.Max(qmax, math.Hypot(t.u[i], t.v[i]))
	}
	if !(qmax > 0) {
		return nil, errors.New("fit: search calibration: no baseline")
	}
	res := 1 / (2 * qmax) / model.MasToRad // mas
	step := res / 2
	xlo, xhi, ylo, yhi := f.bounds()
	// At most maxSide cells along a side: the step grows beyond that.
	const maxSide = 512
	if side := math.Max(xhi-xlo, yhi-ylo) / step; side > maxSide-4 {
		step *= side / (maxSide - 4)
	}
	// The grid: nx × ny cells, pixel (ix, iy) at x = xc − (ix − nx/2)·step,
	// y = yc + (iy − ny/2)·step (the transform's layout, CONVENTIONS.md,
	// shifted to the field's centre).
	nx := 2 * (int(math.Ceil((xhi-xlo)/(2*step))) + 1)
	ny := 2 * (int(math.Ceil((yhi-ylo)/(2*step))) + 1)
	xc, yc := (xlo+xhi)/2, (ylo+yhi)/2
	cellX := func(ix int) float64 { return xc - float64(ix-nx/2)*step }
	cellY := func(iy int) float64 { return yc + float64(iy-ny/2)*step }
	in := make([]bool, nx*ny)
	npos := 0
	for iy := 0; iy < ny; iy++ {
		for ix := 0; ix < nx; ix++ {
			if f.inside(cellX(ix), cellY(iy)) {
				in[iy*nx+ix] = true
				npos++
			}
		}
	}
	if npos == 0 {
		return nil, fmt.Errorf("fit: search calibration: no grid position in the field (separations %g to %g mas)", f.SepMin, f.SepMax)
	}

	sm, err := newSearchMap(t, null, nx, ny, step, xc, yc, in)
	if err != nil {
		return nil, err
	}
	in = sm.in

	cal := &Calibration{Draws: opt.Draws, Positions: npos, Step: step, twoSided: opt.TwoSided}
	area := 0.0 // the field's area, by the cells of a fine grid (mas²)
	{
		const m = 400
		dx, dy := (xhi-xlo)/m, (yhi-ylo)/m
		for iy := 0; iy < m; iy++ {
			for ix := 0; ix < m; ix++ {
				if f.inside(xlo+(float64(ix)+0.5)*dx, ylo+(float64(iy)+0.5)*dy) {
					area += dx * dy
				}
			}
		}
	}
	cal.AreaTrials = area / (res * res)

	rng := rand.New(rand.NewPCG(opt.Seed, 0x5bd1e995))
	z := make([]float64, n)
	s := make([]float64, nx*ny)
	for k := 0; k < opt.Draws; k++ {
		for i := range z {
			z[i] = rng.NormFloat64()
		}
		sm.scores(s, z)
		cal.Max = append(cal.Max, peakMax(s, in, nx, ny, opt.TwoSided))
	}
	slices.Sort(cal.Max)
	cal.fitTrials()
	return cal, nil
}

// searchMap evaluates the score of a point companion, −ĝ_p·w, at every
// cell of a grid for residual vectors w (see CalibrateSearch).
type searchMap struct {
	t      *terms
	nx, ny int
	in     []bool // the cells of the field with a usable score
	v0     []complex128
	jac    []jacEntry
	q      [][]float64 // orthonormal refit directions
	qg     [][]float64 // q·g_p at every cell
	norm   []float64   // 1/|g_p| after the projection
	plan   nufft.Transform
	shift  []complex128
	cvec   []complex128
	cellX  func(int) float64
	cellY  func(int) float64
}

// newSearchMap prepares the score map of the nx × ny grid of step step
// (mas) centred on (xc, yc) for the null model's residuals t; in marks
// the cells of the field (it is copied).
func newSearchMap(t *terms, null *model.Model, nx, ny int, step, xc, yc float64, in []bool) (*searchMap, error) {
	nf := len(t.u)
	sm := &searchMap{t: t, nx: nx, ny: ny, in: append([]bool(nil), in...)}
	sm.cellX = func(ix int) float64 { return xc - float64(ix-nx/2)*step }
	sm.cellY = func(iy int) float64 { return yc + float64(iy-ny/2)*step }
	sm.v0 = make([]complex128, nf)
	null.VisMany(sm.v0, t.u, t.v)
	sm.jac = visJacobian(t, sm.v0)
	var err error
	if sm.q, err = refitBasis(t, null); err != nil {
		return nil, err
	}
	if sm.plan, err = nufft.New(nx, ny, step*model.MasToRad, t.u, t.v, nufft.Options{}); err != nil {
		return nil, fmt.Errorf("fit: search calibration: %v", err)
	}
	// shift moves the grid's origin to the field's centre: e_i(p₀ + p') =
	// e_i(p₀) e_i(p'), so the transform of C_i conj(e_i(p₀)) on the
	// centred grid is that of C_i on the shifted one.
	sm.shift = make([]complex128, nf)
	for i := range sm.shift {
		s, c := math.Sincos(2 * math.Pi * (t.u[i]*xc + t.v[i]*yc) * model.MasToRad)
		sm.shift[i] = complex(c, s)
	}
	sm.cvec = make([]complex128, nf)
	ncell := nx * ny
	sm.qg = make([][]float64, len(sm.q))
	for k, b := range sm.q {
		sm.qg[k] = make([]float64, ncell)
		sm.project(sm.qg[k], b)
	}
	// Each cell's |g_p|², less its projection on the refit directions.
	sm.norm = gNorms(t, sm.jac, sm.v0, sm.in, nx, ny, sm.cellX, sm.cellY)
	for k := range sm.norm {
		for _, m := range sm.qg {
			sm.norm[k] -= m[k] * m[k]
		}
		if !sm.in[k] || !(sm.norm[k] > 1e-12*float64(t.Len())) {
			sm.in[k] = false
			sm.norm[k] = 0
			continue
		}
		sm.norm[k] = 1 / math.Sqrt(sm.norm[k])
	}
	return sm, nil
}

// project writes w·g_p for every cell to dst: Re Σ_i conj(C_i)(e_i(p) −
// V₀_i) with C = Jᵀw, by one adjoint transform.
func (sm *searchMap) project(dst, w []float64) {
	clear(sm.cvec)
	for _, e := range sm.jac {
		sm.cvec[e.i] += complex(w[e.j], 0) * e.w
	}
	c0 := 0.0
	for i, c := range sm.cvec {
		c0 += real(c)*real(sm.v0[i]) + imag(c)*imag(sm.v0[i])
		sm.cvec[i] = c * sm.shift[i]
	}
	sm.plan.Adjoint(dst, sm.cvec)
	for k := range dst {
		dst[k] -= c0
	}
}

// scores writes −ĝ_p·w to dst for every cell (0 outside the field): the
// square root of the fall of χ² that a companion of positive flux at p
// gives residuals w, its flux and the null model refitted, to first
// order (negative when only a negative flux lowers χ²).
func (sm *searchMap) scores(dst, w []float64) {
	sm.project(dst, w)
	for j, b := range sm.q {
		bw := dot(b, w)
		for c, g := range sm.qg[j] {
			dst[c] -= g * bw
		}
	}
	for c := range dst {
		dst[c] *= -sm.norm[c]
	}
}

// jacEntry is ∂r_j/∂Re V_i + i ∂r_j/∂Im V_i.
type jacEntry struct {
	j, i int
	w    complex128
}

// visJacobian returns the non-zero derivatives of the residuals of t with
// respect to the real and imaginary parts of the visibilities at v0, by
// central differences with steps of 10⁻⁶ max(|V₀|, 10⁻³), ordered by
// frequency.
func visJacobian(t *terms, v0 []complex128) []jacEntry {
	n := t.Len()
	vis := append([]complex128(nil), v0...)
	rp, rm := make([]float64, n), make([]float64, n)
	var out []jacEntry
	for i, v := range v0 {
		h := 1e-6 * math.Max(abs(v), 1e-3)
		start := len(out)
		for part, dv := range []complex128{complex(h, 0), complex(0, h)} {
			vis[i] = v + dv
			t.Eval(rp, vis)
			vis[i] = v - dv
			t.Eval(rm, vis)
			vis[i] = v
			for j := range rp {
				g := (rp[j] - rm[j]) / (2 * h)
				if g == 0 {
					continue
				}
				k := slices.IndexFunc(out[start:], func(e jacEntry) bool { return e.j == j })
				if k < 0 {
					out = append(out, jacEntry{j: j, i: i})
					k = len(out) - 1 - start
				}
				if part == 0 {
					out[start+k].w += complex(g, 0)
				} else {
					out[start+k].w += complex(0, g)
				}
			}
		}
	}
	return out
}

func abs(v complex128) float64 { return math.Hypot(real(v), imag(v)) }

// gNorms returns |g_p|² at every cell of the field (0 elsewhere): g_p,j =
// Σ_i Re(conj(w_ji)(e_i(p) − V₀_i)). Along a row the phases
// e_i(p) = exp(−2πi(u_i x + v_i y)) advance by a constant factor per cell
// (rounding grows by about one unit in the last place per cell), so the
// memory is a few vectors of the points and a cell costs one complex
// product per point and one multiply-add per non-zero derivative.
func gNorms(t *terms, jac []jacEntry, v0 []complex128, in []bool, nx, ny int, cellX, cellY func(int) float64) []float64 {
	nf := len(v0)
	x0, dx := cellX(0)*model.MasToRad, (cellX(1)-cellX(0))*model.MasToRad
	step := make([]complex128, nf)
	for i := range step {
		s, c := math.Sincos(-2 * math.Pi * t.u[i] * dx)
		step[i] = complex(c, s)
	}
	e := make([]complex128, nf)
	delta := make([]complex128, nf)
	g := make([]float64, t.Len())
	out := make([]float64, nx*ny)
	for iy := 0; iy < ny; iy++ {
		y := cellY(iy) * model.MasToRad
		for i := range e {
			s, c := math.Sincos(-2 * math.Pi * (t.u[i]*x0 + t.v[i]*y))
			e[i] = complex(c, s)
		}
		for ix := 0; ix < nx; ix++ {
			if ix > 0 {
				for i := range e {
					e[i] *= step[i]
				}
			}
			if !in[iy*nx+ix] {
				continue
			}
			for i := range delta {
				delta[i] = e[i] - v0[i]
			}
			clear(g)
			for _, en := range jac {
				g[en.j] += real(en.w)*real(delta[en.i]) + imag(en.w)*imag(delta[en.i])
			}
			out[iy*nx+ix] = dot(g, g)
		}
	}
	return out
}

// peakMax returns the largest Δχ² of a map of scores s (−ĝ_p·z) over the
// cells in the field: at each
// local maximum of the normalised score, the vertex of a parabola through
// it and its two neighbours along x plus the rise of the parabola along
// y, squared. A score of the sign of a negative flux counts only when
// twoSided.
func peakMax(s []float64, in []bool, nx, ny int, twoSided bool) float64 {
	if twoSided {
		for c := range s {
			s[c] = math.Abs(s[c])
		}
	}
	at := func(ix, iy int) (float64, bool) {
		if ix < 0 || iy < 0 || ix >= nx || iy >= ny || !in[iy*nx+ix] {
			return 0, false
		}
		return s[iy*nx+ix], true
	}
	rise := func(a, b, c float64) float64 { // a, c the neighbours of b
		den := 2*b - a - c
		if !(den > 0) {
			return 0
		}
		return (c - a) * (c - a) / (8 * den)
	}
	best := 0.0
	for iy := 0; iy < ny; iy++ {
		for ix := 0; ix < nx; ix++ {
			v, ok := at(ix, iy)
			if !ok || !(v > 0) {
				continue
			}
			l, okl := at(ix-1, iy)
			r, okr := at(ix+1, iy)
			dn, okd := at(ix, iy-1)
			up, oku := at(ix, iy+1)
			if (okl && l > v) || (okr && r > v) || (okd && dn > v) || (oku && up > v) {
				continue
			}
			top := v
			if okl && okr {
				top += rise(l, v, r)
			}
			if okd && oku {
				top += rise(dn, v, up)
			}
			best = math.Max(best, top*top)
		}
	}
	return best
}

// pOne is the p-value of Δχ² ≥ x at one fixed position: the χ² tail with
// one degree of freedom, halved for a flux held non-negative (the score
// is then counted on one side only).
func (c *Calibration) pOne(x float64) float64 {
	p := distuv.ChiSquared{K: 1}.Survival(x)
	if !c.twoSided {
		p /= 2
	}
	return p
}

// fitTrials fits the tail of the simulated maxima at its tenth-largest
// value x₁₀ (the fraction q = 10/Draws above it): the amplitude A of
// p(x) = p₁(x) + A √x e^{−x/2} and the effective number of independent
// positions N_eff with 1 − (1 − p₁(x₁₀))^N_eff = q.
func (c *Calibration) fitTrials() {
	k := min(10, len(c.Max))
	x := c.Max[len(c.Max)-k]
	q := float64(k) / float64(len(c.Max))
	p1 := c.pOne(x)
	c.Trials, c.amp = math.NaN(), 0
	if !(p1 > 0) || q >= 1 || !(x > 0) {
		return
	}
	c.Trials = math.Log1p(-q) / math.Log1p(-p1)
	c.amp = math.Max(0, (q-p1)/(math.Sqrt(x)*math.Exp(-x/2)))
}

// PValue returns the field-wide (global) p-value of a companion found by
// the search with Δχ² = dchi2, the probability that noise alone gives a
// maximum at least as large somewhere in the field, and its
// Gaussian-equivalent σ (p = erfc(σ/√2), as Detection.Sigma). Where at
// least 10 simulated maxima reach dchi2 it is their fraction. Beyond, the
// tail is extrapolated as p₁(x) + A √x e^{−x/2}, matched to the simulated
// tail at its tenth-largest maximum: the expected Euler characteristic
// of the excursion set of a smooth two-dimensional Gaussian field above
// t = √x is Φ̄(t) + (R₁ ρ₁) e^{−t²/2} + (R₂ ρ₂) t e^{−t²/2}, whose last
// term dominates in a field of many resolution elements (Adler 1981, The
// Geometry of Random Fields, ch. 4; Worsley et al. 1996, Hum. Brain
// Mapp. 4, 58; recalled from memory). So the effective number of trials
// grows about as x: a constant N_eff fitted at the 1 % level would
// overstate the significance of strong detections.
func (c *Calibration) PValue(dchi2 float64) (p, sigma float64) {
	if math.IsNaN(dchi2) {
		return math.NaN(), math.NaN()
	}
	if dchi2 <= 0 {
		return 1, 0
	}
	k := len(c.Max) - searchSorted(c.Max, dchi2)
	if k >= 10 || math.IsNaN(c.Trials) {
		p = float64(k) / float64(len(c.Max))
		return p, -distuv.UnitNormal.Quantile(p / 2)
	}
	// ln p = −x/2 + ln(A √x + κ/√x), p₁ ≈ κ e^{−x/2}/√x with κ = √(2/π)
	// for both signs and half that for one (Abramowitz & Stegun 7.1.23,
	// leading term), written so that it does not underflow.
	kappa := math.Sqrt(2 / math.Pi)
	if !c.twoSided {
		kappa /= 2
	}
	p1 := c.pOne(dchi2)
	p = p1 + c.amp*math.Sqrt(dchi2)*math.Exp(-dchi2/2)
	if p >= 1 {
		return 1, 0
	}
	if p > 1e-290 {
		return p, -distuv.UnitNormal.Quantile(p / 2)
	}
	lnp := -dchi2/2 + math.Log(c.amp*math.Sqrt(dchi2)+kappa/math.Sqrt(dchi2))
	return math.Exp(lnp), sigmaOfLogP(lnp)
}

// searchSorted returns the index of the first element of the sorted xs
// that is at least x.
func searchSorted(xs []float64, x float64) int {
	i, _ := slices.BinarySearch(xs, x)
	return i
}

// sigmaOfLogP solves ln(erfc(σ/√2)) = lnp for σ far in the tail with the
// leading asymptotic term ln 2 − σ²/2 − ln(σ√(2π)) (Abramowitz & Stegun
// 26.2.12), by Newton's method.
func sigmaOfLogP(lnp float64) float64 {
	s := math.Sqrt(-2 * lnp)
	for i := 0; i < 50; i++ {
		f := math.Ln2 - s*s/2 - math.Log(s*math.Sqrt(2*math.Pi)) - lnp
		step := f / (s + 1/s)
		s += step
		if math.Abs(step) < 1e-12*s {
			break
		}
	}
	return s
}
