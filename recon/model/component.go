package model

import (
	"fmt"
	"math"
	"strings"
)

// MasToRad converts milliarcseconds to radians.
const MasToRad = math.Pi / (180 * 3600 * 1000)

// Kind names a component shape. The names are what users type in model
// files and on the command line.
type Kind string

// The component kinds. Each one's parameters are listed by Params and
// described in Help.
const (
	Point       Kind = "point"      // unresolved source
	UniformDisc Kind = "ud"         // uniform disc: diameter
	LinearLD    Kind = "ld"         // linear limb-darkened disc: diameter, u_ld
	PowerLD     Kind = "ld_power"   // power-law limb-darkened disc: diameter, alpha
	Gaussian    Kind = "gauss"      // Gaussian: fwhm, and for an elliptical one ratio and pa
	Ring        Kind = "ring"       // thin ring, optionally inclined: diameter, inc, pa
	Background  Kind = "background" // fully resolved flux: flux only
)

// paramInfo describes one parameter of a kind: its unit, meaning, default
// and the domain outside which the shape is undefined.
type paramInfo struct {
	name     string
	unit     string
	desc     string
	def      float64
	required bool
	lo, hi   float64 // allowed closed range
	loOpen   bool    // lo itself excluded
}

type kindInfo struct {
	kind   Kind
	desc   string
	params []paramInfo
}

var (
	pFlux     = paramInfo{name: "flux", desc: "flux (relative units; negative for a dark feature)", def: 1, lo: math.Inf(-1), hi: math.Inf(1)}
	pX        = paramInfo{name: "x", unit: "mas", desc: "offset towards east", lo: math.Inf(-1), hi: math.Inf(1)}
	pY        = paramInfo{name: "y", unit: "mas", desc: "offset towards north", lo: math.Inf(-1), hi: math.Inf(1)}
	pDiameter = paramInfo{name: "diameter", unit: "mas", desc: "angular diameter", required: true, lo: 0, hi: math.Inf(1)}
	pFWHM     = paramInfo{name: "fwhm", unit: "mas", desc: "full width at half maximum (of the major axis when ratio < 1)", required: true, lo: 0, hi: math.Inf(1)}
	pULD      = paramInfo{name: "u_ld", desc: "linear limb-darkening coefficient u in I(mu) = 1 - u(1 - mu)", required: true, lo: 0, hi: 1}
	pAlpha    = paramInfo{name: "alpha", desc: "power-law exponent in I(mu) = mu^alpha", required: true, lo: 0, hi: 2*maxOrder - 2}
	pRatio    = paramInfo{name: "ratio", desc: "minor to major axis ratio", def: 1, lo: 0, hi: 1, loOpen: true}
	pPA       = paramInfo{name: "pa", unit: "deg", desc: "position angle of the major axis, east of north", lo: math.Inf(-1), hi: math.Inf(1)}
	pInc      = paramInfo{name: "inc", unit: "deg", desc: "inclination (0 = face-on, 90 = edge-on); the minor axis shrinks by cos(inc)", lo: 0, hi: 90}
)

// kinds lists every kind. The order of params is the parameter order of a
// component; flux comes first, then the offsets, then the shape.
var kinds = []kindInfo{
	{Point, "point source", []paramInfo{pFlux, pX, pY}},
	{UniformDisc, "uniform disc", []paramInfo{pFlux, pX, pY, pDiameter}},
	{LinearLD, "limb-darkened disc, linear law I(mu) = 1 - u(1 - mu)", []paramInfo{pFlux, pX, pY, pDiameter, pULD}},
	{PowerLD, "limb-darkened disc, power law I(mu) = mu^alpha", []paramInfo{pFlux, pX, pY, pDiameter, pAlpha}},
	{Gaussian, "Gaussian, circular (ratio 1, the default) or elliptical", []paramInfo{pFlux, pX, pY, pFWHM, pRatio, pPA}},
	{Ring, "infinitely thin ring, optionally inclined", []paramInfo{pFlux, pX, pY, pDiameter, pInc, pPA}},
	{Background, "fully resolved background: adds flux to the zero spatial frequency only", []paramInfo{pFlux}},
}

func lookupKind(k Kind) (*kindInfo, bool) {
	for i := range kinds {
		if kinds[i].kind == k {
			return &kinds[i], true
		}
	}
	return nil, false
}

// Kinds returns the names of all component kinds in their documented order.
func Kinds() []Kind {
	out := make([]Kind, len(kinds))
	for i, k := range kinds {
		out[i] = k.kind
	}
	return out
}

// Indices of the parameters shared by all kinds but Background, and of the
// shape parameters in the order of kinds.
const (
	iFlux = 0
	iX    = 1
	iY    = 2
	iS0   = 3 // diameter or fwhm
	iS1   = 4 // u_ld, alpha, ratio or inc
	iS2   = 5 // pa
)

