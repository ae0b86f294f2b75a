package fit

import (
	"fmt"
	"math"
	"strings"
	"testing"
)

// A companion fitted to data of a single disc goes to zero flux, where the
// data no longer constrain its position. The fit must still give the best
// values and χ², name the position as undetermined (NaN 1σ, a warning),
// and give the other parameters the 1σ of the problem with the position
// held fixed: dropping the null directions of the singular value
// decomposition of the design matrix is the least-squares problem without
// them (Press et al., Numerical Recipes, 3rd ed., sect. 15.4.2, recalled
// from memory), so the 1σ must equal those of a fit where x and y are not
// free, at the same values.
func TestUndeterminedParams(t *testing.T) {
	d := synth(modelVis(mustLoad(t, "ud:diameter=3.1")), exactNoise)
	res, err := Fit(d, mustLoad(t, "ud:diameter~3;point:flux~0.02(0..),x~2(1..3),y~2(1..3)"), Options{SmearTol: exactSmear})
	if res == nil {
		t.Fatalf("no result: %v", err)
	}
	want := map[string]bool{"c1.diameter": false, "c2.flux": false, "c2.x": true, "c2.y": true}
	for _, p := range res.Params {
		if p.Undetermined != want[p.Ref.String()] || math.IsNaN(p.Err) != p.Undetermined {
			t.Errorf("%s: undetermined %v, 1σ %g; want undetermined %v", p.Ref, p.Undetermined, p.Err, want[p.Ref.String()])
		}
	}
	if math.Abs(res.Params[0].Value-3.1) > 1e-6 || !(res.Chi2r < 1e-10) {
		t.Errorf("diameter %g, χ²ᵣ %g; want 3.1 and 0", res.Params[0].Value, res.Chi2r)
	}
	if res.Cov == nil || !math.IsNaN(res.Cov.At(2, 2)) || !math.IsNaN(res.Corr.At(0, 3)) {
		t.Errorf("covariance %v: want NaN rows for x and y", res.Cov)
	}
	found := false
	for _, w := range res.Warnings {
		found = found || strings.Contains(w, "do not constrain c2.x, c2.y")
	}
	if !found {
		t.Errorf("warnings %q: none names c2.x, c2.y", res.Warnings)
	}
	x, y := res.Params[2].Value, res.Params[3].Value
	fixed := mustLoad(t, fmt.Sprintf("ud:diameter~%.17g;point:flux~%.17g(0..),x=%.17g,y=%.17g", res.Params[0].Value, res.Params[1].Value, x, y))
	// The covariance of the fit with x and y fixed, at the same point.
	pr, err := newProblem(newTerms(d, 0, 1, smearing{tol: exactSmear}), fixed)
	if err != nil {
		t.Fatal(err)
	}
	tt := make([]float64, len(pr.x0))
	pr.toInternal(tt, pr.x0)
	ref := &Result{}
	pr.finish(ref, &run{t: tt})
	for i := 0; i < 2; i++ {
		// Each 1σ is scaled by its own χ²ᵣ (by 1 when that is 0).
		got, w := unscaled(res.Params[i].Err, res.Chi2r), unscaled(ref.Params[i].Err, ref.Chi2r)
		if !(math.Abs(got-w) <= 1e-3*w) {
			t.Errorf("%s: 1σ %g with x, y undetermined, %g with them fixed", res.Params[i].Ref, got, w)
		}
	}
}

// unscaled divides a 1σ by the square root of the χ²ᵣ that scaled it.
func unscaled(err, chi2r float64) float64 {
	if chi2r > 0 {
		return err / math.Sqrt(chi2r)
	}
	return err
}
