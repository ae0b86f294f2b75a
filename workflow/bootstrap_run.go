package workflow

import (
	"fmt"
	"io"
	"strings"
	"time"

	"vcz/dataset"
	"vcz/output"
	"vcz/recon/batch"
)

// BootstrapArgs are the bootstrap options of 'vcz image' as the user gave them.
type BootstrapArgs struct {
	Replicates int      // -bootstrap K (0: none)
	Seed       uint64   // -bootstrap-seed
	Unit       string   // -bootstrap-unit: exposure or baseline
	Ref        string   // -feature-ref: auto, disc or annulus
	Shard      string   // -bootstrap-shard K/N or slurm ("": none)
	Collect    bool     // -bootstrap-collect
	Features   []string // -feature, each x,y,r or a FITS mask
}

// BootstrapRequest is the checked content of BootstrapArgs.
type BootstrapRequest struct {
	Options BootstrapOptions
	Regions []Region
	Ref     string
	Keep    bool // replicates kept in files (-bootstrap-shard or -bootstrap-collect)
}

// Requested reports whether a bootstrap was asked for.
func (r BootstrapRequest) Requested() bool { return r.Options.Replicates > 0 }

// ParseBootstrapUnit reads -bootstrap-unit; its error names the command cmd and is an
// *InputError.
func ParseBootstrapUnit(cmd, text string) (dataset.Unit, error) {
	u, err := dataset.ParseUnit(text)
	if err != nil {
		return u, inputErrorf("%s: -bootstrap-unit %v", cmd, err)
	}
	return u, nil
}

// ResamplingOptions checks the resampling options of the command cmd (-bootstrap K,
// -bootstrap-seed, -bootstrap-unit): K is 0 (none) or at least 2. Errors are *InputError.
func ResamplingOptions(cmd string, k int, seed uint64, unit string) (BootstrapOptions, error) {
	if k < 0 || k == 1 {
		return BootstrapOptions{}, inputErrorf("%s: -bootstrap %d: want 0 (none) or at least 2 replicates", cmd, k)
	}
	u, err := ParseBootstrapUnit(cmd, unit)
	return BootstrapOptions{Replicates: k, Seed: seed, Unit: u}, err
}

// NewBootstrapRequest checks a's options, reading the SLURM variables of "-bootstrap-shard
// slurm" with getenv. Errors are *InputError naming the option.
func NewBootstrapRequest(a BootstrapArgs, getenv func(string) string) (BootstrapRequest, error) {
	var r BootstrapRequest
	opt, err := ResamplingOptions("image", a.Replicates, a.Seed, a.Unit)
	if err != nil {
		return r, err
	}
	switch a.Ref {
	case "auto", "disc", "annulus":
	default:
		return r, inputErrorf("image: -feature-ref %q: want auto, disc or annulus", a.Ref)
	}
	if len(a.Features) > 0 && a.Replicates == 0 {
		return r, inputErrorf("image: -feature needs -bootstrap K")
	}
	for _, f := range a.Features {
		reg, err := ParseRegion(f)
		if err != nil {
			return r, inputErrorf("image: %v", err)
		}
		r.Regions = append(r.Regions, reg)
	}
	r.Options = opt
	r.Ref = a.Ref
	if (a.Shard != "" || a.Collect) && a.Replicates == 0 {
		return r, inputErrorf("image: -bootstrap-shard and -bootstrap-collect need -bootstrap K")
	}
	if a.Shard != "" && a.Collect {
		return r, inputErrorf("image: -bootstrap-shard and -bootstrap-collect exclude each other: run the shards, then collect")
	}
	if a.Shard != "" {
		text := a.Shard
		if text == "slurm" {
			text = ""
		}
		sh, err := ChooseShard(text, getenv)
		if err != nil {
			msg := strings.TrimPrefix(err.Error(), "batch: ")
			return r, inputErrorf("image: -bootstrap-shard: %v", strings.TrimPrefix(msg, "-shard: "))
		}
		if a.Shard == "slurm" && sh.N <= 1 {
			return r, inputErrorf("image: -bootstrap-shard slurm: SLURM_ARRAY_TASK_ID is not set (or the array has one task)")
		}
		r.Options.Shard = sh
	}
	r.Keep = a.Shard != "" || a.Collect
	return r, nil
}

