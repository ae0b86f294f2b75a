package recon

import (
	"fmt"
	"math"

	"vcz/dataset"
)

// The data terms. Each data type of the table (package dataset) has one term (termtable.go),
// in its own file (term_vis2.go, term_t3amp.go, term_t3phi.go, term_visamp.go,
// term_visphi.go), which holds
// its formula and source, its χ² with the gradient with respect to the model visibilities,
// its normalised residuals for least squares, its expected χ² and its model values. The image
// objective (Objective), the residuals of analytic model fits (Residuals, used by recon/fit)
// and the predictions for plots (Predict) all evaluate the data through these terms.
//
// A term sees the model through the complex visibilities at the distinct (u,v) points of a
// sampling: a datum refers to its point with a ref, conjugated where it sees V(−u,−v) or the
// third side of a closure triangle. Gradients are complex numbers G = ∂J/∂Re W + i ∂J/∂Im W
// with respect to the visibility W a datum sees, added to a buffer parallel to the points.

// termKind is the part of a data term that does not depend on a data set: one value per row
// of the table of data types, defined in the term's file.
type termKind interface {
	// bind selects the data of d that the term fits and returns the term over them.
	bind(d *dataset.Data, c termConfig) term
	// predict returns the model value of every datum of the type's table in d, usable or not
	// (phases in radians in (−π, π]), from the model visibilities vis at the points of s.
	predict(d *dataset.Data, s *sampling, vis []complex128) []float64
}

// termConfig says how a term selects its data.
type termConfig struct {
	// complexVis fits complex visibilities as one complex number (TermOptions.ComplexVis).
	complexVis bool
	// lsq selects the data for a least-squares fit of a normalised model (Residuals):
	// correlated fluxes, which need a free flux scale, are left out.
	lsq bool
	// stride keeps every stride-th selected datum of each list (0 or 1: all).
	stride int
}

// term is the χ² term of one data type over the data of one data set that it selected.
type term interface {
	// len returns the number of data in the term.
	len() int
	// eval evaluates part k of parts of the term's data (a contiguous share of each of its
	// lists) at c.vis, adds c.w·∂J/∂W to c.grad unless it is nil, and returns the χ² of
	// the exact term and the weighted excess c.w·(J_smoothed − χ²) of its smoothed form
	// (0 without smoothing).
	eval(c *evalCtx, k, parts int) (chi2, extra float64)
	// residuals writes len() normalised residuals at c.vis to dst, in the order of the
	// term's data; the sum of their squares is the χ² of eval.
	residuals(dst []float64, c *evalCtx)
	// expected returns the expected χ² of the term's data about the true model.
	expected() float64
	// notices says what the term leaves out or treats specially, one sentence each.
	notices() []string
	// need marks the data of the term in n, whose points a sampling must hold.
	need(n *needs)
}

// scaler is a term with a free scale fitted at its least-squares optimum before each
// evaluation (the correlated fluxes of term_visamp.go). prepare sets it from c.vis and
// returns it.
type scaler interface {
	prepare(c *evalCtx) float64
}

// evalCtx is what a term evaluation reads and writes.
type evalCtx struct {
	s      *sampling
	vis    []complex128 // model visibilities at the points of s
	grad   []complex128 // ∂J/∂W accumulates here; nil for χ² alone
	w      float64      // weight of the term
	smooth float64      // smoothing factor of the phase terms (Objective.SetPhaseSmoothing)
}

// part returns the bounds of part k of parts of a list of n items.
func part(n, k, parts int) (lo, hi int) { return n * k / parts, n * (k + 1) / parts }

// pickOK returns the indices i < n with ok[i] true (every i when ok is nil), keeping every
// stride-th of them (termConfig.stride).
func pickOK(n int, ok []bool, c termConfig) []int32 {
	var idx []int32
	p := newPicker(c)
	for i := range n {
		if (ok == nil || ok[i]) && p.keep() {
			idx = append(idx, int32(i))
		}
	}
	return idx
}

// picker keeps every stride-th item offered to it (termConfig.stride).
type picker struct{ stride, seen int }

func newPicker(c termConfig) *picker { return &picker{stride: max(c.stride, 1)} }

// keep reports whether the next item offered is kept.
func (p *picker) keep() bool {
	k := p.seen%p.stride == 0
	p.seen++
	return k
}

