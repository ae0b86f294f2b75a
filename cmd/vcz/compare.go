package main

import (
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"sync"
	"time"

	"vcz/io/preview"
	"vcz/recon"
	"vcz/regularizers"
	"vcz/runspec"
)

const compareDoc = `Reconstruct the same data with several regularizers (all of them by default)
on one grid, from one start image, with the same stopping rules, and write the
images side by side with a report, so that what agrees and what does not can
be seen.

The grid is chosen once from the data (or from -n, -pixel, -fov) and used by
every regularizer. Each regularizer's weight is chosen automatically (the
weight chosen from the data by the χ²ᵣ it gives) unless given with -weight (all) or
-weights (per regularizer, e.g. mem=1e4,tv=auto). The regularizers run in
parallel: at most GOMAXPROCS goroutines in all, split between concurrent
reconstructions and the workers of each transform; the images do not depend
on the split.

Outputs in DIR (made if missing):
  NAME.fits, NAME.png    each regularizer's image and preview
  NAME-lcurve.png        its weight path (misfit against regularizer value)
  compare-panel.png      all images on one colour scale, labelled
  compare-spread.fits/.png  pixel-wise standard deviation over the mean image
  compare-robust.fits/.png  pixel-wise minimum after aligning the images by
                         their cross-correlation peak with the first image
  compare-vis2.png       V² data and every regularizer's model
  compare-t3phi.png      closure phases against the longest baseline
  compare.csv, compare.json  the table of results
  report.html            all of the above in one self-contained page

Progress goes to stderr, one line per regularizer. A regularizer that fails
(an error or non-finite values) is reported in the table and the report and
the others complete; the exit status is then 1. A run that stops at the
iteration limit is marked as not converged but does not fail. The quality
verdict of each image follows the table as "warning: NAME: ..." lines on
stderr, and is in its FITS header (NWARN, WARNn), the table (a count) and
the JSON (a "warnings" list per row); -strict makes any warning exit 1.`

// compareRun is one regularizer's reconstruction in a comparison.
type compareRun struct {
	name     string
	spec     runspec.Spec
	problem  recon.Problem
	settings recon.Settings

	res     *recon.Result
	err     error
	seconds float64
}

// compareFlags are the options of compare.
type compareFlags struct {
	spec     runspec.Spec    // the image options but -reg
	regs     string          // -reg: names of single regularizers, or all
	stretch  preview.Stretch // -stretch
	weights  string
	parallel int
	out      string
	quiet    bool
	asJSON   bool
	strict   bool
}

func init() {
	register(&command{name: "compare", summary: "reconstruct with several regularizers side by side and write a report", run: runCompare})
}

