package fit

import (
	"fmt"
	"strings"

	"vcz/recon"
)

// verdict returns the warnings of a fit (Result.Warnings): χ²ᵣ far from its expected value by
// the rule of the images' verdict (recon.Chi2rFar, over the DOF degrees of freedom), and a fit
// that did not converge, and parameters the data leave undetermined (Param.Undetermined).
func verdict(res *Result) []string {
	var w []string
	switch recon.Chi2rFar(res.Chi2r, res.Chi2rExpected, res.DOF) {
	case 1:
		w = append(w, fmt.Sprintf("χ²ᵣ = %.3g is %.2g times its expected value %.3g: the model does not fit the data, and its 1σ errors (scaled by χ²ᵣ) and significances assume it does; try another model (a limb-darkened or larger component, a companion with -grid-search) or check the error bars", res.Chi2r, res.Chi2r/res.Chi2rExpected, res.Chi2rExpected))
	case -1:
		w = append(w, fmt.Sprintf("χ²ᵣ = %.3g is far below its expected value %.3g: the data's error bars may be overestimated, which makes the 1σ errors (scaled by χ²ᵣ) and the significances unreliable; check the error bars", res.Chi2r, res.Chi2rExpected))
	}
	if !res.Converged {
		w = append(w, fmt.Sprintf("%v after %d iterations: %s", ErrNotConverged, res.Iterations, res.Reason))
	}
	var flat []string
	for _, p := range res.Params {
		if p.Undetermined {
			flat = append(flat, p.Ref.String())
		}
	}
	if len(flat) > 0 && len(flat) < len(res.Params) {
		w = append(w, fmt.Sprintf("the data do not constrain %s at the best fit (JᵀJ is singular or nearly so): each value is where the fit stopped, its 1σ is undetermined, and the other 1σ hold it fixed; fix it or drop its component (such as a companion whose flux went to 0)", strings.Join(flat, ", ")))
	}
	return w
}
