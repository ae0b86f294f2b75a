package recon

import (
	"math"
	"math/rand/v2"
	"testing"

	"vcz/dataset"
)

// TestTerms checks every term of the table on its own, at random visibilities, in every way
// it selects data: the sum of squares of its residuals equals its χ² (for phases by the
// half-angle identity 4 sin²(Δφ/2) = 2(1 − cos Δφ)); the χ² does not depend on whether the
// gradient is wanted (bit for bit) or on the split into parts; and its gradient with respect to the real
// and imaginary parts of every visibility, smoothed phases included, matches central finite
// differences (common practice, no source, for the step and tolerance).
func TestTerms(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 9))
	d := randomData(rng, 1e9)
	for _, cf := range []struct {
		name string
		c    termConfig
	}{
		{"image", termConfig{}},
		{"complex", termConfig{complexVis: true}},
		{"least squares", termConfig{lsq: true}},
		{"stride 2", termConfig{lsq: true, stride: 2}},
	} {
		for _, row := range termTable {
			tm := row.kind.bind(d, cf.c)
			n := newNeeds(d)
			tm.need(n)
			s := newSampling(d, n)
			vis := make([]complex128, len(s.U))
			for i := range vis {
				vis[i] = complex(rng.NormFloat64()*0.4, rng.NormFloat64()*0.4)
			}
			c := &evalCtx{s: &s, vis: vis, w: 1}
			if sc, ok := tm.(scaler); ok {
				sc.prepare(c)
			}
			name := cf.name + "/" + row.Type.Info().Word
			if tm.len() == 0 {
				t.Errorf("%s: no data", name)
				continue
			}
			res := make([]float64, tm.len())
			tm.residuals(res, c)
			ss := 0.0
			for _, r := range res {
				ss += r * r
			}
			chi2, _ := tm.eval(c, 0, 1)
			if math.Abs(ss-chi2) > 1e-12*chi2 {
				t.Errorf("%s: Σr² = %.15g, χ² = %.15g", name, ss, chi2)
			}
			a, _ := tm.eval(c, 0, 2)
			b, _ := tm.eval(c, 1, 2)
			if math.Abs(a+b-chi2) > 1e-12*chi2 {
				t.Errorf("%s: parts %g + %g, whole %g", name, a, b, chi2)
			}
			for _, smooth := range []float64{0, 0.5} {
				g := make([]complex128, len(vis))
				c := &evalCtx{s: &s, vis: vis, w: 1.7, smooth: smooth, grad: g}
				j := func() float64 {
					if sc, ok := tm.(scaler); ok {
						sc.prepare(c)
					}
					x, extra := tm.eval(c, 0, 1)
					return c.w*x + extra
				}
				clear(g)
				j()
				x0, _ := tm.eval(c, 0, 1)
				// Smoothed, the exact χ² is computed in another but equal form.
				if x0 != chi2 && (smooth == 0 || math.Abs(x0-chi2) > 1e-12*chi2) {
					t.Errorf("%s smooth %g: χ² %.17g with the gradient, %.17g without", name, smooth, x0, chi2)
				}
				clear(g)
				j()
				want := append([]complex128(nil), g...)
				c.grad = nil
				const h = 1e-6
				for k := range vis {
					v := vis[k]
					var num [2]float64
					for p, dz := range []complex128{complex(h, 0), complex(0, h)} {
						vis[k] = v + dz
						f1 := j()
						vis[k] = v - dz
						f0 := j()
						num[p] = (f1 - f0) / (2 * h)
					}
					vis[k] = v
					got := complex(num[0], num[1])
					if d := got - want[k]; math.Hypot(real(d), imag(d)) > 1e-5*(1+math.Hypot(real(got), imag(got))) {
						t.Errorf("%s smooth %g: point %d: gradient %g, finite differences %g", name, smooth, k, want[k], got)
						break
					}
				}
				c.grad = g
			}
		}
	}
}

// TestResiduals checks Residuals against the terms: per-type counts and offsets, Chi2
// against the sum of squares, and a stride that keeps every other datum of each type.
func TestResiduals(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 9))
	d := randomData(rng, 1e9)
	r := NewResiduals(d, ResidualOptions{})
	u, v := r.Points()
	vis := make([]complex128, len(u))
	for i := range vis {
		vis[i] = complex(0.5+0.1*rng.Float64(), 0.2*rng.Float64()) * complex(math.Cos(v[i]*1e-9), 0)
	}
	res := make([]float64, r.Len())
	ss := r.Eval(res, vis)
	sum, n := 0.0, 0
	for _, ty := range dataset.DataTypes() {
		sum += r.Chi2Of(ty, res)
		n += r.N(ty)
	}
	if n != r.Len() || math.Abs(sum-ss) > 1e-12*ss || math.Abs(r.Chi2(vis)-ss) > 1e-12*ss {
		t.Errorf("%d residuals in the types of %d; Σ per type %g, Eval %g, Chi2 %g", n, r.Len(), sum, ss, r.Chi2(vis))
	}
	// randomData: 12 V², 10 triangles of which 6 with amplitudes, 9 complex visibilities of
	// which 3 correlated fluxes (left out) and one differential phase alone in its row (left
	// out), and three rows of five differential amplitudes and phases and a row of one (left
	// out).
	want := map[dataset.DataType]int{dataset.Vis2: 12, dataset.T3Amp: 6, dataset.T3Phi: 10, dataset.VisAmp: 6 + 15, dataset.VisPhi: 8, dataset.VisDiff: 15}
	for ty, w := range want {
		if r.N(ty) != w {
			t.Errorf("%v: %d residuals, want %d", ty, r.N(ty), w)
		}
	}
	if len(r.Notices()) != 3 {
		t.Errorf("notices %q, want the left-out amplitudes and phases", r.Notices())
	}
	thin := NewResiduals(d, ResidualOptions{Stride: 2, Use: dataset.Vis2 | dataset.T3Phi})
	if thin.N(dataset.Vis2) != 6 || thin.N(dataset.T3Phi) != 5 || thin.N(dataset.T3Amp) != 0 || thin.Use() != dataset.Vis2|dataset.T3Phi {
		t.Errorf("stride 2: %d V², %d closure phases, %d T3 amplitudes, types %v", thin.N(dataset.Vis2), thin.N(dataset.T3Phi), thin.N(dataset.T3Amp), thin.Use())
	}
}

// TestTermTable checks that row i of the term table is the data type of bit i, the order of
// dataset.DataTypes(), and has a term.
func TestTermTable(t *testing.T) {
	for i, row := range termTable {
		if row.Type != dataset.DataTypes()[i] || row.kind == nil {
			t.Errorf("row %d: type %v, term %T; want type %v and a term", i, row.Type, row.kind, dataset.DataTypes()[i])
		}
	}
}
