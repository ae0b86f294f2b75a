package recon

import (
	"cmp"
	"math"
	"slices"

	"vcz/dataset"
)

// visDiffKind is the term of differential visibility phases (OI_VIS VISPHI with PHITYP =
// 'differential', OIFITS v2: Duvert, Young & Hummel 2017, A&A 597, A8, sect. 4.3 and
// table 6). A differential phase is the phase of a channel relative to a reference taken, per
// exposure and baseline (one OI_VIS row), over the reference channels: what is left of the
// phase after removing its mean and its achromatic slope in 1/λ (an optical path difference
// φ = 2π·δ/λ changes the phase linearly in the wavenumber), i.e. the least-squares fit
// a + b/λ over the reference channels. Since OI_VIS carries no usable reference map here,
// the reference channels are all the usable channels of the row, and the fit is unweighted.
//
// The model is treated the same way. For the channels c of a row, in order of wavelength,
// ψ_c is the model phase arg V_c unwrapped along the row (each step reduced to (−π, π]), x_c
// the wavenumber 1/λ_c centred on its mean over the row, and
//
//	d_c = ψ_c − (a + b·x_c),  a = mean ψ,  b = Σ x_c ψ_c / Σ x_c²,
//
// that is d = (I − P)ψ with P the orthogonal projection onto span{1, x}. The term is the
// wrap-safe phase term of term_phase.go on Δ_c = d_c − φₒ_c,
//
//	χ² = Σ 2(1 − cos Δ_c)/σ_c²,  residual 2 sin(Δ_c/2)/σ_c,
//
// whose gradient is ∂χ²/∂ψ = (I − P)g with g_c = 2 sin Δ_c/σ_c² (P is symmetric, and the
// steps of the unwrapping are constant), and ∂ψ_c/∂(Re, Im) V_c = i V_c/|V_c|². Rows with
// fewer than three usable channels carry no differential information (the fit leaves none)
// and are left out with a notice.
//
// Expected χ²: the data's noise ε (independent, of variances σ_c²) has passed through the
// same projection, so about the true model Δ = −(I − P)ε is Gaussian with variances
// v_c = [(I − P) diag(σ²) (I − P)]_cc, and the term expects Σ_c 2(1 − e^(−v_c/2))/σ_c² (the
// characteristic function of the normal distribution, as in term_phase.go). For n channels
// of equal errors v_c sums to (n − 2)σ²: the fit takes two degrees of freedom per row.
type visDiffKind struct{}

func (visDiffKind) bind(d *dataset.Data, c termConfig) term {
	p := &d.Vis
	t := &visDiffTerm{d: d}
	var short int
	t.g, short = newDiffGroups(p, func(i int) bool { return p.PhiOK[i] && p.PhiTyp[i] == dataset.PhiDifferential }, 3, c)
	t.note = leftOut(short, "%d differential visibility phases left out: their rows have fewer than three usable channels")
	for _, i := range t.g.idx {
		t.e = append(t.e, phasor(p.Phi[i]))
	}
	return t
}

func (visDiffKind) predict(d *dataset.Data, s *sampling, vis []complex128) []float64 {
	p := &d.Vis
	out := make([]float64, p.Len())
	for i, r := range s.cvis {
		v := at(vis, r)
		out[i] = math.Atan2(imag(v), real(v))
	}
	g, _ := newDiffGroups(p, func(i int) bool { return p.PhiTyp[i] == dataset.PhiDifferential }, 1, termConfig{})
	for k := range g.len() {
		lo, hi := g.bounds(k)
		a, b := g.phaseFit(k, s, vis)
		psi := 0.0
		for j := lo; j < hi; j++ {
			psi = g.unwrapped(j, lo, psi, s, vis)
			out[g.idx[j]] = WrapPhase(psi - a - b*g.x[j])
		}
	}
	return out
}

// diffGroups are the data of differential quantities of d.Vis grouped by OI_VIS row
// (exposure and baseline), each group in order of wavelength.
type diffGroups struct {
	idx   []int32   // the data, group by group
	start []int32   // group k holds idx[start[k]:start[k+1]]
	x     []float64 // wavenumber 1/λ of each datum centred on its group's mean (1/m)
	sxx   []float64 // Σ x² of each group
}

