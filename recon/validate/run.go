package validate

import (
	"errors"
	"fmt"
	"math"
	"sync"
	"time"
	"vcz/dataset"

	"vcz/recon"
	"vcz/runspec"
)

// DefaultProblem returns the reconstruction problem and settings that `vcz image DATA -o
// OUT.fits -smearing off` builds from d with every other option at its default: grid,
// weight and start chosen from the data, tv with its default smoothing scale, every data
// type at weight 1, seed 1, GOMAXPROCS transform workers. Like the command it refuses data
// with several targets or no usable point. Smearing is off because the suite's data are
// exact sums at the centre of each channel (Generate), not band averages; the model of
// smearing is checked against band integrals in recon's own tests.
func DefaultProblem(d *dataset.Data) (recon.Problem, recon.Settings, error) {
	if len(d.Targets) > 1 {
		return recon.Problem{Data: d}, recon.Settings{}, fmt.Errorf("validate: the data hold %d targets", len(d.Targets))
	}
	if d.Len(dataset.AllTypes) == 0 {
		return recon.Problem{Data: d}, recon.Settings{}, errors.New("validate: no usable data points")
	}
	return runspec.Spec{Smearing: recon.SmearOff}.Problem(d)
}

// Outcome is one reconstruction scored against the truth.
type Outcome struct {
	Weight      float64 // μ of the final run
	Chi2r       float64 // Result.Chi2r
	Chi2rTarget float64 // Result.Chi2rTarget, the expected χ²ᵣ
	NCC, L1     float64 // recon.Fidelity against the truth
	// L1Rotated is the relative L1 against the truth turned by 180°; Mirrored says that it is
	// below L1, the image matching the rotated truth better than the truth.
	L1Rotated float64
	Mirrored  bool
	Grid      recon.GridChoice
	Seconds   float64
	Warnings  []string
	Image     []float64 // the reconstruction (Result.Image)
}

// Score compares a reconstruction with the scene: recon.Fidelity against the scene's truth
// on the reconstruction's grid with a beam of FWHM λmin/(2·Bmax) (GridChoice.Resolution),
// and the relative L1 against the truth turned by 180°.
func Score(s Scene, r *recon.Result) Outcome {
	g := r.Grid.Grid
	o := Outcome{Weight: r.Weight, Chi2r: r.Chi2r, Chi2rTarget: r.Chi2rTarget, Grid: r.Grid,
		Warnings: r.Warnings, Image: r.Image}
	o.NCC, o.L1, _ = recon.Fidelity(r.Image, s.Truth(g), g.N, g.Pixel, r.Grid.Resolution)
	_, o.L1Rotated, _ = recon.Fidelity(r.Image, s.Rotated().Truth(g), g.N, g.Pixel, r.Grid.Resolution)
	o.Mirrored = o.L1Rotated < o.L1
	return o
}

// OracleScan is the default scan of the oracle: one weight per decade from 10⁻¹ to 10⁹.
var OracleScan = logScan(-1, 9, 1)

// ShortScan is the scan of the subset test: one weight per decade from 10⁻¹ to 10⁷.
var ShortScan = logScan(-1, 7, 1)

// logScan returns 10^k for k = from, from+step, … ≤ to.
func logScan(from, to, step float64) []float64 {
	var w []float64
	for k := from; k <= to+1e-9; k += step {
		w = append(w, math.Pow(10, k))
	}
	return w
}

// Options control Run.
type Options struct {
	// Concurrent is the number of cases reconstructed at the same time; 0 means 2. Every
	// reconstruction uses one transform worker (Settings.Workers = 1).
	Concurrent int
	// Oracle runs the weight scan; Scan lists its weights (nil means OracleScan), and Refine
	// adds the two weights half a decade either side of the best one.
	Oracle bool
	Scan   []float64
	Refine bool
	// KeepImages keeps the reconstructed images in the rows (Outcome.Image); otherwise they
	// are dropped once scored.
	KeepImages bool
	// Done, when non-nil, is called after each case, from the goroutine that ran it.
	Done func(Row)
}