// Param is one parameter of a component: its current value in user units
// (mas, degrees, or none) and how a fitter may move it. Min and Max bound
// the fit (−Inf and +Inf when unbounded); they are ignored by Vis.
type Param struct {
	Name  string
	Value float64
	Free  bool
	Min   float64
	Max   float64
}

// Component is one analytic sky component: a kind and its parameter
// values. Create components with New; the zero value is not usable.
type Component struct {
	kind   Kind
	params []Param
}

// New returns a component of kind k with the given parameter values; the
// other parameters take their defaults (flux 1, offsets 0, ratio 1, pa 0,
// inc 0). Unknown kinds and parameter names, missing required shape
// parameters and values outside a parameter's domain are errors.
func New(k Kind, values map[string]float64) (*Component, error) {
	c, err := newDefault(k)
	if err != nil {
		return nil, err
	}
	for name, v := range values {
		if err := c.Set(name, v); err != nil {
			return nil, err
		}
	}
	info, _ := lookupKind(k)
	for _, p := range info.params {
		if _, ok := values[p.name]; p.required && !ok {
			return nil, fmt.Errorf("model: %s: missing parameter %q", k, p.name)
		}
	}
	return c, nil
}

func newDefault(k Kind) (*Component, error) {
	info, ok := lookupKind(k)
	if !ok {
		if k == "egauss" { // the name of earlier versions
			return nil, fmt.Errorf("model: component kind \"egauss\" is now gauss with ratio and pa, e.g. gauss:fwhm=2,ratio=0.5,pa=30")
		}
		return nil, fmt.Errorf("model: unknown component kind %q (known: %s)", k, kindList())
	}
	c := &Component{kind: k, params: make([]Param, len(info.params))}
	for i, p := range info.params {
		c.params[i] = Param{Name: p.name, Value: p.def, Min: math.Inf(-1), Max: math.Inf(1)}
	}
	return c, nil
}

func kindList() string {
	s := make([]string, len(kinds))
	for i, k := range kinds {
		s[i] = string(k.kind)
	}
	return strings.Join(s, ", ")
}

// Kind returns the component's kind.
func (c *Component) Kind() Kind { return c.kind }

// Params returns the component's parameters in their fixed order. The
// slice is the component's own: changing an element's Free, Min or Max
// changes the component; change values through Set so they are checked.
func (c *Component) Params() []Param { return c.params }

// ParamNames returns the names of the component's parameters in order.
func (c *Component) ParamNames() []string {
	out := make([]string, len(c.params))
	for i, p := range c.params {
		out[i] = p.Name
	}
	return out
}

func (c *Component) index(name string) int {
	for i, p := range c.params {
		if p.Name == name {
			return i
		}
	}
	return -1
}

// Get returns the value of the named parameter in user units.
func (c *Component) Get(name string) (float64, error) {
	i := c.index(name)
	if i < 0 {
		return 0, c.unknown(name)
	}
	return c.params[i].Value, nil
}

// Set changes the value of the named parameter. It fails for an unknown
// name, a non-finite value, or a value outside the parameter's domain
// (for example a negative diameter or u_ld > 1).
func (c *Component) Set(name string, v float64) error {
	i := c.index(name)
	if i < 0 {
		return c.unknown(name)
	}
	info, _ := lookupKind(c.kind)
	p := info.params[i]
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return fmt.Errorf("model: %s: parameter %s = %v is not finite", c.kind, name, v)
	}
	if v < p.lo || v > p.hi || (p.loOpen && v == p.lo) {
		lb := "["
		if p.loOpen {
			lb = "("
		}
		return fmt.Errorf("model: %s: parameter %s = %g outside its domain %s%g, %g]", c.kind, name, v, lb, p.lo, p.hi)
	}
	c.params[i].Value = v
	return nil
}

// SetFit sets whether the named parameter is free in a fit, and its bounds
// (use ±Inf for none).
func (c *Component) SetFit(name string, free bool, lo, hi float64) error {
	i := c.index(name)
	if i < 0 {
		return c.unknown(name)
	}
	if lo > hi || math.IsNaN(lo) || math.IsNaN(hi) {
		return fmt.Errorf("model: %s: parameter %s: bounds [%g, %g] are empty", c.kind, name, lo, hi)
	}
	c.params[i].Free, c.params[i].Min, c.params[i].Max = free, lo, hi
	return nil
}

func (c *Component) unknown(name string) error {
	return fmt.Errorf("model: %s: unknown parameter %q (known: %s)", c.kind, name, strings.Join(c.ParamNames(), ", "))
}

// Flux returns the component's flux.
func (c *Component) Flux() float64 { return c.params[iFlux].Value }

// Clone returns an independent copy of the component.
func (c *Component) Clone() *Component {
	d := &Component{kind: c.kind, params: make([]Param, len(c.params))}
	copy(d.params, c.params)
	return d
}

