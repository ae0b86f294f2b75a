package recon

import (
	"fmt"
	"math"
	"math/rand/v2"

	"vcz/recon/model"
)

// StartKind selects a start image.
type StartKind int

// The start images. All are normalised to a total flux of 1. Discs and Gaussians are
// rendered by recon/model (one centred component, each pixel the mean over sub-pixel
// samples), the one place where they are drawn.
const (
	// StartAuto, the default, is the simple model that fitted the V² data best in the grid
	// choice: a uniform disc of the fitted diameter or a Gaussian of the fitted FWHM, and a
	// Gaussian of an eighth of the field without a fit. Starting from the best simple model
	// avoids the local minima that a Gaussian start meets with a disc-like object, whose V²
	// lobes beyond the first null a smooth start cannot reach without passing |V| = 0.
	StartAuto StartKind = iota
	// StartGaussian is a circular Gaussian of FWHM Start.Size. It is the default; with
	// Size 0 its FWHM comes from the object size of the grid choice (the Gaussian with the
	// second moment of the fitted disc, 0.589 × its diameter, or the fitted Gaussian), or
	// an eighth of the field without one.
	StartGaussian
	// StartFlat is a flat disc filling the field of view (diameter 0.9 × N pixels).
	StartFlat
	// StartUniformDisc is a uniform disc of diameter Start.Size (0: the fitted size).
	StartUniformDisc
	// StartLimbDarkened is a linearly limb-darkened disc of diameter Start.Size with
	// coefficient Start.LimbDarkening: I(μ) = 1 − a(1 − μ), μ = √(1 − (2r/θ)²) (Hanbury Brown
	// et al. 1974, MNRAS 167, 475).
	StartLimbDarkened
	// StartRandom is uniform random pixels in [0, 1) from Settings.Seed.
	StartRandom
	// StartImage is Start.Image, an image of Start.ImageN² pixels of Start.ImagePixel radians,
	// resampled to the grid with Resample.
	StartImage
)

// Start describes the start image of a reconstruction.
type Start struct {
	Kind          StartKind
	Size          float64 // FWHM or diameter (rad); 0 = from the grid choice
	LimbDarkening float64 // linear coefficient a for StartLimbDarkened
	Image         []float64
	ImageN        int
	ImagePixel    float64 // rad
}

// secondMomentFWHM is the FWHM of the Gaussian with the second moment of a uniform disc of unit
// diameter: a disc has ⟨r²⟩ = θ²/8, a Gaussian 2σ², so σ = θ/4 and FWHM = 2√(2 ln 2)·θ/4.
var secondMomentFWHM = 2 * math.Sqrt(2*math.Ln2) / 4

// StartImageFor returns the start image s on grid g; choice supplies the fitted object size
// when s.Size is 0, and seed drives StartRandom.
func StartImageFor(s Start, g Grid, choice GridChoice, seed uint64) ([]float64, error) {
	n := g.N
	img := make([]float64, n*n)
	size := s.Size
	kind := s.Kind
	if kind == StartAuto {
		kind = StartGaussian
	}
	if size <= 0 && choice.Size > 0 {
		size = choice.Size
		if kind == StartGaussian {
			if choice.SizeModel == "Gaussian" {
				size = choice.Size / 2
			} else {
				size *= secondMomentFWHM
			}
		}
	}
	if size <= 0 {
		size = float64(n) * g.Pixel / 8
	}
	switch kind {
	case StartGaussian:
		render(img, n, g.Pixel, model.Gaussian, map[string]float64{"fwhm": size / model.MasToRad})
	case StartFlat:
		render(img, n, g.Pixel, model.UniformDisc, map[string]float64{"diameter": 0.9 * float64(n) * g.Pixel / model.MasToRad})
	case StartUniformDisc:
		render(img, n, g.Pixel, model.UniformDisc, map[string]float64{"diameter": size / model.MasToRad})
	case StartLimbDarkened:
		if !(s.LimbDarkening >= 0 && s.LimbDarkening <= 1) {
			return nil, fmt.Errorf("recon: limb-darkening coefficient %g is outside [0, 1]", s.LimbDarkening)
		}
		render(img, n, g.Pixel, model.LinearLD, map[string]float64{"diameter": size / model.MasToRad, "u_ld": s.LimbDarkening})
	case StartRandom:
		rng := rand.New(rand.NewPCG(seed, 0x5eed))
		for i := range img {
			img[i] = rng.Float64()
		}
	case StartImage:
		if s.ImageN < 1 || len(s.Image) != s.ImageN*s.ImageN || !(s.ImagePixel > 0) {
			return nil, fmt.Errorf("recon: start image has %d values for %d × %d pixels of %g rad", len(s.Image), s.ImageN, s.ImageN, s.ImagePixel)
		}
		Resample(img, n, g.Pixel, s.Image, s.ImageN, s.ImagePixel)
	default:
		return nil, fmt.Errorf("recon: unknown start image kind %d", kind)
	}
	f := 0.0
	for _, v := range img {
		f += v
	}
	if !(f > 0) || math.IsInf(f, 0) {
		return nil, fmt.Errorf("recon: start image has total flux %g; it must be positive", f)
	}
	for i := range img {
		img[i] = math.Max(img[i], 0) / f
	}
	return img, nil
}

// render adds the centred one-component model of kind k with the given parameters (mas) to
// img, rendered by recon/model with its oversampling; a size the model rejects (not finite)
// leaves img unchanged, which the caller reports as a start without flux.
func render(img []float64, n int, pixel float64, k model.Kind, values map[string]float64) {
	c, err := model.New(k, values)
	if err != nil {
		return
	}
	(&model.Model{Components: []*model.Component{c}}).Rasterize(img, n, n, pixel, model.DefaultOversample)
}

// Resample sets dst (n² pixels of pixel radians) to src (ns² pixels of spix radians) by
// bilinear interpolation at the sky positions of the pixel centres, zero outside src, and
// scales the result to the flux of src. It is meant for start images and priors, not for
// photometry.
func Resample(dst []float64, n int, pixel float64, src []float64, ns int, spix float64) {
	if len(dst) != n*n || len(src) != ns*ns {
		panic(fmt.Sprintf("recon: Resample: %d and %d values for %d² and %d² pixels", len(dst), len(src), n, ns))
	}
	at := func(ix, iy int) float64 {
		if ix < 0 || iy < 0 || ix >= ns || iy >= ns {
			return 0
		}
		return src[iy*ns+ix]
	}
	fsrc := 0.0
	for _, v := range src {
		fsrc += v
	}
	fdst := 0.0
	for iy := 0; iy < n; iy++ {
		y := float64(iy-n/2) * pixel
		for ix := 0; ix < n; ix++ {
			x := -float64(ix-n/2) * pixel
			// Fractional source indices of (x, y).
			fx := float64(ns/2) - x/spix
			fy := float64(ns/2) + y/spix
			x0, y0 := math.Floor(fx), math.Floor(fy)
			tx, ty := fx-x0, fy-y0
			i0, j0 := int(x0), int(y0)
			v := (1-tx)*(1-ty)*at(i0, j0) + tx*(1-ty)*at(i0+1, j0) + (1-tx)*ty*at(i0, j0+1) + tx*ty*at(i0+1, j0+1)
			dst[iy*n+ix] = v
			fdst += v
		}
	}
	if fdst != 0 {
		s := fsrc / fdst
		for i := range dst {
			dst[i] *= s
		}
	}
}