func runCompare(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("compare", "[options] FILE... -o DIR", compareDoc, stderr)
	var cf compareFlags
	opts := runspec.RegisterFlags(fs, runspec.Select|runspec.Types|runspec.Recon, "reg")
	stretch := registerStretch(fs)
	fs.StringVar(&cf.regs, "reg", "all", "regularizers to compare, comma-separated from "+regularizers.NameList()+", or all")
	if fl := fs.Lookup("weight"); fl != nil {
		fl.Usage = "regularization weight μ of every regularizer, or auto (chosen from the data: χ²ᵣ between the floor of the least-regularized images and its expected value, about 1)"
	}
	fs.StringVar(&cf.weights, "weights", "", "weights per regularizer, e.g. mem=1e4,tv=auto (overrides -weight for those named)")
	fs.IntVar(&cf.parallel, "parallel", 0, "regularizers reconstructed at the same time (default: min(number of regularizers, GOMAXPROCS))")
	fs.StringVar(&cf.out, "o", "", "output folder (default: FIRSTFILE-compare)")
	fs.BoolVar(&cf.quiet, "quiet", false, quietUsage)
	fs.BoolVar(&cf.asJSON, "json", false, "print the table as JSON on stdout")
	fs.BoolVar(&cf.strict, "strict", false, strictUsage)
	if err := parseFlags(fs, args, stdout); err != nil {
		return err
	}
	if fs.NArg() == 0 {
		return badInputf("compare: no OIFITS file given (run 'vcz compare --help')")
	}
	if cf.out == "" {
		base := filepath.Base(fs.Arg(0))
		cf.out = strings.TrimSuffix(base, filepath.Ext(base)) + "-compare"
	}
	if cf.parallel < 0 {
		return badInputf("compare: -parallel %d must not be negative", cf.parallel)
	}
	st, err := parseStretch(*stretch)
	if err != nil {
		return badInputf("compare: %v", err)
	}
	cf.stretch = st
	if cf.spec, err = opts.Spec(); err != nil {
		return badInputf("compare: %v", err)
	}
	files, d, err := readData(fs.Args(), cf.spec.Selection())
	if err != nil {
		return err
	}
	if len(d.Targets) > 1 {
		return badInputf("the data hold %d targets (%s); choose one with -target", len(d.Targets), strings.Join(d.Targets, ", "))
	}
	if d.Len(recon.AllTypes) == 0 {
		return badInputf("no usable data points after selection")
	}
	runs, choice, err := compareRuns(d, &cf)
	if err != nil {
		return badInput(err)
	}
	if !cf.quiet {
		for _, n := range d.Notices {
			fmt.Fprintf(stderr, "note: %s\n", n)
		}
	}
	if err := os.MkdirAll(cf.out, 0o755); err != nil {
		return badInputf("compare: %v", err)
	}
	par := cf.parallel
	if par == 0 {
		par = runtime.GOMAXPROCS(0)
	}
	var prog *multiProgress
	if !cf.quiet {
		prog = newMultiProgress(stderr, runs)
	}
	t0 := time.Now()
	runParallel(runs, par, cf.spec.Workers, prog)
	prog.finish()
	rep, err := writeComparison(cf.out, files, d, choice, runs, &cf, time.Since(t0).Seconds())
	if err != nil {
		return failure(err)
	}
	if cf.asJSON {
		if err := writeJSONTo(stdout, rep); err != nil {
			return failure(err)
		}
	} else if !cf.quiet {
		printCompareTable(stdout, rep)
		fmt.Fprintf(stdout, "Wrote %s\n", filepath.Join(cf.out, "report.html"))
	}
	var failed []string
	nwarn := 0
	for _, r := range runs {
		if r.err != nil {
			failed = append(failed, r.name)
			continue
		}
		printWarnings(stderr, r.name, r.res.Warnings)
		nwarn += len(r.res.Warnings)
	}
	if len(failed) > 0 {
		return failure(fmt.Errorf("compare: %d of %d regularizers failed (%s); see %s", len(failed), len(runs), strings.Join(failed, ", "), filepath.Join(cf.out, "report.html")))
	}
	return strictFailure(cf.strict, "compare", nwarn)
}

// compareRuns builds one run per regularizer, all on the grid chosen once
// from the data.
func compareRuns(d *recon.Data, cf *compareFlags) ([]*compareRun, recon.GridChoice, error) {
	var choice recon.GridChoice
	names, err := parseCompareRegs(cf.regs)
	if err != nil {
		return nil, choice, err
	}
	perReg, err := parseCompareWeights(cf.weights, names)
	if err != nil {
		return nil, choice, err
	}
	var runs []*compareRun
	for i, name := range names {
		spec := cf.spec
		spec.Regularizers = []regularizers.NamedTerm{{Name: name, Rel: 1}}
		if w, ok := perReg[name]; ok {
			if err := spec.Set("weight", w); err != nil {
				return nil, choice, fmt.Errorf("%s: %v", name, err)
			}
		}
		p, s, err := spec.Problem(d)
		if err != nil {
			return nil, choice, fmt.Errorf("%s: %v", name, err)
		}
		if i == 0 {
			if choice, err = recon.ChooseGrid(d, p.GridOptions); err != nil {
				return nil, choice, err
			}
		}
		p.Grid = choice.Grid
		runs = append(runs, &compareRun{name: name, spec: spec, problem: p, settings: s})
	}
	return runs, choice, nil
}

// parseCompareRegs reads the -reg list of compare: names of single
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

// parseCompareWeights reads "mem=1e4,tv=auto" into weight strings per
// regularizer; every name must be among those compared.
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

// runParallel runs the reconstructions, at most par at a time, and splits
// GOMAXPROCS between them: each run's transform gets
// max(1, GOMAXPROCS/concurrent) workers unless workers (the -workers flag) is
// set. Results go into the runs; a panic or a non-finite image becomes the
// run's error, so one failing regularizer does not stop the others.
func runParallel(runs []*compareRun, par, workers int, prog *multiProgress) {
	procs := runtime.GOMAXPROCS(0)
	conc := max(1, min(par, len(runs), procs))
	per := workers
	if per <= 0 {
		per = max(1, procs/conc)
	}
	jobs := make(chan int)
	var wg sync.WaitGroup
	for w := 0; w < conc; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range jobs {
				r := runs[i]
				r.settings.Workers = per
				prog.start(i)
				r.settings.Progress = func(pr recon.Progress) bool {
					prog.update(i, pr)
					return true
				}
				t0 := time.Now()
				r.res, r.err = solveSafely(r.problem, r.settings)
				r.seconds = time.Since(t0).Seconds()
				prog.end(i, r)
			}
		}()
	}
	for i := range runs {
		jobs <- i
	}
	close(jobs)
	wg.Wait()
}

