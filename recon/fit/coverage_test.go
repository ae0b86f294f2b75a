package fit

import (
	"fmt"
	"math"
	"math/rand/v2"
	"sort"
	"testing"
)

// BenchmarkCoverage checks the observer's quantities of simulated binaries over separations
// of 1 to 40 mas and flux ratios of 0.5 to 0.005 (an unresolved-ish primary of 0.5 mas and a
// point companion at position angle 30°; the invented six-station array of synth, V² errors
// 0.01 and closure-phase errors of 1°): in each cell, over 500 noise draws fitted from the
// truth, the separation, position angle and flux ratio each lie within 2σ of the truth (σ the
// propagated first-order error of the fit) in at least 90 % of the draws (95.4 % for Gaussian
// errors; the 90 % is the issue's), and the scatter of the fitted values over the draws
// agrees with the median propagated error within 20 % (the tolerance; the sampling
// error of this scatter from 500 draws is about 5 %). The scatter is the normalised median absolute
// deviation about the truth, 1.4826·median|x − truth|, which equals σ for Gaussian errors
// (Rousseeuw & Croux 1993, JASA 88, 1273) and is not dominated by the few draws far out in
// the tail of a nearly unconstrained cell (a 0.5 % companion at 1 mas: rms 1.32 σ). Fits whose companion flux lies on its bound (0)
// are counted and left out. It fails where a cell misses and reports the worst coverage:
//
//	go test -run '^$' -bench Coverage -benchtime 1x ./recon/fit
func BenchmarkCoverage(b *testing.B) {
	seps := []float64{1, 3, 10, 20, 40}
	ratios := []float64{0.5, 0.05, 0.005}
	const draws = 500
	pa := 30 * math.Pi / 180
	worst, worstScatter := 1.0, 0.0
	for b.Loop() {
		for is, sep := range seps {
			for ir, ratio := range ratios {
				x, y := sep*math.Sin(pa), sep*math.Cos(pa)
				truth := mustLoad(b, fmt.Sprintf("ud:diameter=0.5;point:x=%g,y=%g,flux=%g", x, y, ratio))
				start := mustLoad(b, fmt.Sprintf("ud:diameter~0.5;point:x~%g,y~%g,flux~%g(0..1)", x, y, ratio))
				var in [3]int
				var vals [3][]float64
				var errs [3][]float64
				bound := 0
				for k := range draws {
					n := exactNoise
					n.rng = rand.New(rand.NewPCG(uint64(100*is+ir), uint64(k)))
					d := synth(modelVis(truth), n)
					res, err := Fit(d, start, Options{Starts: 1})
					if res == nil || len(res.Pairs) != 1 {
						b.Fatalf("sep %g ratio %g draw %d: %v", sep, ratio, k, err)
					}
					p := res.Pairs[0]
					if p.AtBound {
						bound++
						continue
					}
					dev := [3]float64{p.Sep - sep, math.Remainder(p.PA-30, 360), p.Ratio - ratio}
					e := [3]float64{p.SepErr, p.PAErr, p.RatioErr}
					for q := range 3 {
						if math.Abs(dev[q]) <= 2*e[q] {
							in[q]++
						}
						vals[q] = append(vals[q], dev[q])
						errs[q] = append(errs[q], e[q])
					}
				}
				used := draws - bound
				for q, name := range []string{"separation", "position angle", "ratio"} {
					cov := float64(in[q]) / float64(used)
					scatter := mad(vals[q])
					med := median(errs[q])
					r := scatter / med
					b.Logf("sep %5g mas ratio %-6g %-15s within 2σ %3.0f %% of %d (at bound %d); scatter %.3g, median σ %.3g (ratio %.2f)",
						sep, ratio, name, 100*cov, used, bound, scatter, med, r)
					worst = math.Min(worst, cov)
					worstScatter = math.Max(worstScatter, math.Abs(r-1))
					if cov < 0.9 || math.Abs(r-1) > 0.2 {
						b.Errorf("sep %g mas, ratio %g: %s within 2σ in %.0f %% of %d draws, scatter/σ %.2f", sep, ratio, name, 100*cov, used, r)
					}
				}
			}
		}
	}
	b.ReportMetric(worst, "worst-coverage")
	b.ReportMetric(worstScatter, "worst-scatter-dev")
}

// mad is 1.4826 times the median of |x|: the scatter of deviations x from the truth.
func mad(x []float64) float64 {
	a := make([]float64, len(x))
	for i, v := range x {
		a[i] = math.Abs(v)
	}
	return 1.4826 * median(a)
}

func median(x []float64) float64 {
	y := append([]float64(nil), x...)
	sort.Float64s(y)
	if len(y) == 0 {
		return math.NaN()
	}
	return y[len(y)/2]
}