// ref points a datum to a distinct (u,v) point of a sampling; sign is −1 when the datum sees
// the complex conjugate of that point's visibility, either because its baseline is the
// negative of the stored one (V(−u,−v) = conj V(u,v) for a real image) or because it is the
// third side of a closure triangle, and +1 otherwise. It multiplies the imaginary part, which
// is exact and, unlike a branch on a flag, costs the same for every datum: the signs of
// baselines follow no pattern a branch predictor learns (measured: the closure terms of the
// position map of recon/fit ran four times slower with a branch, and as slowly with a
// float32 sign, whose conversion chains the iterations).
type ref struct {
	i    int32
	sign float64
}

// sampling holds the distinct (u,v) points of a data set and the points each datum sees.
type sampling struct {
	U, V []float64 // the distinct points (cycles/rad), u >= 0 after the sign choice
	// rb is the relative bandwidth Δλ/λ of the data at each point (0 when unknown), for
	// bandwidth smearing (smear.go); data of different bandwidths get different points.
	rb []float64

	vis2  []ref    // of each V² datum
	t3    [][3]ref // the three factors W1·W2·W3 of each triangle's bispectrum
	cvis  []ref    // of each complex visibility
	dedup int      // number of baselines that were found already present
}

// needs marks the data whose points a sampling holds: one flag per datum of each table.
type needs struct {
	vis2, t3, vis []bool
}

// newNeeds returns the marks for d, all false.
func newNeeds(d *dataset.Data) *needs {
	return &needs{vis2: make([]bool, d.Vis2.Len()), t3: make([]bool, d.T3.Len()), vis: make([]bool, d.Vis.Len())}
}

// mark sets the flags of the data idx in f.
func mark(f []bool, idx []int32) {
	for _, i := range idx {
		f[i] = true
	}
}

// newSampling collects the distinct (u,v) points of the data of d that n marks (all of them
// when n is nil), deduplicating baselines that coincide (exactly or to 1e-9 of the longest
// baseline of d, and with either sign). The points come in the order of the data: V², then
// the three sides of each triangle, then the complex visibilities. Data that n does not mark
// get no point. Data at the same (u,v) but of relative bandwidths Δλ/λ differing by more
// than 1e-9 get separate points, since their smeared visibilities differ (smear.go).
func newSampling(d *dataset.Data, n *needs) sampling {
	var s sampling
	all := n == nil
	if all {
		n = &needs{}
	}
	want := func(f []bool, i int) bool { return all || f[i] }
	fmax := 0.0
	for i := range d.Vis2.U {
		fmax = math.Max(fmax, math.Hypot(d.Vis2.U[i], d.Vis2.V[i]))
	}
	for i := range d.T3.U1 {
		fmax = math.Max(fmax, math.Hypot(d.T3.U1[i], d.T3.V1[i]))
		fmax = math.Max(fmax, math.Hypot(d.T3.U2[i], d.T3.V2[i]))
	}
	for i := range d.Vis.U {
		fmax = math.Max(fmax, math.Hypot(d.Vis.U[i], d.Vis.V[i]))
	}
	step := 1e-9 * fmax
	if step == 0 {
		step = 1
	}
	type key struct{ a, b, c int64 }
	index := map[key]int32{}
	add := func(u, v, rb float64) ref {
		sign := 1.0
		if u < 0 || (u == 0 && v < 0) {
			u, v, sign = -u, -v, -1
		}
		k := key{int64(math.Round(u / step)), int64(math.Round(v / step)), int64(math.Round(rb / 1e-9))}
		if i, ok := index[k]; ok {
			s.dedup++
			return ref{i, sign}
		}
		i := int32(len(s.U))
		index[k] = i
		s.U = append(s.U, u)
		s.V = append(s.V, v)
		s.rb = append(s.rb, rb)
		return ref{i, sign}
	}
	s.vis2 = make([]ref, d.Vis2.Len())
	for i := range s.vis2 {
		if want(n.vis2, i) {
			s.vis2[i] = add(d.Vis2.U[i], d.Vis2.V[i], relBand(d.Vis2.DLambda, d.Vis2.Lambda, i))
		}
	}
	s.t3 = make([][3]ref, d.T3.Len())
	for i := range s.t3 {
		if want(n.t3, i) {
			t := &d.T3
			rb := relBand(t.DLambda, t.Lambda, i)
			r3 := add(t.U1[i]+t.U2[i], t.V1[i]+t.V2[i], rb)
			r3.sign = -r3.sign
			s.t3[i] = [3]ref{add(t.U1[i], t.V1[i], rb), add(t.U2[i], t.V2[i], rb), r3}
		}
	}
	s.cvis = make([]ref, d.Vis.Len())
	for i := range s.cvis {
		if want(n.vis, i) {
			s.cvis[i] = add(d.Vis.U[i], d.Vis.V[i], relBand(d.Vis.DLambda, d.Vis.Lambda, i))
		}
	}
	return s
}

