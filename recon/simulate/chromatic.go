package simulate

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"os"

	"github.com/BurntSushi/toml"

	"vcz/recon/model"
)

// ChromaticSky is a sky whose brightness changes with wavelength: analytic components whose
// fluxes follow power laws in wavelength, and rotating discs that emit a Gaussian line. Its
// visibility at wavelength λ is the flux-weighted sum
//
//	V(u, v, λ) = [Σ_k F_k(λ)·V_k(u, v) + Σ_d Σ_j F_dj(λ)·exp(−2πi(u·x_j + v·y_j))] / F(λ),
//
// F(λ) the sum of all the fluxes, V_k the normalised visibility of component k
// (CONVENTIONS.md) and F_k(λ) = f_k·(λ/λ_ref)^α_k, f_k its total flux. A disc is a sum over
// cells (LineDisc): its visibility is the exact direct sum over them, never a transform.
type ChromaticSky struct {
	Reference  float64 // λ_ref of the power laws (m)
	Components []SpectralComponent
	Discs      []LineDisc
}

// SpectralComponent is an analytic model whose flux is f·(λ/λ_ref)^Index, f its total flux.
type SpectralComponent struct {
	Model *model.Model
	Index float64
}

// LineDisc is a flat disc between radii Inner and Outer (rad) with uniform surface brightness
// in an emission line, in Keplerian rotation: at radius r the gas moves at
// v(r) = Velocity·√(Inner/r) (m/s) on circles, so that a cell at azimuth θ (from the receding
// end of the major axis, in the plane of the disc) has the line-of-sight velocity
// v_los = v(r)·sin(inc)·cos θ (positive away from the observer) and emits a Gaussian line of
// centre Line·(1 + v_los/c) and standard deviation Line·Width/c (Width in m/s, the local
// broadening). The major axis has position angle PA (rad, east of north) towards the receding
// side; the disc plane is inclined by Inc (rad; 0 is face-on), so the minor axis shrinks by
// cos(Inc), and azimuth θ = 90° lies towards position angle PA − 90° on the sky. Flux is the
// disc's flux at the line's rest wavelength if all the gas were at rest, Flux·exp(−(λ −
// Line)²/(2σ²)) then. The disc is Rings × Sectors cells of equal steps in radius and azimuth,
// each a point at its centre weighted by its area.
type LineDisc struct {
	Inner, Outer, Inc, PA float64
	Line, Velocity, Width float64
	Flux                  float64
	Rings, Sectors        int
	x, y, vlos, area      []float64 // the cells, made by cells()
}

// SpeedOfLight is c in m/s (exact by the definition of the metre).
const SpeedOfLight = 299792458.0

// cells lays out the cells of d (once).
func (d *LineDisc) cells() {
	if d.x != nil {
		return
	}
	nr, ns := max(d.Rings, 1), max(d.Sectors, 1)
	dr := (d.Outer - d.Inner) / float64(nr)
	sinPA, cosPA := math.Sincos(d.PA)
	sinI, cosI := math.Sincos(d.Inc)
	total := 0.0
	for i := range nr {
		r := d.Inner + (float64(i)+0.5)*dr
		for j := range ns {
			th := 2 * math.Pi * (float64(j) + 0.5) / float64(ns)
			st, ct := math.Sincos(th)
			xi, eta := r*ct, r*st*cosI // along the major and the minor axis
			d.x = append(d.x, xi*sinPA-eta*cosPA)
			d.y = append(d.y, xi*cosPA+eta*sinPA)
			d.vlos = append(d.vlos, d.Velocity*math.Sqrt(d.Inner/r)*sinI*ct)
			d.area = append(d.area, r)
			total += r
		}
	}
	for j := range d.area {
		d.area[j] /= total
	}
}

// cellFlux returns the flux of cell j at wavelength lambda (m).
func (d *LineDisc) cellFlux(j int, lambda float64) float64 {
	c := d.Line * (1 + d.vlos[j]/SpeedOfLight)
	s := d.Line * d.Width / SpeedOfLight
	z := (lambda - c) / s
	return d.Flux * d.area[j] * math.Exp(-0.5*z*z)
}

