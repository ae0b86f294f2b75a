package main

import (
	"fmt"
	"io"

	"vcz/recon/model"
	"vcz/recon/simulate"
	"vcz/workflow"
)

func runSimulate(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("simulate", "-plan PLAN.toml (-model SPEC | -image FILE.fits | -chromatic FILE.toml) -o OUT.oifits", simulateDoc, stderr)
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
	text := stdout
	if *asJSON {
		text = io.Discard // stdout holds the JSON alone
	}
	sum, err := workflow.Simulate(workflow.SimulateRequest{Plan: *planPath, Model: *modelSpec, Image: *imagePath, Chromatic: *chromPath,
		Out: *out, Seed: *seed, SeedGiven: flagGiven(fs, "seed"), WriteImage: *writeImage, N: *n, Pixel: *pixel}, text)
	if err != nil {
		return err
	}
	if *asJSON {
		return writeJSON(stdout, sum)
	}
	return nil
}
