package recon

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"vcz/dataset"
)

// TestChooseGridFit checks the size fit on noise-free data made from the uniform-disc formula
// 2J1(x)/x (Born & Wolf sect. 8.5.2) and the Gaussian exp(−(π θ q)²/(4 ln 2)), and the rules:
// pixel = λmin/(2·Bmax)/4, field = 3 × size capped at λmax/Bmin, N friendly (common practice,
// no source).
func TestChooseGridFit(t *testing.T) {
	gauss := func(fwhm float64) func(u, v float64) complex128 {
		return func(u, v float64) complex128 { return complex(GaussianV(fwhm, math.Hypot(u, v)), 0) }
	}
	tests := []struct {
		name  string
		vis   func(u, v float64) complex128
		model string
		size  float64 // what ChooseGrid reports: the diameter, or twice the FWHM
	}{
		{"disc 3 mas", discVis(3 * Mas), "uniform disc", 3 * Mas},
		{"disc 6 mas", discVis(6 * Mas), "uniform disc", 6 * Mas},
		// Resolved far past the first null on the longest baselines (3/qmax < 30 mas).
		{"disc 30 mas", discVis(30 * Mas), "uniform disc", 30 * Mas},
		{"gaussian 2 mas", gauss(2 * Mas), "Gaussian", 4 * Mas},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			rng := rand.New(rand.NewPCG(2, 2))
			d := observe(rng, newSynthArray(rng, 5, 50), tc.vis, synthOpts{nchan: 5, nha: 6, lmin: 1.5e-6, lmax: 2.4e-6, hspan: 1.5, sigV2: 0.01})
			g, err := ChooseGrid(d, GridOptions{})
			if err != nil {
				t.Fatal(err)
			}
			if g.SizeModel != tc.model || math.Abs(g.Size/tc.size-1) > 1e-4 {
				t.Errorf("fit %s %.5g mas, want %s %.5g mas", g.SizeModel, g.Size/Mas, tc.model, tc.size/Mas)
			}
			s := d.Summarize()
			if math.Abs(g.Pixel-s.Resolution/4) > 1e-12*g.Pixel || g.Resolution != s.Resolution {
				t.Errorf("pixel %g, resolution %g", g.Pixel, s.Resolution)
			}
			wantFOV := math.Min(3*tc.size, s.LargestScale)
			wantN := nextFriendly(max(32, int(math.Ceil(wantFOV/g.Pixel-1e-9))))
			if !Friendly(g.N) || g.N != wantN {
				t.Errorf("N %d (field %.4g mas), want %d for a field of %.4g mas", g.N, g.FOV/Mas, wantN, wantFOV/Mas)
			}
			if len(g.Reasons) < 3 {
				t.Errorf("reasons %q", g.Reasons)
			}
			// The cap holds before the rounding of N only, and the last reason says by how
			// much the rounding took the field beyond it (README: "What the numbers mean").
			last := g.Reasons[len(g.Reasons)-1]
			over := fmt.Sprintf(", %.2g %% beyond λmax/Bmin by the rounding up of the pixel count", 100*(g.FOV/s.LargestScale-1))
			if beyond := g.FOV > s.LargestScale*(1+1e-9); beyond != strings.HasSuffix(last, over) {
				t.Errorf("field %.4g mas, λmax/Bmin %.4g mas: last reason %q, want the suffix %q: %v", g.FOV/Mas, s.LargestScale/Mas, last, over, beyond)
			}
		})
	}
}