// Vis returns the component's complex visibility at spatial frequency
// (u, v) in cycles per radian, normalised to the component's own flux:
// Vis(0, 0) = 1 for every kind. The sign convention is that of
// CONVENTIONS.md, V = Σ I exp(−2πi(u x + v y)) / Σ I, so an offset
// (x0, y0) multiplies the centred visibility by exp(−2πi(u x0 + v y0)).
//
// The centred visibilities, with q = √(u² + v²) and z = π d q for a
// diameter d in radians:
//   - point: 1.
//   - ud: 2 J1(z)/z (Born & Wolf, Principles of Optics, sect. 8.5.2).
//   - ld, I(μ) = 1 − u(1 − μ): [(1−u) J1(z)/z + u j1(z)/z] / [(1−u)/2 + u/3],
//     with j1(z) = sin z/z² − cos z/z = √(π/(2z)) J_{3/2}(z) (Hanbury Brown,
//     Davis, Lake & Thompson 1974, MNRAS 167, 475).
//   - ld_power, I(μ) = μ^α: Γ(ν+1) (2/z)^ν J_ν(z), ν = α/2 + 1 (Hestroffer
//     1997, A&A 327, 199).
//   - gauss: exp(−(π w q)² / (4 ln 2)) for FWHM w.
//     With an axis ratio r < 1, q_eff² = w² (u sin θ + v cos θ)² +
//     (r w)² (u cos θ − v sin θ)² in place of (w q)², θ the position angle
//     of the major axis east of north.
//   - ring: J0(π d q_eff), q_eff² = (u sin θ + v cos θ)² +
//     cos² i (u cos θ − v sin θ)², θ the major axis position angle and i
//     the inclination.
//   - background: 1 at u = v = 0 exactly, 0 elsewhere.
func (c *Component) Vis(u, v float64) complex128 {
	p := c.params
	if c.kind == Background {
		if u == 0 && v == 0 {
			return 1
		}
		return 0
	}
	a := c.amplitude(u, v)
	x0, y0 := p[iX].Value, p[iY].Value
	if x0 == 0 && y0 == 0 {
		return complex(a, 0)
	}
	ph := -2 * math.Pi * (u*x0 + v*y0) * MasToRad
	s, co := math.Sincos(ph)
	return complex(a*co, a*s)
}

// amplitude returns the real visibility of the centred component.
func (c *Component) amplitude(u, v float64) float64 {
	p := c.params
	switch c.kind {
	case Point:
		return 1
	case UniformDisc:
		return airy(math.Pi * p[iS0].Value * MasToRad * math.Hypot(u, v))
	case LinearLD:
		z := math.Pi * p[iS0].Value * MasToRad * math.Hypot(u, v)
		ul := p[iS1].Value
		return ((1-ul)*j1Over(z) + ul*sphJ1Over(z)) / ((1-ul)/2 + ul/3)
	case PowerLD:
		z := math.Pi * p[iS0].Value * MasToRad * math.Hypot(u, v)
		return besselLambda(p[iS1].Value/2+1, z)
	case Gaussian:
		if p[iS1].Value == 1 {
			return gaussV(math.Pi * p[iS0].Value * MasToRad * math.Hypot(u, v))
		}
		w := p[iS0].Value * MasToRad
		s, co := math.Sincos(p[iS2].Value * math.Pi / 180)
		qa := w * (u*s + v*co)
		qb := p[iS1].Value * w * (u*co - v*s)
		return math.Exp(-math.Pi * math.Pi * (qa*qa + qb*qb) / (4 * math.Ln2))
	case Ring:
		s, co := math.Sincos(p[iS2].Value * math.Pi / 180)
		qa := u*s + v*co
		qb := math.Cos(p[iS1].Value*math.Pi/180) * (u*co - v*s)
		return math.J0(math.Pi * p[iS0].Value * MasToRad * math.Hypot(qa, qb))
	}
	panic("model: unhandled kind " + string(c.kind))
}

// airy returns 2 J1(z)/z, with its limit 1 at z = 0.
func airy(z float64) float64 { return 2 * j1Over(z) }

// j1Over returns J1(z)/z, with its limit 1/2 at z = 0.
func j1Over(z float64) float64 {
	if math.Abs(z) < 1e-6 {
		return 0.5 - z*z/16
	}
	return math.J1(z) / z
}

// sphJ1Over returns j1(z)/z = (sin z/z − cos z)/z², the spherical Bessel
// function of order 1 over z, with limit 1/3 at z = 0. Below z = 0.1 the
// closed form loses digits to cancellation, so the Taylor series
// 1/3 − z²/30 + z⁴/840 − z⁶/45360 + z⁸/3991680 is used instead
// (A&S eq. 10.1.2), truncation error below 3e-15 there.
func sphJ1Over(z float64) float64 {
	if math.Abs(z) < 0.1 {
		z2 := z * z
		return 1.0/3 + z2*(-1.0/30+z2*(1.0/840+z2*(-1.0/45360+z2/3991680)))
	}
	s, c := math.Sincos(z)
	return (s/z - c) / (z * z)
}