// Photocentre returns the flux-weighted mean position (x east, y north, rad) of the sky at
// wavelength lambda: the discs' cells and the components' offsets weighted by their fluxes
// (a component's own photocentre is its centre, x and y of its model's components).
func (s *ChromaticSky) Photocentre(lambda float64) (x, y float64) {
	f := 0.0
	for _, c := range s.Components {
		w := math.Pow(lambda/s.Reference, c.Index)
		for _, k := range c.Model.Components {
			fl, _ := k.Get("flux")
			kx, _ := k.Get("x") // a background has no offset: 0
			ky, _ := k.Get("y")
			fl *= w
			x += fl * kx * model.MasToRad
			y += fl * ky * model.MasToRad
			f += fl
		}
	}
	for i := range s.Discs {
		d := &s.Discs[i]
		d.cells()
		for j := range d.x {
			fl := d.cellFlux(j, lambda)
			x += fl * d.x[j]
			y += fl * d.y[j]
			f += fl
		}
	}
	return x / f, y / f
}

// Visibilities is the sky at the reference wavelength.
func (s *ChromaticSky) Visibilities(dst []complex128, u, v []float64) error {
	lambda := make([]float64, len(u))
	for i := range lambda {
		lambda[i] = s.Reference
	}
	return s.VisibilitiesAt(dst, u, v, lambda)
}

// VisibilitiesAt sets dst[i] to the normalised visibility at (u[i], v[i]) (cycles/rad) and
// wavelength lambda[i] (m).
func (s *ChromaticSky) VisibilitiesAt(dst []complex128, u, v, lambda []float64) error {
	if err := s.validate(); err != nil {
		return err
	}
	for i := range s.Discs {
		s.Discs[i].cells()
	}
	for i := range dst {
		num, f := s.coherent(u[i], v[i], lambda[i])
		if !(f > 0) {
			return fmt.Errorf("chromatic model: total flux %g at %.6g µm; it must be positive", f, lambda[i]*1e6)
		}
		dst[i] = num / complex(f, 0)
	}
	return nil
}

// coherent returns the coherent flux Σ_k F_k(λ)·V_k(u, v) + Σ_d Σ_j F_dj(λ)·exp(−2πi(u·x_j +
// v·y_j)) and the total flux F(λ) of the sky at (u, v) (cycles/rad) and wavelength lambda
// (m). The discs' cells must be laid out.
func (s *ChromaticSky) coherent(u, v, lambda float64) (num complex128, f float64) {
	for _, c := range s.Components {
		fl := c.Model.TotalFlux() * math.Pow(lambda/s.Reference, c.Index)
		num += complex(fl, 0) * c.Model.Vis(u, v)
		f += fl
	}
	for k := range s.Discs {
		d := &s.Discs[k]
		for j := range d.x {
			fl := d.cellFlux(j, lambda)
			if fl == 0 {
				continue
			}
			num += complex(fl, 0) * cmplx.Exp(complex(0, -2*math.Pi*(u*d.x[j]+v*d.y[j])))
			f += fl
		}
	}
	return num, f
}

func (s *ChromaticSky) validate() error {
	if !(s.Reference > 0) || math.IsInf(s.Reference, 0) {
		return errors.New("chromatic model: reference wavelength must be positive")
	}
	for k, c := range s.Components {
		if c.Model == nil {
			return fmt.Errorf("chromatic model: component %d has no model", k+1)
		}
		if err := c.Model.Validate(); err != nil {
			return fmt.Errorf("chromatic model: component %d: %w", k+1, err)
		}
		if math.IsNaN(c.Index) || math.IsInf(c.Index, 0) {
			return fmt.Errorf("chromatic model: component %d: spectral_index must be finite", k+1)
		}
	}
	for k, d := range s.Discs {
		switch {
		case !(d.Inner > 0) || !(d.Outer > d.Inner) || math.IsInf(d.Outer, 0):
			return fmt.Errorf("chromatic model: disc %d: need 0 < inner < outer", k+1)
		case !(d.Inc >= 0 && d.Inc <= math.Pi/2):
			return fmt.Errorf("chromatic model: disc %d: inc must be in 0–90°", k+1)
		case !(d.Line > 0) || !(d.Width > 0) || !(d.Velocity >= 0) || math.IsInf(d.Line+d.Width+d.Velocity+d.PA, 0) || math.IsNaN(d.PA):
			return fmt.Errorf("chromatic model: disc %d: line and width must be positive, velocity >= 0 and pa finite", k+1)
		case !(d.Flux >= 0) || math.IsInf(d.Flux, 0):
			return fmt.Errorf("chromatic model: disc %d: flux must be >= 0", k+1)
		case d.Rings < 1 || d.Sectors < 1 || d.Rings*d.Sectors > 1e6:
			return fmt.Errorf("chromatic model: disc %d: rings and sectors must be positive, at most 10⁶ cells", k+1)
		}
	}
	return nil
}

