package validate

import (
	"bytes"
	"flag"
	"fmt"
	"os"
	"regexp"
	"strings"
	"sync"
	"testing"
	"time"
	"vcz/dataset"

	"vcz/recon"
)

// Flags of BenchmarkSuite.
var (
	suiteOut     = flag.String("suite.out", "", "write the Markdown table of BenchmarkSuite to this file (default: the benchmark log)")
	suiteOnly    = flag.String("suite.only", "", "run only the cases whose name (scene/array/errors) matches this regular expression")
	suiteOracle  = flag.Bool("suite.oracle", true, "run the oracle weight scan")
	suiteConc    = flag.Int("suite.concurrent", 2, "cases reconstructed at the same time")
	suiteRefine  = flag.Bool("suite.refine", true, "refine the oracle scan by half a decade either side of its best weight")
	suiteFullLog = flag.Bool("suite.progress", true, "log each case as it finishes")
)

// subsetCases are the cases of TestSuiteSubset and BenchmarkSubset: six scenes of the five
// families on the four-telescope array, with both error models that keep to their error bars.
// The test runs the three marked test (a binary with flat errors, and the two cases that need
// the rescue starts and the orientation step of Solve); the benchmark runs all six with the
// same bounds. maxRatio is
// the bound on L1 against the oracle's: MaxRatio, the target, where the engine meets it, and
// the measured ratio with a little room where the full suite shows a known gap, so that a
// regression shows there too (the gap is reported, not hidden: README and the suite table).
var subsetCases = []struct {
	scene    string
	model    ErrorModel
	maxRatio float64
	test     bool
}{
	{"Tessaly", NullGrow, MaxRatio, false}, // limb-darkened disc: measured 0.96
	{"Varn", Flat, MaxRatio, true},         // binary: measured 1.11
	// Inclined ring around a star: total variation at any weight whose χ²ᵣ differs from the
	// floor's blurs the star into the ring; measured 1.70 (known gap).
	{"Heliandor", NullGrow, 1.9, false},
	// Compact core with knots: the weight target lies above the best weight; measured 1.42
	// (known gap).
	{"Brisca", Flat, 1.6, false},
	// Point group on a halo whose one default start ends in a wrong minimum (χ²ᵣ 10 times
	// its expected value, L1 0.88): the rescue starts of Solve must find the fit (measured
	// 1.16).
	{"Wendrake", NullGrow, MaxRatio, true},
	// Spotted disc whose sparse closure phases leave the amplitude fit turned by 180°: Solve
	// must fit the phases from both orientations and keep the better (measured 1.00; L1 0.42
	// and mirrored without it).
	{"Quillon", NullGrow, MaxRatio, true},
}

// TestSuiteSubset reconstructs the cases of subsetCases marked test with the defaults of `vcz
// image` and with the oracle's short weight scan (ShortScan with half-decade refinement) and
// asserts the engine's targets: L1 of the default at most maxRatio × the oracle's (MaxRatio,
// or the bound of a known gap), χ²ᵣ within MinChi2Ratio–MaxChi2Ratio of its expected value,
// and an image never mirrored.
func TestSuiteSubset(t *testing.T) { runSubset(t, false) }

// BenchmarkSubset runs all six cases of subsetCases once with the checks of TestSuiteSubset:
//
//	go test -run '^$' -bench Subset -benchtime 1x ./recon/validate
func BenchmarkSubset(b *testing.B) {
	for b.Loop() {
		runSubset(b, true)
	}
}

func runSubset(t testing.TB, all bool) {
	_, four := testArrays(t)
	var cases []Case
	var bounds []float64
	for _, c := range subsetCases {
		if !all && !c.test {
			continue
		}
		s, err := SceneByName(four.Resolution, c.scene)
		if err != nil {
			t.Fatal(err)
		}
		cases = append(cases, Case{Scene: s, Array: four, Model: c.model})
		bounds = append(bounds, c.maxRatio)
	}
	rows := Run(cases, Options{Concurrent: 1, Oracle: true, Scan: ShortScan, Refine: true})
	var b bytes.Buffer
	if err := WriteMarkdown(&b, rows); err != nil {
		t.Fatal(err)
	}
	t.Logf("\n%s", b.String())
	for i, r := range rows {
		for _, f := range r.failures(bounds[i]) {
			t.Errorf("%s: %s", r.Case, f)
		}
	}
}

