package main

import (
	"flag"
	"fmt"
	"io"
	"os"
	"strings"
	"sync"
	"time"

	"vcz/dataset"
	"vcz/io/oifits"
	"vcz/output"
	"vcz/recon/batch"
	"vcz/runspec"
	"vcz/workflow"
)

// bootstrapDoc is the part of `vcz image -help` about the bootstrap.
const bootstrapDoc = `
Uncertainty: -bootstrap K reconstructs K resamplings of the data drawn with
replacement (whole exposures by default: every channel, baseline and
triangle of one file and MJD together; -bootstrap-unit baseline draws each
baseline and triangle row instead), each started from the image of the full
data at its weight and run to convergence (up to four times -iter: one
stopped early stays near the image and makes the spread too small). The
replicates are moved onto the image by whole pixels
when the data do not fix the position (no absolute phases). Outputs:
  OUT-boot-mean.fits    mean of the replicates
  OUT-boot-std.fits     standard deviation per pixel
  OUT-boot-signif.fits  mean / standard deviation
  OUT-boot.png          the image with significance contours at 3σ and 5σ
-feature x,y,r (mas, x east) or -feature MASK.fits weighs a region against
a smooth reference (the azimuthal average about the photocentre on a
stellar disc, the mean of the annulus out to twice its radius otherwise):
the fraction of replicates in which it is brighter, or fainter, than the
reference by more than the noise (the spread of that difference over the
replicates). -feature may be given several times.
For large K, -bootstrap-shard K/N (or slurm: from the SLURM job-array
variables) makes only every N-th replicate, starting at the K-th, and keeps
each as OUT-boot-0001.fits, ...; -bootstrap-collect then makes the maps,
taking the replicates kept by the shards (or an interrupted run) and making
any that are missing. Replicates of other data or settings are not taken.`

// getenv reads the environment (the SLURM variables of -bootstrap-shard slurm).
var getenv = os.Getenv

// featureList collects the -feature flags.
type featureList []string

func (f *featureList) String() string     { return strings.Join(*f, " ") }
func (f *featureList) Set(s string) error { *f = append(*f, s); return nil }

// bootstrapFlags are the bootstrap options of `vcz image`.
type bootstrapFlags struct {
	resampling
	ref      *string
	shard    *string
	collect  *bool
	features featureList
}

// resampling holds the flags every command with a bootstrap takes: -bootstrap K,
// -bootstrap-seed and -bootstrap-unit.
type resampling struct {
	k    *int
	seed *uint64
	unit *string
}

// registerResampling adds the resampling flags to fs; kUsage is -bootstrap's help.
func registerResampling(fs *flag.FlagSet, kUsage string) resampling {
	return resampling{
		k:    fs.Int("bootstrap", 0, kUsage),
		seed: fs.Uint64("bootstrap-seed", 1, "seed of the resampling: the same seed draws the same replicates"),
		unit: fs.String("bootstrap-unit", "exposure", "what is drawn with replacement: exposure (all data of one file and MJD) or baseline (each baseline and triangle row)"),
	}
}

// parseUnit reads -bootstrap-unit, naming the command in its error.
func (r resampling) parseUnit(cmd string) (dataset.Unit, error) {
	u, err := dataset.ParseUnit(*r.unit)
	if err != nil {
		return u, badInputf("%s: -bootstrap-unit %v", cmd, err)
	}
	return u, nil
}

func registerBootstrap(fs *flag.FlagSet) *bootstrapFlags {
	r := registerResampling(fs, "reconstruct this many resamplings of the data for uncertainty maps (0: none)")
	b := &bootstrapFlags{
		resampling: r,
		ref:        fs.String("feature-ref", "auto", "reference of -feature: auto (disc on a fitted uniform disc, else annulus), disc (azimuthal average) or annulus"),
	}
	b.shard = fs.String("bootstrap-shard", "", "make only shard K/N of the replicates and keep them in files (slurm: from SLURM_ARRAY_TASK_ID); merge with -bootstrap-collect")
	b.collect = fs.Bool("bootstrap-collect", false, "make the maps from the replicates kept in files by -bootstrap-shard, making any missing")
	fs.Var(&b.features, "feature", "with -bootstrap: weigh a region, x,y,r in mas or a FITS mask (repeatable)")
	return b
}

// bootstrapRequest is the checked content of the bootstrap flags.
type bootstrapRequest struct {
	opt      workflow.BootstrapOptions
	regions  []workflow.Region
	ref      string
	requests bool // -bootstrap was given
	keep     bool // replicates kept in files (-bootstrap-shard or -bootstrap-collect)
}

