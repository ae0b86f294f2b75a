package workflow

import (
	"bytes"
	"fmt"
	"io"
	"path/filepath"

	"vcz/dataset"
	"vcz/io/oifits"
	"vcz/io/safefile"

	"vcz/io/preview"
	"vcz/output"
	"vcz/recon"
	"vcz/recon/simulate"
)

// DemoData writes the demo data set, the OIFITS bytes data, into dir (made if missing) as
// vaeloris.oifits and returns its path with the file decoded and its points. An error of
// the folder is an *InputError; one of the embedded bytes is not.
func DemoData(dir string, data []byte) (string, []*oifits.File, *dataset.Data, error) {
	if err := MakeFolder(dir); err != nil {
		return "", nil, nil, inputErrorf("demo: -o: %v", err)
	}
	path := filepath.Join(dir, "vaeloris.oifits")
	if err := safefile.Write(path, func(w io.Writer) error {
		_, err := w.Write(data)
		return err
	}); err != nil {
		return "", nil, nil, err
	}
	file, err := oifits.Decode(bytes.NewReader(data), "vaeloris.oifits")
	if err != nil {
		return "", nil, nil, fmt.Errorf("embedded demo data: %w", err)
	}
	files := []*oifits.File{file}
	d, err := dataset.FromFiles(files, dataset.Selection{})
	if err != nil {
		return "", nil, nil, fmt.Errorf("embedded demo data: %w", err)
	}
	return path, files, d, nil
}

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
