package workflow

import (
	"errors"
	"fmt"
	"math"

	"vcz/dataset"
	"vcz/recon"
	"vcz/recon/batch"
)

// BootstrapOptions configure a bootstrap of a reconstruction. The zero value of every field
// but Replicates gives the documented default.
type BootstrapOptions struct {
	// Replicates is the number K of reconstructions on resampled data; at least 2.
	Replicates int
	// Seed chooses the resamplings: replicate k draws its units from (Seed, k) alone
	// (dataset.Groups.Draw).
	Seed uint64
	// Unit is what is drawn with replacement: whole exposures (the default) or table rows.
	Unit dataset.Unit
	// Budget is the number of replicates run at once, each with one transform worker; 0
	// means GOMAXPROCS. It changes only the time taken, never the maps.
	Budget int
	// Events, when non-nil, follows the replicates (RunTasks).
	Events func(Event)
	// Shard, when N > 1, runs only the replicates k with Shard.Take(k) (a task of a job
	// array); the maps are then made by Summarize once every replicate is at hand.
	Shard batch.Shard
	// Store, when non-nil, keeps replicates across runs: a replicate it has is not
	// recomputed, and every replicate computed is saved to it as soon as it is done.
	Store ReplicateStore
}

// ReplicateStore keeps the images of bootstrap replicates, e.g. in files (ReplicateFiles).
type ReplicateStore interface {
	// Load returns replicate k when the store has it for the same run.
	Load(k int) (r Replicate, ok bool)
	// Save keeps replicate k.
	Save(k int, r Replicate) error
}

// Replicate is the outcome of one bootstrap replicate.
type Replicate struct {
	Image     []float64
	Iter      int
	Converged bool
}

// Bootstrap is the outcome of a bootstrap: K reconstructions on data resampled with
// replacement (Efron & Tibshirani 1993, An Introduction to the Bootstrap, ch. 6 and 8), each
// started from the full data's image at the full data's weight, and their per-pixel
// statistics.
type Bootstrap struct {
	Unit  dataset.Unit
	Units int // number of resampling units of the data
	Seed  uint64
	N     int     // pixels per side
	Pixel float64 // rad

	// Images are the replicates' images (flux 1 unless the problem is unnormalised), moved by
	// Shifts (whole pixels along x and y indices) onto the full data's image when Aligned;
	// nil for a replicate that failed or that another shard makes.
	Images  [][]float64
	Shifts  [][2]int
	Aligned bool
	// Mean, Std and Significance are the per-pixel mean over the replicates, the standard
	// deviation (with K − 1 in the denominator) and Mean/Std (0 where Std is 0).
	Mean, Std, Significance []float64

	// Iter are the iterations of each replicate's final run; NotConverged the numbers
	// (0-based) of the replicates whose final run stopped before its convergence tests
	// were met; Failed the errors of replicates that gave no image, by number.
	Iter         []int
	NotConverged []int
	Failed       map[int]error
	// Loaded is the number of replicates taken from BootstrapOptions.Store.
	Loaded int
	// Warnings say why the maps may mislead, one sentence each.
	Warnings []string
}

// Good returns the number of replicates that gave an image.
func (b *Bootstrap) Good() int { return len(b.Images) - len(b.Failed) }

// Bootstrap runs the bootstrap of the image's problem around full, the result of Run (or
// recon.Solve) on the full data.
func (im *Image) Bootstrap(full *recon.Result, opt BootstrapOptions) (*Bootstrap, error) {
	return RunBootstrap(im.Problem, im.Settings, full, opt)
}

