package workflow

import (
	"math"
	"strconv"
	"strings"

	"vcz/recon/batch"
	"vcz/runspec"
)

// BatchRequest is a batch as 'vcz batch' is asked for it: the epochs from a job file or
// split from data files, and the options that choose what runs and where.
type BatchRequest struct {
	Job    string       // job file ("": the epochs are split from Files)
	Files  []string     // data files, split into epochs at gaps longer than Gap days
	Gap    float64      // days
	Shared runspec.Spec // the options of every epoch (a job file may override them)
	Out    string       // output folder ("": the job file's, else "batch")
	Shard  string       // "K/N" ("": from the SLURM variables, else the whole batch)
	Joint  bool         // also reconstruct all epochs together
	// TemporalWeight is the temporal weight of the joint reconstruction, a positive number
	// or "auto".
	TemporalWeight string
}

// BatchPlan is a checked BatchRequest, ready to run in an existing output folder.
type BatchPlan struct {
	Epochs []*Epoch
	Out    string
	Shard  batch.Shard
	Lambda float64 // the temporal weight; 0 for auto
}

// PlanBatch reads the epochs of r, checks their names and files and the options, and makes
// the output folder, all before any work; getenv reads the SLURM variables. Errors are
// *InputError.
func PlanBatch(r BatchRequest, getenv func(string) string) (*BatchPlan, error) {
	epochs, jobOut, err := Epochs(r.Job, r.Files, r.Shared, r.Gap)
	if err != nil {
		return nil, err
	}
	p := &BatchPlan{Epochs: epochs, Out: r.Out}
	if p.Out == "" {
		p.Out = jobOut
	}
	if p.Out == "" {
		p.Out = "batch"
	}
	if p.Shard, err = ChooseShard(r.Shard, getenv); err != nil {
		return nil, err
	}
	if err := CheckEpochNames(epochs, r.Joint); err != nil {
		return nil, err
	}
	if err := CheckEpochFiles(epochs); err != nil {
		return nil, err
	}
	if r.Joint {
		if err := CheckJoint(epochs); err != nil {
			return nil, err
		}
	}
	if r.Joint && p.Shard.N > 1 {
		return nil, inputErrorf("batch: -joint needs all epochs in one run, not shard %s", p.Shard)
	}
	if r.Joint && strings.ToLower(r.TemporalWeight) != "auto" {
		var err error
		p.Lambda, err = strconv.ParseFloat(strings.TrimSpace(r.TemporalWeight), 64)
		if err != nil || !(p.Lambda > 0) || math.IsInf(p.Lambda, 0) {
			return nil, inputErrorf("batch: -temporal-weight %q: want a positive number or auto", r.TemporalWeight)
		}
	}
	if err := OutputFolder(p.Out); err != nil {
		return nil, inputErrorf("batch: -o: %v", err)
	}
	return p, nil
}
