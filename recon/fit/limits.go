package fit

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"

	"vcz/dataset"
	"vcz/recon/model"
)

// LimitOptions configure DetectionLimits. SepMax must be set; the zero
// values of the others mean: SepMin 0, 50 separations, 50 position
// angles, limits at 3σ and 5σ, 3 degrees of freedom.
type LimitOptions struct {
	// SepMin and SepMax bound the separations, in mas; NSep separations
	// run from SepMin to SepMax inclusive and NPA position angles from 0°
	// (north) towards east, 360°/NPA apart.
	SepMin, SepMax float64
	NSep, NPA      int
	// Sigmas are the significances of the limits (Gaussian-equivalent σ,
	// as Detection.Sigma).
	Sigmas []float64
	// Extra is the number of free parameters of the detection test the
	// limits refer to: 3 (the position and flux of a companion found by a
	// fit or search) when 0.
	Extra int
	// FromData compares the model with a companion with the data, as
	// Absil et al. (2011) do, instead of with the model: the limits then
	// follow the noise of these data, whose correlation with the
	// companion's signal moves Δχ² by about ±2√Δχ² from position to
	// position.
	FromData bool
	// Injection also gives limits by injection–recovery (Limits.Inj):
	// companions injected into these data, then detected at the injected
	// position (see DetectionLimits).
	Injection bool
}

// Limits are detection limits of a point companion next to a model: at
// each position of a grid, the flux ratio above which the companion would
// have been detected.
type Limits struct {
	// Sep (mas) and PA (degrees east of north) are the grid axes.
	Sep, PA []float64
	// Sigmas are the significances and Threshold the Δχ² each needs.
	Sigmas, Threshold []float64
	// Ratio[k] is the map of the limiting flux ratio (companion / model
	// flux) at Sigmas[k], row-major Ratio[k][ipa*len(Sep)+isep]; NaN
	// where no ratio up to 1 reaches the threshold.
	Ratio [][]float64
	// Mean[k][isep] is the mean of the ratio over position angle, and
	// Worst[k][isep] the largest (NaN when a position angle has none);
	// 1 − Worst is reached at every angle.
	Mean, Worst [][]float64
	// Inj holds the limits by injection–recovery, with the layout of
	// Ratio, Mean and Worst; nil unless LimitOptions.Injection.
	Inj *InjLimits
	// Chi2 and DOF are those of the model, Scale = Chi2/DOF the χ²ᵣ by
	// which every χ² is divided.
	Chi2, Scale float64
	DOF         int
}

// InjLimits are detection limits by injection–recovery: Ratio[k] the map
// at Limits.Sigmas[k] (row-major, as Limits.Ratio), Mean[k] and Worst[k]
// its mean and largest value over position angle at each separation.
type InjLimits struct {
	Ratio, Mean, Worst [][]float64
}

