#!/bin/sh
# Makes the data files that job.toml names: the invented star Vaeloris
# (../vaeloris.toml) observed with the demo plan (../plan-six-demo.toml) on the
# invented nights in their names, each file with its own noise seed.
#
# Run:   sh make-data.sh          (VCZ=path/to/vcz to use another binary)
# Then:  vcz batch -job job.toml
set -eu
cd "$(dirname "$0")"
VCZ=${VCZ:-vcz}
night() { # file stem, MJD of the night, noise seed
	sed "s/^mjd *=.*/mjd = $2/" ../plan-six-demo.toml >"$1.plan.toml"
	"$VCZ" simulate -plan "$1.plan.toml" -model ../vaeloris.toml -seed "$3" -o "$1.oifits" -quiet >/dev/null
	rm "$1.plan.toml"
	echo "wrote $1.oifits"
}
night vaeloris-61203 61203 1
night vaeloris-61204a 61204 2
night vaeloris-61204b 61204 3
night vaeloris-61206 61206 4
night vaeloris-61209 61209 5