// RunBootstrap reconstructs opt.Replicates resamplings of p.Data with the problem p and the
// settings s, each on full's grid, started from full's image and at full's weight (no weight
// search), with the exact phase terms from the start, one start, no coarse grid, one
// transform worker and ReplicateIterFactor times the iteration limit; the replicates run through RunTasks, opt.Budget at once. When the data
// do not fix the position of the object (no absolute visibility phases fitted), every
// replicate is moved by whole pixels onto full's image (the alignment of the comparison,
// alignImages) before the statistics (Summarize). Errors of the input are *InputError; a
// replicate that fails is recorded in Failed, and the bootstrap fails only when fewer than
// two replicates gave an image. With opt.Shard of several, only the shard's replicates are
// made (and stored), and the maps are left to Summarize.
func RunBootstrap(p recon.Problem, s recon.Settings, full *recon.Result, opt BootstrapOptions) (*Bootstrap, error) {
	if opt.Replicates < 2 {
		return nil, inputErrorf("-bootstrap %d: want at least 2 replicates", opt.Replicates)
	}
	if full == nil || len(full.Image) != full.Grid.N*full.Grid.N || full.Grid.N == 0 {
		panic("workflow: RunBootstrap: no full-data result")
	}
	g := p.Data.Group(opt.Unit)
	if g.Len() < 2 {
		return nil, inputErrorf("-bootstrap: the data hold %d %s(s): resampling needs at least 2", g.Len(), opt.Unit)
	}
	n := full.Grid.N
	b := &Bootstrap{Unit: opt.Unit, Units: g.Len(), Seed: opt.Seed, N: n, Pixel: full.Grid.Pixel,
		Images: make([][]float64, opt.Replicates), Iter: make([]int, opt.Replicates), Failed: map[int]error{}}
	choice := full.Grid
	rp := p
	rp.Choice = &choice
	rp.Grid = choice.Grid
	if p.Reg != nil {
		rp.Weight = full.Weight
	}
	rp.Start = recon.Start{Kind: recon.StartImage, Image: full.Image, ImageN: n, ImagePixel: full.Grid.Pixel}
	rs := s
	rs.Starts, rs.CoarseToFine, rs.PhaseSmoothing, rs.Workers, rs.Progress = 1, false, -1, 1, interruptible(nil)
	rs.MaxIter = ReplicateIterFactor * max(s.MaxIter, 0)
	if s.MaxIter <= 0 {
		rs.MaxIter = ReplicateIterFactor * recon.DefaultMaxIter
	}
	converged := make([]bool, opt.Replicates)
	errs := make([]error, opt.Replicates)
	var tasks []Task
	var taskK []int // the replicate of each task
	for k := range opt.Replicates {
		if !opt.Shard.Take(k) {
			continue
		}
		if opt.Store != nil {
			if r, ok := opt.Store.Load(k); ok && len(r.Image) == n*n {
				b.Images[k], b.Iter[k], converged[k] = r.Image, r.Iter, r.Converged
				b.Loaded++
				continue
			}
		}
		taskK = append(taskK, k)
		tasks = append(tasks, Task{Name: fmt.Sprintf("bootstrap replicate %d", k+1), Workers: 1, Do: func() error {
			q := rp
			q.Data = p.Data.Resample(&g, g.Draw(opt.Seed, k))
			res, err := solveFinite(q, rs)
			if err == nil && opt.Store != nil {
				err = opt.Store.Save(k, Replicate{Image: res.Image, Iter: res.Iter, Converged: res.Converged})
			}
			if err != nil {
				errs[k] = err
				return err
			}
			b.Images[k], b.Iter[k], converged[k] = res.Image, res.Iter, res.Converged
			return nil
		}})
	}
	for i, err := range RunTasks(tasks, PoolOptions{Budget: opt.Budget, Events: opt.Events}) {
		if k := taskK[i]; err != nil && errs[k] == nil {
			errs[k] = err // a panic, caught by RunTasks
		}
	}
	if Interrupted() {
		// Replicates stopped early are not kept (a store holds only finished ones).
		return nil, ErrInterrupted
	}
	for k := range opt.Replicates {
		if !opt.Shard.Take(k) {
			continue
		}
		if err := errs[k]; err != nil || b.Images[k] == nil {
			if err == nil {
				err = errors.New("no image")
			}
			b.Failed[k] = err
			b.Images[k] = nil
			continue
		}
		if !converged[k] {
			b.NotConverged = append(b.NotConverged, k)
		}
	}
	if opt.Shard.N > 1 {
		return b, nil
	}
	if err := b.Summarize(full); err != nil {
		return nil, err
	}
	return b, nil
}

