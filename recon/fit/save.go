package fit

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"vcz/recon/model"
)

// String gives the pair in one line, e.g. "component 2 from component 1:
// separation 5.0012 ± 0.0048 mas, PA 126.87 ± 0.06° east of north, flux
// ratio 0.05003 ± 0.00025, Δmag 3.2526 ± 0.0055"; components are counted
// from 1 as users read them.
func (p Pair) String() string {
	e := func(v, err float64, unit string) string {
		s := strconv.FormatFloat(v, 'g', 5, 64)
		if !math.IsNaN(err) && err > 0 {
			s += " ± " + strconv.FormatFloat(err, 'g', 2, 64)
		}
		return s + unit
	}
	s := fmt.Sprintf("component %d from component %d: separation %s, PA %s east of north, flux ratio %s, Δmag %s",
		p.Comp+1, p.Primary+1, e(p.Sep, p.SepErr, " mas"), e(p.PA, p.PAErr, "°"), e(p.Ratio, p.RatioErr, ""), e(p.DMag, p.DMagErr, ""))
	if p.AtBound {
		s += " (a parameter is at a bound: errors not meaningful)"
	}
	return s
}

// ModelTOML writes the fitted model of r as a model file in the TOML
// form that model.ParseTOML reads: one [[component]] table per component
// with every parameter at its best-fit value, the free ones written
// {value = …, free = true} with the bounds of the fit and a comment
// giving the 1σ uncertainty, the fixed ones as plain numbers (or with
// free = false when they had bounds). Reading the file back and fitting
// again starts from the solution. header lines are written first as
// comments, then χ² and one comment line per pair (Pair.String).
func (r *Result) ModelTOML(header ...string) []byte {
	errs := map[model.Ref]Param{}
	for _, p := range r.Params {
		errs[p.Ref] = p
	}
	var b strings.Builder
	for _, h := range header {
		for _, line := range strings.Split(h, "\n") {
			b.WriteString(strings.TrimRight("# "+line, " ") + "\n")
		}
	}
	fmt.Fprintf(&b, "# χ²ᵣ %.6g (χ² %.8g, N = %d, %d free, DOF = %d)\n", r.Chi2r, r.Chi2, r.N, len(r.Params), r.DOF)
	for _, p := range r.Pairs {
		b.WriteString("# " + p.String() + "\n")
	}
	for i, c := range r.Model.Components {
		fmt.Fprintf(&b, "\n[[component]]\nkind = %q\n", string(c.Kind()))
		for _, p := range c.Params() {
			bounded := !math.IsInf(p.Min, -1) || !math.IsInf(p.Max, 1)
			switch {
			case !p.Free && !bounded:
				fmt.Fprintf(&b, "%s = %s\n", p.Name, tomlFloat(p.Value))
			default:
				fmt.Fprintf(&b, "%s = {value = %s, free = %t", p.Name, tomlFloat(p.Value), p.Free)
				if !math.IsInf(p.Min, -1) {
					fmt.Fprintf(&b, ", min = %s", tomlFloat(p.Min))
				}
				if !math.IsInf(p.Max, 1) {
					fmt.Fprintf(&b, ", max = %s", tomlFloat(p.Max))
				}
				b.WriteString("}")
				if fp, ok := errs[model.Ref{Comp: i, Name: p.Name}]; ok {
					switch {
					case fp.AtBound:
						b.WriteString("  # at a bound: no uncertainty")
					case math.IsNaN(fp.Err):
						b.WriteString("  # uncertainty not available")
					default:
						fmt.Fprintf(&b, "  # ± %.4g", fp.Err)
						if u := ParamUnit(p.Name); u != "" {
							b.WriteString(" " + u)
						}
						b.WriteString(" (1σ)")
					}
				}
				b.WriteString("\n")
			}
		}
	}
	return []byte(b.String())
}

// tomlFloat writes x in the shortest form that reads back to the same
// float64 and that TOML accepts as a number (integers stay integers).
func tomlFloat(x float64) string {
	return strconv.FormatFloat(x, 'g', -1, 64)
}

// ParamUnit returns the unit in which users read and write a model parameter: "mas" for
// positions and sizes, "deg" for angles, "" for fluxes and coefficients.
func ParamUnit(name string) string {
	switch name {
	case "x", "y", "diameter", "fwhm":
		return "mas"
	case "pa", "inc":
		return "deg"
	}
	return ""
}
