package fit

import (
	"math"
	"slices"
	"sort"

	"vcz/recon/model"
)

// Limits of the coarse position scan that seeds the extra starts: at most
// scanMaxSide cells along each axis (the step is enlarged beyond that) and
// about scanMaxData data (a regular stride of each type beyond that).
const (
	scanMaxSide = 201
	scanMaxData = 3000
)

// scanSeeds returns up to k start vectors (user units) for the extra
// starts of a fit from x0. For every component whose x and y are both
// free it maps χ² of the model over a square grid of that component's
// position, the other parameters held at x0, and places the component at
// the lowest local minima of the map, at least one fringe spacing 1/q_max
// apart from each other; the components take turns, best minima first.
// The grid step is a quarter of the fringe spacing of the longest
// baseline, 1/(4 q_max), and the grid spans the parameter bounds, or
// ±0.75/q_min (three quarters of the largest scale the data constrain,
// and at least 1.5 times the start separation) where a bound is missing.
//
// The map is cheap because only the scanned component moves: its term of
// the visibility, F_c a_c(u, v) exp(−2πi(u x + v y)) with a_c the centred
// shape, factors into an east and a north phase, so a cell costs one
// complex product per frequency and no call to the model.
func (pr *problem) scanSeeds(x0 []float64, k int) [][]float64 {
	if k <= 0 {
		return nil
	}
	type pos struct{ ix, iy, iflux int }
	var comps []pos
	var lists [][]scanMin
	for c := range pr.m.Components {
		ix, iy := pr.posIndex(c)
		if ix < 0 || iy < 0 {
			continue
		}
		mins := pr.scanComponent(x0, c, ix, iy, k)
		if len(mins) > 0 {
			iflux := -1
			for i, r := range pr.refs {
				if r.Comp == c && r.Name == "flux" {
					iflux = i
				}
			}
			comps = append(comps, pos{ix, iy, iflux})
			lists = append(lists, mins)
		}
	}
	var seeds [][]float64
	for r := 0; len(seeds) < k; r++ {
		added := false
		for j, p := range comps {
			if r >= len(lists[j]) || len(seeds) >= k {
				continue
			}
			s := append([]float64(nil), x0...)
			mn := lists[j][r]
			s[p.ix], s[p.iy] = mn.x, mn.y
			if p.iflux >= 0 {
				s[p.iflux] = mn.flux
			}
			seeds = append(seeds, s)
			added = true
		}
		if !added {
			break
		}
	}
	return seeds
}

// posIndex returns the indices among the fit variables of the x and y of
// component c, or −1 for one that is not free.
func (pr *problem) posIndex(c int) (ix, iy int) {
	ix, iy = -1, -1
	for i, r := range pr.refs {
		if r.Comp == c && r.Name == "x" {
			ix = i
		}
		if r.Comp == c && r.Name == "y" {
			iy = i
		}
	}
	return ix, iy
}

// scanComponent maps χ² over the position of component c (fit variables
// ix and iy) with every other parameter at x0 and returns the positions
// (mas) and fluxes of up to k well-separated local minima, lowest χ²
// first (see scanFluxes for the fluxes tried at each position). It
// returns nil when the map cannot be made (no baseline, a model not
// defined at x0, a component without flux).
func (pr *problem) scanComponent(x0 []float64, c, ix, iy, k int) []scanMin {
	m := pr.m.Clone()
	if err := m.Set(pr.refs, x0); err != nil {
		return nil
	}
	tot := m.TotalFlux()
	comp := m.Components[c]
	fc := comp.Flux()
	if !(tot > 0) || fc == 0 {
		return nil
	}
	// The data scanned: every stride-th datum of each type.
	sub := newTerms(pr.t.d, pr.t.use, 1+pr.t.Len()/scanMaxData, pr.t.sm)
	fu, fv := sub.u, sub.v
	nf := len(fu)
	qmax, qmin := 0.0, math.Inf(1)
	for i := range fu {
		q := math.Hypot(fu[i], fv[i])
		qmax = math.Max(qmax, q)
		if q > 0 {
			qmin = math.Min(qmin, q)
		}
	}
	if nf == 0 || !(qmax > 0) {
		return nil
	}
	// Grid: step and extent in mas.
	step := 1 / (3 * qmax) / model.MasToRad
	xlo, xhi, ylo, yhi := scanBox(qmin, x0[ix], x0[iy], pr.lo[ix], pr.hi[ix], pr.lo[iy], pr.hi[iy])
	if !(xhi >= xlo && yhi >= ylo) {
		return nil
	}
	if side := math.Max(xhi-xlo, yhi-ylo) / step; side > scanMaxSide-1 {
		step *= side / (scanMaxSide - 1)
	}
	nx := 1 + int(math.Floor((xhi-xlo)/step+1e-9))
	ny := 1 + int(math.Floor((yhi-ylo)/step+1e-9))
	gx := make([]float64, nx)
	for i := range gx {
		gx[i] = xlo + float64(i)*step
	}
	gy := make([]float64, ny)
	for i := range gy {
		gy[i] = ylo + float64(i)*step
	}

	// The fixed part of the visibility numerator, Σ F_k V_k over the other
	// components, and the shape a_c of the scanned one, centred.
	rest := make([]complex128, nf)
	ac := make([]complex128, nf)
	centred := comp.Clone()
	centred.Set("x", 0)
	centred.Set("y", 0)
	for i := range fu {
		for j, o := range m.Components {
			if j != c && o.Flux() != 0 {
				rest[i] += complex(o.Flux(), 0) * o.Vis(fu[i], fv[i])
			}
		}
		ac[i] = centred.Vis(fu[i], fv[i])
	}
	fluxes := pr.scanFluxes(c, fc, tot-fc)
	phase := func(dst []complex128, f []float64, x float64) {
		for i := range dst {
			s, co := math.Sincos(-2 * math.Pi * f[i] * x * model.MasToRad)
			dst[i] = complex(co, s)
		}
	}
	ex := make([][]complex128, nx)
	for i := range ex {
		ex[i] = make([]complex128, nf)
		phase(ex[i], fu, gx[i])
	}
	ey := make([]complex128, nf)
	acy := make([]complex128, nf)
	mv := make([]complex128, nf)
	vis := make([]complex128, nf)
	chi := make([]float64, nx*ny)
	level := make([]int, nx*ny)
	for jy := range gy {
		phase(ey, fv, gy[jy])
		for i := range acy {
			acy[i] = ac[i] * ey[i]
		}
		for jx := range gx {
			e := ex[jx]
			for i := range mv {
				mv[i] = acy[i] * e[i]
			}
			best, bl := math.Inf(1), 0
			for l, f := range fluxes {
				inv := 1 / (tot - fc + f)
				if !(inv > 0) || math.IsInf(inv, 0) {
					continue
				}
				cf, ci := complex(f, 0), complex(inv, 0)
				for i := range vis {
					vis[i] = (rest[i] + cf*mv[i]) * ci
				}
				s := sub.Chi2(vis)
				if s < best {
					best, bl = s, l
				}
			}
			chi[jy*nx+jx] = best
			level[jy*nx+jx] = bl
		}
	}
	cells := pickMinima(chi, nx, ny, k, 1/qmax/model.MasToRad/step)
	out := make([]scanMin, len(cells))
	for i, cell := range cells {
		out[i] = scanMin{x: gx[cell%nx], y: gy[cell/nx], flux: fluxes[level[cell]]}
	}
	return out
}