// check reads the flags; errors name the flag and exit 2.
func (b *bootstrapFlags) check() (bootstrapRequest, error) {
	var r bootstrapRequest
	if *b.k < 0 || *b.k == 1 {
		return r, badInputf("image: -bootstrap %d: want 0 (none) or at least 2 replicates", *b.k)
	}
	u, err := b.parseUnit("image")
	if err != nil {
		return r, err
	}
	switch *b.ref {
	case "auto", "disc", "annulus":
	default:
		return r, badInputf("image: -feature-ref %q: want auto, disc or annulus", *b.ref)
	}
	if len(b.features) > 0 && *b.k == 0 {
		return r, badInputf("image: -feature needs -bootstrap K")
	}
	for _, f := range b.features {
		reg, err := workflow.ParseRegion(f)
		if err != nil {
			return r, badInputf("image: %v", err)
		}
		r.regions = append(r.regions, reg)
	}
	r.opt = workflow.BootstrapOptions{Replicates: *b.k, Seed: *b.seed, Unit: u}
	r.ref, r.requests = *b.ref, *b.k > 0
	if (*b.shard != "" || *b.collect) && *b.k == 0 {
		return r, badInputf("image: -bootstrap-shard and -bootstrap-collect need -bootstrap K")
	}
	if *b.shard != "" && *b.collect {
		return r, badInputf("image: -bootstrap-shard and -bootstrap-collect exclude each other: run the shards, then collect")
	}
	if *b.shard != "" {
		text := *b.shard
		if text == "slurm" {
			text = ""
		}
		sh, err := workflow.ChooseShard(text, getenv)
		if err != nil {
			return r, badInputf("image: -bootstrap-shard: %v", strings.TrimPrefix(err.Error(), "batch: "))
		}
		if *b.shard == "slurm" && sh.N <= 1 {
			return r, badInputf("image: -bootstrap-shard slurm: SLURM_ARRAY_TASK_ID is not set (or the array has one task)")
		}
		r.opt.Shard = sh
	}
	r.keep = *b.shard != "" || *b.collect
	return r, nil
}

// BootstrapSummary is the "bootstrap" object of `vcz image -json`.
type BootstrapSummary struct {
	Replicates   int                    `json:"replicates"`
	Good         int                    `json:"good"`
	NotConverged int                    `json:"not_converged"`
	Seed         uint64                 `json:"seed"`
	Unit         string                 `json:"unit"`
	Units        int                    `json:"units"`
	Aligned      bool                   `json:"aligned"`
	Seconds      float64                `json:"seconds"`
	Outputs      *output.BootstrapPaths `json:"outputs,omitempty"`
	// Shard is "K/N" for a shard of a job array (which writes no maps), Loaded the
	// replicates taken from files of an earlier run or of the shards.
	Shard     string             `json:"shard,omitempty"`
	Loaded    int                `json:"loaded"`
	Features  []workflow.Feature `json:"features"`
	Warnings  []string           `json:"warnings"`
	MaxSignif float64            `json:"max_significance"`
}