// BootstrapOutputs are the files a bootstrap writes beside out, for the checks before the
// run (output.Outputs.WriteBootstrap names them).
func BootstrapOutputs(out string) []string {
	stem := output.Stem(out)
	return []string{stem + "-boot-mean.fits", stem + "-boot-std.fits", stem + "-boot-signif.fits", stem + "-boot.png"}
}

// BootstrapSummary is the "bootstrap" object of 'vcz image -json'.
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
	Shard    string    `json:"shard,omitempty"`
	Loaded   int       `json:"loaded"`
	Features []Feature `json:"features"`
	Warnings []string  `json:"warnings"`
	// MaxSignif is the peak of the significance map, mean/σ with σ estimated from the Good
	// replicates.
	MaxSignif float64 `json:"max_significance"`
}

// ImageBootstrap runs the bootstrap of req around run, the reconstruction of im's data
// written to out (inputs are the data files as the user named them, for the hash of kept
// replicates), and writes its maps beside out as outs says; a shard of a job array writes
// no maps. events, when non-nil, follows the replicates. Maps (and feature tests) from fewer
// than MinReplicates replicates add a warning. Errors of the input (a -feature
// that does not fit the image) are *InputError.
func (im *Image) ImageBootstrap(req BootstrapRequest, inputs []string, run output.Run, outs output.Outputs, out string, events func(Event)) (*BootstrapSummary, error) {
	opt := req.Options
	opt.Events = events
	if req.Keep {
		settings := im.Spec.String() + fmt.Sprintf("bootstrap = %d\nbootstrap-seed = %d\nbootstrap-unit = %s\n", opt.Replicates, opt.Seed, opt.Unit)
		hash, err := batch.Hash(settings, inputs)
		if err != nil {
			return nil, err
		}
		g := run.Result.Grid
		opt.Store = ReplicateFiles{Stem: output.Stem(out), Hash: hash, N: g.N, Pixel: g.Pixel}
	}
	t0 := time.Now()
	b, err := im.Bootstrap(run.Result, opt)
	if err != nil {
		return nil, err
	}
	if opt.Shard.N > 1 {
		s := &BootstrapSummary{Replicates: opt.Replicates, Seed: b.Seed, Unit: b.Unit.String(), Units: b.Units,
			Seconds: time.Since(t0).Seconds(), Shard: opt.Shard.String(), Loaded: b.Loaded, Features: []Feature{}, Warnings: []string{}}
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
		return nil, err
	}
	s := &BootstrapSummary{Replicates: opt.Replicates, Good: b.Good(), NotConverged: len(b.NotConverged), Seed: b.Seed,
		Unit: b.Unit.String(), Units: b.Units, Aligned: b.Aligned, Seconds: time.Since(t0).Seconds(), Outputs: &paths, Loaded: b.Loaded,
		Features: []Feature{}, Warnings: output.NonNil(b.Warnings)}
	for _, v := range b.Significance {
		s.MaxSignif = max(s.MaxSignif, v)
	}
	for _, r := range req.Regions {
		disc := req.Ref == "disc" || (req.Ref == "auto" && DiscReference(run.Result.Grid, r))
		f, err := FeatureTest(b, run.Result.Image, r, disc)
		if err != nil {
			return nil, err
		}
		s.Features = append(s.Features, f)
	}
	what := "the significance map (its peak and its 3σ and 5σ contours)"
	if len(req.Regions) > 0 {
		what += " and the feature test"
	}
	if w := FewReplicatesWarning(b.Good(), what); w != "" {
		s.Warnings = append(s.Warnings, w)
	}
	return s, nil
}

// WriteText writes the bootstrap's summary lines as 'vcz image -bootstrap' prints them.
func (s *BootstrapSummary) WriteText(w io.Writer) {
	if s.Shard != "" {
		fmt.Fprintf(w, "Bootstrap:   shard %s: %d replicates at hand (%d from files), %.1f s; merge the shards with -bootstrap-collect\n", s.Shard, s.Good, s.Loaded, s.Seconds)
		return
	}
	align := ""
	if s.Aligned {
		align = ", aligned on the image"
	}
	fmt.Fprintf(w, "Bootstrap:   %d of %d replicates (%s resampling of %d units, seed %d%s), %.1f s; peak significance %.3g (mean/σ, σ estimated from %d replicates)\n",
		s.Good, s.Replicates, s.Unit, s.Units, s.Seed, align, s.Seconds, s.MaxSignif, s.Good)
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
