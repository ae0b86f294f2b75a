package fit

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"

	"vcz/recon/model"
)

// Hand-worked pairs: a companion at (x, y) = (1, 1) mas (east, north) is
// at √2 mas and position angle 45° east of north (CONVENTIONS.md); the
// other quadrants give 135°, 225° and 315°, due north 0° and due east
// 90°. A ratio of 0.01 is Δmag = −2.5 log10 0.01 = 5 (Pogson's
// definition). With independent errors σ on x and y, σ_sep = σ and
// σ_PA = σ/sep radians; σ_Δm = 2.5/ln 10 · σ_r/r (first-order
// propagation, worked by hand).
func TestPairsHandWorked(t *testing.T) {
	for _, c := range []struct {
		x, y, pa float64
	}{{1, 1, 45}, {1, -1, 135}, {-1, -1, 225}, {-1, 1, 315}, {0, 2, 0}, {2, 0, 90}, {-2, 0, 270}, {0, -2, 180}} {
		m := mustLoad(t, "point:flux=1;point:flux=0.01")
		m.Components[1].Set("x", c.x)
		m.Components[1].Set("y", c.y)
		refs := []model.Ref{{Comp: 1, Name: "x"}, {Comp: 1, Name: "y"}, {Comp: 1, Name: "flux"}}
		const sx, sf = 0.1, 1e-3
		cov := mat.NewSymDense(3, []float64{sx * sx, 0, 0, 0, sx * sx, 0, 0, 0, sf * sf})
		ps := Pairs(m, refs, cov, nil)
		if len(ps) != 1 {
			t.Fatalf("%d pairs", len(ps))
		}
		p := ps[0]
		sep := math.Hypot(c.x, c.y)
		for _, q := range []struct {
			name      string
			got, want float64
		}{
			{"sep", p.Sep, sep},
			{"pa", p.PA, c.pa},
			{"ratio", p.Ratio, 0.01},
			{"dmag", p.DMag, 5},
			{"sep err", p.SepErr, sx},
			{"pa err", p.PAErr, sx / sep * 180 / math.Pi},
			{"ratio err", p.RatioErr, sf},
			{"dmag err", p.DMagErr, 2.5 / math.Ln10 * sf / 0.01},
		} {
			if math.Abs(q.got-q.want) > 1e-12*math.Max(1, math.Abs(q.want)) {
				t.Errorf("(%g, %g): %s = %.15g, want %.15g", c.x, c.y, q.name, q.got, q.want)
			}
		}
		if p.Primary != 0 || p.Comp != 1 {
			t.Errorf("pair %d–%d, want 0–1", p.Primary, p.Comp)
		}
	}
}

// The primary is the brightest component; the position angle is that of
// the companion seen from it, whatever the order in the model. A fixed
// parameter contributes no error; no covariance gives NaN errors.
func TestPairsPrimary(t *testing.T) {
	m := mustLoad(t, "point:x=1,y=1,flux=0.2;ud:diameter=1,x=0.5,y=0.5,flux=1;background:flux=0.1")
	ps := Pairs(m, nil, mat.NewSymDense(1, []float64{1}), nil)
	if len(ps) != 1 || ps[0].Primary != 1 || ps[0].Comp != 0 {
		t.Fatalf("pairs %+v, want component 0 relative to 1", ps)
	}
	if p := ps[0]; math.Abs(p.PA-45) > 1e-12 || math.Abs(p.Sep-math.Sqrt(0.5)) > 1e-12 || p.SepErr != 0 || p.DMagErr != 0 {
		t.Errorf("%+v", p)
	}
	if p := Pairs(m, nil, nil, nil)[0]; !math.IsNaN(p.SepErr) || !math.IsNaN(p.DMagErr) {
		t.Errorf("errors without covariance: %+v", p)
	}
}

