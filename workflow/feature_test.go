package workflow

import (
	"math"
	"math/rand/v2"
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