// newDiffGroups groups the data i of p with ok(i) by their row (file, HDU, row), keeping
// groups of at least minN data, every c.stride-th group; it returns the groups and the
// number of data in groups too small.
func newDiffGroups(p *dataset.VisPoints, ok func(i int) bool, minN int, c termConfig) (diffGroups, int) {
	type key struct{ file, hdu, row int }
	var order []key
	rows := map[key][]int32{}
	for i := range p.Lambda {
		if !ok(i) || i >= len(p.Origin) {
			continue // a point without its row (a data set built by hand) joins no group
		}
		o := p.Origin[i]
		k := key{o.File, o.HDU, o.Row}
		if _, seen := rows[k]; !seen {
			order = append(order, k)
		}
		rows[k] = append(rows[k], int32(i))
	}
	g := diffGroups{start: []int32{0}}
	short := 0
	pk := newPicker(c)
	for _, k := range order {
		r := rows[k]
		if len(r) < minN {
			short += len(r)
			continue
		}
		if !pk.keep() {
			continue
		}
		slices.SortStableFunc(r, func(a, b int32) int { return cmp.Compare(p.Lambda[a], p.Lambda[b]) })
		mean := 0.0
		for _, i := range r {
			mean += 1 / p.Lambda[i]
		}
		mean /= float64(len(r))
		sxx := 0.0
		for _, i := range r {
			x := 1/p.Lambda[i] - mean
			g.x = append(g.x, x)
			sxx += x * x
		}
		g.idx = append(g.idx, r...)
		g.start = append(g.start, int32(len(g.idx)))
		g.sxx = append(g.sxx, sxx)
	}
	return g, short
}

// len returns the number of groups.
func (g *diffGroups) len() int { return len(g.sxx) }

// bounds returns the range of group k in idx.
func (g *diffGroups) bounds(k int) (lo, hi int) { return int(g.start[k]), int(g.start[k+1]) }

// unwrapped returns the model phase of datum j of the group starting at lo, unwrapped from
// prev, the phase returned for datum j−1 (ignored for j = lo).
func (g *diffGroups) unwrapped(j, lo int, prev float64, s *sampling, vis []complex128) float64 {
	v := at(vis, s.cvis[g.idx[j]])
	ph := math.Atan2(imag(v), real(v))
	if j == lo {
		return ph
	}
	return prev + math.Remainder(ph-prev, 2*math.Pi)
}

// phaseFit returns the least-squares fit a + b·x of the unwrapped model phases of group q:
// a = mean ψ, b = Σ xψ/Σ x² (0 when the group has a single wavelength).
func (g *diffGroups) phaseFit(q int, s *sampling, vis []complex128) (a, b float64) {
	lo, hi := g.bounds(q)
	psi, sy, sxy := 0.0, 0.0, 0.0
	for j := lo; j < hi; j++ {
		psi = g.unwrapped(j, lo, psi, s, vis)
		sy += psi
		sxy += g.x[j] * psi
	}
	return g.fit(q, sy, sxy)
}

// fit returns the coefficients a, b of the least-squares line a + b·x over group q from the
// sums Σy and Σxy of its values (x is centred, so the normal equations are diagonal).
func (g *diffGroups) fit(q int, sy, sxy float64) (a, b float64) {
	lo, hi := g.bounds(q)
	a = sy / float64(hi-lo)
	if g.sxx[q] > 0 {
		b = sxy / g.sxx[q]
	}
	return a, b
}

// meanAmp returns the mean model amplitude |V| of group q, the reference of differential
// amplitudes (term_visamp.go).
func (g *diffGroups) meanAmp(q int, s *sampling, vis []complex128) float64 {
	lo, hi := g.bounds(q)
	m := 0.0
	for _, i := range g.idx[lo:hi] {
		m += abs(at(vis, s.cvis[i]))
	}
	return m / float64(hi-lo)
}

// visDiffTerm is the differential-phase term over the groups g of d.Vis.
type visDiffTerm struct {
	d    *dataset.Data
	g    diffGroups
	e    []complex128 // exp(−iφₒ) of each datum, parallel to g.idx
	note []string
}

