package workflow

import (
	"fmt"
	"io"
	"os"
	"strings"

	"vcz/dataset"
	"vcz/io/fitsimage"
	"vcz/io/oifits"
	"vcz/output"
	"vcz/recon"
	"vcz/recon/model"
	"vcz/recon/simulate"
	"vcz/runspec"
)

// SimulateRequest is one simulation, 'vcz simulate': an observing plan and exactly one of a
// model (file or inline form), a FITS image and a chromatic model, written as OIFITS to Out.
type SimulateRequest struct {
	Plan      string // observing plan (TOML)
	Model     string // analytic model: a TOML file or the inline form
	Image     string // FITS image
	Chromatic string // chromatic model (TOML)
	Out       string // the OIFITS file written
	// Seed, when SeedGiven, replaces the plan's noise seed.
	Seed      uint64
	SeedGiven bool
	// WriteImage, when not "", receives the Model as a FITS image of N × N pixels of Pixel
	// (an angle with its unit; "": a quarter of the simulated data's resolution).
	WriteImage string
	N          int
	Pixel      string
}

// SimulateSummary is the -json output of simulate: the files written and what the plan
// observed (simulate.Report), with the data points written per table type.
type SimulateSummary struct {
	Output            string         `json:"output"`
	Image             string         `json:"image,omitempty"`
	HourAngles        int            `json:"hour_angles"`
	Skipped           int            `json:"skipped_hour_angles"`
	SkippedHourAngles []float64      `json:"skipped_hour_angle_values_h"`
	Stations          int            `json:"stations"`
	Baselines         int            `json:"baselines_per_hour_angle"`
	Triangles         int            `json:"triangles_per_hour_angle"`
	Channels          int            `json:"channels"`
	Points            map[string]int `json:"points"`
	BaselineMin       float64        `json:"baseline_min_m"`
	BaselineMax       float64        `json:"baseline_max_m"`
	BandAveraged      bool           `json:"band_averaged"` // each channel averaged over its band
}

// Simulate checks r, simulates its data and writes them (and the model image), printing the
// plan's report and the files written on text as it goes. Errors of the request, the plan
// or the model are *InputError naming the option or file.
func Simulate(r SimulateRequest, text io.Writer) (*SimulateSummary, error) {
	if given := btoi(r.Model != "") + btoi(r.Image != "") + btoi(r.Chromatic != ""); given != 1 {
		return nil, inputErrorf("simulate: give exactly one of -model, -image and -chromatic")
	}
	if r.WriteImage != "" && r.Model == "" {
		return nil, inputErrorf("simulate: -write-image needs -model")
	}
	if r.N < 2 || r.N%2 != 0 || r.N > 4096 {
		return nil, inputErrorf("simulate: -write-n %d must be an even number from 2 to 4096", r.N)
	}
	// The pixel is read before anything is written, so that a bad -write-pixel leaves no
	// OIFITS file behind.
	px := 0.0
	if r.WriteImage != "" && r.Pixel != "" {
		var err error
		if px, err = runspec.ParseAngle(r.Pixel); err != nil || !(px > 0) {
			return nil, inputErrorf("simulate: -write-pixel %q: want a positive angle such as 0.1mas", r.Pixel)
		}
	}
	if err := CheckOutputs(r.Out, r.WriteImage); err != nil {
		return nil, err
	}
	if err := CheckNotInputs([]string{r.Plan, r.Model, r.Image, r.Chromatic}, r.Out, r.WriteImage); err != nil {
		return nil, err
	}
	plan, err := simulate.LoadPlan(r.Plan)
	if err != nil {
		return nil, inputError(r.Plan, err)
	}
	if r.SeedGiven {
		plan.Seed = r.Seed
	}
	var sky simulate.Sky
	var m *model.Model
	switch {
	case r.Model != "":
		if m, err = model.Load(r.Model); err != nil {
			return nil, inputErrorf("simulate: -model: %v", err)
		}
		sky = simulate.ModelSky{Model: m}
	case r.Chromatic != "":
		cs, err := simulate.LoadChromatic(r.Chromatic)
		if err != nil {
			return nil, inputErrorf("simulate: -chromatic: %v", err)
		}
		sky = cs
	default:
		im, err := fitsimage.ReadFile(r.Image)
		if err != nil {
			return nil, inputError(r.Image, err)
		}
		sky = simulate.ImageSky{NX: im.NX, NY: im.NY, Pixel: im.Pixel, Data: im.Data}
	}
	f, rep, err := simulate.Run(plan, sky)
	if err != nil {
		return nil, inputError("", err)
	}
	if err := oifits.WriteFile(r.Out, f); err != nil {
		return nil, err
	}
	sum := &SimulateSummary{Output: r.Out, HourAngles: rep.HourAngles, Skipped: rep.Skipped, SkippedHourAngles: append([]float64{}, rep.SkippedHourAngles...),
		Stations: rep.Stations, Baselines: rep.Baselines, Triangles: rep.Triangles, Channels: rep.Channels,
		Points:      map[string]int{"vis2": rep.Vis2, "t3": rep.T3, "vis": rep.Vis, "visdiff": rep.Diff},
		BaselineMin: rep.MinProjected, BaselineMax: rep.MaxProjected, BandAveraged: rep.BandAveraged}
	fmt.Fprint(text, rep.String())
	if r.WriteImage == "" {
		fmt.Fprintf(text, "Wrote %s\n", r.Out)
		return sum, nil
	}
	if px == 0 {
		d, err := dataset.FromFiles([]*oifits.File{f}, dataset.Selection{})
		if err != nil {
			os.Remove(r.Out)
			return nil, err
		}
		px = d.Summarize().Resolution / 4
	}
	img := m.Image(r.N, r.N, px)
	name := ""
	if len(f.Targets) > 0 {
		name = f.Targets[0].Name
	}
	if err := output.WriteModel(r.WriteImage, img, r.N, px, []*oifits.File{f}, name, "model: "+strings.TrimSpace(r.Model)); err != nil {
		// The data without the image asked for are half a result.
		os.Remove(r.Out)
		return nil, err
	}
	fmt.Fprintf(text, "Wrote %s\n", r.Out)
	fmt.Fprintf(text, "Wrote %s (%d × %d pixels of %.4g mas)\n", r.WriteImage, r.N, r.N, px/recon.Mas)
	sum.Image = r.WriteImage
	return sum, nil
}

// btoi is 1 for true and 0 for false.
func btoi(b bool) int {
	if b {
		return 1
	}
	return 0
}
