package workflow

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"vcz/recon"
)

// syntheticBootstrap makes K replicate images of a 32-pixel uniform disc of radius 10 pixels
// holding 1 in total flux, with a spot of the given excess flux spread evenly over the 13
// pixels within 2 pixels of (20, 16), plus independent Gaussian noise of sd per pixel. The
// full image has the spot and no noise.
func syntheticBootstrap(k int, excess, sd float64, seed uint64) (*Bootstrap, []float64, Region) {
	const n = 32
	disc := make([]float64, n*n)
	c := 0
	for p := range disc {
		if math.Hypot(float64(p%n-16), float64(p/n-16)) <= 10 {
			disc[p] = 1
			c++
		}
	}
	spot := 0
	for p := range disc {
		disc[p] /= float64(c)
		if math.Hypot(float64(p%n-20), float64(p/n-16)) <= 2 {
			spot++
		}
	}
	for p := range disc {
		if math.Hypot(float64(p%n-20), float64(p/n-16)) <= 2 {
			disc[p] += excess / float64(spot)
		}
	}
	rng := rand.New(rand.NewPCG(seed, 1))
	b := &Bootstrap{N: n, Pixel: recon.Mas}
	for range k {
		im := make([]float64, n*n)
		for p := range im {
			im[p] = disc[p] + sd*rng.NormFloat64()
		}
		b.Images = append(b.Images, im)
	}
	// Pixel (20, 16) is at x = −(20 − 16) = −4 mas, y = 0.
	return b, disc, Region{Text: "-4,0,2", X: -4 * recon.Mas, R: 2 * recon.Mas}
}

// TestFeatureTest checks the excess and its noise on synthetic replicates where both are
// known: the excess of the full image is the spot's flux (the disc is flat, so either
// reference is the disc's surface brightness), and with independent noise of σ per pixel the
// excess of a replicate has the standard deviation σ·√(13 + 13²/m) for the 13 pixels of the
// region and the m pixels its reference averages (the variance of a sum and of a scaled mean
// of independent variables). A replicate is brighter when its excess exceeds that noise:
// with the excess E = 3σₑ the fraction is Φ(2) = 0.977 (normal table), and with no spot the
// brighter and fainter fractions are each Φ(−1) = 0.159.
func TestFeatureTest(t *testing.T) {
	const sd, k = 1e-4, 4000
	for _, disc := range []bool{true, false} {
		b, full, r := syntheticBootstrap(k, 0, sd, 1)
		f, err := FeatureTest(b, full, r, disc)
		if err != nil {
			t.Fatal(err)
		}
		if f.Pixels != 13 {
			t.Fatalf("region of %d pixels, want 13", f.Pixels)
		}
		// The annulus from 2 to 4 pixels holds 36 pixel centres; a ring of the azimuthal
		// average many more, so its noise is nearer σ√13.
		m := 36.0
		want := sd * math.Sqrt(13+13*13/m)
		if disc {
			want = sd * math.Sqrt(13)
		}
		if math.Abs(f.Excess) > 1e-15 || math.Abs(f.Noise-want) > 0.1*want {
			t.Errorf("disc %v, no spot: excess %g noise %g, want 0 and %g within 10 %%", disc, f.Excess, f.Noise, want)
		}
		// 4000 draws: the fractions are within 0.02 of 0.159 (3 binomial σ).
		if math.Abs(f.Brighter-0.159) > 0.02 || math.Abs(f.Fainter-0.159) > 0.02 {
			t.Errorf("disc %v, no spot: brighter %.3f fainter %.3f, want 0.159", disc, f.Brighter, f.Fainter)
		}
		exc := 3 * f.Noise
		b, full, r = syntheticBootstrap(k, exc, sd, 2)
		f, err = FeatureTest(b, full, r, disc)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(f.Excess-exc) > 1e-12 || math.Abs(f.Z-3) > 0.3 || math.Abs(f.Brighter-0.977) > 0.01 || f.Fainter > 0.001 {
			t.Errorf("disc %v, spot of 3σ: %+v", disc, f)
		}
	}
}

