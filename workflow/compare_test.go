package workflow

import (
	"errors"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"sync"
	"testing"
	"time"
	"vcz/dataset"

	"vcz/io/fitsimage"
	"vcz/io/oifits"
	"vcz/output"
	"vcz/recon"
	"vcz/recon/simulate"
	"vcz/runspec"
)

// demoData is the simulated demo data set (recon/simulate.DemoData).
func demoData(t testing.TB) ([]*oifits.File, *dataset.Data) {
	t.Helper()
	f, _, err := simulate.DemoData()
	if err != nil {
		t.Fatal(err)
	}
	files := []*oifits.File{f}
	d, err := dataset.FromFiles(files, dataset.Selection{})
	if err != nil {
		t.Fatal(err)
	}
	return files, d
}

// nanReg is a regularizer whose value is NaN, to make one run fail.
type nanReg struct{}

func (nanReg) Eval(grad, x []float64) float64 {
	for i := range grad {
		grad[i] = math.NaN()
	}
	return math.NaN()
}

// panicReg is a regularizer that panics, to exercise the panic net.
type panicReg struct{}

func (panicReg) Eval(grad, x []float64) float64 { panic("panicReg: on purpose") }

// TestCompareFailure checks that a failing regularizer (NaN values) and a panicking one are
// reported in the table and the report while the other completes, and that the hooks see
// every run start and end, and the progress of the run that iterates.
func TestCompareFailure(t *testing.T) {
	dir := t.TempDir()
	files, d := demoData(t)
	entries, err := CompareEntries(runspec.Spec{Grid: 32, Iterations: 60, Starts: 1}, "tv,smooth,mem", "")
	if err != nil {
		t.Fatal(err)
	}
	c, err := NewComparison(files, d, entries)
	if err != nil {
		t.Fatal(err)
	}
	c.Runs[1].Problem.Reg = func(recon.Grid) (recon.Regularizer, error) { return nanReg{}, nil }
	c.Runs[1].Problem.Weight = 1
	c.Runs[2].Problem.Reg = func(recon.Grid) (recon.Regularizer, error) { return panicReg{}, nil }
	c.Runs[2].Problem.Weight = 1
	var mu sync.Mutex
	started, ended, progressed := map[int]bool{}, map[int]bool{}, map[int]bool{}
	c.Run(2, 0, CompareHooks{
		Start:    func(i int) { started[i] = true },
		Progress: func(i int, _ recon.Progress) { mu.Lock(); progressed[i] = true; mu.Unlock() },
		End:      func(i int, r *CompareRun) { ended[i] = r == c.Runs[i] },
	})
	rep, err := c.Write(dir, output.Outputs{}, 0)
	if err != nil {
		t.Fatal(err)
	}
	if c.Runs[0].Err != nil || rep.Rows[0].Error != "" {
		t.Errorf("tv failed: %v", c.Runs[0].Err)
	}
	if c.Runs[1].Err == nil || rep.Rows[1].Error == "" || c.Runs[1].Result != nil {
		t.Fatal("the NaN regularizer did not fail")
	}
	var pe *PanicError
	if !errors.As(c.Runs[2].Err, &pe) || pe.Task != "mem" || !strings.Contains(rep.Rows[2].Error, "mem: panicReg: on purpose") {
		t.Fatalf("the panicking regularizer: %v, row %q", c.Runs[2].Err, rep.Rows[2].Error)
	}
	for i := range c.Runs {
		if !started[i] || !ended[i] || (i == 0) != progressed[i] {
			t.Errorf("run %d: started %v, ended %v, progress %v", i, started[i], ended[i], progressed[i])
		}
	}
	csvText, _ := os.ReadFile(filepath.Join(dir, "compare.csv"))
	if !strings.Contains(string(csvText), rep.Rows[1].Error) {
		t.Errorf("compare.csv lacks the error:\n%s", csvText)
	}
	// Gray images have no planes to compare: none of the cubes' outputs.
	html, _ := os.ReadFile(filepath.Join(dir, "report.html"))
	if _, err := os.Stat(filepath.Join(dir, "compare-planes.csv")); err == nil || rep.Planes != nil || strings.Contains(string(html), "Planes") {
		t.Error("a comparison of gray images wrote the planes of cubes")
	}
	page, _ := os.ReadFile(filepath.Join(dir, "report.html"))
	if !strings.Contains(string(page), "Failed:") {
		t.Error("report.html does not report the failure")
	}
	if _, err := os.Stat(filepath.Join(dir, "tv.fits")); err != nil {
		t.Errorf("the successful run's image is missing: %v", err)
	}
}

