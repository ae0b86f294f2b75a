package regularizers

import (
	"fmt"
	"math"

	"vcz/recon/model"
)

// DefaultPriorFloor is the floor used by the prior builders when their
// floor argument is zero: 1e-3 of the mean pixel value (common practice,
// no source).
const DefaultPriorFloor = 1e-3

// checkPriorArgs validates the arguments shared by the prior builders and
// returns the floor with its default applied.
func checkPriorArgs(name string, nx, ny int, flux, floor float64) (float64, error) {
	if nx <= 0 || ny <= 0 {
		return 0, fmt.Errorf("regularizers: %s: grid %dx%d is empty", name, nx, ny)
	}
	if !(flux > 0) || math.IsInf(flux, 0) {
		return 0, fmt.Errorf("regularizers: %s: flux %g must be positive and finite", name, flux)
	}
	if floor == 0 {
		floor = DefaultPriorFloor
	}
	if !(floor > 0) || floor >= 1 {
		return 0, fmt.Errorf("regularizers: %s: floor %g must be in (0, 1)", name, floor)
	}
	return floor, nil
}

// normalize scales m to total flux, raises every pixel to at least
// floor*flux/N, and scales again to total flux. The sum of m must be
// positive.
func normalize(m []float64, flux, floor float64) {
	n := float64(len(m))
	var sum float64
	for _, v := range m {
		sum += v
	}
	lo := floor * flux / n
	sum2 := 0.0
	for i, v := range m {
		m[i] = max(v*flux/sum, lo)
		sum2 += m[i]
	}
	s := flux / sum2
	for i := range m {
		m[i] *= s
	}
}

// FlatPrior returns an nx*ny image of total flux with every pixel equal to
// flux/(nx*ny).
func FlatPrior(nx, ny int, flux float64) ([]float64, error) {
	if _, err := checkPriorArgs("FlatPrior", nx, ny, flux, 0); err != nil {
		return nil, err
	}
	m := make([]float64, nx*ny)
	for i := range m {
		m[i] = flux / float64(nx*ny)
	}
	return m, nil
}

// GaussianPrior returns an nx*ny image of a circular Gaussian of full
// width at half maximum fwhm (pixels), I(r) = exp(-4 ln 2 r^2/fwhm^2),
// centred on pixel (nx/2, ny/2) and rendered by recon/model (each pixel
// the mean of the intensity over sub-pixel samples), scaled to total
// flux, with every pixel raised to at least floor times the mean pixel
// value flux/(nx*ny) and the result scaled again to total flux.
// floor = 0 means DefaultPriorFloor.
func GaussianPrior(nx, ny int, fwhm, flux, floor float64) ([]float64, error) {
	floor, err := checkPriorArgs("GaussianPrior", nx, ny, flux, floor)
	if err != nil {
		return nil, err
	}
	if !(fwhm > 0) || math.IsInf(fwhm, 0) {
		return nil, fmt.Errorf("regularizers: GaussianPrior: FWHM %g pixels must be positive and finite", fwhm)
	}
	return renderPrior("GaussianPrior", "FWHM", model.Gaussian, "fwhm", nx, ny, fwhm, flux, floor)
}

// DiscPrior returns an nx*ny image of a uniform disc of the given
// diameter (pixels) centred on pixel (nx/2, ny/2), rendered by
// recon/model: each pixel holds the fraction of its sub-pixel samples
// inside the disc (8x8 samples, more for a disc of few pixels), so edge
// pixels get their covered fraction, and a disc too small to be hit by
// any sample lands in the centre pixel. The image is scaled to total
// flux, floored like GaussianPrior and scaled again. floor = 0 means
// DefaultPriorFloor.
func DiscPrior(nx, ny int, diameter, flux, floor float64) ([]float64, error) {
	floor, err := checkPriorArgs("DiscPrior", nx, ny, flux, floor)
	if err != nil {
		return nil, err
	}
	if !(diameter > 0) || math.IsInf(diameter, 0) {
		return nil, fmt.Errorf("regularizers: DiscPrior: diameter %g pixels must be positive and finite", diameter)
	}
	return renderPrior("DiscPrior", "diameter", model.UniformDisc, "diameter", nx, ny, diameter, flux, floor)
}