// scanMin is a local minimum of the position map: the component's
// position (mas) and the flux of the lowest χ² there.
type scanMin struct{ x, y, flux float64 }

// scanFluxes returns the fluxes of component c tried at every cell of
// the map: its start value fc and, when its flux is free, 0.03, 0.15 and
// 0.6 times the flux of the other components, kept within the bounds.
// Profiling χ² over a few fluxes keeps a poor start flux from hiding the
// true position (common practice, no source).
func (pr *problem) scanFluxes(c int, fc, others float64) []float64 {
	out := []float64{fc}
	for i, r := range pr.refs {
		if r.Comp != c || r.Name != "flux" || !(others > 0) {
			continue
		}
		for _, k := range []float64{0.03, 0.15, 0.6} {
			f := clamp(k*others, pr.lo[i], pr.hi[i])
			if f != 0 && !slices.Contains(out, f) {
				out = append(out, f)
			}
		}
	}
	return out
}

// pickMinima returns the cells (row-major indices) of up to k local
// minima of the nx × ny map chi, lowest first, each at least sep cells
// from the ones before it. A cell is a local minimum when none of its
// eight neighbours is lower; cells on the edge have fewer neighbours.
func pickMinima(chi []float64, nx, ny, k int, sep float64) []int {
	type cell struct {
		i    int
		chi2 float64
	}
	var mins []cell
	for jy := 0; jy < ny; jy++ {
		for jx := 0; jx < nx; jx++ {
			v := chi[jy*nx+jx]
			if math.IsNaN(v) || math.IsInf(v, 0) {
				continue
			}
			low := true
			for dy := -1; dy <= 1 && low; dy++ {
				for dx := -1; dx <= 1; dx++ {
					x, y := jx+dx, jy+dy
					if (dx == 0 && dy == 0) || x < 0 || y < 0 || x >= nx || y >= ny {
						continue
					}
					if chi[y*nx+x] < v {
						low = false
						break
					}
				}
			}
			if low {
				mins = append(mins, cell{jy*nx + jx, v})
			}
		}
	}
	sort.SliceStable(mins, func(a, b int) bool { return mins[a].chi2 < mins[b].chi2 })
	var out []int
	for _, m := range mins {
		far := true
		for _, o := range out {
			if math.Hypot(float64(m.i%nx-o%nx), float64(m.i/nx-o/nx)) < sep {
				far = false
				break
			}
		}
		if far {
			out = append(out, m.i)
			if len(out) == k {
				break
			}
		}
	}
	return out
}

// scanBox returns the box (mas) that the position map of a component
// started at (x, y) with bounds [xlo0, xhi0] × [ylo0, yhi0] spans: the
// bounds, or ±0.75/qmin (qmin the shortest spatial frequency, cycles per
// radian) and at least 1.5 times the start separation where a bound is
// missing (see scanComponent).
func scanBox(qmin, x, y, xlo0, xhi0, ylo0, yhi0 float64) (xlo, xhi, ylo, yhi float64) {
	reach := math.Max(0.75/qmin/model.MasToRad, 1.5*math.Hypot(x, y))
	span := func(lo, hi float64) (float64, float64) {
		a, b := lo, hi
		if math.IsInf(a, -1) {
			a = -reach
			if !math.IsInf(hi, 1) {
				a = math.Min(a, hi-2*reach)
			}
		}
		if math.IsInf(b, 1) {
			b = reach
			if !math.IsInf(lo, -1) {
				b = math.Max(b, lo+2*reach)
			}
		}
		return a, b
	}
	xlo, xhi = span(xlo0, xhi0)
	ylo, yhi = span(ylo0, yhi0)
	return
}
