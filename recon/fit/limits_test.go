package fit

import (
	"bytes"
	"encoding/csv"
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"vcz/dataset"
)

// The Δχ² thresholds are the χ² quantiles of the normal tails: with 3
// degrees of freedom the survival function erfc(√(x/2)) + √(2x/π)
// e^{−x/2} (Abramowitz & Stegun 26.4.5) at the threshold equals
// erfc(n/√2), the two-sided normal tail of nσ.
func TestLimitThresholds(t *testing.T) {
	n := exactNoise
	n.rng = rand.New(rand.NewPCG(3, 4))
	d := synth(modelVis(mustLoad(t, "ud:diameter=1.5")), n)
	res, err := Fit(d, mustLoad(t, "ud:diameter~1.5"), Options{})
	if err != nil {
		t.Fatal(err)
	}
	L, err := DetectionLimits(d, res, LimitOptions{SepMin: 2, SepMax: 20, NSep: 4, NPA: 6})
	if err != nil {
		t.Fatal(err)
	}
	for k, s := range L.Sigmas {
		x := L.Threshold[k]
		q := math.Erfc(math.Sqrt(x/2)) + math.Sqrt(2*x/math.Pi)*math.Exp(-x/2)
		if want := math.Erfc(s / math.Sqrt2); math.Abs(q-want) > 1e-6*want {
			t.Errorf("%gσ: threshold %g has p = %g, want %g", s, x, q, want)
		}
	}
	// The 5σ limit is above the 3σ one everywhere.
	for i := range L.Ratio[0] {
		if !(L.Ratio[1][i] > L.Ratio[0][i]) {
			t.Fatalf("cell %d: 5σ limit %g not above 3σ limit %g", i, L.Ratio[1][i], L.Ratio[0][i])
		}
	}
	var b bytes.Buffer
	if err := L.WriteCSV(&b); err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(&b).ReadAll()
	if err != nil || len(rows) != 5 || len(rows[0]) != 9 || rows[0][1] != "ratio_mean_3sigma" {
		t.Fatalf("CSV %v (%v)", rows, err)
	}
}

// The limits predict detection, by either method (χ² and
// injection–recovery): a companion injected at 1.5 times the
// computed 5σ limit of its position is detected at 5σ or more
// (Significance, its position, flux and the disc's diameter fitted from
// the injected values) in at least 95 % of noise draws, and one at half
// the limit in at most 5 % (the thresholds of the issue; the expected
// Δχ² grows as the square of the ratio, so 1.5× gives about 2.25 times
// the threshold and 0.5× a quarter of it: Absil et al. 2011, A&A 535,
// A68, sect. 4). The data are exact sums of the analytic models plus
// seeded Gaussian noise. The test checks one position of the map;
// BenchmarkLimitsInjectionRecovery checks three with the same bounds:
//
//	go test -run '^$' -bench LimitsInjectionRecovery -benchtime 1x ./recon/fit
func TestLimitsInjectionRecovery(t *testing.T) {
	checkInjectionRecovery(t, [][2]int{{3, 5}})
}

func BenchmarkLimitsInjectionRecovery(b *testing.B) {
	for b.Loop() {
		checkInjectionRecovery(b, [][2]int{{1, 0}, {3, 5}, {7, 2}})
	}
}

// checkInjectionRecovery checks the cells (separation, position angle indices) of the map.
func checkInjectionRecovery(t testing.TB, cells [][2]int) {
	n := exactNoise
	n.rng = rand.New(rand.NewPCG(5, 8))
	d := synth(modelVis(mustLoad(t, "ud:diameter=1.5")), n)
	res, err := Fit(d, mustLoad(t, "ud:diameter~1.5"), Options{})
	if err != nil {
		t.Fatal(err)
	}
	L, err := DetectionLimits(d, res, LimitOptions{SepMin: 3, SepMax: 24, NSep: 8, NPA: 8, Injection: true})
	if err != nil {
		t.Fatal(err)
	}
	const draws = 40
	for _, method := range []string{"χ²", "injection"} {
		maps := L.Ratio
		if method == "injection" {
			maps = L.Inj.Ratio
		}
		checkRecovered(t, L, maps[1], method, cells, draws)
	}
}