// renderPrior renders the centred one-component model of the given kind
// whose size parameter param is size pixels (a pixel of 1 mas, so the
// size in mas is the size in pixels) with recon/model's oversampling,
// and normalises and floors it. what names the size in errors.
func renderPrior(name, what string, kind model.Kind, param string, nx, ny int, size, flux, floor float64) ([]float64, error) {
	c, err := model.New(kind, map[string]float64{param: size})
	if err != nil {
		return nil, fmt.Errorf("regularizers: %s: %v", name, err)
	}
	m := make([]float64, nx*ny)
	(&model.Model{Components: []*model.Component{c}}).Rasterize(m, nx, ny, model.MasToRad, model.DefaultOversample)
	var sum float64
	for _, v := range m {
		sum += v
	}
	if !(sum > 0) || math.IsInf(sum, 0) {
		return nil, fmt.Errorf("regularizers: %s: %s %g pixels leaves no flux on the %dx%d grid", name, what, size, nx, ny)
	}
	normalize(m, flux, floor)
	return m, nil
}

// ImagePrior returns a copy of img (for example a previous reconstruction
// read from FITS and resampled to the grid) with negative pixels set to 0,
// scaled to total flux, floored like GaussianPrior and scaled again.
// floor = 0 means DefaultPriorFloor. Non-finite pixels and an image with
// no positive pixel are errors.
func ImagePrior(img []float64, flux, floor float64) ([]float64, error) {
	if len(img) == 0 {
		return nil, fmt.Errorf("regularizers: ImagePrior: empty image")
	}
	floor, err := checkPriorArgs("ImagePrior", len(img), 1, flux, floor)
	if err != nil {
		return nil, err
	}
	m := make([]float64, len(img))
	var sum float64
	for i, v := range img {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("regularizers: ImagePrior: pixel %d is %g", i, v)
		}
		m[i] = max(v, 0)
		sum += m[i]
	}
	if !(sum > 0) {
		return nil, fmt.Errorf("regularizers: ImagePrior: image has no positive pixel")
	}
	normalize(m, flux, floor)
	return m, nil
}

// SupportMask returns an nx*ny mask, row-major, that is true for the pixels whose centre lies
// within radius of the centre pixel (nx/2, ny/2): pixel (ix, iy) is inside when
// ((ix − nx/2)·pixel)² + ((iy − ny/2)·pixel)² ≤ radius², pixel and radius in one unit (radians
// for recon's grids, 1 for a radius in pixels).
func SupportMask(nx, ny int, pixel, radius float64) []bool {
	if nx <= 0 || ny <= 0 {
		panic(fmt.Sprintf("regularizers: SupportMask: grid %dx%d is empty", nx, ny))
	}
	mask := make([]bool, nx*ny)
	r2 := radius * radius
	for iy := range ny {
		for ix := range nx {
			x, y := float64(ix-nx/2)*pixel, float64(iy-ny/2)*pixel
			mask[iy*nx+ix] = x*x+y*y <= r2
		}
	}
	return mask
}

// SupportBounds returns bounds for recon/optim that keep every pixel non-negative and hold
// the pixels outside SupportMask(nx, ny, pixel, radius) at zero: lower is 0 everywhere,
// upper is +Inf inside the support and 0 outside.
func SupportBounds(nx, ny int, pixel, radius float64) (lower, upper []float64) {
	mask := SupportMask(nx, ny, pixel, radius)
	lower = make([]float64, len(mask))
	upper = make([]float64, len(mask))
	for i, in := range mask {
		if in {
			upper[i] = math.Inf(1)
		}
	}
	return lower, upper
}
