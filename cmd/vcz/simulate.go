package main

import (
	"encoding/json"
	"fmt"
	"io"
	"strings"

	"vcz/dataset"
	"vcz/io/fitsimage"
	"vcz/io/oifits"
	"vcz/output"
	"vcz/recon"
	"vcz/recon/model"
	"vcz/recon/simulate"
	"vcz/runspec"
	"vcz/workflow"
)

const simulateDoc = `Simulate interferometric data of a model observed with an observing plan and
write them as an OIFITS v2 file. The model is either analytic components
(-model, a TOML file or the inline form below) or a FITS image (-image, any
pixel scale; its world coordinates are read with east to the left), or a
chromatic model (-chromatic, a TOML file of components with spectral indices
and rotating discs emitting a line; write "visdiff" in the plan for differential
phases).

Examples:
  vcz simulate -plan examples/plan-six-demo.toml -model examples/vaeloris.toml -o demo.oifits
  vcz simulate -plan plan.toml -model "ud:diameter=3;point:x=6,y=2,flux=0.05" -o binary.oifits
  vcz simulate -plan plan.toml -image truth.fits -o sim.oifits

Run 'vcz simulate -help-plan' for every key of a plan file,
'vcz simulate -help-model' for the model forms and components and
'vcz simulate -help-chromatic' for chromatic models.`

