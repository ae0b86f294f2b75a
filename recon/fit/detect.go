package fit

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat/distuv"

	"vcz/dataset"
	"vcz/recon/model"
)

// Detection is the significance of a component: the χ² of the model
// without it (the null hypothesis, e.g. a single star) against the χ² of
// the model with it (e.g. a binary), both at their best fits.
type Detection struct {
	// Comp is the index of the component tested.
	Comp int
	// Chi2Null and Chi2Alt are the χ² of the best fits without and with
	// the component; DOF = N − P is that of the fit with it.
	Chi2Null, Chi2Alt float64
	DOF               int
	// Scale is the χ²ᵣ of the fit with the component, by which both χ²
	// are divided so that it becomes 1 (1 when it is not positive).
	Scale float64
	// Extra is the number of free parameters of the component, the
	// degrees of freedom of the difference.
	Extra int
	// DeltaChi2 = (Chi2Null − Chi2Alt)/Scale, PValue the probability of a
	// difference at least as large under the null hypothesis (the χ²
	// distribution with Extra degrees of freedom), and Sigma the
	// Gaussian-equivalent significance: the number of standard deviations
	// outside which a normal variable falls with probability PValue (so
	// 3σ is a p-value of 0.27 %).
	DeltaChi2, PValue, Sigma float64
	// GlobalPValue and GlobalSigma are the field-wide p-value and σ of a
	// component whose position was searched, the chance that noise alone
	// gives so large a Δχ² anywhere in the searched field (Calibrate);
	// NaN until Calibrate sets them. PValue and Sigma are then the local
	// figures, those of the one position found.
	GlobalPValue, GlobalSigma float64
	// Trials is the effective number of independent positions of the
	// search (Calibration.Trials) and Draws the number of simulated
	// searches; 0 without a calibration.
	Trials float64
	Draws  int

	null     *model.Model     // the best fit without the component
	use      dataset.DataType // the data types fitted
	twoSided bool             // the component's flux may be negative
}

// Calibrate sets the field-wide significance of the component tested,
// whose position was searched over opt.Field: CalibrateSearch simulates
// the search on the data's (u,v) points and error bars with the best fit
// without the component, and the component's Δχ² is referred to the
// distribution of the largest Δχ² of those searches. opt.TwoSided is set
// from the component's flux bound. It returns the calibration.
func (det *Detection) Calibrate(d *dataset.Data, opt SearchOptions) (*Calibration, error) {
	if det.null == nil {
		return nil, errors.New("fit: significance: no fit without the component to calibrate the search with")
	}
	opt.TwoSided = det.twoSided
	cal, err := CalibrateSearch(d, det.null, det.use, opt)
	if err != nil {
		return nil, err
	}
	det.SetGlobal(cal)
	return cal, nil
}

// SetGlobal sets the field-wide significance from a calibration of the
// search (CalibrateSearch), never above the local one.
func (det *Detection) SetGlobal(cal *Calibration) {
	det.GlobalPValue, det.GlobalSigma = cal.PValue(det.DeltaChi2)
	if det.GlobalPValue < det.PValue {
		det.GlobalPValue, det.GlobalSigma = det.PValue, det.Sigma
	}
	det.Trials, det.Draws = cal.Trials, cal.Draws
}

