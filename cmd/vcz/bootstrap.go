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
	"vcz/output"
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
	return workflow.ParseBootstrapUnit(cmd, *r.unit)
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

// check reads the flags; errors name the flag and exit 2.
func (b *bootstrapFlags) check() (workflow.BootstrapRequest, error) {
	return workflow.NewBootstrapRequest(workflow.BootstrapArgs{Replicates: *b.k, Seed: *b.seed, Unit: *b.unit, Ref: *b.ref,
		Shard: *b.shard, Collect: *b.collect, Features: b.features}, getenv)
}

// bootstrapEvents shows the progress of the replicates on stderr, at most every two
// seconds; nil when quiet.
func bootstrapEvents(stderr io.Writer, quiet bool) func(workflow.Event) {
	if quiet {
		return nil
	}
	var mu sync.Mutex
	last := time.Time{}
	return func(ev workflow.Event) {
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

// bootstrapJSON is the summary of `vcz image -json` with the bootstrap.
type bootstrapJSON struct {
	output.ImageSummary
	Bootstrap *workflow.BootstrapSummary `json:"bootstrap,omitempty"`
}