func TestChooseGridOverrides(t *testing.T) {
	rng := rand.New(rand.NewPCG(2, 2))
	d := observe(rng, newSynthArray(rng, 5, 50), discVis(40*Mas), synthOpts{nchan: 3, nha: 4, lmin: 1.5e-6, lmax: 2.4e-6, hspan: 1, sigV2: 0.01})
	g, err := ChooseGrid(d, GridOptions{MaxN: 64})
	if err != nil {
		t.Fatal(err)
	}
	// A 40 mas disc wants a field larger than λmax/Bmin or 64 pixels: the field is capped and
	// the pixel enlarged to fit 64 pixels.
	if g.N != 64 || g.FOV > g.LargestScale*(1+1e-9) {
		t.Errorf("N %d field %.4g mas largest scale %.4g mas", g.N, g.FOV/Mas, g.LargestScale/Mas)
	}
	// Without the limit the field is capped at λmax/Bmin, and the pixel count rounded up to
	// the next friendly one takes it beyond by less than one rounding step: one friendly
	// count fewer would be inside; the last reason says by how much.
	g, err = ChooseGrid(d, GridOptions{})
	if err != nil {
		t.Fatal(err)
	}
	below := g.N - 2
	for !Friendly(below) {
		below -= 2
	}
	over := fmt.Sprintf("%d × %d pixels (even, factors 2, 3, 5 only): field of view %.4g mas, %.2g %% beyond λmax/Bmin by the rounding up of the pixel count",
		g.N, g.N, g.FOV/Mas, 100*(g.FOV/g.LargestScale-1))
	if !(g.FOV > g.LargestScale && float64(below)*g.Pixel < g.LargestScale) || g.Reasons[len(g.Reasons)-1] != over {
		t.Errorf("N %d (next friendly below %d) of %.4g mas: field %.4g mas, largest scale %.4g mas; reasons %q, want the last %q",
			g.N, below, g.Pixel/Mas, g.FOV/Mas, g.LargestScale/Mas, g.Reasons, over)
	}
	g, err = ChooseGrid(d, GridOptions{N: 50, Pixel: 0.3 * Mas})
	if err != nil || g.N != 50 || g.Pixel != 0.3*Mas {
		t.Errorf("overrides: %+v %v", g.Grid, err)
	}
	if _, err := ChooseGrid(&dataset.Data{}, GridOptions{}); err == nil {
		t.Error("no error for an empty data set")
	}
}

func TestStartImages(t *testing.T) {
	g := Grid{N: 64, Pixel: 0.25 * Mas}
	choice := GridChoice{Grid: g, SizeModel: "uniform disc", Size: 6 * Mas}
	for _, s := range []Start{{}, {Kind: StartGaussian, Size: 3 * Mas}, {Kind: StartFlat}, {Kind: StartUniformDisc},
		{Kind: StartLimbDarkened, Size: 6 * Mas, LimbDarkening: 0.6}, {Kind: StartRandom}} {
		img, err := StartImageFor(s, g, choice, 7)
		if err != nil {
			t.Fatal(err)
		}
		f, r2 := 0.0, 0.0
		for iy := 0; iy < g.N; iy++ {
			for ix := 0; ix < g.N; ix++ {
				x, y := float64(ix-g.N/2)*g.Pixel, float64(iy-g.N/2)*g.Pixel
				f += img[iy*g.N+ix]
				r2 += img[iy*g.N+ix] * (x*x + y*y)
			}
		}
		if math.Abs(f-1) > 1e-12 {
			t.Errorf("kind %d: flux %g", s.Kind, f)
		}
		// Second moments: a uniform disc of diameter θ has ⟨r²⟩ = θ²/8; a Gaussian of FWHM w
		// has ⟨r²⟩ = 2σ² = w²/(4 ln 2) (from the definitions); a linearly limb-darkened disc
		// of radius R, I = 1 − a(1 − μ), has ⟨r²⟩ = R²((1 − a)/4 + 2a/15)/((1 − a)/2 + a/3),
		// from ∫₀¹ s√(1 − s) ds = B(2, 3/2) = 4/15 and ∫₀¹ √(1 − s) ds = 2/3 (Beta function).
		var want float64
		switch s.Kind {
		case StartAuto, StartUniformDisc:
			want = 36 * Mas * Mas / 8
		case StartGaussian:
			want = 9 * Mas * Mas / (4 * math.Ln2)
		case StartFlat:
			d := 0.9 * float64(g.N) * g.Pixel
			want = d * d / 8
		case StartLimbDarkened:
			a, r := s.LimbDarkening, 3*Mas
			want = r * r * ((1-a)/4 + 2*a/15) / ((1-a)/2 + a/3)
		default:
			continue
		}
		if math.Abs(r2/want-1) > 0.01 {
			t.Errorf("kind %d: ⟨r²⟩ %.4g mas², want %.4g", s.Kind, r2/Mas/Mas, want/Mas/Mas)
		}
	}
	a, _ := StartImageFor(Start{Kind: StartRandom}, g, choice, 7)
	b, _ := StartImageFor(Start{Kind: StartRandom}, g, choice, 7)
	c, _ := StartImageFor(Start{Kind: StartRandom}, g, choice, 8)
	if a[100] != b[100] || a[100] == c[100] {
		t.Error("random start is not a function of the seed")
	}
	if _, err := StartImageFor(Start{Kind: StartImage, ImageN: 3}, g, choice, 1); err == nil {
		t.Error("no error for a start image of the wrong size")
	}
	if _, err := StartImageFor(Start{Kind: StartLimbDarkened, LimbDarkening: 2}, g, choice, 1); err == nil {
		t.Error("no error for a limb-darkening coefficient of 2")
	}
}

