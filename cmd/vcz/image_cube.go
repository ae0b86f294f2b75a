package main

import (
	"io"

	"vcz/dataset"
	"vcz/io/oifits"
	"vcz/output"
	"vcz/runspec"
	"vcz/workflow"
)

// runCube reconstructs d as an image cube (spec.Channels), or with spec.Star fits the star
// + environment model, and prints its summary.
func runCube(files []*oifits.File, d *dataset.Data, spec runspec.Spec, outs output.Outputs, out string, quiet, asJSON, strict bool, stdout, stderr io.Writer) error {
	c, err := workflow.NewCube(files, d, spec)
	if err != nil {
		return err
	}
	printNotices(stderr, d, quiet)
	prog := newProgressLine(stderr, quiet)
	if spec.Star != nil {
		run, paths, err := c.RunStarEnv(outs, out, prog.follow)
		prog.done()
		if err != nil {
			return failure(err)
		}
		sum := output.NewStarEnvSummary(run, paths)
		return printSummary(sum, sum.Warnings, asJSON, strict, stdout, stderr)
	}
	run, paths, err := c.Run(outs, out, prog.follow)
	prog.done()
	if err != nil {
		return failure(err)
	}
	sum := output.NewCubeSummary(run, paths)
	return printSummary(sum, sum.Warnings, asJSON, strict, stdout, stderr)
}

// printSummary writes the summary of an image run, as JSON or text, on stdout and its
// warnings on stderr, and returns the exit status -strict asks for.
func printSummary(sum interface{ WriteText(io.Writer) }, warnings []string, asJSON, strict bool, stdout, stderr io.Writer) error {
	if asJSON {
		if err := writeJSON(stdout, sum); err != nil {
			return err
		}
	} else {
		sum.WriteText(stdout)
	}
	printWarnings(stderr, "", warnings)
	return strictFailure(strict, "image", len(warnings))
}