// The images of a comparison are the same bits whether the runs go one at a time with two
// transform workers or two at a time with one each.
func TestCompareParallelSameBits(t *testing.T) {
	files, d := demoData(t)
	entries, err := CompareEntries(runspec.Spec{Grid: 32, Iterations: 40, Starts: 1, Weight: 0.01}, "tv,smooth", "")
	if err != nil {
		t.Fatal(err)
	}
	var images [][][]float64
	for _, par := range [][2]int{{1, 2}, {2, 1}} {
		c, err := NewComparison(files, d, entries)
		if err != nil {
			t.Fatal(err)
		}
		c.Run(par[0], par[1], CompareHooks{})
		var imgs [][]float64
		for _, r := range c.Runs {
			if r.Err != nil {
				t.Fatal(r.Err)
			}
			imgs = append(imgs, r.Result.Image)
		}
		images = append(images, imgs)
	}
	for k := range images[0] {
		for i, v := range images[0][k] {
			if images[1][k][i] != v {
				t.Fatalf("run %d, pixel %d: %v one at a time, %v two at a time", k, i, v, images[1][k][i])
			}
		}
	}
}

// TestCompareOptions checks the parsing of the regularizer list and the weights.
func TestCompareOptions(t *testing.T) {
	for _, tc := range []struct {
		reg, weights string
		ok           bool
	}{
		{"all", "", true},
		{"mem,tv", "mem=1e4,tv=auto", true},
		{"mem,tv", "smooth=1", false},
		{"mem,mem", "", false},
		{"bogus", "", false},
		{"mem", "mem=-1", false},
		{"mem", "mem", false},
	} {
		_, err := CompareEntries(runspec.Spec{}, tc.reg, tc.weights)
		if (err == nil) != tc.ok {
			t.Errorf("-reg %q -weights %q: error %v, want ok=%v", tc.reg, tc.weights, err, tc.ok)
		}
	}
	e, err := CompareEntries(runspec.Spec{Grid: 64}, "mem,tv", "mem=1e4")
	if err != nil || len(e) != 2 || e[0].Spec.Weight != 1e4 || e[1].Spec.Weight != 0 || e[1].Spec.Grid != 64 || e[1].Spec.RegularizerLabel() != "tv" {
		t.Fatalf("entries %+v (%v)", e, err)
	}
}

// BenchmarkCompare measures four regularizers on a 128² grid: one comparison (runs in
// parallel, one transform worker each when there are fewer cores than runs) against the
// four reconstructions one after another with every core given to the transform, as
// separate `vcz image` runs would. The metric ratio is the first over the second (goal ≤
// 0.6).
func BenchmarkCompare(b *testing.B) {
	files, d := demoData(b)
	mk := func() *Comparison {
		entries, err := CompareEntries(runspec.Spec{Grid: 128, Iterations: 100, Starts: 1}, "mem,tv,smooth,compact", "")
		if err != nil {
			b.Fatal(err)
		}
		c, err := NewComparison(files, d, entries)
		if err != nil {
			b.Fatal(err)
		}
		for _, r := range c.Runs {
			r.Settings.PathIter, r.Settings.WeightSteps = 40, 4
		}
		return c
	}
	b.ReportAllocs()
	var par, seq time.Duration
	for b.Loop() {
		c := mk()
		t0 := time.Now()
		c.Run(len(c.Runs), 0, CompareHooks{})
		par += time.Since(t0)
		c = mk()
		t0 = time.Now()
		runs := c.Runs
		for _, r := range runs {
			c.Runs = []*CompareRun{r}
			c.Run(1, runtime.GOMAXPROCS(0), CompareHooks{})
		}
		seq += time.Since(t0)
	}
	b.ReportMetric(par.Seconds()/float64(b.N), "compare-s/op")
	b.ReportMetric(seq.Seconds()/float64(b.N), "separate-s/op")
	b.ReportMetric(par.Seconds()/seq.Seconds(), "ratio")
}