// checkRecovered checks the recovery of companions injected at 1.5 and 0.5 times the 5σ
// limits lim5 (a map of L's grid, found by method) at the cells.
func checkRecovered(t testing.TB, L *Limits, lim5 []float64, method string, cells [][2]int, draws int) {
	for _, cell := range cells {
		sep, pa := L.Sep[cell[0]], L.PA[cell[1]]
		lim := lim5[cell[1]*len(L.Sep)+cell[0]]
		if math.IsNaN(lim) {
			t.Fatalf("no 5σ limit at %g mas, %g°", sep, pa)
		}
		s, c := math.Sincos(pa * math.Pi / 180)
		x, y := sep*s, sep*c
		for _, k := range []float64{1.5, 0.5} {
			f := k * lim
			truth := mustLoad(t, fmt.Sprintf("ud:diameter=1.5;point:x=%g,y=%g,flux=%g", x, y, f))
			start := mustLoad(t, fmt.Sprintf("ud:diameter~1.5;point:x~%g,y~%g,flux~%g", x, y, f))
			detected := 0
			for i := 0; i < draws; i++ {
				n := exactNoise
				n.rng = rand.New(rand.NewPCG(uint64(i), 1234))
				dd := synth(modelVis(truth), n)
				r, err := Fit(dd, start, Options{})
				if r == nil {
					t.Fatal(err)
				}
				det, err := Significance(dd, r, 1, Options{})
				if err != nil {
					t.Fatal(err)
				}
				if det.Sigma >= 5 {
					detected++
				}
			}
			rate := float64(detected) / float64(draws)
			t.Logf("%s: %.3g mas, %g°: 5σ limit %.4g (Δmag %.2f); at %g× detected at ≥5σ in %d of %d draws", method, sep, pa, lim, DMag(lim), k, detected, draws)
			if (k > 1 && rate < 0.95) || (k < 1 && rate > 0.05) {
				t.Errorf("%s: %.3g mas, %g°: at %g× the 5σ limit, detected in %d of %d draws", method, sep, pa, k, detected, draws)
			}
		}
	}
}