func runSimulate(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("simulate", "-plan PLAN.toml (-model MODEL | -image FILE.fits) -o OUT.oifits", simulateDoc, stderr)
	planPath := fs.String("plan", "", "observing plan (TOML)")
	modelSpec := fs.String("model", "", "model: a TOML model file or the inline form, e.g. \"ld:diameter=4,u_ld=0.4\"")
	imagePath := fs.String("image", "", "model as a FITS image instead of -model")
	chromPath := fs.String("chromatic", "", "chromatic model (TOML) instead of -model")
	out := fs.String("o", "", "output OIFITS file")
	seed := fs.Uint64("seed", 0, "noise seed, overriding the plan's seed (the plan's when not given)")
	writeImage := fs.String("write-image", "", "also write the -model as a FITS image to this file (same world coordinates as reconstructions)")
	n := fs.Int("write-n", 128, "grid size in pixels of -write-image")
	fs.IntVar(n, "n", 128, "earlier name of -write-n (in image, -n is the reconstruction's grid)")
	pixel := fs.String("write-pixel", "", "pixel size of -write-image, e.g. 0.1mas (default: a quarter of the simulated data's resolution)")
	fs.StringVar(pixel, "pixel", "", "earlier name of -write-pixel (in image, -pixel is the reconstruction's pixel)")
	helpPlan := fs.Bool("help-plan", false, "describe every key of an observing plan and exit")
	helpModel := fs.Bool("help-model", false, "describe the model forms and components and exit")
	helpChrom := fs.Bool("help-chromatic", false, "describe chromatic models and exit")
	fs.Bool("quiet", false, quietUsage+"; simulate prints nothing else there")
	asJSON := fs.Bool("json", false, "print a summary as one JSON object on stdout")
	if err := parseFlags(fs, args, stdout); err != nil {
		return err
	}
	if *helpPlan {
		fmt.Fprint(stdout, simulate.PlanHelp)
		return errHelp
	}
	if *helpModel {
		fmt.Fprint(stdout, model.Help())
		return errHelp
	}
	if *helpChrom {
		fmt.Fprint(stdout, simulate.ChromaticHelp)
		return errHelp
	}
	if fs.NArg() > 0 {
		return badInputf("simulate: unexpected argument %q (run 'vcz simulate --help')", fs.Arg(0))
	}
	if *planPath == "" || *out == "" {
		return badInputf("simulate: -plan and -o are required (run 'vcz simulate --help')")
	}
	if given := btoi(*modelSpec != "") + btoi(*imagePath != "") + btoi(*chromPath != ""); given != 1 {
		return badInputf("simulate: give exactly one of -model, -image and -chromatic")
	}
	if *writeImage != "" && *modelSpec == "" {
		return badInputf("simulate: -write-image needs -model")
	}
	if *n < 2 || *n%2 != 0 || *n > 4096 {
		return badInputf("simulate: -n %d must be an even number from 2 to 4096", *n)
	}
	if err := workflow.CheckOutputs(*out, *writeImage); err != nil {
		return err
	}
	if err := workflow.CheckNotInputs([]string{*planPath, *modelSpec, *imagePath, *chromPath}, *out, *writeImage); err != nil {
		return err
	}
	plan, err := simulate.LoadPlan(*planPath)
	if err != nil {
		return badInput(err)
	}
	if flagGiven(fs, "seed") {
		plan.Seed = *seed
	}
	var sky simulate.Sky
	var m *model.Model
	if *modelSpec != "" {
		if m, err = model.Load(*modelSpec); err != nil {
			return badInputf("simulate: -model: %v", err)
		}
		sky = simulate.ModelSky{Model: m}
	} else if *chromPath != "" {
		cs, err := simulate.LoadChromatic(*chromPath)
		if err != nil {
			return badInputf("simulate: -chromatic: %v", err)
		}
		sky = cs
	} else {
		im, err := fitsimage.ReadFile(*imagePath)
		if err != nil {
			return badInput(err)
		}
		sky = simulate.ImageSky{NX: im.NX, NY: im.NY, Pixel: im.Pixel, Data: im.Data}
	}
	f, rep, err := simulate.Run(plan, sky)
	if err != nil {
		return badInput(err)
	}
	if err := oifits.WriteFile(*out, f); err != nil {
		return failure(err)
	}
	sum := simulateSummary{Output: *out, HourAngles: rep.HourAngles, Skipped: rep.Skipped, SkippedHourAngles: append([]float64{}, rep.SkippedHourAngles...),
		Stations: rep.Stations, Baselines: rep.Baselines, Triangles: rep.Triangles, Channels: rep.Channels,
		Points:      map[string]int{"vis2": rep.Vis2, "t3": rep.T3, "vis": rep.Vis, "visdiff": rep.Diff},
		BaselineMin: rep.MinProjected, BaselineMax: rep.MaxProjected}
	if !*asJSON {
		fmt.Fprint(stdout, rep.String())
		fmt.Fprintf(stdout, "Wrote %s\n", *out)
	}
	if *writeImage != "" {
		px := 0.0
		if *pixel != "" {
			if px, err = runspec.ParseAngle(*pixel); err != nil || !(px > 0) {
				return badInputf("simulate: -write-pixel %q: want a positive angle such as 0.1mas", *pixel)
			}
		} else {
			d, err := dataset.FromFiles([]*oifits.File{f}, dataset.Selection{})
			if err != nil {
				return failure(err)
			}
			px = d.Summarize().Resolution / 4
		}
		img := m.Image(*n, *n, px)
		name := ""
		if len(f.Targets) > 0 {
			name = f.Targets[0].Name
		}
		if err := output.WriteModel(*writeImage, img, *n, px, []*oifits.File{f}, name, "model: "+strings.TrimSpace(*modelSpec)); err != nil {
			return failure(err)
		}
		if !*asJSON {
			fmt.Fprintf(stdout, "Wrote %s (%d × %d pixels of %.4g mas)\n", *writeImage, *n, *n, px/recon.Mas)
		}
		sum.Image = *writeImage
	}
	if *asJSON {
		enc := json.NewEncoder(stdout)
		enc.SetIndent("", "  ")
		if err := enc.Encode(sum); err != nil {
			return failure(err)
		}
	}
	return nil
}

// simulateSummary is the -json output of simulate: the files written and what the plan
// observed (simulate.Report), with the data points written per table type.
type simulateSummary struct {
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
}

// btoi is 1 for true and 0 for false.
func btoi(b bool) int {
	if b {
		return 1
	}
	return 0
}
