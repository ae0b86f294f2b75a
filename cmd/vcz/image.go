package main

import (
	"flag"
	"io"
	"strings"

	"vcz/dataset"
	"vcz/io/oifits"
	"vcz/output"
	"vcz/runspec"
	"vcz/workflow"
)

func runImage(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("image", "[options] FILE...", strings.TrimSpace(imageDoc)+"\n"+bootstrapDoc, stderr)
	opts := runspec.RegisterFlags(fs, runspec.All)
	stretch := registerStretch(fs)
	out := fs.String("o", "", "output FITS file (default: FIRSTFILE-image.fits in the current folder)")
	noPNG := fs.Bool("no-png", false, "do not write the PNG preview")
	noPlots := fs.Bool("no-plots", false, "do not write the data-fit plots")
	quiet := fs.Bool("quiet", false, quietUsage)
	asJSON := fs.Bool("json", false, "print a summary as one JSON object on stdout")
	strict := registerStrict(fs)
	rerun := fs.String("rerun", "", "make the result FILE.fits again: its options and data files (checked by SHA-256) from its header")
	boot := registerBootstrap(fs)
	if err := parseFlags(fs, args, stdout); err != nil {
		return err
	}
	inputs := fs.Args()
	var rerunSpec *runspec.Spec
	if *rerun != "" {
		if fs.NArg() > 0 {
			return badInputf("image: -rerun takes the data files from %s; give no file", *rerun)
		}
		allowed := map[string]bool{"rerun": true, "o": true, "no-png": true, "no-plots": true, "quiet": true, "json": true, "strict": true, "stretch": true, "workers": true,
			"bootstrap": true, "bootstrap-seed": true, "bootstrap-unit": true, "bootstrap-shard": true, "bootstrap-collect": true, "feature": true, "feature-ref": true}
		var extra []string
		fs.Visit(func(f *flag.Flag) {
			if !allowed[f.Name] {
				extra = append(extra, "-"+f.Name)
			}
		})
		if len(extra) > 0 {
			return badInputf("image: -rerun takes the options from %s's header; %s cannot be changed", *rerun, strings.Join(extra, ", "))
		}
		rr, err := workflow.ReadRerun(*rerun)
		if err != nil {
			return err
		}
		inputs = rr.Files
		rerunSpec = &rr.Spec
		if *out == "" {
			*out = workflow.DefaultOutput(*rerun, "-rerun.fits")
		}
	}
	if len(inputs) == 0 {
		return badInputf("image: no OIFITS file given (run 'vcz image --help')")
	}
	breq, err := boot.check()
	if err != nil {
		return err
	}
	if *out == "" {
		*out = workflow.DefaultOutput(inputs[0], "-image.fits")
	}
	if err := workflow.CheckImageOutput(*out, append(append([]string(nil), inputs...), *rerun), breq.Requested()); err != nil {
		return err
	}
	st, err := output.ParseStretch(*stretch)
	if err != nil {
		return badInputf("image: %v", err)
	}
	spec, err := opts.Spec()
	if err != nil {
		return badInputf("image: %v", err)
	}
	if rerunSpec != nil {
		w := spec.Workers
		spec = *rerunSpec
		spec.Workers = w // the image does not depend on it
	}
	files, d, err := workflow.ReadData(inputs, spec.Selection())
	if err != nil {
		return err
	}
	outs := output.Outputs{NoPNG: *noPNG, NoPlots: *noPlots, Stretch: st}
	if !spec.Channels.Single() {
		if breq.Requested() {
			return badInputf("image: -bootstrap is not available for image cubes (-channels)")
		}
		return runCube(files, d, spec, outs, *out, *quiet, *asJSON, *strict, stdout, stderr)
	}
	if breq.Requested() {
		im, err := workflow.NewImage(files, d, spec)
		if err != nil {
			return err
		}
		if err := im.CheckRegions(breq.Regions); err != nil {
			return err
		}
	}
	sum, run, err := reconstruct(files, d, spec, outs, *out, *quiet, stderr)
	if err != nil {
		return err
	}
	var bs *workflow.BootstrapSummary
	if breq.Requested() {
		im, err := workflow.NewImage(files, d, spec)
		if err != nil {
			return err
		}
		if bs, err = im.ImageBootstrap(breq, fs.Args(), run, outs, *out, bootstrapEvents(stderr, *quiet)); err != nil {
			return err
		}
	}
	if *asJSON {
		if err := writeJSON(stdout, bootstrapJSON{ImageSummary: sum, Bootstrap: bs}); err != nil {
			return err
		}
	} else {
		sum.WriteText(stdout)
		if bs != nil {
			bs.WriteText(stdout)
		}
	}
	printWarnings(stderr, "", sum.Warnings)
	nwarn := len(sum.Warnings)
	if bs != nil {
		printWarnings(stderr, "bootstrap", bs.Warnings)
		nwarn += len(bs.Warnings)
	}
	return strictFailure(*strict, "image", nwarn)
}

// stretchUsage is the help of -stretch, the display stretch of the PNG previews (vcz image
// and compare).
const stretchUsage = "display stretch of the PNG previews: auto (linear, or asinh or log when the brightest pixels outshine the rest), linear, sqrt, asinh or log (the FITS image is not changed)"

// registerStretch adds -stretch to fs.
func registerStretch(fs *flag.FlagSet) *string { return fs.String("stretch", "auto", stretchUsage) }

// reconstruct runs one reconstruction of d as spec says and writes the outputs outs says
// to out. Messages go to stderr unless quiet.
func reconstruct(files []*oifits.File, d *dataset.Data, spec runspec.Spec, outs output.Outputs, out string, quiet bool, stderr io.Writer) (output.ImageSummary, output.Run, error) {
	im, err := workflow.NewImage(files, d, spec)
	if err != nil {
		return output.ImageSummary{}, output.Run{}, err
	}
	printNotices(stderr, d, quiet)
	prog := newProgressLine(stderr, quiet)
	run, paths, err := im.Run(outs, out, prog.follow)
	prog.done()
	if err != nil {
		return output.ImageSummary{}, output.Run{}, failure(err)
	}
	return output.NewImageSummary(run, paths), run, nil
}