// BenchmarkSuite runs the full suite (SuiteCases on the six- and four-telescope arrays) or the
// cases that -suite.only selects, once, and writes the Markdown table to -suite.out or the
// benchmark log. Run it with
//
//	go test -run '^$' -bench Suite -benchtime 1x ./recon/validate -suite.out table.md
//
// It reports the median L1 of the default, the number of cases that miss a target and the
// seconds per case as metrics.
func BenchmarkSuite(b *testing.B) {
	six, four, err := Arrays("../..")
	if err != nil {
		b.Fatal(err)
	}
	cases := SuiteCases(six, four)
	if *suiteOnly != "" {
		re, err := regexp.Compile(*suiteOnly)
		if err != nil {
			b.Fatalf("-suite.only: %v", err)
		}
		var sel []Case
		for _, c := range cases {
			if re.MatchString(c.Name()) {
				sel = append(sel, c)
			}
		}
		cases = sel
	}
	if len(cases) == 0 {
		b.Fatal("no case selected")
	}
	var mu sync.Mutex
	done := 0
	opt := Options{Concurrent: *suiteConc, Oracle: *suiteOracle, Refine: *suiteRefine}
	if *suiteFullLog {
		opt.Done = func(r Row) {
			mu.Lock()
			defer mu.Unlock()
			done++
			line := fmt.Sprintf("[%d/%d] %s: L1 %.3f χ²ᵣ %.3f/%.3f weight %.3g %.1f s", done, len(cases), r.Case, r.Default.L1, r.Default.Chi2r, r.Default.Chi2rTarget, r.Default.Weight, r.DefaultSeconds)
			if r.Oracle != nil {
				line += fmt.Sprintf("; oracle L1 %.3f at %.3g (%.1f s)", r.Oracle.L1, r.Oracle.Weight, r.OracleSeconds)
			}
			if r.Err != nil {
				line += "; error: " + r.Err.Error()
			}
			fmt.Fprintln(os.Stderr, line)
		}
	}
	var rows []Row
	t0 := time.Now()
	for range b.N {
		done = 0
		rows = Run(cases, opt)
	}
	elapsed := time.Since(t0).Seconds() / float64(b.N)
	var buf bytes.Buffer
	fmt.Fprintf(&buf, "Validation suite: %d cases, %d at a time, oracle %v; %.0f s in all.\n\n", len(cases), *suiteConc, *suiteOracle, elapsed)
	if err := WriteMarkdown(&buf, rows); err != nil {
		b.Fatal(err)
	}
	if *suiteOut != "" {
		if err := os.WriteFile(*suiteOut, buf.Bytes(), 0o644); err != nil {
			b.Fatal(err)
		}
	} else {
		b.Logf("\n%s", buf.String())
	}
	var l1s []float64
	failed := 0
	for _, r := range rows {
		if r.Err == nil {
			l1s = append(l1s, r.Default.L1)
		}
		if len(r.Failures()) > 0 {
			failed++
		}
	}
	b.ReportMetric(median(l1s), "median-L1")
	b.ReportMetric(float64(failed), "cases-missing-targets")
	b.ReportMetric(elapsed/float64(len(cases)), "s/case")
}

// BenchmarkNight reconstructs the night case (NightCase: 14 400 V² and 19 200 closure phases of
// a spotted limb-darkened disc, Flat errors) with the defaults of `vcz image`, the transform
// on GOMAXPROCS workers as the command runs it. It reports seconds per reconstruction
// (s/op), the L1 and NCC against the truth, χ²ᵣ and the grid size. The data are generated
// outside the timed loop.
func BenchmarkNight(b *testing.B) {
	six, _, err := Arrays("../..")
	if err != nil {
		b.Fatal(err)
	}
	c, err := NightCase(six)
	if err != nil {
		b.Fatal(err)
	}
	ds, err := Generate(c)
	if err != nil {
		b.Fatal(err)
	}
	p, s, err := DefaultProblem(ds.Data)
	if err != nil {
		b.Fatal(err)
	}
	b.Logf("night: %d V², %d closure triangles, %d usable measurements", ds.Data.Vis2.Len(), ds.Data.T3.Len(), ds.Data.Len(dataset.AllTypes))
	b.ReportAllocs()
	var o Outcome
	b.ResetTimer()
	for range b.N {
		r, err := recon.Solve(p, s)
		if err != nil {
			b.Fatal(err)
		}
		b.StopTimer()
		o = Score(c.Scene, r)
		b.StartTimer()
	}
	b.StopTimer()
	b.ReportMetric(o.L1, "L1")
	b.ReportMetric(o.NCC, "NCC")
	b.ReportMetric(o.Chi2r, "chi2r")
	b.ReportMetric(float64(o.Grid.N), "grid-N")
	if len(o.Warnings) > 0 {
		b.Logf("warnings: %s", strings.Join(o.Warnings, " "))
	}
}