// reorder puts the points in a new order, point order[i] becoming point i, and points the
// data at their new places. The data keep their order, and so does the order in which the
// terms add each datum's derivative to a point.
func (s *sampling) reorder(order []int) {
	if len(order) != len(s.U) {
		panic(fmt.Sprintf("recon: reorder of %d points by %d indices", len(s.U), len(order)))
	}
	at := make([]int32, len(order)) // new index of each old point
	u, v, rb := make([]float64, len(order)), make([]float64, len(order)), make([]float64, len(order))
	for i, k := range order {
		at[k] = int32(i)
		u[i], v[i], rb[i] = s.U[k], s.V[k], s.rb[k]
	}
	s.U, s.V, s.rb = u, v, rb
	move := func(r *ref) {
		if r.sign != 0 { // a datum without a point (newSampling) keeps the zero ref
			r.i = at[r.i]
		}
	}
	for i := range s.vis2 {
		move(&s.vis2[i])
	}
	for i := range s.t3 {
		for j := range s.t3[i] {
			move(&s.t3[i][j])
		}
	}
	for i := range s.cvis {
		move(&s.cvis[i])
	}
}

// Points returns the number of distinct (u,v) points and the number of baselines that were
// found among them already.
func (s *sampling) Points() (distinct, shared int) { return len(s.U), s.dedup }

// at returns the visibility a datum sees, from the visibilities vis at the points.
func at(vis []complex128, r ref) complex128 {
	v := vis[r.i]
	return complex(real(v), imag(v)*r.sign)
}

// sides returns the visibilities W1, W2, W3 whose product is the bispectrum of a triangle,
// B = W1·W2·W3 = V(u1,v1)·V(u2,v2)·conj(V(u1+u2, v1+v2)) (CONVENTIONS.md).
func sides(vis []complex128, r [3]ref) (w1, w2, w3 complex128) {
	return at(vis, r[0]), at(vis, r[1]), at(vis, r[2])
}

// addGrad adds the derivative G = ∂J/∂Re W + i ∂J/∂Im W of the objective with respect to the
// visibility W a datum sees to buf; for a conjugated datum it is the conjugate with respect to
// the point's V.
func addGrad(buf []complex128, r ref, g complex128) {
	buf[r.i] += complex(real(g), imag(g)*r.sign)
}

// abs returns |z|. Model visibilities are at most of order 1 (and data values finite), so
// the plain square root cannot overflow and is several times faster than math.Hypot.
func abs(z complex128) float64 { return math.Sqrt(real(z)*real(z) + imag(z)*imag(z)) }

// conj returns the complex conjugate of z.
func conj(z complex128) complex128 { return complex(real(z), -imag(z)) }

// unit returns z/|z|, or 0 when |z| = 0 (where |z| has no derivative).
func unit(z complex128, a float64) complex128 {
	if a == 0 {
		return 0
	}
	r := 1 / a
	return complex(real(z)*r, imag(z)*r)
}

// inv returns z/|z|² = 1/conj(z), or 0 when z = 0.
func inv(z complex128) complex128 {
	a2 := real(z)*real(z) + imag(z)*imag(z)
	if a2 == 0 {
		return 0
	}
	r := 1 / a2
	return complex(real(z)*r, imag(z)*r)
}

// leftOut is the notice of data a term leaves out, or nil when there are none.
func leftOut(n int, format string) []string {
	if n == 0 {
		return nil
	}
	return []string{fmt.Sprintf(format, n)}
}
