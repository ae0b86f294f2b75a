package workflow

import (
	"errors"
	"fmt"
	"math"
	"runtime"
	"strconv"
	"strings"
	"time"
	"vcz/dataset"

	"vcz/io/oifits"
	"vcz/recon"
	"vcz/regularizers"
	"vcz/runspec"
)

// Entry is one regularizer of a comparison: its name and the run specification of its
// image.
type Entry struct {
	Name string
	Spec runspec.Spec
}

// CompareEntries gives one entry per regularizer named in regs ("all", or names of single
// regularizers separated by commas), each the base spec with that regularizer alone and,
// where weights ("mem=1e4,tv=auto") names it, that weight. Errors are *InputError and name
// the option (-reg, -weights) as `vcz compare` spells it.
func CompareEntries(base runspec.Spec, regs, weights string) ([]Entry, error) {
	names, err := parseCompareRegs(regs)
	if err != nil {
		return nil, inputError("", err)
	}
	perReg, err := parseCompareWeights(weights, names)
	if err != nil {
		return nil, inputError("", err)
	}
	var out []Entry
	for _, name := range names {
		spec := base
		spec.Regularizers = []regularizers.NamedTerm{{Name: name, Rel: 1}}
		if w, ok := perReg[name]; ok {
			if err := spec.Set("weight", w); err != nil {
				return nil, inputErrorf("%s: %v", name, err)
			}
		}
		out = append(out, Entry{Name: name, Spec: spec})
	}
	return out, nil
}

// parseCompareRegs reads the regularizer list of a comparison: names of single
// regularizers, or "all".
func parseCompareRegs(s string) ([]string, error) {
	s = strings.TrimSpace(s)
	if s == "" || strings.EqualFold(s, "all") {
		var names []string
		for _, k := range regularizers.Kinds() {
			names = append(names, k.Name)
		}
		return names, nil
	}
	var names []string
	seen := map[string]bool{}
	for _, part := range strings.Split(s, ",") {
		name := strings.ToLower(strings.TrimSpace(part))
		if name == "" {
			continue
		}
		if _, ok := regularizers.Lookup(name); !ok {
			return nil, fmt.Errorf("-reg: unknown regularizer %q (use %s, or all)", name, regularizers.NameList())
		}
		if seen[name] {
			return nil, fmt.Errorf("-reg: %s named twice", name)
		}
		seen[name] = true
		names = append(names, name)
	}
	if len(names) == 0 {
		return nil, fmt.Errorf("-reg: no regularizer named")
	}
	return names, nil
}

// parseCompareWeights reads "mem=1e4,tv=auto" into weight strings per regularizer; every
// name must be among those compared.
func parseCompareWeights(s string, names []string) (map[string]string, error) {
	out := map[string]string{}
	for _, part := range strings.Split(s, ",") {
		part = strings.TrimSpace(part)
		if part == "" {
			continue
		}
		name, val, ok := strings.Cut(part, "=")
		name = strings.ToLower(strings.TrimSpace(name))
		val = strings.TrimSpace(val)
		if !ok {
			return nil, fmt.Errorf("-weights %q: want NAME=WEIGHT or NAME=auto", part)
		}
		known := false
		for _, n := range names {
			known = known || n == name
		}
		if !known {
			return nil, fmt.Errorf("-weights %q: %s is not among the regularizers compared (%s)", part, name, strings.Join(names, ", "))
		}
		if !strings.EqualFold(val, "auto") {
			x, err := strconv.ParseFloat(val, 64)
			if err != nil || !(x > 0) || math.IsInf(x, 0) {
				return nil, fmt.Errorf("-weights %q: want a positive number or auto", part)
			}
		}
		out[name] = val
	}
	return out, nil
}

// Comparison is the same data reconstructed with several regularizers on one grid, from
// one start image, with the same stopping rules.
type Comparison struct {
	Files []*oifits.File
	Data  *dataset.Data
	Grid  recon.GridChoice // chosen once from the data (and the first entry's options)
	Runs  []*CompareRun
}

// CompareRun is one regularizer's reconstruction in a comparison.
type CompareRun struct {
	Name     string
	Spec     runspec.Spec
	Problem  recon.Problem
	Settings recon.Settings

	Result  *recon.Result // nil when the run failed
	Err     error         // why it failed
	Seconds float64

	// CubeProblem, when the spec asks for channel groups (-channels), is the cube of this
	// regularizer: Run solves it, keeps it in Cube and its gray image in Result, which the
	// report compares.
	CubeProblem *recon.CubeProblem
	Cube        *recon.CubeResult

	// Boot is the bootstrap of the result (Comparison.Bootstrap), nil without one; BootErr
	// says why it failed.
	Boot    *Bootstrap
	BootErr error
}

// Warnings is the quality verdict of a successful run: its cube's with channel groups
// (a gray image of a chromatic object does not fit all channels, which is why the cube was
// asked for), else its image's.
func (r *CompareRun) Warnings() []string {
	if r.Cube != nil {
		return r.Cube.Warnings
	}
	return r.Result.Warnings
}

// BootWarnings say why the run's bootstrap maps may mislead (Bootstrap.Warnings, and maps
// from fewer than MinReplicates replicates), one sentence each; nil without a bootstrap.
func (r *CompareRun) BootWarnings() []string {
	if r.Boot == nil {
		return nil
	}
	ws := append([]string(nil), r.Boot.Warnings...)
	what := fmt.Sprintf("the significance map %s-boot-signif.fits (and the 3σ and 5σ contours of %s-boot.png)", r.Name, r.Name)
	if w := FewReplicatesWarning(r.Boot.Good(), what); w != "" {
		ws = append(ws, w)
	}
	return ws
}

