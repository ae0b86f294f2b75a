package model

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Model is a sum of components. Its visibility is the flux-weighted mean
// of the components' visibilities, so Vis(0, 0) = 1 whatever the fluxes.
type Model struct {
	Components []*Component
}

// TotalFlux returns the sum of the component fluxes.
func (m *Model) TotalFlux() float64 {
	var f float64
	for _, c := range m.Components {
		f += c.Flux()
	}
	return f
}

// Validate reports an empty model or one whose total flux is not positive;
// both have no normalised visibility.
func (m *Model) Validate() error {
	if len(m.Components) == 0 {
		return fmt.Errorf("model: no components")
	}
	if f := m.TotalFlux(); !(f > 0) {
		return fmt.Errorf("model: total flux is %g; it must be positive", f)
	}
	return nil
}

// Vis returns the model's complex visibility at (u, v) in cycles per
// radian, Σ F_k V_k(u, v) / Σ F_k (CONVENTIONS.md sign). A background
// component contributes to the denominator everywhere but to the numerator
// only at u = v = 0, so it lowers all other visibilities by the ratio of
// the compact to the total flux.
func (m *Model) Vis(u, v float64) complex128 {
	var sum complex128
	var tot float64
	for _, c := range m.Components {
		f := c.Flux()
		tot += f
		if f != 0 {
			sum += complex(f, 0) * c.Vis(u, v)
		}
	}
	return sum / complex(tot, 0)
}

// VisMany writes the model's visibility at (u[k], v[k]) into dst[k]. The
// three slices must have equal lengths.
func (m *Model) VisMany(dst []complex128, u, v []float64) {
	if len(dst) != len(u) || len(u) != len(v) {
		panic("model: VisMany slice lengths differ")
	}
	for k := range dst {
		dst[k] = m.Vis(u[k], v[k])
	}
}

// Clone returns an independent copy of the model.
func (m *Model) Clone() *Model {
	d := &Model{Components: make([]*Component, len(m.Components))}
	for i, c := range m.Components {
		d.Components[i] = c.Clone()
	}
	return d
}

// Ref names one parameter of a model: component index and parameter name.
type Ref struct {
	Comp int
	Name string
}

// String gives the reference as "c<index>.<name>", e.g. "c2.diameter",
// with 1-based component numbers as users count them.
func (r Ref) String() string { return "c" + strconv.Itoa(r.Comp+1) + "." + r.Name }

// Refs returns references to all parameters, component by component in
// parameter order; with free set, only those marked Free.
func (m *Model) Refs(freeOnly bool) []Ref {
	var out []Ref
	for i, c := range m.Components {
		for _, p := range c.params {
			if !freeOnly || p.Free {
				out = append(out, Ref{i, p.Name})
			}
		}
	}
	return out
}

// Param returns the parameter that r refers to.
func (m *Model) Param(r Ref) (Param, error) {
	if r.Comp < 0 || r.Comp >= len(m.Components) {
		return Param{}, fmt.Errorf("model: no component %d", r.Comp+1)
	}
	c := m.Components[r.Comp]
	i := c.index(r.Name)
	if i < 0 {
		return Param{}, c.unknown(r.Name)
	}
	return c.params[i], nil
}

// Get returns the values of the referenced parameters into dst (grown if
// short) and returns it.
func (m *Model) Get(dst []float64, refs []Ref) ([]float64, error) {
	dst = dst[:0]
	for _, r := range refs {
		p, err := m.Param(r)
		if err != nil {
			return nil, err
		}
		dst = append(dst, p.Value)
	}
	return dst, nil
}

// Set assigns x[i] to the parameter refs[i], with the domain checks of
// Component.Set. On error some parameters may already have changed.
func (m *Model) Set(refs []Ref, x []float64) error {
	if len(refs) != len(x) {
		panic("model: Set slice lengths differ")
	}
	for i, r := range refs {
		if r.Comp < 0 || r.Comp >= len(m.Components) {
			return fmt.Errorf("model: no component %d", r.Comp+1)
		}
		if err := m.Components[r.Comp].Set(r.Name, x[i]); err != nil {
			return fmt.Errorf("%w (%s)", err, r)
		}
	}
	return nil
}

// String writes the model in the compact command-line form that Parse
// reads back, with free parameters written "name~value" and bounds in
// parentheses. Values use the shortest representation that round-trips.
func (m *Model) String() string {
	var b strings.Builder
	for i, c := range m.Components {
		if i > 0 {
			b.WriteByte(';')
		}
		b.WriteString(string(c.kind))
		info, _ := lookupKind(c.kind)
		first := true
		for j, p := range c.params {
			pi := info.params[j]
			if !p.Free && !pi.required && p.Value == pi.def && math.IsInf(p.Min, -1) && math.IsInf(p.Max, 1) {
				continue
			}
			if first {
				b.WriteByte(':')
			} else {
				b.WriteByte(',')
			}
			first = false
			b.WriteString(p.Name)
			if p.Free {
				b.WriteByte('~')
			} else {
				b.WriteByte('=')
			}
			b.WriteString(strconv.FormatFloat(p.Value, 'g', -1, 64))
			if !math.IsInf(p.Min, -1) || !math.IsInf(p.Max, 1) {
				b.WriteByte('(')
				if !math.IsInf(p.Min, -1) {
					b.WriteString(strconv.FormatFloat(p.Min, 'g', -1, 64))
				}
				b.WriteString("..")
				if !math.IsInf(p.Max, 1) {
					b.WriteString(strconv.FormatFloat(p.Max, 'g', -1, 64))
				}
				b.WriteByte(')')
			}
		}
	}
	return b.String()
}

// Radius returns the radius in mas, about the phase centre, of a circle
// holding the model: for each component its offset plus its outer radius
// (discs and rings: half the diameter; Gaussians: 1.5 times the FWHM,
// beyond which less than 2e-3 of a circular Gaussian's flux lies, since
// the enclosed fraction is 1 − 2^(−4 (r/w)²)). Background components,
// which have no size, are ignored.
func (m *Model) Radius() float64 {
	var r float64
	for _, c := range m.Components {
		if c.kind == Background {
			continue
		}
		p := c.params
		s := 0.0
		switch c.kind {
		case UniformDisc, LinearLD, PowerLD, Ring:
			s = p[iS0].Value / 2
		case Gaussian:
			s = 1.5 * p[iS0].Value
		}
		r = math.Max(r, math.Hypot(p[iX].Value, p[iY].Value)+s)
	}
	return r
}
