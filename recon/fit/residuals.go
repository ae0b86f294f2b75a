package fit

import (
	"fmt"
	"math"

	"vcz/recon"
	"vcz/recon/model"
)

// terms holds the index lists of the data that enter a fit, built once
// from a Data and a set of data types, and evaluates the normalised
// residual vector of a model.
//
// The residuals are, per datum, (|V|² − V²ₒ)/σ for V²; 2 sin(Δφ/2)/σ with
// Δφ = arg(B·exp(−iφₒ)) ∈ (−π, π] for closure phases; (|B| − |B|ₒ)/σ for
// T3 amplitudes; (|V| − Aₒ)/σ for absolute visibility amplitudes; and
// 2 sin(Δφ/2)/σ for absolute visibility phases. Since 4 sin²(Δφ/2) =
// 2(1 − cos Δφ), the sum of squares of each type equals the χ² of
// recon.Objective for that type, and it tends to (Δφ/σ)² for small Δφ.
type terms struct {
	d                      *recon.Data
	use                    recon.DataType
	v2, t3a, t3p, va, vp   []int
	e3, ev                 []complex128 // exp(−iφₒ) of t3p and vp
	n                      [5]int
	notices                []string
	vis                    []complex128 // scratch: visibilities at the unique frequencies
	u, v                   []float64    // the frequencies at which vis is evaluated
	iv2                    []int        // index into vis of each v2 datum
	it3                    [][3]int     // of each triangle's three baselines
	iva                    []int        // of each complex visibility datum
	off                    [5]int       // start of each type in the residual vector
	total                  int
	differentialA, diffPhi int
}

// typeIndex returns the position of a single data type in recon.DataTypes().
func typeIndex(t recon.DataType) int {
	for i, x := range recon.DataTypes() {
		if x == t {
			return i
		}
	}
	panic(fmt.Sprintf("fit: %v is not a single data type", t))
}

// newTerms selects the data of d that a fit of the types in use (0 = all)
// uses. Differential and correlated-flux visibility amplitudes and
// differential phases cannot be fitted by a normalised model and are left
// out with a notice.
func newTerms(d *recon.Data, use recon.DataType) *terms {
	if use == 0 {
		use = recon.AllTypes
	}
	t := &terms{d: d}
	add := func(u, v float64) int {
		t.u = append(t.u, u)
		t.v = append(t.v, v)
		return len(t.u) - 1
	}
	if use&recon.Vis2 != 0 {
		for i := range d.Vis2.Value {
			t.v2 = append(t.v2, i)
			t.iv2 = append(t.iv2, add(d.Vis2.U[i], d.Vis2.V[i]))
		}
	}
	p3 := &d.T3
	for i := range p3.Lambda {
		ua := use&recon.T3Amp != 0 && p3.AmpOK[i]
		up := use&recon.T3Phi != 0 && p3.PhiOK[i]
		if ua {
			t.t3a = append(t.t3a, i)
		}
		if up {
			t.t3p = append(t.t3p, i)
			s, c := math.Sincos(p3.Phi[i])
			t.e3 = append(t.e3, complex(c, -s))
		}
		if ua || up {
			t.it3 = append(t.it3, [3]int{add(p3.U1[i], p3.V1[i]), add(p3.U2[i], p3.V2[i]), add(p3.U1[i]+p3.U2[i], p3.V1[i]+p3.V2[i])})
		} else {
			t.it3 = append(t.it3, [3]int{-1, -1, -1})
		}
	}
	pv := &d.Vis
	t.iva = make([]int, pv.Len())
	for i := range pv.Lambda {
		t.iva[i] = -1
		ua := use&recon.VisAmp != 0 && pv.AmpOK[i]
		up := use&recon.VisPhi != 0 && pv.PhiOK[i]
		if ua && pv.AmpTyp[i] != recon.AmpAbsolute {
			t.differentialA++
			ua = false
		}
		if up && pv.PhiTyp[i] != recon.PhiAbsolute {
			t.diffPhi++
			up = false
		}
		if ua {
			t.va = append(t.va, i)
		}
		if up {
			t.vp = append(t.vp, i)
			s, c := math.Sincos(pv.Phi[i])
			t.ev = append(t.ev, complex(c, -s))
		}
		if ua || up {
			t.iva[i] = add(pv.U[i], pv.V[i])
		}
	}
	if t.differentialA > 0 {
		t.notices = append(t.notices, fmt.Sprintf("%d visibility amplitudes that are not absolute (differential or correlated flux) left out", t.differentialA))
	}
	if t.diffPhi > 0 {
		t.notices = append(t.notices, fmt.Sprintf("%d differential visibility phases left out", t.diffPhi))
	}
	t.vis = make([]complex128, len(t.u))
	counts := [5]int{len(t.v2), len(t.t3a), len(t.t3p), len(t.va), len(t.vp)}
	for i, ty := range recon.DataTypes() {
		t.n[i] = counts[i]
		t.off[i] = t.total
		t.total += counts[i]
		if counts[i] > 0 {
			t.use |= ty
		}
	}
	return t
}

// eval writes the normalised residuals of m into dst (length t.total) and
// returns their sum of squares.
func (t *terms) eval(dst []float64, m *model.Model) float64 {
	m.VisMany(t.vis, t.u, t.v)
	d := t.d
	k := 0
	for j, i := range t.v2 {
		w := t.vis[t.iv2[j]]
		dst[k] = (real(w)*real(w) + imag(w)*imag(w) - d.Vis2.Value[i]) / d.Vis2.Err[i]
		k++
	}
	for _, i := range t.t3a {
		r := t.it3[i]
		b := t.vis[r[0]] * t.vis[r[1]] * cconj(t.vis[r[2]])
		dst[k] = (cabs(b) - d.T3.Amp[i]) / d.T3.AmpErr[i]
		k++
	}
	for j, i := range t.t3p {
		r := t.it3[i]
		b := t.vis[r[0]] * t.vis[r[1]] * cconj(t.vis[r[2]]) * t.e3[j]
		dst[k] = 2 * math.Sin(math.Atan2(imag(b), real(b))/2) / d.T3.PhiErr[i]
		k++
	}
	for _, i := range t.va {
		dst[k] = (cabs(t.vis[t.iva[i]]) - d.Vis.Amp[i]) / d.Vis.AmpErr[i]
		k++
	}
	for j, i := range t.vp {
		z := t.vis[t.iva[i]] * t.ev[j]
		dst[k] = 2 * math.Sin(math.Atan2(imag(z), real(z))/2) / d.Vis.PhiErr[i]
		k++
	}
	s := 0.0
	for _, r := range dst {
		s += r * r
	}
	return s
}

// chi2ByType returns the sum of squares of each type's block of residuals.
func (t *terms) chi2ByType(r []float64) [5]float64 {
	var c [5]float64
	for i := range c {
		for _, x := range r[t.off[i] : t.off[i]+t.n[i]] {
			c[i] += x * x
		}
	}
	return c
}

func cabs(z complex128) float64 { return math.Hypot(real(z), imag(z)) }

func cconj(z complex128) complex128 { return complex(real(z), -imag(z)) }