// Bootstrap runs the bootstrap of every successful run around its own result (RunBootstrap
// with opt), one regularizer after another, so that the report can show each one's per-pixel
// spread beside its image.
func (c *Comparison) Bootstrap(opt BootstrapOptions) {
	for _, r := range c.Runs {
		if r.Result == nil {
			continue
		}
		if r.Cube != nil {
			r.BootErr = errors.New("the bootstrap is not available for image cubes (-channels)")
			continue
		}
		r.Boot, r.BootErr = RunBootstrap(r.Problem, r.Settings, r.Result, opt)
	}
}

// CheckData refuses data that no workflow reconstructs: several targets, or no point to
// fit. Its errors are *InputError.
func CheckData(d *dataset.Data) error { return checkData(nil, d) }

// NewComparison builds one run per entry, all on the grid chosen once from the data. Its
// errors are *InputError.
func NewComparison(files []*oifits.File, d *dataset.Data, entries []Entry) (*Comparison, error) {
	if err := checkData(files, d); err != nil {
		return nil, err
	}
	c := &Comparison{Files: files, Data: d}
	for i, e := range entries {
		p, s, err := e.Spec.Problem(d)
		if err != nil {
			return nil, inputError("", fmt.Errorf("%s: %v", e.Name, err))
		}
		if i == 0 {
			if c.Grid, err = recon.ChooseGrid(d, p.GridOptions); err != nil {
				return nil, inputError("", err)
			}
		}
		p.Choice = &c.Grid
		r := &CompareRun{Name: e.Name, Spec: e.Spec, Problem: p, Settings: s}
		if e.Spec.Star != nil {
			// Each regularizer would need a star + environment fit of its own with the
			// profiles of f0 and the index, as long as one vcz image -star run each (on
			// the eight-channel example, minutes per regularizer on two cores).
			return nil, inputErrorf("compare: -star is not available: each regularizer would need its own star + environment fit with its profiles, as long as a vcz image -star run each; run vcz image -star with each -reg, or compare images or cubes (-channels) without -star")
		}
		if !e.Spec.Channels.Single() {
			planes, err := recon.SplitChannels(d, e.Spec.Channels)
			if err != nil {
				return nil, inputErrorf("-channels %s: %v", e.Spec.Channels, err)
			}
			r.CubeProblem = &recon.CubeProblem{Problem: p, Planes: planes, Spectral: e.Spec.Spectral, SpectralFactor: e.Spec.SpectralFactor}
		}
		c.Runs = append(c.Runs, r)
	}
	return c, nil
}

// CompareHooks let a display follow a comparison; each may be nil. Start and End are
// called from one goroutine at a time, Progress from the run's own.
type CompareHooks struct {
	Start    func(i int)
	Progress func(i int, pr recon.Progress)
	End      func(i int, r *CompareRun)
}

// Run reconstructs every run of c, at most parallel at a time (0: GOMAXPROCS), and splits
// GOMAXPROCS between them: each run's transform gets max(1, GOMAXPROCS/concurrent)
// workers unless workers is positive. Results go into the runs; an error, a panic (a
// *PanicError naming the regularizer) or a non-finite image becomes the run's Err, so one
// failing regularizer does not stop the others. The images do not depend on the split.
func (c *Comparison) Run(parallel, workers int, h CompareHooks) {
	procs := runtime.GOMAXPROCS(0)
	if parallel <= 0 {
		parallel = procs
	}
	conc := max(1, min(parallel, len(c.Runs), procs))
	per := workers
	if per <= 0 {
		per = max(1, procs/conc)
	}
	tasks := make([]Task, len(c.Runs))
	for i, r := range c.Runs {
		tasks[i] = Task{Name: r.Name, Workers: per, Do: func() error {
			r.Settings.Workers = per
			r.Settings.Progress = func(pr recon.Progress) bool {
				if h.Progress != nil {
					h.Progress(i, pr)
				}
				return !Interrupted()
			}
			t0 := time.Now()
			r.Err = Safely(r.Name, func() (err error) {
				if r.CubeProblem != nil {
					if r.Cube, err = recon.SolveCube(*r.CubeProblem, r.Settings); err == nil {
						r.Result = r.Cube.Gray
					}
					return orInterrupted(err)
				}
				r.Result, err = solveFinite(r.Problem, r.Settings)
				return orInterrupted(err)
			})
			if r.Err != nil {
				r.Result = nil
			}
			r.Seconds = time.Since(t0).Seconds()
			return r.Err
		}}
	}
	RunTasks(tasks, PoolOptions{Budget: conc * per, Events: func(ev Event) {
		switch {
		case ev.Started && h.Start != nil:
			h.Start(ev.Task)
		case ev.Ended && h.End != nil:
			h.End(ev.Task, c.Runs[ev.Task])
		}
	}})
}

// solveFinite runs recon.Solve and refuses results with non-finite pixels or χ².
func solveFinite(p recon.Problem, s recon.Settings) (*recon.Result, error) {
	res, err := recon.Solve(p, s)
	if err != nil {
		return nil, err
	}
	for i, v := range res.Image {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("pixel %d of the image is %g", i, v)
		}
	}
	if math.IsNaN(res.Chi2r) || math.IsInf(res.Chi2r, 0) {
		return nil, fmt.Errorf("χ²ᵣ of the image is %g", res.Chi2r)
	}
	return res, nil
}

// Failed returns the names of the runs that failed, in order.
func (c *Comparison) Failed() []string {
	var names []string
	for _, r := range c.Runs {
		if r.Err != nil {
			names = append(names, r.Name)
		}
	}
	return names
}