// runBootstrap runs the bootstrap around run (the full data's reconstruction written to
// out) and writes its maps beside out.
func runBootstrap(req bootstrapRequest, inputs []string, files []*oifits.File, d *dataset.Data, spec runspec.Spec, run output.Run, outs output.Outputs, out string, quiet bool, stderr io.Writer) (*BootstrapSummary, error) {
	im, err := workflow.NewImage(files, d, spec)
	if err != nil {
		return nil, err
	}
	opt := req.opt
	if req.keep {
		settings := spec.String() + fmt.Sprintf("bootstrap = %d\nbootstrap-seed = %d\nbootstrap-unit = %s\n", opt.Replicates, opt.Seed, opt.Unit)
		hash, err := batch.Hash(settings, inputs)
		if err != nil {
			return nil, failure(err)
		}
		g := run.Result.Grid
		opt.Store = workflow.ReplicateFiles{Stem: output.Stem(out), Hash: hash, N: g.N, Pixel: g.Pixel}
	}
	t0 := time.Now()
	var mu sync.Mutex
	last := time.Time{}
	if !quiet {
		opt.Events = func(ev workflow.Event) {
			mu.Lock()
			defer mu.Unlock()
			if !ev.Ended || (time.Since(last) < 2*time.Second && ev.Pending+ev.Running > 0) {
				return
			}
			last = time.Now()
			left := ""
			if ev.Left > 0 {
				left = fmt.Sprintf(", about %s left", ev.Left.Round(time.Second))
			}
			// The replicates to make: those of the shard not found in files.
			todo := ev.Done + ev.Failed + ev.Running + ev.Pending
			fmt.Fprintf(stderr, "bootstrap: %d of %d replicates made (%d failed), %s%s\n", ev.Done, todo, ev.Failed, ev.Elapsed.Round(time.Second), left)
		}
	}
	b, err := im.Bootstrap(run.Result, opt)
	if err != nil {
		if _, ok := err.(*workflow.InputError); ok {
			return nil, badInput(err)
		}
		return nil, failure(err)
	}
	if opt.Shard.N > 1 {
		s := &BootstrapSummary{Replicates: opt.Replicates, Seed: b.Seed, Unit: b.Unit.String(), Units: b.Units,
			Seconds: time.Since(t0).Seconds(), Shard: opt.Shard.String(), Loaded: b.Loaded, Features: []workflow.Feature{}, Warnings: []string{}}
		for k, img := range b.Images {
			if img != nil {
				s.Good++
			} else if opt.Shard.Take(k) {
				s.Warnings = append(s.Warnings, fmt.Sprintf("replicate %d failed: %v", k+1, output.OneLine(b.Failed[k].Error())))
			}
		}
		s.NotConverged = len(b.NotConverged)
		return s, nil
	}
	maps := output.BootstrapMaps{Mean: b.Mean, Std: b.Std, Significance: b.Significance, Replicates: opt.Replicates,
		Good: b.Good(), NotConverged: len(b.NotConverged), Seed: b.Seed, Unit: b.Unit.String(), Units: b.Units, Aligned: b.Aligned}
	paths, err := outs.WriteBootstrap(out, run, maps)
	if err != nil {
		return nil, failure(err)
	}
	s := &BootstrapSummary{Replicates: opt.Replicates, Good: b.Good(), NotConverged: len(b.NotConverged), Seed: b.Seed,
		Unit: b.Unit.String(), Units: b.Units, Aligned: b.Aligned, Seconds: time.Since(t0).Seconds(), Outputs: &paths, Loaded: b.Loaded,
		Features: []workflow.Feature{}, Warnings: output.NonNil(b.Warnings)}
	for _, v := range b.Significance {
		s.MaxSignif = max(s.MaxSignif, v)
	}
	for _, r := range req.regions {
		disc := req.ref == "disc" || (req.ref == "auto" && workflow.DiscReference(run.Result.Grid, r))
		f, err := workflow.FeatureTest(b, run.Result.Image, r, disc)
		if err != nil {
			return nil, badInput(err)
		}
		s.Features = append(s.Features, f)
	}
	return s, nil
}

// printBootstrap prints the bootstrap's summary lines.
func printBootstrap(w io.Writer, s *BootstrapSummary) {
	if s.Shard != "" {
		fmt.Fprintf(w, "Bootstrap:   shard %s: %d replicates at hand (%d from files), %.1f s; merge the shards with -bootstrap-collect\n", s.Shard, s.Good, s.Loaded, s.Seconds)
		return
	}
	align := ""
	if s.Aligned {
		align = ", aligned on the image"
	}
	fmt.Fprintf(w, "Bootstrap:   %d of %d replicates (%s resampling of %d units, seed %d%s), %.1f s; peak significance %.3g\n",
		s.Good, s.Replicates, s.Unit, s.Units, s.Seed, align, s.Seconds, s.MaxSignif)
	for _, f := range s.Features {
		fmt.Fprintf(w, "Feature:     %s\n", f)
	}
	if s.Loaded > 0 {
		fmt.Fprintf(w, "             %d replicates taken from files\n", s.Loaded)
	}
	for _, p := range []string{s.Outputs.Mean, s.Outputs.Std, s.Outputs.Significance, s.Outputs.PNG} {
		if p != "" {
			fmt.Fprintf(w, "Wrote %s\n", p)
		}
	}
}

// bootstrapJSON is the summary of `vcz image -json` with the bootstrap.
type bootstrapJSON struct {
	output.ImageSummary
	Bootstrap *BootstrapSummary `json:"bootstrap,omitempty"`
}

// bootstrapPaths are the outputs of a bootstrap beside out, for the checks before the run.
func bootstrapPaths(out string) []string {
	stem := output.Stem(out)
	return []string{stem + "-boot-mean.fits", stem + "-boot-std.fits", stem + "-boot-signif.fits", stem + "-boot.png"}
}