// DetectionLimits computes detection limits of a point companion next
// to the model of res, a fit to d that found no companion, by the χ²
// method of Absil et al. (2011, A&A 535, A68, sect. 4): the model is
// taken as the truth, with the errors scaled so that its χ²ᵣ is 1, and a
// companion of flux ratio f at (x, y) is excluded at nσ when the model
// with that companion added differs from the model by the Δχ² that
// NewDetection turns into nσ with LimitOptions.Extra degrees of freedom.
// That Δχ², computed from the models' difference at the data's points
// and errors, is the mean excess χ² that the companion would give the
// model without it, so the limits are those of the observations, the
// same for every noise draw (LimitOptions.FromData compares with the
// data instead, as Absil et al. do).
// At each position f is found by bracketed root-finding on log f in
// [10⁻⁶, 1] (Illinois variant of regula falsi, Dahlquist & Björck 1974,
// Numerical Methods, sect. 6.2.2), to 0.1 % in f.
//
// The model's free parameters are refitted to the data with the
// companion, as Significance does, to first order: the χ² with the
// companion is lowered by |Qᵀr|², r the residuals and Q an
// orthonormal basis of the columns of the Jacobian of the model's
// residuals at the fit (one Gauss–Newton step; the model's residuals are
// orthogonal to those columns at its minimum). Holding them fixed instead
// would count the part of a companion's signal that a change of the
// primary (e.g. a larger diameter) mimics, and give limits too deep by
// up to a factor 1.4 in flux in the tests. The model's visibilities are
// computed once; each trial costs one complex multiply-add per frequency,
// the residuals of the data and P dot products.
//
// With LimitOptions.Injection the limits are also found by
// injection–recovery (the second method of Absil et al. 2011, sect. 4):
// a companion of ratio f is injected into the data at each position,
// the data thus becoming the data plus the companion's signal (in the
// residuals: r_inj(M) = r(M) − (r(M_f) − r(M₀)), M₀ the model and M_f
// the model with the companion, exact in the companion and to first
// order in the noise), and it is recovered when the detection at that
// position reaches nσ: Δχ² between the model without a companion and
// with one of free flux at the injected position, both with the model's
// parameters refitted to first order as above and the flux by one
// Gauss–Newton step from the injected value, reaches the threshold. The
// limit is the smallest f recovered, found as above. Unlike the χ²
// limits, these follow the noise of these data: to first order Δχ² =
// (f|g| − s)², g the companion's signal per unit ratio and s ~ N(0, 1)
// the noise along it, so the injection limit is the χ² limit times
// 1 + s/√Δχ²_n at each position; where the data alone reach the
// threshold (s² ≥ Δχ²_n, a candidate companion) the limit is the floor
// 10⁻⁶. A trial costs one evaluation of the residuals, and a position
// two more.
func DetectionLimits(d *dataset.Data, res *Result, opt LimitOptions) (*Limits, error) {
	var err error
	if opt.NSep, opt.NPA, err = checkPolarGrid("detection limits", opt.SepMin, opt.SepMax, opt.NSep, opt.NPA, 50, 50); err != nil {
		return nil, err
	}
	if len(opt.Sigmas) == 0 {
		opt.Sigmas = []float64{3, 5}
	}
	if opt.Extra <= 0 {
		opt.Extra = 3
	}
	m := res.Model
	if err := m.Validate(); err != nil {
		return nil, err
	}
	t := newTerms(d, res.Use, 1, smearing{res.Smearing, res.SmearTol})
	if t.Len() == 0 {
		return nil, errors.New("fit: detection limits: no data of the selected types")
	}
	L := &Limits{Sigmas: append([]float64(nil), opt.Sigmas...), DOF: res.DOF}
	L.Chi2 = t.eval(make([]float64, t.Len()), m)
	L.Scale = 1
	if L.DOF > 0 && L.Chi2 > 0 {
		L.Scale = L.Chi2 / float64(L.DOF)
	}
	chi2Dist := distuv.ChiSquared{K: float64(opt.Extra)}
	for _, s := range opt.Sigmas {
		if !(s > 0) {
			return nil, fmt.Errorf("fit: detection limits: significance %g must be positive", s)
		}
		// p = 2(1 − Φ(s)), as Detection.Sigma.
		L.Threshold = append(L.Threshold, chi2Dist.Quantile(1-math.Erfc(s/math.Sqrt2)))
	}
	L.Sep, L.PA = polarGrid(opt.SepMin, opt.SepMax, opt.NSep, opt.NPA)

	// The model's visibilities V₀ at the points; with a companion of flux
	// ratio f at (x, y) the visibility is (V₀ + f e^{−2πi(ux+vy)})/(1 + f)
	// (CONVENTIONS.md), the ratio taken to the model's total flux.
	u, v := t.u, t.v
	v0 := make([]complex128, len(u))
	m.VisMany(v0, u, v)
	ec := make([]complex128, len(u))
	vis := make([]complex128, len(u))
	r := make([]float64, t.Len())
	r0 := make([]float64, t.Len())
	t.Eval(r0, v0)
	q, err := refitBasis(t, m)
	if err != nil {
		return nil, err
	}
	chi2At := func(f float64) float64 {
		cf, ci := complex(f, 0), complex(1/(1+f), 0)
		for i := range vis {
			vis[i] = (v0[i] + cf*ec[i]) * ci
		}
		c2 := t.Eval(r, vis)
		if !opt.FromData {
			c2 = 0
			for i := range r {
				r[i] -= r0[i]
				c2 += r[i] * r[i]
			}
		}
		// One Gauss–Newton step of the model's free parameters lowers χ²
		// by the square of the projection of the residuals on the
		// columns of its Jacobian.
		for _, b := range q {
			p := dot(b, r)
			c2 -= p * p
		}
		if opt.FromData {
			c2 -= L.Chi2
		}
		return c2 / L.Scale
	}
	for range opt.Sigmas {
		L.Ratio = append(L.Ratio, make([]float64, opt.NSep*opt.NPA))
	}
	// Injection–recovery: r_inj(M) = r(M) − (r(M_f) − r₀). Without a
	// companion (refitted): |P⊥(2r₀ − r_f)|²; with the injected one,
	// refitted by one Gauss–Newton step in its flux: |P⊥r₀|² − (r₀·ĝ)²,
	// ĝ the unit vector of P⊥ ∂r/∂f. ∂r/∂f is taken once per position, at
	// f = 0 (central differences): at f it differs by O(f), which moves
	// only the small term (r₀·ĝ)².
	var injAt func(f float64) float64
	var injStart func() // prepares ĝ at a new position
	if opt.Injection {
		L.Inj = &InjLimits{}
		for range opt.Sigmas {
			L.Inj.Ratio = append(L.Inj.Ratio, make([]float64, opt.NSep*opt.NPA))
		}
		rf := make([]float64, t.Len())
		rh := make([]float64, t.Len())
		a := make([]float64, t.Len())
		perp := func(x []float64) float64 { // |P⊥x|², P⊥x written to x
			for _, b := range q {
				p := dot(b, x)
				for i := range x {
					x[i] -= p * b[i]
				}
			}
			return dot(x, x)
		}
		copy(a, r0)
		chi2Truth := perp(a)
		at := func(dst []float64, f float64) {
			cf, ci := complex(f, 0), complex(1/(1+f), 0)
			for i := range vis {
				vis[i] = (v0[i] + cf*ec[i]) * ci
			}
			t.Eval(dst, vis)
		}
		chi2Alt := chi2Truth
		injStart = func() {
			const h = 1e-6
			at(rf, h)
			at(rh, -h)
			for i := range rh {
				rh[i] = (rf[i] - rh[i]) / (2 * h)
			}
			chi2Alt = chi2Truth
			if g2 := perp(rh); g2 > 0 {
				p := dot(r0, rh)
				chi2Alt -= p * p / g2
			}
		}
		injAt = func(f float64) float64 {
			at(rf, f)
			for i := range a {
				a[i] = 2*r0[i] - rf[i]
			}
			return (perp(a) - chi2Alt) / L.Scale
		}
	}
	for ip, pa := range L.PA {
		s, c := math.Sincos(pa * math.Pi / 180)
		for is, sep := range L.Sep {
			x, y := sep*s*model.MasToRad, sep*c*model.MasToRad
			for i := range ec {
				sn, cs := math.Sincos(-2 * math.Pi * (u[i]*x + v[i]*y))
				ec[i] = complex(cs, sn)
			}
			lo := limitFloor
			for k, thr := range L.Threshold {
				f := limitRatio(chi2At, thr, lo)
				L.Ratio[k][ip*opt.NSep+is] = f
				if k+1 < len(L.Threshold) && L.Threshold[k+1] >= thr && f > lo {
					lo = f // a higher threshold is reached further out
				}
			}
			if injAt != nil {
				// Δχ² = (f|g| − s)² to first order dips before it rises;
				// the first root lies on the rising side, so a higher
				// threshold is reached further out, as above.
				injStart()
				lo := limitFloor
				for k, thr := range L.Threshold {
					f := limitRatio(injAt, thr, lo)
					L.Inj.Ratio[k][ip*opt.NSep+is] = f
					if k+1 < len(L.Threshold) && L.Threshold[k+1] >= thr && f > lo {
						lo = f
					}
				}
			}
		}
	}
	L.Mean, L.Worst = azimuthal(L.Ratio, opt.NSep, opt.NPA)
	if L.Inj != nil {
		L.Inj.Mean, L.Inj.Worst = azimuthal(L.Inj.Ratio, opt.NSep, opt.NPA)
	}
	return L, nil
}