// The first-order errors of a fitted binary agree within 20 % with the
// scatter of the quantities over a Monte Carlo of the fit's covariance:
// parameter vectors drawn from N(x̂, C) (C = LLᵀ, x = x̂ + Lz, z standard
// normal), the quantities computed exactly for each draw (Bevington &
// Robinson, 3rd ed., sect. 3.2, for the linear propagation it checks).
// The 20 % tolerance is the issue's; the statistical error of the Monte
// Carlo standard deviation with 20 000 draws is 0.5 %.
func TestPairsMonteCarlo(t *testing.T) {
	for _, c := range []struct{ truth, start string }{
		{"ud:diameter=1.2;point:x=4,y=-3,flux=0.05", "ud:diameter~1.2;point:x~4,y~-3,flux~0.05"},
		{"ud:diameter=2;point:x=-1.5,y=2,flux=0.3", "ud:diameter~2;point:x~-1.5,y~2,flux~0.3"},
		{"ud:diameter=1;point:x=10,y=12,flux=0.01;point:x=-3,y=2,flux=0.1", "ud:diameter~1;point:x~10,y~12,flux~0.01;point:x~-3,y~2,flux~0.1"},
	} {
		n := exactNoise
		n.rng = rand.New(rand.NewPCG(7, 11))
		d := synth(modelVis(mustLoad(t, c.truth)), n)
		res, err := Fit(d, mustLoad(t, c.start), Options{})
		if err != nil {
			t.Fatal(err)
		}
		if res.Cov == nil || len(res.Pairs) != len(res.Model.Components)-1 {
			t.Fatalf("%s: no covariance or %d pairs", c.truth, len(res.Pairs))
		}
		p := len(res.Params)
		var L mat.Cholesky
		if !L.Factorize(res.Cov) {
			t.Fatal("covariance not positive definite")
		}
		var lt mat.TriDense
		L.LTo(&lt)
		x0 := make([]float64, p)
		refs := make([]model.Ref, p)
		for i, q := range res.Params {
			x0[i], refs[i] = q.Value, q.Ref
		}
		m := res.Model.Clone()
		rng := rand.New(rand.NewPCG(3, 5))
		const draws = 20000
		sum := make([][4]float64, len(res.Pairs))
		cross := make([]float64, len(res.Pairs)) // Σ Δsep·ΔPA
		x, z := make([]float64, p), make([]float64, p)
		for k := 0; k < draws; k++ {
			for i := range z {
				z[i] = rng.NormFloat64()
			}
			for i := range x {
				x[i] = x0[i]
				for j := 0; j <= i; j++ {
					x[i] += lt.At(i, j) * z[j]
				}
			}
			if err := m.Set(refs, x); err != nil {
				t.Fatal(err)
			}
			for j, q := range Pairs(m, nil, nil, nil) {
				want := res.Pairs[j]
				dpa := math.Remainder(q.PA-want.PA, 360)
				for i, dv := range [4]float64{q.Sep - want.Sep, dpa, q.Ratio - want.Ratio, q.DMag - want.DMag} {
					sum[j][i] += dv * dv
				}
				cross[j] += (q.Sep - want.Sep) * dpa
			}
		}
		for j, want := range res.Pairs {
			// The correlation of separation and position angle (the tilt of the error
			// ellipse) agrees within 0.03 with the Monte Carlo's (its statistical error with 20 000
			// draws is below 0.01).
			rho := want.SepPACov / (want.SepErr * want.PAErr)
			rhoMC := cross[j] / draws / math.Sqrt(sum[j][0]/draws*sum[j][1]/draws)
			t.Logf("%s, component %d: separation–PA correlation %.3f propagated, %.3f Monte Carlo", c.truth, want.Comp, rho, rhoMC)
			if !(math.Abs(rho-rhoMC) < 0.03) {
				t.Errorf("%s, component %d: separation–PA correlation %.3f propagated, %.3f Monte Carlo", c.truth, want.Comp, rho, rhoMC)
			}
			for i, e := range [4]float64{want.SepErr, want.PAErr, want.RatioErr, want.DMagErr} {
				mc := math.Sqrt(sum[j][i] / draws)
				name := [4]string{"separation", "position angle", "ratio", "Δmag"}[i]
				if !(math.Abs(e/mc-1) < 0.2) {
					t.Errorf("%s, component %d: %s error %.4g propagated, %.4g Monte Carlo", c.truth, want.Comp, name, e, mc)
				} else {
					t.Logf("%s, component %d: %s error %.4g propagated, %.4g Monte Carlo (%+.1f %%)", c.truth, want.Comp, name, e, mc, 100*(e/mc-1))
				}
			}
		}
	}
}
