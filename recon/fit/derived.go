package fit

import (
	"math"

	"gonum.org/v1/gonum/mat"

	"vcz/recon/model"
)

// Pair gives one component relative to the primary in the quantities
// observers report: separation, position angle, flux ratio and magnitude
// difference, each with its 1σ uncertainty.
type Pair struct {
	// Primary and Comp are the indices of the two components in the model.
	Primary, Comp int
	// Sep is the separation in mas and PA the position angle of Comp seen
	// from Primary in degrees east of north, in [0°, 360°): with Δx towards
	// east and Δy towards north (CONVENTIONS.md), Sep = √(Δx² + Δy²) and
	// PA = atan2(Δx, Δy).
	Sep, PA float64
	// Ratio is the flux ratio Comp / Primary and DMag = −2.5 log10(Ratio)
	// the magnitude difference (NaN when the ratio is not positive).
	Ratio, DMag float64
	// SepErr, PAErr (degrees), RatioErr and DMagErr are the 1σ
	// uncertainties propagated to first order from the covariance of the
	// fit, σ² = g C gᵀ with g the gradient of the quantity with respect to
	// the free parameters. They are NaN without a covariance, and 0 when
	// none of the parameters a quantity depends on is free.
	SepErr, PAErr, RatioErr, DMagErr float64
	// SepPACov is the covariance of the separation and the position angle (mas·°),
	// propagated the same way; with SepErr and PAErr it gives the error ellipse of the
	// position. NaN without a covariance.
	SepPACov float64
	// AtBound is set when a free parameter the pair depends on lies on a
	// bound of the fit, where the uncertainties mean nothing.
	AtBound bool
}

// PrimaryIndex returns the index of the primary of m: its brightest
// component with a position (every kind but the background), the first
// of equals; −1 when there is none.
func PrimaryIndex(m *model.Model) int {
	best := -1
	for i, c := range m.Components {
		if c.Kind() == model.Background {
			continue
		}
		if best < 0 || c.Flux() > m.Components[best].Flux() {
			best = i
		}
	}
	return best
}

// Pairs returns every component of m with a position, other than the
// primary (PrimaryIndex), relative to the primary. refs names the free
// parameters in the order of the rows and columns of cov, the covariance
// in user units (mas, flux units); cov may be nil, and then every error
// is NaN. atBound, when not nil, flags the free parameters that lie on a
// bound.
//
// The uncertainties are the first-order (linear) propagation of the
// covariance through the Jacobian G of the transformation from the six
// parameters (x, y, flux of the primary and of the companion) to the four
// quantities, C_q = G C Gᵀ (e.g. Bevington & Robinson, Data Reduction and
// Error Analysis, 3rd ed., eq. 3.13). With Δx = x_c − x_p, Δy = y_c − y_p,
// s the separation and r the ratio:
//
//	∂s/∂Δx = Δx/s          ∂s/∂Δy = Δy/s
//	∂PA/∂Δx = Δy/s²        ∂PA/∂Δy = −Δx/s²        (radians)
//	∂r/∂f_c = 1/f_p        ∂r/∂f_p = −f_c/f_p²
//	∂Δm/∂· = −2.5/(r ln 10) ∂r/∂·
//
// The linear propagation holds when the errors are small against the
// quantities; it fails for position angles at separations comparable to
// their error and for magnitudes of ratios comparable to theirs.
func Pairs(m *model.Model, refs []model.Ref, cov *mat.SymDense, atBound []bool) []Pair {
	ip := PrimaryIndex(m)
	if ip < 0 {
		return nil
	}
	// Index of each free parameter, by component and name.
	index := func(c int, name string) int {
		for i, r := range refs {
			if r.Comp == c && r.Name == name {
				return i
			}
		}
		return -1
	}
	get := func(c int, name string) float64 {
		v, _ := m.Components[c].Get(name)
		return v
	}
	var out []Pair
	for ic, c := range m.Components {
		if ic == ip || c.Kind() == model.Background {
			continue
		}
		dx := get(ic, "x") - get(ip, "x")
		dy := get(ic, "y") - get(ip, "y")
		fp, fc := get(ip, "flux"), get(ic, "flux")
		s := math.Hypot(dx, dy)
		pa := math.Atan2(dx, dy) * 180 / math.Pi
		if pa < 0 {
			pa += 360
		}
		if s == 0 {
			pa = math.NaN()
		}
		r := fc / fp
		dm := math.NaN()
		if r > 0 {
			dm = -2.5 * math.Log10(r)
		}
		p := Pair{Primary: ip, Comp: ic, Sep: s, PA: pa, Ratio: r, DMag: dm,
			SepErr: math.NaN(), PAErr: math.NaN(), RatioErr: math.NaN(), DMagErr: math.NaN(), SepPACov: math.NaN()}
		// The six parameters and the gradients of the four quantities
		// with respect to them (rows: sep, PA in degrees, ratio, Δm).
		idx := [6]int{index(ip, "x"), index(ip, "y"), index(ip, "flux"), index(ic, "x"), index(ic, "y"), index(ic, "flux")}
		deg := 180 / math.Pi
		dmdr := -2.5 / (r * math.Ln10)
		grad := [4][6]float64{
			{-dx / s, -dy / s, 0, dx / s, dy / s, 0},
			{-dy / (s * s) * deg, dx / (s * s) * deg, 0, dy / (s * s) * deg, -dx / (s * s) * deg, 0},
			{0, 0, -fc / (fp * fp), 0, 0, 1 / fp},
			{0, 0, -fc / (fp * fp) * dmdr, 0, 0, dmdr / fp},
		}
		for _, i := range idx {
			if i >= 0 && atBound != nil && atBound[i] {
				p.AtBound = true
			}
		}
		if cov != nil {
			// gcg returns g_q C g_rᵀ over the free parameters among the six.
			gcg := func(q, r int) float64 {
				v := 0.0
				for a := range idx {
					if idx[a] < 0 || grad[q][a] == 0 {
						continue
					}
					for b := range idx {
						if idx[b] < 0 || grad[r][b] == 0 {
							continue
						}
						v += grad[q][a] * cov.At(idx[a], idx[b]) * grad[r][b]
					}
				}
				return v
			}
			errs := [4]*float64{&p.SepErr, &p.PAErr, &p.RatioErr, &p.DMagErr}
			for q := range grad {
				*errs[q] = math.Sqrt(gcg(q, q))
			}
			p.SepPACov = gcg(0, 1)
		}
		out = append(out, p)
	}
	return out
}
