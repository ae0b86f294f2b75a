package main

import (
	_ "embed"
	"fmt"
	"io"
	"path/filepath"

	"vcz/output"
	"vcz/runspec"
	"vcz/workflow"
)

// demoOIFITS is the demo data set: simulated observations of the invented
// spotted, limb-darkened giant "Vaeloris" with the invented six-telescope
// array, made from simulate.Demo() (regenerate with
// `go test ./cmd/vcz -run TestDemoData -update`).
//
//go:embed demodata/vaeloris.oifits
var demoOIFITS []byte

func runDemo(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("demo", "[-o DIR] [-json] [-strict] [-quiet]", demoDoc, stderr)
	dir := fs.String("o", "vcz-demo", "output folder (made if missing)")
	quiet := fs.Bool("quiet", false, quietUsage)
	strict := registerStrict(fs)
	asJSON := fs.Bool("json", false, "print the image's summary as one JSON object on stdout (as vcz image -json)")
	if err := parseFlags(fs, args, stdout); err != nil {
		return err
	}
	if fs.NArg() > 0 {
		return badInputf("demo takes no arguments (run 'vcz demo --help')")
	}
	text := stdout
	if *asJSON {
		text = io.Discard // stdout holds the JSON alone
	}
	dataPath, files, d, err := workflow.DemoData(*dir, demoOIFITS)
	if err != nil {
		return err
	}
	rep := output.NewInspectReport(d)
	fmt.Fprintf(text, "Demo data: %s — %d V², %d closure phases, baselines %.0f–%.0f m, resolution %.3g mas\n",
		dataPath, rep.Vis2.Valid, rep.T3.Valid, rep.Baseline.Min, rep.Baseline.Max, rep.Resolution)
	out := filepath.Join(*dir, "vaeloris-image.fits")
	// The zero Spec is vcz image with no option.
	sum, run, err := reconstruct(files, d, runspec.Spec{}, output.Outputs{}, out, *quiet, stderr)
	if err != nil {
		return err
	}
	if *asJSON {
		if err := writeJSON(stdout, sum); err != nil {
			return err
		}
	} else {
		sum.WriteText(stdout)
	}
	truthPath, panel := filepath.Join(*dir, "vaeloris-truth.fits"), filepath.Join(*dir, "vaeloris-compare.png")
	if err := workflow.DemoTruth(truthPath, panel, run); err != nil {
		return failure(err)
	}
	fmt.Fprintf(text, "Wrote %s\nWrote %s\n", truthPath, panel)
	printWarnings(stderr, "", sum.Warnings)
	return strictFailure(*strict, "demo", len(sum.Warnings))
}
