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