func TestParseRegion(t *testing.T) {
	r, err := ParseRegion("-1.8, 0.4,0.5")
	if near := func(a, b float64) bool { return math.Abs(a-b) <= 1e-12*recon.Mas }; err != nil || !near(r.X, -1.8*recon.Mas) || !near(r.Y, 0.4*recon.Mas) || !near(r.R, 0.5*recon.Mas) {
		t.Errorf("ParseRegion: %+v, %v", r, err)
	}
	for _, bad := range []string{"1,2,0", "1,x,2", "no-such-file.fits"} {
		if _, err := ParseRegion(bad); err == nil {
			t.Errorf("ParseRegion(%q): no error", bad)
		}
	}
}

// exactBootstrap makes one 32-pixel replicate image per excess in exc: the excess spread
// evenly over the 13 pixels within 2 pixels of (20, 16) on a zero background, so that the
// region "-4,0,2" against the annulus has exactly that excess. The full image is the first.
func exactBootstrap(exc []float64) (*Bootstrap, Region) {
	const n = 32
	b := &Bootstrap{N: n, Pixel: recon.Mas}
	for _, e := range exc {
		im := make([]float64, n*n)
		for p := range im {
			if math.Hypot(float64(p%n-20), float64(p/n-16)) <= 2 {
				im[p] = e / 13
			}
		}
		b.Images = append(b.Images, im)
	}
	return b, Region{Text: "-4,0,2", X: -4 * recon.Mas, R: 2 * recon.Mas}
}

// TestFeatureFalseAlarmStudentT checks the false-alarm probability of a feature test on few
// replicates against tabulated critical values of Student's t (NIST/SEMATECH e-Handbook of
// Statistical Methods, sect. 1.3.6.7.2, upper critical values t(1−α, ν)): a statistic at
// t(1−α, ν) has the two-sided probability 2α. The replicates' excesses are m + s·d with d of
// mean 0 and standard deviation 1, so the statistic is m/s exactly. Under a normal
// distribution, the old assumption, t = 3.182 would read as 0.0015 instead of 0.05.
func TestFeatureFalseAlarmStudentT(t *testing.T) {
	for _, c := range []struct {
		k    int     // replicates
		t, p float64 // table value t(1−α, k−1) and 2α
	}{
		{4, 3.182, 0.05},   // t(0.975, 3), NIST table
		{4, 5.841, 0.01},   // t(0.995, 3), NIST table
		{4, 10.215, 0.002}, // t(0.999, 3), NIST table
		{20, 2.093, 0.05},  // t(0.975, 19), NIST table
		{20, 3.579, 0.002}, // t(0.999, 19), NIST table
	} {
		// d: evenly spaced values scaled to mean 0 and standard deviation 1 (K − 1 denominator).
		d := make([]float64, c.k)
		ss := 0.0
		for i := range d {
			d[i] = float64(i) - float64(c.k-1)/2
			ss += d[i] * d[i]
		}
		const s = 1e-3
		exc := make([]float64, c.k)
		for i := range d {
			exc[i] = c.t*s + s*d[i]/math.Sqrt(ss/float64(c.k-1))
		}
		b, r := exactBootstrap(exc)
		f, err := FeatureTest(b, b.Images[0], r, false)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(f.Z-c.t) > 1e-9*c.t {
			t.Fatalf("K = %d: statistic %.6g, want %g", c.k, f.Z, c.t)
		}
		// The table gives t to 4 significant digits: 1 % in the probability covers that.
		if math.Abs(f.FalseAlarm-c.p) > 0.01*c.p {
			t.Errorf("K = %d, t = %g: false-alarm probability %.4g, want %g (Student's t, %d degrees of freedom)", c.k, c.t, f.FalseAlarm, c.p, c.k-1)
		}
		if f.Replicates != c.k || !strings.Contains(f.Distribution, fmt.Sprintf("Student's t with %d degrees of freedom", c.k-1)) {
			t.Errorf("K = %d: replicates %d, distribution %q", c.k, f.Replicates, f.Distribution)
		}
		if !strings.Contains(f.String(), fmt.Sprintf("from %d replicates", c.k)) {
			t.Errorf("K = %d: report %q does not say how many replicates", c.k, f)
		}
		// The normal deviate of the same two-sided probability: 1.960 for 0.05, 2.576 for
		// 0.01, 3.090 for 0.002 (normal table).
		want := map[float64]float64{0.05: 1.960, 0.01: 2.576, 0.002: 3.090}[c.p]
		if math.Abs(f.Sigma-want) > 0.01 {
			t.Errorf("K = %d, t = %g: equivalent %.4gσ, want %g", c.k, c.t, f.Sigma, want)
		}
	}
}