// Significance returns the significance of component c of the fit res:
// the model res.Model without c is fitted to d (its free parameters
// started at their values in res, with opt), and the two χ² are compared
// as in NewDetection. It fails when c is out of range, when c has no free
// parameter, or when the model without c cannot be fitted.
func Significance(d *dataset.Data, res *Result, c int, opt Options) (*Detection, error) {
	if c < 0 || c >= len(res.Model.Components) || len(res.Model.Components) < 2 {
		return nil, fmt.Errorf("fit: significance: no component %d to remove from a model of %d", c+1, len(res.Model.Components))
	}
	extra := 0
	for _, p := range res.Params {
		if p.Ref.Comp == c {
			extra++
		}
	}
	if extra == 0 {
		return nil, fmt.Errorf("fit: significance: component %d has no free parameter", c+1)
	}
	null := res.Model.Clone()
	null.Components = append(null.Components[:c:c], null.Components[c+1:]...)
	var chi2Null float64
	nullFit := null
	if len(null.Refs(true)) == 0 {
		if err := null.Validate(); err != nil {
			return nil, err
		}
		t := newTerms(d, res.Use, 1, smearing{res.Smearing, res.SmearTol})
		chi2Null = t.eval(make([]float64, t.Len()), null)
	} else {
		o := opt
		o.Use = res.Use
		o.Starts = 1
		r0, err := Fit(d, null, o)
		if r0 == nil || (err != nil && !errors.Is(err, ErrNotConverged)) {
			return nil, fmt.Errorf("fit: significance: the model without component %d: %w", c+1, err)
		}
		chi2Null = r0.Chi2
		nullFit = r0.Model
	}
	det := NewDetection(chi2Null, res.Chi2, res.DOF, extra)
	det.Comp = c
	det.null, det.use = nullFit, res.Use
	if p, err := res.Model.Param(model.Ref{Comp: c, Name: "flux"}); err == nil {
		det.twoSided = p.Free && p.Min < 0
	}
	return det, nil
}

// NewDetection compares the χ² of a null model, chi2Null, with that of a
// model with extra more free parameters, chi2Alt, fitted with dof degrees
// of freedom (Absil et al. 2011, A&A 535, A68, sect. 3): both χ² are
// divided by the alternative's χ²ᵣ = chi2Alt/dof, so that the better
// model has χ²ᵣ = 1 (this absorbs a common error of scale in the error
// bars), and their difference is referred to the χ² distribution with
// extra degrees of freedom, the distribution of the difference between
// nested least-squares fits under the null hypothesis (Wilks 1938, Ann.
// Math. Stat. 9, 60). The p-value becomes a Gaussian-equivalent
// significance σ with p = 2(1 − Φ(σ)).
//
// The distribution holds when the extra parameters are identifiable
// under the null hypothesis. For a companion whose position was searched
// over the field it is not: the largest of many differences is larger,
// and the chance of a spurious companion somewhere in the field exceeds
// the p-value at one position (the look-elsewhere effect). A flux held
// non-negative halves the p-value's tail, so the significance errs low
// there. Calibration errors outside the error bars are not random at
// each point and inflate the significance.
func NewDetection(chi2Null, chi2Alt float64, dof, extra int) *Detection {
	det := &Detection{Chi2Null: chi2Null, Chi2Alt: chi2Alt, DOF: dof, Extra: extra, Scale: 1,
		GlobalPValue: math.NaN(), GlobalSigma: math.NaN()}
	if dof > 0 && chi2Alt > 0 {
		det.Scale = chi2Alt / float64(dof)
	}
	det.DeltaChi2 = (chi2Null - chi2Alt) / det.Scale
	det.PValue, det.Sigma = chi2Sigma(det.DeltaChi2, extra)
	return det
}

// chi2Sigma returns the probability that a χ² variable with k degrees of
// freedom exceeds x, and the Gaussian-equivalent σ of that probability,
// p = 2(1 − Φ(σ)) = erfc(σ/√2). Below the smallest probability float64
// holds the two tails are compared through their asymptotic logarithms:
// ln Q(k/2, x/2) ≈ (k/2 − 1) ln(x/2) − x/2 − ln Γ(k/2) (Abramowitz &
// Stegun 6.5.32, leading term) and ln(2(1 − Φ(σ))) ≈ ln 2 − σ²/2 −
// ln(σ√(2π)) (Abramowitz & Stegun 26.2.12, leading term), solved for σ
// by Newton's method.
func chi2Sigma(x float64, k int) (p, sigma float64) {
	if math.IsNaN(x) || k < 1 {
		return math.NaN(), math.NaN()
	}
	if x <= 0 {
		return 1, 0
	}
	p = distuv.ChiSquared{K: float64(k)}.Survival(x)
	if p > 1e-290 {
		return p, -distuv.UnitNormal.Quantile(p / 2)
	}
	lg, _ := math.Lgamma(float64(k) / 2)
	lnp := (float64(k)/2-1)*math.Log(x/2) - x/2 - lg
	return math.Exp(lnp), sigmaOfLogP(lnp)
}