// solveSafely runs recon.Solve, turning a panic into an error and
// rejecting results with non-finite pixels or χ².
func solveSafely(p recon.Problem, s recon.Settings) (res *recon.Result, err error) {
	defer func() {
		if v := recover(); v != nil {
			res, err = nil, fmt.Errorf("internal error: %v", v)
		}
	}()
	res, err = recon.Solve(p, s)
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

// multiProgress shows one line per regularizer on stderr. On a terminal the
// block of lines is redrawn in place (ANSI cursor-up), at most ten times a
// second; otherwise a plain line is printed when a run starts, enters a new
// stage, ends or fails. A nil *multiProgress shows nothing. Its methods are
// safe for concurrent use.
type multiProgress struct {
	mu     sync.Mutex
	w      io.Writer
	tty    bool
	names  []string
	lines  []string
	stages []string
	drawn  bool
	last   time.Time
	start0 time.Time
}

func newMultiProgress(w io.Writer, runs []*compareRun) *multiProgress {
	p := &multiProgress{w: w, tty: isTerminal(w), start0: time.Now()}
	width := 0
	for _, r := range runs {
		width = max(width, len(r.name))
	}
	for _, r := range runs {
		p.names = append(p.names, fmt.Sprintf("%-*s", width, r.name))
		p.lines = append(p.lines, "waiting")
		p.stages = append(p.stages, "")
	}
	p.mu.Lock()
	if p.tty {
		p.redraw()
	} else {
		for i := range p.lines {
			fmt.Fprintf(p.w, "%s  %s\n", p.names[i], p.lines[i])
		}
	}
	p.mu.Unlock()
	return p
}

// redraw writes the block of lines, moving the cursor up over the previous
// block first. The caller holds mu.
func (p *multiProgress) redraw() {
	var b strings.Builder
	if p.drawn {
		fmt.Fprintf(&b, "\033[%dA", len(p.lines))
	}
	for i, l := range p.lines {
		fmt.Fprintf(&b, "\r\033[K%s  %s\n", p.names[i], l)
	}
	io.WriteString(p.w, b.String())
	p.drawn = true
	p.last = time.Now()
}

func (p *multiProgress) set(i int, line string, important bool) {
	p.lines[i] = line
	if p.tty {
		if important || time.Since(p.last) >= 100*time.Millisecond {
			p.redraw()
		}
		return
	}
	if important {
		fmt.Fprintf(p.w, "%s  %s\n", p.names[i], line)
	}
}

func (p *multiProgress) start(i int) {
	if p == nil {
		return
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	p.set(i, "running", true)
}

func (p *multiProgress) update(i int, pr recon.Progress) {
	if p == nil {
		return
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	newStage := pr.Stage != p.stages[i]
	p.stages[i] = pr.Stage
	p.set(i, fmt.Sprintf("running  %-12s iter %4d  χ²ᵣ %.4g%s  μ %.3g", pr.Stage, pr.Iter, pr.Chi2r, typesText(pr.Types), pr.Weight), newStage)
}

func (p *multiProgress) end(i int, r *compareRun) {
	if p == nil {
		return
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	if r.err != nil {
		p.set(i, "failed: "+oneLine(r.err.Error()), true)
		return
	}
	what := "done    "
	if n := len(r.res.Warnings); n > 0 {
		what = "done with " + countWarnings(n) + ":"
	}
	p.set(i, fmt.Sprintf("%s χ²ᵣ %.4g  μ %.3g  %d iterations  %.1f s", what, r.res.Chi2r, r.res.Weight, r.res.TotalIter, r.seconds), true)
}

// finish draws the final state on a terminal.
func (p *multiProgress) finish() {
	if p == nil {
		return
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.tty {
		p.redraw()
	}
}

func oneLine(s string) string {
	return strings.ReplaceAll(strings.TrimSpace(s), "\n", "; ")
}
