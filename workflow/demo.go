package workflow

import (
	"fmt"

	"vcz/io/preview"
	"vcz/output"
	"vcz/recon"
	"vcz/recon/simulate"
)

// DemoTruth writes the model the demo data were simulated from (simulate.Demo) on the grid
// of the demo's reconstruction run, as a FITS image at truthPath with the world
// coordinates of the reconstruction, and a panel of truth and reconstruction on one colour
// scale at panelPath.
func DemoTruth(truthPath, panelPath string, run output.Run) error {
	_, m := simulate.Demo()
	res := run.Result
	n, pixel := res.Grid.N, res.Grid.Pixel
	truth := m.Image(n, n, pixel)
	if err := output.WriteModel(truthPath, truth, n, pixel, run.Files, "Vaeloris", "demo model (truth)"); err != nil {
		return err
	}
	frames := []preview.Frame{
		{Data: truth, NX: n, NY: n, Label: "model the data were simulated from"},
		{Data: res.Image, NX: n, NY: n, Label: fmt.Sprintf("reconstruction (%s, χ²ᵣ %.2f)", run.Regularizer(), res.Chi2r)},
	}
	return preview.WritePanel(panelPath, frames, preview.Options{
		Title: "Vaeloris — demo: truth and reconstruction", Pixel: pixel / recon.Mas,
		Beam: preview.Beam{Major: run.Data.Summarize().Resolution / recon.Mas}, ColorbarLabel: "flux per pixel (total 1)",
	})
}