// With -channels every regularizer's run is a cube: the report's rows describe the gray
// images the cubes started from, each cube is written beside them, with one plane per
// channel group and their wavelengths on the WAVE axis (FITS WCS Paper III, Greisen et al.
// 2006), and the cubes are compared plane by plane: each plane's χ²ᵣ per regularizer (the
// cube's own), the spread and common flux of the plane (recomputed here from the cubes'
// planes), the montage, compare-planes.csv, the text table and the HTML report.
func TestCompareCubes(t *testing.T) {
	files, d := demoData(t)
	base := runspec.Spec{Grid: 32, Iterations: 30, Starts: 1, Weight: 0.01}
	if err := base.Set("channels", "2"); err != nil {
		t.Fatal(err)
	}
	entries, err := CompareEntries(base, "tv,smooth", "")
	if err != nil {
		t.Fatal(err)
	}
	c, err := NewComparison(files, d, entries)
	if err != nil {
		t.Fatal(err)
	}
	c.Run(1, 1, CompareHooks{})
	dir := t.TempDir()
	rep, err := c.Write(dir, output.Outputs{}, 0)
	if err != nil {
		t.Fatal(err)
	}
	for i, r := range c.Runs {
		if r.Err != nil || r.Cube == nil || r.Result != r.Cube.Gray {
			t.Fatalf("%s: error %v, cube %v", r.Name, r.Err, r.Cube != nil)
		}
		// The verdict of a cube's row is the cube's, not its gray image's.
		if got, want := strings.Join(rep.Rows[i].Warnings, "|"), strings.Join(r.Cube.Warnings, "|"); got != want || rep.Rows[i].Converged != r.Cube.Converged {
			t.Errorf("%s: row warnings %q (converged %v), the cube's %q (converged %v)", r.Name, got, rep.Rows[i].Converged, want, r.Cube.Converged)
		}
		cube, err := fitsimage.ReadFile(filepath.Join(dir, rep.Rows[i].Cube))
		if err != nil {
			t.Fatal(err)
		}
		if cube.Planes != 2 || len(cube.Wave) != 2 || !(cube.Wave[0] < cube.Wave[1]) {
			t.Errorf("%s: %d planes, wavelengths %v", r.Name, cube.Planes, cube.Wave)
		}
	}
	if len(rep.Planes) != 2 || rep.PlanesMontage != "compare-planes.png" {
		t.Fatalf("%d planes, montage %q", len(rep.Planes), rep.PlanesMontage)
	}
	for k, p := range rep.Planes {
		imgs := [][]float64{c.Runs[0].Cube.Planes[k].Image, c.Runs[1].Cube.Planes[k].Image}
		if p.Plane != k+1 || len(p.Runs) != 2 || p.Spread != spreadFigure(imgs) || p.Common != commonFlux(imgs, rep.Shifts, c.Grid.N) ||
			!(p.Spread > 0) || !(p.Common > 0.5 && p.Common <= 1) {
			t.Errorf("plane %d: %+v", k+1, p)
		}
		for i, r := range p.Runs {
			pl := c.Runs[i].Cube.Planes[k]
			if r.Regularizer != c.Runs[i].Name || float64(r.Chi2r) != pl.Chi2r || math.Abs(p.WavelengthUm-pl.Coord*1e6) > 1e-12 ||
				len(r.Chi2ByType) != len(pl.Chi2) {
				t.Errorf("plane %d, %s: %+v", k+1, c.Runs[i].Name, r)
			}
		}
	}
	// The fit plots show each cube's planes: χ² of the V² they plot, Σ((data − model)/σ)²,
	// is the cubes' own χ² of V² summed over the planes.
	preds, _, err := cubePredictions(c.Runs)
	if err != nil {
		t.Fatal(err)
	}
	m, models := cubeMeasured(c.Runs, preds, dataset.Vis2)
	for i, r := range c.Runs {
		got, want := 0.0, 0.0
		for j, v := range m.Value {
			z := (v - models[i].Value[j]) / m.Err[j]
			got += z * z
		}
		for _, p := range r.Cube.Planes {
			for _, c := range p.Chi2 {
				if c.Type == dataset.Vis2 {
					want += c.Chi2
				}
			}
		}
		if math.Abs(got-want) > 1e-6*want {
			t.Errorf("%s: χ² of the plotted V² %.10g, the cube's %.10g", r.Name, got, want)
		}
	}
	if len(rep.Plots) == 0 {
		t.Error("no fit plots")
	}
	for _, f := range []string{"compare-planes.png", "compare-planes.csv"} {
		if _, err := os.Stat(filepath.Join(dir, f)); err != nil {
			t.Error(err)
		}
	}
	csvText, err := os.ReadFile(filepath.Join(dir, "compare-planes.csv"))
	if err != nil || strings.Count(string(csvText), "\n") != 5 || !strings.Contains(string(csvText), ",chi2r_vis2,") {
		t.Errorf("compare-planes.csv: %v\n%s", err, csvText)
	}
	html, err := os.ReadFile(filepath.Join(dir, "report.html"))
	if err != nil || !strings.Contains(string(html), "<h2>Planes</h2>") || !strings.Contains(string(html), "tv-cube.fits") {
		t.Errorf("report.html lacks the planes or the cubes: %v", err)
	}
	var text strings.Builder
	rep.WriteText(&text)
	if !strings.Contains(text.String(), "Planes: χ²ᵣ of each regularizer's cube") || !strings.Contains(text.String(), "all planes") {
		t.Errorf("text report:\n%s", text.String())
	}
	t.Logf("\n%s", text.String())
	c.Bootstrap(BootstrapOptions{})
	if c.Runs[0].BootErr == nil {
		t.Error("the bootstrap of a cube was not refused")
	}
}