// Row is the outcome of one case.
type Row struct {
	Case            string
	Scene, Family   string
	Array, Model    string
	N               int // usable measurements
	Default         Outcome
	Oracle          *Outcome     // nil without the scan
	Scan            [][2]float64 // the oracle scan: weight, L1
	Err             error
	GenerateSeconds float64
	DefaultSeconds  float64
	OracleSeconds   float64
}

// Ratio is L1 of the default over L1 of the oracle, NaN without an oracle.
func (r Row) Ratio() float64 {
	if r.Oracle == nil {
		return math.NaN()
	}
	return r.Default.L1 / r.Oracle.L1
}

// Run generates and reconstructs every case, Options.Concurrent at a time, and returns the
// rows in the order of cases, whatever the order in which they finish.
func Run(cases []Case, opt Options) []Row {
	conc := opt.Concurrent
	if conc <= 0 {
		conc = 2
	}
	rows := make([]Row, len(cases))
	sem := make(chan struct{}, conc)
	var wg sync.WaitGroup
	for i, c := range cases {
		wg.Add(1)
		sem <- struct{}{}
		go func() {
			defer wg.Done()
			defer func() { <-sem }()
			rows[i] = RunCase(c, opt)
			if opt.Done != nil {
				opt.Done(rows[i])
			}
		}()
	}
	wg.Wait()
	return rows
}

// RunCase generates one case, reconstructs it with DefaultProblem (one transform worker) and,
// with opt.Oracle, with each fixed weight of the scan, keeping the weight of lowest L1.
func RunCase(c Case, opt Options) Row {
	row := Row{Case: c.Name(), Scene: c.Scene.Name, Family: c.Scene.Family, Array: c.Array.Name, Model: c.Model.String()}
	t0 := time.Now()
	ds, err := Generate(c)
	if err != nil {
		row.Err = err
		return row
	}
	row.GenerateSeconds = time.Since(t0).Seconds()
	row.N = ds.Data.Len(dataset.AllTypes)
	p, s, err := DefaultProblem(ds.Data)
	if err != nil {
		row.Err = err
		return row
	}
	s.Workers = 1
	solve := func(p recon.Problem) (Outcome, error) {
		t := time.Now()
		r, err := recon.Solve(p, s)
		if err != nil {
			return Outcome{}, err
		}
		o := Score(c.Scene, r)
		o.Seconds = time.Since(t).Seconds()
		if !opt.KeepImages {
			o.Image = nil
		}
		return o, nil
	}
	if row.Default, err = solve(p); err != nil {
		row.Err = fmt.Errorf("%s: default: %w", c.Name(), err)
		return row
	}
	row.DefaultSeconds = row.Default.Seconds
	if !opt.Oracle {
		return row
	}
	t1 := time.Now()
	scan := opt.Scan
	if scan == nil {
		scan = OracleScan
	}
	var best *Outcome
	try := func(w float64) error {
		q := p
		q.Weight = w
		o, err := solve(q)
		if err != nil {
			return fmt.Errorf("%s: oracle weight %g: %w", c.Name(), w, err)
		}
		row.Scan = append(row.Scan, [2]float64{w, o.L1})
		if best == nil || o.L1 < best.L1 {
			best = &o
		}
		return nil
	}
	for _, w := range scan {
		if err := try(w); err != nil {
			row.Err = err
			return row
		}
	}
	if opt.Refine && best != nil {
		w := best.Weight
		for _, f := range []float64{math.Pow(10, -0.5), math.Pow(10, 0.5)} {
			if err := try(w * f); err != nil {
				row.Err = err
				return row
			}
		}
	}
	row.Oracle = best
	row.OracleSeconds = time.Since(t1).Seconds()
	return row
}