// chromaticFile mirrors a chromatic model file (ChromaticHelp).
type chromaticFile struct {
	Reference *float64 `toml:"reference"`
	Component []struct {
		Model         string  `toml:"model"`
		SpectralIndex float64 `toml:"spectral_index"`
	} `toml:"component"`
	Disc []struct {
		Inner    *float64 `toml:"inner"`
		Outer    *float64 `toml:"outer"`
		Inc      float64  `toml:"inc"`
		PA       float64  `toml:"pa"`
		Line     *float64 `toml:"line"`
		Velocity float64  `toml:"velocity"`
		Width    *float64 `toml:"width"`
		Flux     *float64 `toml:"flux"`
		Rings    int      `toml:"rings"`
		Sectors  int      `toml:"sectors"`
	} `toml:"disc"`
}

// ChromaticHelp documents the chromatic model file, for `vcz simulate --help-chromatic`.
const ChromaticHelp = `A chromatic model is a TOML file of components with spectra. Wavelengths are in
micrometres, offsets and radii in mas, angles in degrees, velocities in km/s.
Unknown keys are errors.

  reference = 2.166       wavelength of the power laws (required)

[[component]]             an analytic model whose flux follows a power law
  model = "ud:diameter=0.5"   the inline form of 'vcz simulate -help-model'
  spectral_index = -2     flux ∝ (λ/reference)^index (default 0: grey)

[[disc]]                  a flat disc in Keplerian rotation emitting a Gaussian line
  inner = 0.5             inner radius (required)
  outer = 3               outer radius (required)
  inc = 60                inclination, 0 = face-on (default 0)
  pa = 30                 position angle of the receding end of the major axis,
                          east of north (default 0)
  line = 2.1661           rest wavelength of the line (required)
  velocity = 200          orbital velocity at the inner radius, falling as
                          r^(-1/2) outwards (default 0)
  width = 20              local line width, a Gaussian standard deviation (required)
  flux = 0.5              flux at the line's rest wavelength were the gas at rest,
                          relative to the components' fluxes (required)
  rings = 40              cells in radius (default 40)
  sectors = 90            cells in azimuth (default 90)

The disc's brightness is uniform in the line; its visibility is the exact sum
over its cells. Differential phases of such a disc trace the photocentre of
the line emission across the line.
`

// LoadChromatic reads a chromatic model file.
func LoadChromatic(path string) (*ChromaticSky, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	return ParseChromatic(b, path)
}

// ParseChromatic reads a chromatic model (ChromaticHelp) from src; name is the file name
// used in errors.
func ParseChromatic(src []byte, name string) (*ChromaticSky, error) {
	var f chromaticFile
	md, err := toml.Decode(string(src), &f)
	if err != nil {
		return nil, fmt.Errorf("%s: %v", name, err)
	}
	if und := md.Undecoded(); len(und) > 0 {
		return nil, fmt.Errorf("%s: unknown key %q", name, und[0].String())
	}
	if f.Reference == nil {
		return nil, fmt.Errorf("%s: reference wavelength missing", name)
	}
	s := &ChromaticSky{Reference: *f.Reference * 1e-6}
	for k, c := range f.Component {
		m, err := model.ParseCompact(c.Model)
		if err != nil {
			return nil, fmt.Errorf("%s: component %d: %v", name, k+1, err)
		}
		s.Components = append(s.Components, SpectralComponent{Model: m, Index: c.SpectralIndex})
	}
	for k, d := range f.Disc {
		if d.Inner == nil || d.Outer == nil || d.Line == nil || d.Width == nil || d.Flux == nil {
			return nil, fmt.Errorf("%s: disc %d: inner, outer, line, width and flux are required", name, k+1)
		}
		ld := LineDisc{Inner: *d.Inner * model.MasToRad, Outer: *d.Outer * model.MasToRad,
			Inc: d.Inc * math.Pi / 180, PA: d.PA * math.Pi / 180, Line: *d.Line * 1e-6,
			Velocity: d.Velocity * 1e3, Width: *d.Width * 1e3, Flux: *d.Flux, Rings: d.Rings, Sectors: d.Sectors}
		if ld.Rings == 0 {
			ld.Rings = 40
		}
		if ld.Sectors == 0 {
			ld.Sectors = 90
		}
		s.Discs = append(s.Discs, ld)
	}
	if len(s.Components)+len(s.Discs) == 0 {
		return nil, fmt.Errorf("%s: no component and no disc", name)
	}
	if err := s.validate(); err != nil {
		return nil, fmt.Errorf("%s: %v", name, err)
	}
	return s, nil
}