// azimuthal returns the mean and the largest of each map of ratios over
// position angle at each separation (NaN where a position angle has no
// limit: the largest is then NaN, the mean that of the others).
func azimuthal(ratio [][]float64, nsep, npa int) (means, worsts [][]float64) {
	for k := range ratio {
		mean := make([]float64, nsep)
		worst := make([]float64, nsep)
		for is := 0; is < nsep; is++ {
			sum, n, w := 0.0, 0, 0.0
			for ip := 0; ip < npa; ip++ {
				r := ratio[k][ip*nsep+is]
				if math.IsNaN(r) {
					w = math.NaN()
					continue
				}
				sum += r
				n++
				w = math.Max(w, r) // stays NaN once NaN
			}
			mean[is] = math.NaN()
			if n > 0 {
				mean[is] = sum / float64(n)
			}
			worst[is] = w
		}
		means = append(means, mean)
		worsts = append(worsts, worst)
	}
	return means, worsts
}

// limitFloor is the smallest flux ratio DetectionLimits gives.
const limitFloor = 1e-6

// limitRatio returns the flux ratio f in [fmin, 1] at which dchi2(f)
// reaches thr, by the Illinois method on log f, or NaN when dchi2(1) is
// below thr. It returns fmin when that already reaches it.
func limitRatio(dchi2 func(float64) float64, thr, fmin float64) float64 {
	a, b := math.Log(fmin), 0.0
	ga, gb := dchi2(fmin)-thr, dchi2(1)-thr
	switch {
	case math.IsNaN(gb) || gb < 0:
		return math.NaN()
	case ga >= 0:
		return fmin
	}
	side := 0
	for i := 0; i < 100 && b-a > 1e-3; i++ {
		c := b - gb*(b-a)/(gb-ga)
		if !(c > a && c < b) {
			c = (a + b) / 2
		}
		gc := dchi2(math.Exp(c)) - thr
		if gc < 0 {
			a, ga = c, gc
			if side == -1 {
				gb /= 2
			}
			side = -1
		} else {
			b, gb = c, gc
			if side == 1 {
				ga /= 2
			}
			side = 1
		}
	}
	return math.Exp((a + b) / 2)
}

