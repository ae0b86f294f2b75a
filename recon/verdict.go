package recon

import (
	"fmt"
	"math"
	"strings"

	"vcz/dataset"

	"vcz/recon/optim"
)

// Thresholds of the quality verdict (Result.Warnings).
const (
	// VerdictChi2Ratio is the largest accepted ratio of the final χ²ᵣ to its expected value.
	// For N ≥ 100 Gaussian data the scatter of χ²ᵣ is √(2/N) ≤ 0.14, so 1.25 is beyond twice
	// the scatter for every data set of interest (common practice, no source).
	VerdictChi2Ratio = 1.25
	// VerdictTypeRatio is the ratio of one data type's χ²ᵣ/expected to the best fitted type's
	// above which the types disagree (common practice, no source).
	VerdictTypeRatio = 2.0
	// VerdictTail is the relative decrease of the objective over the last tailWindow
	// iterations above which a run stopped at its iteration limit was still improving
	// visibly (common practice, no source).
	VerdictTail = 1e-3
	// VerdictStartSpread is the relative spread of the objectives of several starts above
	// which they disagree (common practice, no source).
	VerdictStartSpread = 0.05
)

// Chi2rFar says how a χ²ᵣ of n data stands against its expected value: +1 when it is above
// VerdictChi2Ratio times expected, −1 when it is below expected/VerdictChi2Ratio and also below
// expected by more than three times the scatter √(2/n) of χ²ᵣ (so that a small data set is
// not judged on its noise; common practice, no source), 0 otherwise or when expected is not
// positive or n is not (the low side only). It is the one rule of every quality verdict's
// χ²ᵣ warnings: images and cubes, the star + environment fit, and the fits of analytic
// models (recon/fit).
func Chi2rFar(chi2r, expected float64, n int) int {
	switch {
	case !(expected > 0):
		return 0
	case chi2r > VerdictChi2Ratio*expected:
		return 1
	case n > 0 && chi2r < expected/VerdictChi2Ratio && chi2r < expected*(1-3*math.Sqrt(2/float64(n))):
		return -1
	}
	return 0
}

// verdictInput is what the verdict needs beyond the Result.
type verdictInput struct {
	expect   map[dataset.DataType]float64 // expected χ²ᵣ of each used type
	tail     float64                      // relative objective decrease over the last tailWindow iterations, NaN if fewer
	stalled  bool                         // the final run stalled (tiny steps without convergence)
	auto     bool                         // the weight was chosen automatically
	atEdge   string                       // "lower" or "upper" when the chosen weight is at that edge of the search
	maxIters int
}

// verdict returns the warnings of res: each names what is doubtful and what to try.
func verdict(res *Result, in verdictInput) []string {
	var w []string
	if Chi2rFar(res.Chi2r, res.Chi2rTarget, 0) > 0 {
		w = append(w, fmt.Sprintf("χ²ᵣ = %.3g is %.2g times its expected value %.3g: the image does not fit the data; try a lower -weight, another -reg, a larger -fov, or check the error bars", res.Chi2r, res.Chi2r/res.Chi2rTarget, res.Chi2rTarget))
	}
	// One type fitted far worse than the best one: calibration errors not in the error bars,
	// or a type the model cannot fit.
	best, worst := math.Inf(1), 0.0
	var worstType dataset.DataType
	for _, t := range res.Chi2 {
		e := in.expect[t.Type]
		if !(e > 0) || t.N == 0 {
			continue
		}
		r := t.Chi2r / e
		best = math.Min(best, r)
		if r > worst {
			worst, worstType = r, t.Type
		}
	}
	if len(res.Chi2) > 1 && worst > VerdictTypeRatio*best && worst > VerdictChi2Ratio {
		w = append(w, fmt.Sprintf("%s fit at %.2g times their expected χ²ᵣ, the best-fitted type at %.2g: their errors may be underestimated or carry calibration errors; try -data-weights to lower their weight", worstType, worst, best))
	}
	switch {
	case in.stalled:
		w = append(w, fmt.Sprintf("the final run stalled after %d iterations (steps too small to move the image) before converging; try -start gauss or another -reg", res.Iter))
	case res.Status == optim.IterationLimit && math.IsNaN(in.tail):
		w = append(w, fmt.Sprintf("the final run stopped at its limit of %d iterations, too few to tell whether it converged; raise -iter", in.maxIters))
	case res.Status == optim.IterationLimit && !(in.tail <= VerdictTail):
		w = append(w, fmt.Sprintf("the final run stopped at its limit of %d iterations with the objective still falling (%.2g %% over the last %d iterations); raise -iter", in.maxIters, 100*in.tail, tailWindow))
	}
	if in.auto && in.atEdge == "stalled" {
		w = append(w, "every run of the automatic weight search stalled; the weight is the first one tried: set -weight by hand or try -start gauss")
	} else if in.auto && in.atEdge != "" {
		w = append(w, fmt.Sprintf("the automatic weight %.3g is at the %s edge of the searched range: no weight there gave the expected χ²ᵣ; set -weight by hand and compare", res.Weight, in.atEdge))
	}
	if k := len(res.StartObjectives); k > 1 {
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, f := range res.StartObjectives {
			lo, hi = math.Min(lo, f), math.Max(hi, f)
		}
		if (hi-lo)/math.Max(math.Abs(lo), 1) > VerdictStartSpread {
			w = append(w, fmt.Sprintf("the %d starts ended at objectives %.2g %% apart: the result depends on the start image; compare -start choices", k, 100*(hi-lo)/math.Max(math.Abs(lo), 1)))
		}
	}
	return w
}

// planeLimitWarning returns the warning of a cube whose planes' runs in the last sweep over
// the planes (last, in plane order) stopped at their iteration limit while the objective was
// still falling, by the rule of the gray verdict: a relative decrease above VerdictTail over
// the last tailWindow iterations, or fewer iterations than that to tell. It names how many
// planes and which, and the limit; maxIter is the iteration limit of the settings (-iter),
// which a run at a smaller limit (a later sweep's, PathIter) did not reach. It returns ""
// when no plane stopped so.
func planeLimitWarning(last []runOut, planes []CubePlane, maxIter int) string {
	var which []string
	limit := 0
	for k, r := range last {
		if r.Status == optim.IterationLimit && !(r.Tail <= VerdictTail) {
			which = append(which, fmt.Sprintf("%d (%s)", k+1, planes[k].Label))
			limit = max(limit, r.Iter)
		}
	}
	if len(which) == 0 {
		return ""
	}
	what := fmt.Sprintf("%d of %d planes", len(which), len(last))
	if len(which) == 1 {
		what = fmt.Sprintf("1 of %d planes", len(last))
	}
	try := "raise -iter"
	if limit < maxIter {
		try = fmt.Sprintf("the sweeps after the first allow a plane at most %d iterations whatever -iter says, so those planes may not have settled", limit)
	}
	return fmt.Sprintf("%s stopped at the iteration limit of %d in the last sweep with the objective still falling: plane %s; %s", what, limit, strings.Join(which, ", "), try)
}