func TestResample(t *testing.T) {
	const n = 16
	src := make([]float64, n*n)
	rng := rand.New(rand.NewPCG(3, 3))
	for i := range src {
		src[i] = rng.Float64()
	}
	dst := make([]float64, n*n)
	Resample(dst, n, 1, src, n, 1)
	for i := range src {
		if math.Abs(dst[i]-src[i]) > 1e-12 {
			t.Fatalf("identity resampling differs at %d", i)
		}
	}
	// A point 3 pixels east and 2 north keeps its sky position on a grid of half the pixel.
	for i := range src {
		src[i] = 0
	}
	src[(n/2+2)*n+n/2-3] = 1
	big := make([]float64, 32*32)
	Resample(big, 32, 0.5, src, n, 1)
	sx, sy, f := 0.0, 0.0, 0.0
	for iy := 0; iy < 32; iy++ {
		for ix := 0; ix < 32; ix++ {
			v := big[iy*32+ix]
			sx += v * -float64(ix-16) * 0.5
			sy += v * float64(iy-16) * 0.5
			f += v
		}
	}
	if math.Abs(f-1) > 1e-12 || math.Abs(sx/f-3) > 1e-12 || math.Abs(sy/f-2) > 1e-12 {
		t.Errorf("flux %g, centroid (%g, %g), want 1 at (3, 2)", f, sx/f, sy/f)
	}
}

// TestChooseGridObjectSize checks a caller-given object size: it replaces the V² fit (field
// three times the size, the rule of TestChooseGridFit), and a source without extent is named
// in the reasoning while the V² fit decides.
func TestChooseGridObjectSize(t *testing.T) {
	rng := rand.New(rand.NewPCG(2, 2))
	d := observe(rng, newSynthArray(rng, 5, 50), discVis(3*Mas), synthOpts{nchan: 5, nha: 6, lmin: 1.5e-6, lmax: 2.4e-6, hspan: 1.5, sigV2: 0.01})
	g, err := ChooseGrid(d, GridOptions{ObjectSize: 2 * Mas, ObjectSource: "model file m.toml"})
	if err != nil {
		t.Fatal(err)
	}
	// The field asked for is 6 mas; the grid then grows to its minimum of MinN pixels.
	want := "model file m.toml: object size 2 mas; field of view 3 × that = 6 mas"
	if g.SizeModel != "model file m.toml" || g.Size != 2*Mas || len(g.Reasons) < 2 || g.Reasons[1] != want {
		t.Errorf("given size: %s %.4g mas, reasons %q; want the model file, 2 mas and %q", g.SizeModel, g.Size/Mas, g.Reasons, want)
	}
	g, err = ChooseGrid(d, GridOptions{ObjectSource: "model file p.toml"})
	if err != nil {
		t.Fatal(err)
	}
	said := false
	for _, r := range g.Reasons {
		said = said || strings.Contains(r, "p.toml: no extent")
	}
	if g.SizeModel != "uniform disc" || !said {
		t.Errorf("no extent: size from %q, reasons %q", g.SizeModel, g.Reasons)
	}
}