// BenchmarkDetectionLimits computes 3σ and 5σ limits on a 50 × 50 grid of
// positions next to a disc, from 2 040 data (V², closure amplitudes and
// phases, visibility amplitudes and phases), by the χ² method alone and
// with injection–recovery beside it.
func BenchmarkDetectionLimits(b *testing.B) {
	n := exactNoise
	n.vis = true
	n.rng = rand.New(rand.NewPCG(1, 2))
	d := synth(modelVis(mustLoad(b, "ud:diameter=1.5")), n)
	res, err := Fit(d, mustLoad(b, "ud:diameter~1.5"), Options{Use: dataset.Vis2 | dataset.T3Amp | dataset.T3Phi | dataset.VisAmp | dataset.VisPhi})
	if err != nil {
		b.Fatal(err)
	}
	if res.N != 2040 {
		b.Fatalf("%d data", res.N)
	}
	for _, inj := range []bool{false, true} {
		name := "method=chi2"
		if inj {
			name = "method=chi2+injection"
		}
		b.Run(name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := DetectionLimits(d, res, LimitOptions{SepMin: 0.5, SepMax: 25, NSep: 50, NPA: 50, Injection: inj}); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// Injection–recovery limits against a direct injection: at a few cells
// the data are simulated again with the companion added to the model and
// the same noise draws (the same seed: the same noise), the model with a
// companion of free flux at that position and the model alone are
// fitted by Levenberg–Marquardt (the disc's diameter free in both), and
// the ratio at which their Δχ², divided by the model's χ²ᵣ as the limits
// do, reaches the 3σ and 5σ thresholds is found by bisection. The limits
// rest on first-order refits and residual differences, so they must
// agree within 1 % (the agreement measured here was about 0.05 %).
// Over the whole map the two methods must agree as the first-order
// theory says: the injection limit is the χ² limit times 1 + s/√Δχ²_n,
// s ~ N(0, 1) the noise along the companion's signal (a noncentral χ²
// with one degree of freedom: Δχ² = (f|g| − s)²), so s = (ratio − 1)√Δχ²_n
// has mean 0 and standard deviation 1 over the 6 × 10 cells (within
// 0.5 and 0.7 to 1.4: the cells are correlated, fewer than 60 are
// independent; common practice, no source), and the azimuthal means
// agree within 15 % at 5σ.
func TestInjectionLimits(t *testing.T) {
	truth := mustLoad(t, "ud:diameter=1.5")
	n := exactNoise
	n.rng = rand.New(rand.NewPCG(3, 4))
	d := synth(modelVis(truth), n)
	res, err := Fit(d, mustLoad(t, "ud:diameter~1.5"), Options{})
	if err != nil {
		t.Fatal(err)
	}
	L, err := DetectionLimits(d, res, LimitOptions{SepMin: 2, SepMax: 20, NSep: 6, NPA: 10, Injection: true})
	if err != nil {
		t.Fatal(err)
	}
	for k, sigma := range L.Sigmas {
		var s, s2 float64
		cells := 0
		for i, inj := range L.Inj.Ratio[k] {
			s0 := (inj/L.Ratio[k][i] - 1) * math.Sqrt(L.Threshold[k])
			s += s0
			s2 += s0 * s0
			cells++
		}
		mean := s / float64(cells)
		sd := math.Sqrt(s2/float64(cells) - mean*mean)
		t.Logf("%gσ: noise along the signal s = (inj/χ² − 1)√Δχ²: mean %.3f, sd %.3f over %d cells", sigma, mean, sd, cells)
		if math.Abs(mean) > 0.5 || sd < 0.7 || sd > 1.4 {
			t.Errorf("%gσ: s has mean %.3f and sd %.3f, want 0 and 1", sigma, mean, sd)
		}
	}
	var b bytes.Buffer
	if err := L.WriteCSV(&b); err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(&b).ReadAll()
	if err != nil || len(rows) != 7 || len(rows[0]) != 17 || rows[0][9] != "ratio_mean_injection_3sigma" {
		t.Fatalf("CSV %v (%v)", rows, err)
	}
	for is := range L.Sep {
		if r := L.Inj.Mean[1][is] / L.Mean[1][is]; math.Abs(r-1) > 0.15 {
			t.Errorf("%g mas: 5σ mean limits %.4g by injection, %.4g by χ²", L.Sep[is], L.Inj.Mean[1][is], L.Mean[1][is])
		}
	}
	for _, cell := range [][2]int{{1, 2}, {4, 7}} {
		sep, pa := L.Sep[cell[0]], L.PA[cell[1]]
		x, y := sep*math.Sin(pa*math.Pi/180), sep*math.Cos(pa*math.Pi/180)
		dchi2 := func(f float64) float64 {
			n := exactNoise
			n.rng = rand.New(rand.NewPCG(3, 4))
			di := synth(modelVis(mustLoad(t, fmt.Sprintf("ud:diameter=1.5;point:x=%g,y=%g,flux=%g", x, y, f))), n)
			alt, err := Fit(di, mustLoad(t, fmt.Sprintf("ud:diameter~1.5;point:x=%g,y=%g,flux~%g", x, y, f)), Options{})
			if err != nil {
				t.Fatal(err)
			}
			null, err := Fit(di, mustLoad(t, "ud:diameter~1.5"), Options{})
			if err != nil {
				t.Fatal(err)
			}
			return (null.Chi2 - alt.Chi2) / L.Scale
		}
		for k, thr := range L.Threshold {
			lo, hi := 1e-4, 0.5
			for i := 0; i < 40; i++ {
				mid := math.Sqrt(lo * hi)
				if dchi2(mid) < thr {
					lo = mid
				} else {
					hi = mid
				}
			}
			want := math.Sqrt(lo * hi)
			got := L.Inj.Ratio[k][cell[1]*len(L.Sep)+cell[0]]
			t.Logf("%.3g mas, %g°, %gσ: injection limit %.5g, direct %.5g (χ² limit %.5g)", sep, pa, L.Sigmas[k], got, want, L.Ratio[k][cell[1]*len(L.Sep)+cell[0]])
			if math.Abs(got/want-1) > 0.01 {
				t.Errorf("%.3g mas, %g°, %gσ: injection limit %.5g, direct injection %.5g", sep, pa, L.Sigmas[k], got, want)
			}
		}
	}
}
