/*
Vcz rebuilds images of the sky from optical and infrared long-baseline
interferometry data in the OIFITS format (v1: Pauls et al. 2005; v2: Duvert,
Young & Hummel 2017).

Usage:

	vcz COMMAND [options] [arguments]

Options may come before or after the file arguments; "--" ends the options.
Angles take units, always (uas or µas, mas, arcsec, deg, rad: 0.25mas), and
wavelengths too (nm, um or µm, m: 1.6um); a bare number is refused.

The commands are:

	inspect    summarise OIFITS files: targets, data, baselines, resolution
	image      reconstruct an image and write FITS, PNG and fit plots
	simulate   simulate OIFITS data of a model observed with an observing plan
	fit        fit parametric models (discs, limb darkening, binaries)
	compare    reconstruct with several regularizers side by side, with a report
	batch      image many epochs: in parallel, resumable, sharded for job arrays
	demo       reconstruct the embedded demo data set into a folder
	version    print the version
	help       show help for vcz or for one command

# Inspect

	vcz inspect [-json] [-o DIR] [selection] FILE...

prints the targets, instruments, number of valid, flagged and non-finite
points per data type, baselines, the nominal resolution λmin/(2·Bmax), the
largest constrained scale λmax/Bmin, a suggested grid (its field capped at
λmax/Bmin before the pixel count is rounded up to an FFT-friendly size, so
it may exceed that scale by one rounding step) and the MJD range.
Selection options (also of image, fit, compare and batch): -target,
-wave LOW:HIGH, -mjd LOW:HIGH, -ins NAMES. -o DIR (-plot, its earlier name)
writes plots of the (u,v) coverage and of each data type.

# Image

	vcz image [options] FILE... [-o OUT.fits]

reconstructs one image from the merged files. The main options: -n and
-pixel (or -fov) for the grid; -reg with mem, tv, smooth, compact and
priordist, alone or as a list with relative weights (mem,compact:0.1);
-weight (a number or auto: χ²ᵣ between its floor and its expected value); -prior and -start;
-support; -tv-eps (the gradient size below which total variation acts
quadratically); -use and -data-weights for the data types; -smearing (auto, on or
off: each channel's visibility averaged over its band, by default where that
exceeds the noise); -iter, -seed, -starts, -coarse, -no-amp-first (skip the
first pass on amplitudes), -workers; -stretch (auto, linear, sqrt, asinh or
log) for the previews; -no-png, -no-plots, -quiet, -json, -strict. -from-model FILE takes
the default field (three times the model's extent, its largest component
offset plus radius) and the start image from a model file written by
'vcz fit -save-model' or from 'vcz fit -json' output. Run `vcz image --help`
for the full list with defaults.

-channels all|K|LIST makes an image cube over wavelength instead: one plane
per channel, per K groups of adjacent channels, or per listed group of
channel numbers (1-4,5-8; channels counted by increasing wavelength), with
-spectral smooth|joint|none[:FACTOR] across planes. It writes the cube with a
spectral axis and per-plane χ²ᵣ, a montage, OUT-planes.csv and OUT-planes.png
(photocentre and size against wavelength). -star point|DIAMETER with
-star-index fits a star of power-law spectrum plus one environment image with
its own spectral index, and writes the environment.

-bootstrap K adds uncertainty maps: K reconstructions of the data resampled
with replacement (-bootstrap-unit exposure, the default, or baseline;
-bootstrap-seed), each started from the image at its weight, written as
OUT-boot-mean.fits, OUT-boot-std.fits, OUT-boot-signif.fits (mean / std) and
OUT-boot.png (contours at 3σ and 5σ; σ is estimated from the K replicates,
so fewer than 20 give a warning, as for a feature test). -feature x,y,r (mas) or -feature
MASK.fits, repeatable, reports how often a region is brighter or fainter
than a smooth reference (-feature-ref auto, disc or annulus) by more than
the noise, and its significance t with the false-alarm probability of
Student's t with K−1 degrees of freedom (the noise is estimated from the K
replicates), printed and under "bootstrap" in -json; fewer than 20
replicates give a warning. -bootstrap-shard K/N (or
slurm) makes one slice of the replicates, kept as OUT-boot-0001.fits, ...,
and -bootstrap-collect merges them (making any missing) into the maps.

# Simulate

	vcz simulate -plan PLAN.toml (-model SPEC | -image FILE.fits | -chromatic FILE.toml) -o OUT.oifits

writes OIFITS v2 data of a model observed with an observing plan; -help-plan
documents every plan key (each channel is averaged over its band unless the
plan says smearing = false, chromatic models with their spectra across the
band; write "visdiff" adds differential amplitudes and phases), -help-model the model
forms and -help-chromatic the chromatic models (components with spectral
indices, rotating discs emitting a line). -seed overrides the plan's noise
seed; -write-image FILE.fits also writes the -model as an image
(-write-n pixels of -write-pixel; -n and -pixel are earlier names).

# Fit

	vcz fit -model SPEC [options] FILE...

fits a sum of analytic components by Levenberg–Marquardt; "~" marks a free
parameter, "=" a fixed one, "(min..max)" its bounds. It prints each parameter
± 1σ (covariance scaled by χ²ᵣ), correlations and χ²ᵣ per data type, and
each component relative to the brightest: separation (mas), position angle
(degrees east of north), flux ratio and Δmag, with 1σ errors propagated from
the covariance (also in -json and the -save-model file). The significance of
each component (-no-significance skips it) is the χ² of the model without it
against the χ² with it, rescaled so that the latter's χ²ᵣ is 1, as a p-value
of the χ² distribution with the component's number of free parameters and a
Gaussian-equivalent σ; that local figure holds at a given position. A
searched position (-grid-search, or free x and y with several starts)
reaches it by chance more often, so it also gets a field-wide figure, the
chance that noise alone gives so large a Δχ² anywhere in the searched field,
from -search-draws simulated searches on the data's (u,v) points and error
bars. Calibration errors outside the error bars inflate both.
-smearing (auto by default, as for images; on, off) averages the model over
each channel's band.
-limits PREFIX writes detection limits of a further point companion, the
3σ and 5σ Δmag against separation (mean and worst over position angle), as
PREFIX.csv and PREFIX.png, on a -limits-nsep × -limits-npa grid;
-limits-injection adds limits by injection–recovery of fake companions
into the data beside them. A
component whose x and y are both free gets 16 starts (-starts), seeded from
the minima of a quick χ² map of its position, so a companion is found from a
poor guess; -iter limits each start's iterations (-max-iter, its earlier
name) and -seed seeds them. -grid-search maps χ² of a point companion of
flux ratio -grid-ratio over -grid-nsep separations in -grid-sep (MIN:MAX)
and -grid-npa position angles (-grid-refit refits the model at every cell),
then fits it. -bootstrap K adds each parameter's spread over K refits of
resampled data (-bootstrap-unit, -bootstrap-seed, as for image).
-o PREFIX writes the data-fit plots (-plot, its earlier name); -write-image writes the fitted model as a FITS prior or start
image (-write-n pixels of -write-pixel; -n and -pixel are earlier names),
and -save-model FILE.toml as a model file for -model or for
'vcz image -from-model'.

# Compare

	vcz compare [options] FILE... -o DIR

runs every regularizer (or those listed with -reg) on one grid and start, in
parallel, and writes per-regularizer images, a panel, spread and robust-
feature maps, L-curves, data-versus-model plots, compare.csv/.json and
report.html. -weight sets one weight for all, -weights one per regularizer
(mem=1e4,tv=auto); -parallel caps the regularizers run at once; -bootstrap K
adds each one's standard deviation map; -stretch sets the previews' stretch.
The other options are those of image.

# Batch

	vcz batch [options] (-job FILE | FILE...)

reconstructs one image per epoch, concurrently within the CPU budget,
resumable, sharded by -shard K/N or the SLURM array variables; -collect merges
shard summaries; -joint adds a temporal regularizer across epochs
(-temporal-weight, auto by default), written as joint.fits, EPOCH-joint.fits
and .png, montage-joint.png and epochs-joint.gif. FILE arguments are split
into epochs at gaps in MJD longer than -gap days (0.5); -force redoes epochs
found complete; -cpus caps the CPUs of all epochs together (-parallel, its
earlier name); -o names the folder (-out, its earlier name). Options
of image apply to every epoch; -strict fails the run on any warning. In a
job file ([image] and each [[epoch]]) the keys are the flag names without
the dash: reg, n, iter, tv-eps, data-weights, ins, no-amp-first and so on
(job files of earlier versions named some differently: regularizer, grid,
iterations, tv_eps, data_weights, instruments, amplitudes_first). With
-channels (or -star) each epoch is a cube (or a star and its environment),
as in image; -joint then refuses. compare takes -channels and -spectral too:
each regularizer's run is then a cube, NAME-cube.fits; the table, panel and
maps compare the gray images the cubes started from, and the cubes are
compared plane by plane (each plane's χ²ᵣ, the spread and common flux between
the regularizers: compare-planes.csv, the text table and the report, and the
montage compare-planes.png, a row per regularizer).

The FITS header of every reconstruction records the options that differ
from the defaults as HISTORY cards "option: NAME=VALUE", the canonical
form that batch also hashes to find finished epochs; RUNSPEC holds the same
lines as JSON, DPATHn and DSHAn each data file by the path given and its
SHA-256, DATE-OBS, MJD-OBS and MJD-END the observation's dates, WAVEMIN and
WAVEMAX the wavelengths fitted, INSTRUME and TELESCOP the INSNAMEs and
ARRNAMEs; CHECKSUM and DATASUM follow the FITS checksum convention.
'vcz image -rerun FILE.fits' makes the result again from its header (run it
from the folder the data paths are relative to): the same options, the data
files checked against their SHA-256, the same pixels.

# Demo

	vcz demo [-o DIR] [-json] [-strict] [-quiet]

writes the embedded demo data, its reconstruction, the model it was
simulated from and a side-by-side comparison into DIR (default vcz-demo).

# Quality verdict

Every reconstruction (image, demo, compare, batch) and every fit is judged
once it is done (a fit on χ²ᵣ, more than 1.25 times its expected value or
far below it, and on convergence; its warnings go to stderr, "warnings" of
-json and the -save-model header): one warning for each reason to doubt it — χ²ᵣ more than 1.25 times
its expected value, one data type fitted far worse than the others, the
final run stalled or stopped at its iteration limit (-iter) while the
objective still fell (for a cube, its planes' runs in the last sweep over
the planes, named), an automatic weight at the edge of the searched range,
or several starts that ended far apart — each saying what to try. The image
is written all the same. The warnings go

	on stderr    one line each after the summary: "warning: TEXT", in
	             compare "warning: NAME: TEXT", in batch
	             "warning: epoch NAME: TEXT" (also with -quiet)
	FITS header  NWARN = their number (0 when none) and WARN1, WARN2, ...
	             with the full text in ASCII, long ones continued on
	             CONTINUE cards (long-string convention, announced by
	             LONGSTRN)
	JSON         "warnings": a list of strings, [] when none (image -json;
	             compare.json and compare -json per row; batch
	             summary.json and status files per epoch)
	tables       the number of warnings in compare.csv and summary.csv,
	             and in the text tables

A summary with warnings says "finished with N warnings" instead of
"converged". -strict (image, demo, compare, batch, batch -collect, fit) exits with
status 1 when there is any warning, after writing every output; without it
the status stays 0. Neither the warnings nor -strict enter the batch hash,
so a rerun with -strict finds finished epochs complete and reports their
warnings from the status files. The joint reconstruction of batch -joint
has a verdict of its own (planes stopped at their iteration limit, sweeps
over the epochs that did not settle, an automatic temporal weight at the
upper or lower edge of the range it searched), printed as "warning: joint:
..." lines after the epochs' warnings and kept in NWARN and WARNn of
joint.fits and of each EPOCH-joint.fits; -strict counts it too.

# Exit status

0 on success (warnings included: a run that did not converge says so in a
warning), 1 when the computation failed (non-finite values, an output that
could not be written) or, with -strict, when the quality verdict gave a
warning, 2 for bad input files, bad options or wrong usage, 130 or 143 after
SIGINT or SIGTERM. Errors are one line on standard error, "vcz COMMAND: …",
naming the file and, where it applies, the table (HDU number and EXTNAME), row
and column. Outputs are written to a temporary file and renamed, so an
interrupted run never leaves a half-written file.

# Outputs

-o names the output of every command: a FITS file for image, an OIFITS file
for simulate, a folder for compare, batch, inspect and demo, and a file-name
prefix for fit's plots. A folder named by -o is made when missing; a file whose
folder is missing is refused before any work, as is an output that would
replace an input. -json prints a summary on stdout in one shape for every
command (chi2r, chi2r_by_type of {n, chi2r}, grid of {n, pixel_mas, …}).

A reconstructed image is one solution consistent with the data, not a
photograph: structure smaller than the resolution λ/(2·Bmax) is not
constrained.
*/
package main