// Summarize makes the maps from the replicates' images: it moves them onto full's image when
// the data do not fix the position, then computes the per-pixel statistics and the
// warnings. It fails when fewer than two replicates gave an image.
func (b *Bootstrap) Summarize(full *recon.Result) error {
	n := b.N
	var good [][]float64
	var goodK []int
	for k, im := range b.Images {
		if im != nil {
			good = append(good, im)
			goodK = append(goodK, k)
		}
	}
	if len(good) < 2 {
		if len(b.Failed) > 0 {
			k := firstKey(b.Failed)
			return fmt.Errorf("bootstrap: %d of %d replicates failed; replicate %d: %w", len(b.Failed), len(b.Images), k+1, b.Failed[k])
		}
		return fmt.Errorf("bootstrap: %d of %d replicates at hand; the maps need at least 2", len(good), len(b.Images))
	}
	b.Shifts = make([][2]int, len(b.Images))
	if !fixesPosition(full) {
		// The full image is the reference; its own shift is zero.
		aligned, shifts := alignImages(append([][]float64{full.Image}, good...), n, n/4)
		for i, k := range goodK {
			b.Images[k], b.Shifts[k] = aligned[i+1], shifts[i+1]
			good[i] = aligned[i+1]
		}
		b.Aligned = true
	}
	b.Mean, b.Std, b.Significance = pixelStats(good)
	b.Warnings = nil
	if len(b.Failed) > 0 {
		b.Warnings = append(b.Warnings, fmt.Sprintf("%d of %d bootstrap replicates failed and are left out of the maps (first: %v)", len(b.Failed), len(b.Images), b.Failed[firstKey(b.Failed)]))
	}
	if c := len(b.NotConverged); c > 0 {
		b.Warnings = append(b.Warnings, fmt.Sprintf("%d of %d bootstrap replicates stopped at their iteration limit (%d times -iter) before converging: a replicate stopped early stays near the image it started from, so the standard deviation is too small; raise -iter", c, len(good), ReplicateIterFactor))
	}
	return nil
}

// ReplicateIterFactor is the iteration limit of a replicate's run in units of the limit of
// the full data's final run. A replicate starts from the full data's image, and one stopped
// before it converged stays near that image, so the spread of the replicates, the
// standard deviation, comes out too small. Measured on the validation suite's 48-channel
// night at 128² (maximum entropy): from the full image, six replicates needed 622 to 1093
// iterations to converge; stopped at 500, the sum of the per-pixel standard deviations was
// 0.79 of the converged replicates', and with the relative-change test loosened to 1e-6 or
// 3e-6 (55–190 or 37–84 iterations), 0.38 and 0.23.
const ReplicateIterFactor = 4

// fixesPosition reports whether the result fitted absolute visibility phases, which fix
// the position of the object; V², amplitudes and closure phases do not.
func fixesPosition(r *recon.Result) bool {
	for _, t := range r.Chi2 {
		if t.Type == dataset.VisPhi && t.N > 0 {
			return true
		}
	}
	return false
}

// firstKey returns the smallest key of m (which is not empty).
func firstKey(m map[int]error) int {
	k0 := math.MaxInt
	for k := range m {
		k0 = min(k0, k)
	}
	return k0
}

// pixelStats returns the per-pixel mean of imgs, their standard deviation with K − 1 in the
// denominator, and the ratio of the two (0 where the deviation is 0). The sums run over the
// images in order, so the maps do not depend on the order in which they were made.
func pixelStats(imgs [][]float64) (mean, std, sig []float64) {
	np := len(imgs[0])
	k := float64(len(imgs))
	mean, std, sig = make([]float64, np), make([]float64, np), make([]float64, np)
	for _, im := range imgs {
		for p, v := range im {
			mean[p] += v
		}
	}
	for p := range mean {
		mean[p] /= k
	}
	for _, im := range imgs {
		for p, v := range im {
			d := v - mean[p]
			std[p] += d * d
		}
	}
	for p := range std {
		std[p] = math.Sqrt(std[p] / (k - 1))
		if std[p] > 0 {
			sig[p] = mean[p] / std[p]
		}
	}
	return mean, std, sig
}
