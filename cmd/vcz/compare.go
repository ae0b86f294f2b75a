package main

import (
	"fmt"
	"io"
	"path/filepath"
	"strings"
	"sync"
	"time"

	"vcz/output"
	"vcz/recon"
	"vcz/regularizers"
	"vcz/runspec"
	"vcz/workflow"
)

func runCompare(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("compare", "[options] FILE... -o DIR", compareDoc, stderr)
	opts := runspec.RegisterFlags(fs, runspec.Select|runspec.Types|runspec.Recon|runspec.Cube, "reg")
	stretch := registerStretch(fs)
	regs := fs.String("reg", "all", "regularizers to compare, comma-separated from "+regularizers.NameList()+", or all")
	if fl := fs.Lookup("weight"); fl != nil {
		fl.Usage = "regularization weight μ of every regularizer, or auto (chosen from the data: χ²ᵣ between the floor of the least-regularized images and its expected value, about 1)"
	}
	weights := fs.String("weights", "", "weights per regularizer, e.g. mem=1e4,tv=auto (overrides -weight for those named)")
	parallel := fs.Int("parallel", 0, "regularizers reconstructed at the same time (default: min(number of regularizers, GOMAXPROCS))")
	out := fs.String("o", "", "output folder (default: FIRSTFILE-compare)")
	quiet := fs.Bool("quiet", false, quietUsage)
	asJSON := fs.Bool("json", false, "print the table as JSON on stdout")
	strict := fs.Bool("strict", false, strictUsage)
	boot := registerResampling(fs, "also reconstruct this many resamplings of the data around each regularizer's image, and show each one's per-pixel standard deviation in the report (0: none)")
	bootK := boot.k
	if err := parseFlags(fs, args, stdout); err != nil {
		return err
	}
	if fs.NArg() == 0 {
		return badInputf("compare: no OIFITS file given (run 'vcz compare --help')")
	}
	bootOpt, err := workflow.ResamplingOptions("compare", *bootK, *boot.seed, *boot.unit)
	if err != nil {
		return err
	}
	if *out == "" {
		*out = workflow.DefaultOutput(fs.Arg(0), "-compare")
	}
	if *parallel < 0 {
		return badInputf("compare: -parallel %d must not be negative", *parallel)
	}
	st, err := output.ParseStretch(*stretch)
	if err != nil {
		return badInputf("compare: %v", err)
	}
	spec, err := opts.Spec()
	if err != nil {
		return badInputf("compare: %v", err)
	}
	files, d, err := workflow.ReadData(fs.Args(), spec.Selection())
	if err != nil {
		return err
	}
	if err := workflow.CheckData(d); err != nil {
		return err
	}
	entries, err := workflow.CompareEntries(spec, *regs, *weights)
	if err != nil {
		return err
	}
	cmp, err := workflow.NewComparison(files, d, entries)
	if err != nil {
		return err
	}
	printNotices(stderr, d, *quiet)
	if err := workflow.OutputFolder(*out); err != nil {
		return badInputf("compare: -o: %v", err)
	}
	var prog *multiProgress
	if !*quiet {
		prog = newMultiProgress(stderr, cmp.Runs)
	}
	t0 := time.Now()
	cmp.Run(*parallel, spec.Workers, prog.hooks())
	prog.finish()
	if *bootK > 0 {
		if !*quiet {
			fmt.Fprintf(stderr, "bootstrap: %d resamplings around each image ...\n", *bootK)
		}
		cmp.Bootstrap(bootOpt)
	}
	rep, err := cmp.Write(*out, output.Outputs{Stretch: st}, time.Since(t0).Seconds())
	if err != nil {
		return failure(err)
	}
	if *asJSON {
		if err := writeJSON(stdout, rep); err != nil {
			return err
		}
	} else {
		rep.WriteText(stdout)
		fmt.Fprintf(stdout, "Wrote %s\n", filepath.Join(*out, "report.html"))
	}
	nwarn := 0
	for _, r := range cmp.Runs {
		if r.Err == nil {
			printWarnings(stderr, r.Name, r.Warnings())
			printWarnings(stderr, r.Name+" bootstrap", r.BootWarnings())
			nwarn += len(r.Warnings()) + len(r.BootWarnings())
		}
	}
	if failed := cmp.Failed(); len(failed) > 0 {
		return failure(fmt.Errorf("compare: %d of %d regularizers failed (%s); see %s", len(failed), len(cmp.Runs), strings.Join(failed, ", "), filepath.Join(*out, "report.html")))
	}
	return strictFailure(*strict, "compare", nwarn)
}

// multiProgress shows one line per regularizer on stderr. On a terminal the
// block of lines is redrawn in place (ANSI cursor-up), at most ten times a
// second; otherwise a plain line is printed when a run starts, ends or fails,
// and for each stage of a run its last state (final iteration and χ²ᵣ) when the
// stage ends, with at most one line every plainEvery within a long stage. A nil *multiProgress shows nothing. Its methods are
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
	plain  []stageLog     // plain output: what each run's log shows
	writes []func(string) // and the writers of its lines
}

func newMultiProgress(w io.Writer, runs []*workflow.CompareRun) *multiProgress {
	p := &multiProgress{w: w, tty: isTerminal(w), start0: time.Now()}
	width := 0
	for _, r := range runs {
		width = max(width, len(r.Name))
	}
	for _, r := range runs {
		p.names = append(p.names, fmt.Sprintf("%-*s", width, r.Name))
		p.lines = append(p.lines, "waiting")
		p.stages = append(p.stages, "")
	}
	p.plain = make([]stageLog, len(runs))
	for i := range runs {
		p.writes = append(p.writes, func(s string) { fmt.Fprintf(p.w, "%s  %s\n", p.names[i], s) })
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
	cols := terminalWidth(p.w)
	for i, l := range p.lines {
		fmt.Fprintf(&b, "\r\033[K%s\n", clip(p.names[i]+"  "+l, cols))
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
	line := fmt.Sprintf("running  %-12s iter %4d  χ²ᵣ %.4g%s  μ %.3g", pr.Stage, pr.Iter, pr.Chi2r, typesText(pr.Types), pr.Weight)
	if p.tty {
		p.set(i, line, newStage)
		return
	}
	p.lines[i] = line
	p.plain[i].update(time.Now(), newStage, line, p.writes[i])
}

func (p *multiProgress) end(i int, r *workflow.CompareRun) {
	if p == nil {
		return
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	if !p.tty {
		p.plain[i].flush(p.writes[i])
	}
	if r.Err != nil {
		p.set(i, "failed: "+output.OneLine(r.Err.Error()), true)
		return
	}
	what := "done    "
	if n := len(r.Warnings()); n > 0 {
		what = "done with " + output.CountWarnings(n) + ":"
	}
	chi2r, iters := r.Result.Chi2r, r.Result.TotalIter
	if r.Cube != nil {
		chi2r, iters = r.Cube.Chi2r, r.Cube.TotalIter
	}
	p.set(i, fmt.Sprintf("%s χ²ᵣ %.4g  μ %.3g  %d iterations  %.1f s", what, chi2r, r.Result.Weight, iters, r.Seconds), true)
}

// hooks connects p to a comparison; a nil p gives no hooks.
func (p *multiProgress) hooks() workflow.CompareHooks {
	if p == nil {
		return workflow.CompareHooks{}
	}
	return workflow.CompareHooks{Start: p.start, Progress: p.update, End: p.end}
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