func (t *visDiffTerm) len() int          { return len(t.g.idx) }
func (t *visDiffTerm) notices() []string { return t.note }
func (t *visDiffTerm) need(n *needs)     { mark(n.vis, t.g.idx) }

func (t *visDiffTerm) expected() float64 {
	g := &t.g
	perr := t.d.Vis.PhiErr
	s := 0.0
	for q := range g.len() {
		lo, hi := g.bounds(q)
		n, sxx := float64(hi-lo), g.sxx[q]
		// With P_ck = 1/n + x_c x_k/Σx², v_c = σ_c² − 2σ_c²P_cc + Σ_k P_ck² σ_k², the last sum
		// from Σσ², Σxσ² and Σx²σ².
		s0, s1, s2 := 0.0, 0.0, 0.0
		for j := lo; j < hi; j++ {
			v := perr[g.idx[j]] * perr[g.idx[j]]
			s0 += v
			s1 += g.x[j] * v
			s2 += g.x[j] * g.x[j] * v
		}
		for j := lo; j < hi; j++ {
			sig2 := perr[g.idx[j]] * perr[g.idx[j]]
			x := g.x[j]
			pcc := 1 / n
			sum := s0 / (n * n)
			if sxx > 0 {
				pcc += x * x / sxx
				sum += 2*x*s1/(n*sxx) + x*x*s2/(sxx*sxx)
			}
			v := math.Max(sig2-2*sig2*pcc+sum, 0)
			s += -2 * math.Expm1(-v/2) / sig2
		}
	}
	return s
}

// delta returns Δ = d_j − φₒ as the phasor exp(iΔ), d_j the projected model phase ψ − a − b·x.
func (t *visDiffTerm) delta(j int, psi, a, b float64) complex128 {
	s, c := math.Sincos(psi - a - b*t.g.x[j])
	return complex(c, s) * t.e[j]
}

func (t *visDiffTerm) eval(c *evalCtx, k, parts int) (float64, float64) {
	g := &t.g
	perr := t.d.Vis.PhiErr
	chi2 := 0.0
	glo, ghi := part(g.len(), k, parts)
	for q := glo; q < ghi; q++ {
		lo, hi := g.bounds(q)
		a, b := g.phaseFit(q, c.s, c.vis)
		// χ² and the sums of the fit of g_c = 2 sin Δ_c/σ_c², whose residual is ∂χ²/∂ψ.
		psi, sg, sxg := 0.0, 0.0, 0.0
		for j := lo; j < hi; j++ {
			psi = g.unwrapped(j, lo, psi, c.s, c.vis)
			z := t.delta(j, psi, a, b)
			sig := perr[g.idx[j]]
			is2 := 1 / (sig * sig)
			chi2 += 2 * (1 - real(z)) * is2
			gc := 2 * imag(z) * is2
			sg += gc
			sxg += g.x[j] * gc
		}
		if c.grad == nil {
			continue
		}
		ga, gb := g.fit(q, sg, sxg)
		psi = 0
		for j := lo; j < hi; j++ {
			psi = g.unwrapped(j, lo, psi, c.s, c.vis)
			z := t.delta(j, psi, a, b)
			sig := perr[g.idx[j]]
			dpsi := 2*imag(z)/(sig*sig) - ga - gb*g.x[j]
			r := c.s.cvis[g.idx[j]]
			addGrad(c.grad, r, complex(0, c.w*dpsi)*inv(at(c.vis, r)))
		}
	}
	return chi2, 0
}

func (t *visDiffTerm) residuals(dst []float64, c *evalCtx) {
	g := &t.g
	for q := range g.len() {
		lo, hi := g.bounds(q)
		a, b := g.phaseFit(q, c.s, c.vis)
		psi := 0.0
		for j := lo; j < hi; j++ {
			psi = g.unwrapped(j, lo, psi, c.s, c.vis)
			dst[j] = phaseResidual(t.delta(j, psi, a, b), t.d.Vis.PhiErr[g.idx[j]])
		}
	}
}
