package simulate

import (
	"fmt"

	"vcz/recon/model"
)

// DemoPlanTOML is the observing plan of the demo data set, identical to
// examples/plan-six-demo.toml: the invented target Vaeloris observed for
// eight hour angles with the invented six-telescope array, eight channels
// across 1.50–1.72 µm. It gives 15 baselines and 20 closing triangles per
// hour angle: 960 V² and 1280 closure phases.
const DemoPlanTOML = `# Demo observation of the invented giant star Vaeloris with the invented
# six-telescope Orrin Tableland array (baselines 39 to 326 m).
array = "ORRIN-6"
instrument = "ORRIN-H8"
seed = 20260612
write = ["vis2", "t3"]

[site]
name = "Orrin Tableland"
latitude = -28.8
longitude = 41.5
altitude = 2350
elevation_limit = 30

[[station]]
name = "C0"
east = 0.0
north = 0.0
diameter = 1.5

[[station]]
name = "N1"
east = 14.0
north = 36.0
diameter = 1.5

[[station]]
name = "E2"
east = 58.0
north = -17.0
up = 0.4
diameter = 1.5

[[station]]
name = "W3"
east = -72.0
north = 52.0
up = -0.8
diameter = 1.5

[[station]]
name = "S4"
east = -35.0
north = -118.0
up = 1.1
diameter = 1.5

[[station]]
name = "NE5"
east = 176.0
north = 131.0
up = -1.6
diameter = 1.5

[target]
name = "Vaeloris"
ra = 201.3
dec = -41.6

[observation]
mjd = 61203
hour_angle_start = -3.5
hour_angle_end = 3.5
hour_angle_step = 1.0
integration_time = 120

[wavelengths]
from = 1.50
to = 1.72
channels = 8
# each channel at its centre, not averaged over its band (the demo and
# validation data were made so)
smearing = false

[noise]
vis2_relative = 0.04
vis2_floor = 0.001
t3phi_floor = 1.5
t3amp_relative = 0.06
t3amp_floor = 0.0005
`

// DemoModelTOML is the demo target, identical to examples/vaeloris.toml: a
// limb-darkened giant of 4 mas with two bright convection cells (Gaussian
// spots) and two dark spots (negative-flux discs lying wholly on the star,
// so the brightness stays positive everywhere). The spots make the object
// asymmetric, so its closure phases are not all 0° or 180°.
const DemoModelTOML = `# Vaeloris, an invented spotted red giant (offsets in mas, east and north).
[[component]]
kind = "ld"
diameter = 4.0
u_ld = 0.35

[[component]]
kind = "gauss"
fwhm = 0.9
x = 0.7
y = 0.5
flux = 0.06

[[component]]
kind = "gauss"
fwhm = 0.6
x = -0.4
y = 1.1
flux = 0.03

[[component]]
kind = "ud"
diameter = 1.0
x = -0.8
y = -0.5
flux = -0.025

[[component]]
kind = "ud"
diameter = 0.7
x = 0.9
y = -0.9
flux = -0.015
`

// Demo returns the plan and model of the demo data set; Run(plan,
// ModelSky{m}) makes it. Each call returns fresh values.
func Demo() (*Plan, *model.Model) {
	p, err := ParsePlan([]byte(DemoPlanTOML), "demo plan")
	if err != nil {
		panic(fmt.Sprintf("simulate: demo plan: %v", err))
	}
	m, err := model.ParseTOML([]byte(DemoModelTOML), "demo model")
	if err != nil {
		panic(fmt.Sprintf("simulate: demo model: %v", err))
	}
	return p, m
}
