package model

import (
	"fmt"
	"strings"
)

// Help returns a description of the model formats and of every component
// kind with its parameters, units and defaults, for the --help text of
// commands that take a model.
func Help() string {
	var b strings.Builder
	b.WriteString(`A model is a sum of components, given either as a TOML file or inline.

TOML file: one [[component]] table per component, with kind = "<kind>" and
its parameters. A parameter is a number (held fixed) or an inline table
{value = 3.2, free = true, min = 1, max = 6}; giving min or max makes it
free unless free = false.

Inline: components separated by ';', each "kind" or "kind:p=v,p=v,...".
"p=v" holds p fixed at v, "p~v" lets a fit move it from v; either may end
with bounds "(min..max)", an end left empty meaning unbounded. Example:
  ld:diameter~3.2(1..6),u_ld=0.3;point:x=5,y=-2,flux~0.1(0..)

Offsets x (east) and y (north), diameters and widths are in mas, angles in
degrees (position angles east of north). Fluxes are relative; the model
is normalised to its total flux, which must be positive.

Kinds and parameters:
`)
	for _, k := range kinds {
		fmt.Fprintf(&b, "  %-10s %s\n", k.kind, k.desc)
		for _, p := range k.params {
			unit := ""
			if p.unit != "" {
				unit = " [" + p.unit + "]"
			}
			def := "required"
			if !p.required {
				def = fmt.Sprintf("default %g", p.def)
			}
			fmt.Fprintf(&b, "      %-9s %s%s; %s\n", p.name, p.desc, unit, def)
		}
	}
	return b.String()
}