// DMag is −2.5 log10 of a flux ratio (NaN when it is not positive).
func DMag(ratio float64) float64 {
	if !(ratio > 0) {
		return math.NaN()
	}
	return -2.5 * math.Log10(ratio)
}

// WriteCSV writes the azimuth-averaged limits as CSV: a header line and
// one row per separation with the separation in mas, then for each
// significance the mean flux ratio over position angle, its Δmag, the
// largest ratio over position angle and its Δmag, then the same by
// injection–recovery (columns named injection_3sigma and so on) when
// computed; cells with no limit are empty.
func (L *Limits) WriteCSV(w io.Writer) error {
	cw := csv.NewWriter(w)
	head := []string{"separation_mas"}
	for _, s := range L.Sigmas {
		n := strconv.FormatFloat(s, 'g', -1, 64) + "sigma"
		head = append(head, "ratio_mean_"+n, "dmag_mean_"+n, "ratio_worst_"+n, "dmag_worst_"+n)
	}
	if L.Inj != nil {
		for _, s := range L.Sigmas {
			n := "injection_" + strconv.FormatFloat(s, 'g', -1, 64) + "sigma"
			head = append(head, "ratio_mean_"+n, "dmag_mean_"+n, "ratio_worst_"+n, "dmag_worst_"+n)
		}
	}
	if err := cw.Write(head); err != nil {
		return err
	}
	num := func(x float64) string {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return ""
		}
		return strconv.FormatFloat(x, 'g', 6, 64)
	}
	for is, sep := range L.Sep {
		row := []string{num(sep)}
		for k := range L.Sigmas {
			row = append(row, num(L.Mean[k][is]), num(DMag(L.Mean[k][is])), num(L.Worst[k][is]), num(DMag(L.Worst[k][is])))
		}
		if in := L.Inj; in != nil {
			for k := range L.Sigmas {
				row = append(row, num(in.Mean[k][is]), num(DMag(in.Mean[k][is])), num(in.Worst[k][is]), num(DMag(in.Worst[k][is])))
			}
		}
		if err := cw.Write(row); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// refitBasis returns an orthonormal basis of the columns of the
// Jacobian of the normalised residuals of m with respect to its free
// parameters (user units), by modified Gram–Schmidt applied twice (Golub
// & Van Loan, Matrix Computations, 4th ed., sect. 5.2.8; the second pass
// restores orthogonality lost to rounding); columns that are dependent
// on earlier ones are dropped. No column when no parameter is free.
func refitBasis(t *terms, m *model.Model) ([][]float64, error) {
	if len(m.Refs(true)) == 0 {
		return nil, nil
	}
	pr, err := newProblem(t, m)
	if err != nil {
		return nil, err
	}
	n, p := t.Len(), len(pr.refs)
	r0 := make([]float64, n)
	pr.residualsUser(r0, pr.x0)
	J := mat.NewDense(n, p, nil)
	pr.jacobian(J, pr.x0, r0, make([]float64, n), make([]float64, n), true)
	var basis [][]float64
	for j := 0; j < p; j++ {
		c := mat.Col(nil, j, J)
		norm0 := math.Sqrt(dot(c, c))
		for pass := 0; pass < 2; pass++ {
			for _, b := range basis {
				a := dot(b, c)
				for i := range c {
					c[i] -= a * b[i]
				}
			}
		}
		norm := math.Sqrt(dot(c, c))
		if !(norm > 1e-10*norm0) {
			continue
		}
		for i := range c {
			c[i] /= norm
		}
		basis = append(basis, c)
	}
	return basis, nil
}

func dot(a, b []float64) float64 {
	s := 0.0
	for i, x := range a {
		s += x * b[i]
	}
	return s
}
