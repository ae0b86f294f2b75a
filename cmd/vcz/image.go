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

const imageDoc = `Reconstruct an image from one or more OIFITS files (merged into one data set)
and write it as a FITS image with world coordinates, a PNG preview and plots
of the fit to the data.

The grid, the start image and the regularization weight are chosen from the
data unless given: the pixel is a quarter of the nominal resolution
λmin/(2·Bmax), the field three times the size of a disc or Gaussian fitted to
V², and the weight the one at which χ²ᵣ of the data lies three tenths of the
way from the floor that the least-regularized images reach to its expected
value (1, or a little less where phases have large errors): images with more
free pixels than the data constrain fit some of the noise.
-from-model FILE takes the object's size from a model file instead (one
written by 'vcz fit -save-model', or 'vcz fit -json' output): the field is
three times the diameter of the circle holding the model (largest component
offset plus radius), and the start image is the model's image. -fov, -n,
-pixel and -start still override.

The image is one solution consistent with the data, not a photograph:
features smaller than the resolution λ/(2·Bmax) are not constrained, and a
feature is only trusted when it survives a change of regularizer.

A quality verdict follows the summary: one "warning:" line on stderr for
each reason to doubt the image (χ²ᵣ well above its expected value, a run
stopped at -iter while still improving, a weight at the edge of the searched
range, starts that disagree, a data type fitted far worse), also in the FITS
header (NWARN, WARN1, ...) and in "warnings" of -json. -strict makes any
warning exit with status 1, after every output is written.

Outputs (OUT defaults to the first file's name with -image.fits):
  OUT.fits            the image, normalised to a total flux of 1, with provenance
  OUT.png             preview: north up, east left, scale bar, resolution circle
  OUT-vis2.png        V² data and model against spatial frequency
  OUT-t3phi.png       closure phases, data and model; likewise OUT-t3amp.png,
                      OUT-visamp.png and OUT-visphi.png for each other data
                      type fitted (data coloured by wavelength)
  OUT-residuals.png   residuals normalised by their errors
  OUT-lcurve.png      the weight path, when the weight was chosen automatically

Image cubes over wavelength: -channels all (one plane per channel), K (K
groups of adjacent channels) or a list such as 1-4,5-8 (channels numbered by
increasing wavelength) fits one image per group to that group's data, with
the spatial regularizer in each plane and -spectral across planes (smooth:
quadratic differences between neighbouring planes; joint: a support shared
by all planes). The gray image of all channels comes first and sets the
grid, the start and the spatial weight, shared among the planes by their
numbers of data. The outputs are then:
  OUT.fits            the cube, spectral axis WAVE (m), χ²ᵣ of each plane (CHI2Rnnn)
  OUT.png             the planes on one colour scale, labelled with their wavelengths
  OUT-planes.csv      per plane: wavelengths, data, χ²ᵣ, photocentre and size (mas)
  OUT-planes.png      photocentre and second-moment size against wavelength
  OUT-spectrum.png    total flux of each plane, only with correlated fluxes (V²
                      and closure phases are normalised and say nothing of it)

-star point|DIAMETER (with -channels, best all) fits instead a star whose
flux goes as λ to the power -star-index (default -4) plus one image of its
environment with its own fitted spectral index: OUT.fits is the environment,
with the star's share of the flux at the mean wavelength (STARF0) and the
indices (STARIDX, ENVIDX) in the header.` + bootstrapDoc

func runImage(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("image", "[options] FILE...", imageDoc, stderr)
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
const stretchUsage = "display stretch of the PNG previews: auto (asinh when the brightest pixels outshine the rest, else linear), linear, sqrt, asinh or log (the FITS image is not changed)"

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
