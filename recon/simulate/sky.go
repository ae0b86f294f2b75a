package simulate

import (
	"fmt"
	"math"

	"vcz/nufft"
	"vcz/recon/model"
)

// Sky gives the normalised complex visibility of the observed object
// (V(0,0) = 1, sign convention of CONVENTIONS.md) at spatial frequencies
// u[k], v[k] in cycles per radian.
type Sky interface {
	Visibilities(dst []complex128, u, v []float64) error
}

// ModelSky is a Sky made of analytic components.
type ModelSky struct{ Model *model.Model }

// Visibilities evaluates the model's analytic visibilities.
func (s ModelSky) Visibilities(dst []complex128, u, v []float64) error {
	if err := s.Model.Validate(); err != nil {
		return err
	}
	s.Model.VisMany(dst, u, v)
	return nil
}

// ImageSky is a Sky given as an image on the CONVENTIONS.md grid:
// row-major Data[iy*NX+ix], pixel (ix, iy) at x = −(ix − NX/2)·Pixel,
// y = (iy − NY/2)·Pixel radians. Only the first plane of Data is used.
type ImageSky struct {
	NX, NY int
	Pixel  float64 // rad
	Data   []float64
}

// ImageTol is the nufft tolerance used for image models: far below any
// simulated noise, so the transform adds no visible error.
const ImageTol = 1e-9

// Visibilities transforms the image with a nufft plan at tolerance
// ImageTol and divides by the image's total flux.
func (s ImageSky) Visibilities(dst []complex128, u, v []float64) error {
	if s.NX < 1 || s.NY < 1 || len(s.Data) < s.NX*s.NY {
		return fmt.Errorf("simulate: image model: %d values for %d×%d pixels", len(s.Data), s.NX, s.NY)
	}
	img := s.Data[:s.NX*s.NY]
	var tot float64
	for i, p := range img {
		if math.IsNaN(p) || math.IsInf(p, 0) {
			return fmt.Errorf("simulate: image model: pixel %d (ix=%d, iy=%d) is %v", i, i%s.NX, i/s.NX, p)
		}
		tot += p
	}
	if !(tot > 0) {
		return fmt.Errorf("simulate: image model: total flux %g; it must be positive", tot)
	}
	// Beyond |u|·pixel = 1/2 the pixelated image's spectrum repeats, and
	// the visibilities no longer describe a sky (Nyquist; common
	// practice, no source).
	var qmax float64
	for k := range u {
		qmax = math.Max(qmax, math.Max(math.Abs(u[k]), math.Abs(v[k])))
	}
	if qmax*s.Pixel > 0.5 {
		return fmt.Errorf("simulate: image model: pixel %.4g mas is too coarse for the highest spatial frequency (%.4g cycles/rad); it must be at most %.4g mas",
			s.Pixel/model.MasToRad, qmax, 0.5/qmax/model.MasToRad)
	}
	plan, err := nufft.NewPlan(s.NX, s.NY, s.Pixel, u, v, nufft.Options{Tol: ImageTol})
	if err != nil {
		return fmt.Errorf("simulate: image model: %w", err)
	}
	plan.Forward(dst, img)
	inv := complex(1/tot, 0)
	for k := range dst {
		dst[k] *= inv
	}
	return nil
}