// TestFeatureCountedFractions: a fraction counted from K replicates is reported with its
// count, and none of K as below 1/K rather than as 0.
func TestFeatureCountedFractions(t *testing.T) {
	b, r := exactBootstrap([]float64{1e-3, 2e-3, 3e-3, 4e-3})
	f, err := FeatureTest(b, b.Images[0], r, false)
	if err != nil {
		t.Fatal(err)
	}
	// The noise is 1.29e-3: three excesses lie above it, none below its negative.
	s := f.String()
	if !strings.Contains(s, "fainter in 0 of 4 (< 25 %)") || !strings.Contains(s, "brighter than the noise in 3 of 4 (75 %)") {
		t.Errorf("report %q: want the counts, and 0 of 4 as < 25 %%", s)
	}
}

// TestFewReplicatesWarning: figures on fewer than MinReplicates replicates are warned of,
// naming what rests on them, the replicates and the degrees of freedom; on that many they
// are not.
func TestFewReplicatesWarning(t *testing.T) {
	const what = "the significance map"
	if w := FewReplicatesWarning(4, what); !strings.Contains(w, "only 4 bootstrap replicates") || !strings.Contains(w, "3 degrees of freedom") || !strings.Contains(w, what) {
		t.Errorf("4 replicates: warning %q", w)
	}
	if w := FewReplicatesWarning(MinReplicates-1, what); w == "" {
		t.Errorf("%d replicates: no warning", MinReplicates-1)
	}
	if w := FewReplicatesWarning(MinReplicates, what); w != "" {
		t.Errorf("%d replicates: warning %q", MinReplicates, w)
	}
}

// TestStudentTLevel checks the value of Student's t with the two-sided probability of 3σ of
// a normal variable, erfc(3/√2) = 0.0026998, against the closed forms of its distribution
// for 1 and 2 degrees of freedom (Johnson, Kotz & Balakrishnan 1995, Continuous Univariate
// Distributions, vol. 2, ch. 28): ν = 1 is the Cauchy distribution, P(|T| ≥ t) =
// 1 − (2/π)·atan t, and for ν = 2, P(|T| ≥ t) = 1 − t/√(t² + 2). For many degrees of
// freedom it tends to the normal 3.
func TestStudentTLevel(t *testing.T) {
	p := math.Erfc(3 / math.Sqrt2)
	q := 1 - p
	for _, c := range []struct {
		nu   int
		want float64
	}{
		{1, math.Tan(math.Pi / 2 * q)},
		{2, q * math.Sqrt2 / math.Sqrt(1-q*q)},
	} {
		if got := StudentTLevel(3, c.nu); math.Abs(got-c.want) > 1e-6*c.want {
			t.Errorf("ν = %d: level %.8g, want %.8g", c.nu, got, c.want)
		}
	}
	if got := StudentTLevel(3, 100000); math.Abs(got-3) > 1e-3 {
		t.Errorf("ν = 100000: level %.6g, want 3 (normal)", got)
	}
}
