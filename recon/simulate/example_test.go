package simulate_test

import (
	"fmt"

	"vcz/recon/model"
	"vcz/recon/simulate"
)

// Simulating the demo data set: the report counts what was written.
func Example() {
	plan, star := simulate.Demo()
	f, rep, err := simulate.Run(plan, simulate.ModelSky{Model: star})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Print(rep)
	fmt.Println(f.Targets[0].Name, len(f.Vis2[0].Rows), "V² rows,", len(f.T3[0].Rows), "T3 rows")
	// Output:
	// 6 stations, 15 baselines, 20 closing triangles, 8 channels
	// 8 hour angles observed, 0 skipped below the elevation limit
	// projected baselines 32.2 to 326.4 m
	// visibilities at each channel's centre, not averaged over its band
	// points written: 960 V², 1280 closure phases/T3 amplitudes, 0 complex visibilities
	// Vaeloris 120 V² rows, 160 T3 rows
}

// A plan can be read from TOML; unknown keys are reported with their line.
func ExampleParsePlan() {
	src := `
[site]
latitude = -30
elevaton_limit = 20
`
	_, err := simulate.ParsePlan([]byte(src), "night.toml")
	fmt.Println(err)
	// Output:
	// night.toml:4: site.elevaton_limit: unknown key (see the plan key list in the help)
}

// A uniform disc seen on a zenith east–west baseline of 100 m: V follows
// 2 J1(z)/z with z = π θ B/λ (Born & Wolf, sect. 8.5.2).
func ExampleUVW() {
	u, v, w := simulate.UVW([3]float64{100, 0, 0}, 0, -0.5, -0.5)
	m, _ := model.ParseCompact("ud:diameter=3")
	vis := m.Vis(u/1.6e-6, v/1.6e-6)
	fmt.Printf("u=%.1f v=%.1f w=%.1f V=%.4f\n", u, v, w, real(vis))
	// Output:
	// u=100.0 v=0.0 w=0.0 V=0.2737
}
