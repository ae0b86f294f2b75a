package validate

import (
	"fmt"
	"math"

	"vcz/recon"
)

// Scene is a test object: an analytic surface brightness of the sky offset (x towards east,
// y towards north, radians; CONVENTIONS.md) with a name and a family. Brightness is zero or
// negligible (below 2⁻³⁰ of the peak) farther than Radius from the phase centre.
type Scene struct {
	Name   string // invented name, unique in Scenes
	Family string // "ld-disc", "binary", "ring", "group" or "knots"
	// Brightness is the surface brightness at (x, y), in arbitrary units, never negative.
	Brightness func(x, y float64) float64
	// Radius bounds the emission (rad).
	Radius float64
	// Vis says that data of this scene include complex visibilities (OI_VIS with absolute
	// VISAMP and VISPHI) besides V² and closure triangles.
	Vis bool
}

// Families lists the scene families in the order of Scenes.
var Families = []string{"ld-disc", "binary", "ring", "group", "knots"}

// component is one analytic part of a scene. Every component's brightness integrates to its
// flux over the sky, analytically (up to the truncation of Gaussian tails).
type component interface {
	brightness(x, y float64) float64
	radius() float64 // emission negligible beyond this distance from the phase centre
}

// gaussFWHMs is the number of FWHM beyond which a Gaussian counts as zero: there its
// brightness is 2^(−4·3²) = 2⁻³⁶ of the peak.
const gaussFWHMs = 3

// gauss is an elliptical Gaussian of total flux Flux centred at (X, Y), with full width at half
// maximum FWHM along its major axis, axis ratio Ratio (minor/major, 1 when zero) and major
// axis at position angle PA (radians, from north towards east).
type gauss struct {
	X, Y, FWHM, Ratio, PA, Flux float64
}

func (g gauss) brightness(x, y float64) float64 {
	q := g.Ratio
	if q == 0 {
		q = 1
	}
	s := g.FWHM / (2 * math.Sqrt(2*math.Ln2)) // σ of the major axis
	dx, dy := x-g.X, y-g.Y
	sp, cp := math.Sincos(g.PA)
	a := dx*sp + dy*cp // along the major axis
	b := dx*cp - dy*sp // along the minor axis
	r2 := (a*a + b*b/(q*q)) / (s * s)
	return g.Flux / (2 * math.Pi * s * s * q) * math.Exp(-r2/2)
}

func (g gauss) radius() float64 { return math.Hypot(g.X, g.Y) + gaussFWHMs*g.FWHM }

// spot multiplies the brightness of a disc by 1 + Contrast·exp(−d²/(2σ²)) around (X, Y), σ from
// the full width at half maximum FWHM; Contrast > 0 is a bright spot, −1 ≤ Contrast < 0 a
// dark one (−1 is black at its centre).
type spot struct {
	X, Y, FWHM, Contrast float64
}

// ldDisc is a limb-darkened disc of diameter Diam centred at (X, Y), with flux Flux before its
// spots. Law "linear": I(μ) = 1 − A(1 − μ) (Hanbury Brown et al. 1974, MNRAS 167, 475);
// "power": I(μ) = μ^A (Hestroffer 1997, A&A 327, 199); μ = √(1 − (2r/Diam)²).
type ldDisc struct {
	X, Y, Diam, A, Flux float64
	Law                 string
	Spots               []spot
}

// norm is ∫ I(μ) dΩ over the disc for unit central brightness: π R²(1 − A/3) for the linear
// law and π R²·2/(A + 2) for the power law (∫₀¹ I(μ) 2μ dμ with r dr = −R² μ dμ).
func (d ldDisc) norm() float64 {
	r := d.Diam / 2
	if d.Law == "power" {
		return math.Pi * r * r * 2 / (d.A + 2)
	}
	return math.Pi * r * r * (1 - d.A/3)
}

func (d ldDisc) brightness(x, y float64) float64 {
	r := d.Diam / 2
	dx, dy := x-d.X, y-d.Y
	t := 1 - (dx*dx+dy*dy)/(r*r)
	if t <= 0 {
		return 0
	}
	mu := math.Sqrt(t)
	var ld float64
	if d.Law == "power" {
		ld = math.Pow(mu, d.A)
	} else {
		ld = 1 - d.A*(1-mu)
	}
	f := d.Flux / d.norm() * ld
	for _, s := range d.Spots {
		sg := s.FWHM / (2 * math.Sqrt(2*math.Ln2))
		ex, ey := x-s.X, y-s.Y
		f *= 1 + s.Contrast*math.Exp(-(ex*ex+ey*ey)/(2*sg*sg))
	}
	return f
}

func (d ldDisc) radius() float64 { return math.Hypot(d.X, d.Y) + d.Diam/2 }

// ring is a thin circular ring of radius R and radial Gaussian profile of full width Width,
// inclined by Inc (radians; 0 is face-on) with its major axis at position angle PA, centred at
// (X, Y), of flux Flux. Its brightness is modulated along the ring as 1 + M cos(φ − Phi0), φ
// the azimuth in the ring's plane counted from the major axis at PA towards the minor axis at
// PA + 90°; 0 ≤ M ≤ 1.
type ring struct {
	X, Y, R, Width, Inc, PA, M, Phi0, Flux float64
}

// norm is the flux of the ring for unit peak brightness and M = 0: the sky area shrinks by
// cos(Inc), and ∫₀^∞ exp(−(ρ−R)²/(2σ²)) ρ dρ = σ² exp(−R²/(2σ²)) + Rσ√(π/2)(1 + erf(R/(σ√2)))
// (elementary integration; the modulation integrates to zero over φ).
func (g ring) norm() float64 {
	s := g.Width / (2 * math.Sqrt(2*math.Ln2))
	radial := s*s*math.Exp(-g.R*g.R/(2*s*s)) + g.R*s*math.Sqrt(math.Pi/2)*(1+math.Erf(g.R/(s*math.Sqrt2)))
	return 2 * math.Pi * math.Cos(g.Inc) * radial
}

func (g ring) brightness(x, y float64) float64 {
	dx, dy := x-g.X, y-g.Y
	sp, cp := math.Sincos(g.PA)
	a := dx*sp + dy*cp
	b := (dx*cp - dy*sp) / math.Cos(g.Inc)
	rho := math.Hypot(a, b)
	s := g.Width / (2 * math.Sqrt(2*math.Ln2))
	phi := math.Atan2(b, a)
	return g.Flux / g.norm() * math.Exp(-(rho-g.R)*(rho-g.R)/(2*s*s)) * (1 + g.M*math.Cos(phi-g.Phi0))
}

func (g ring) radius() float64 { return math.Hypot(g.X, g.Y) + g.R + gaussFWHMs*g.Width }

// compose makes a scene of components.
func compose(name, family string, vis bool, comps ...component) Scene {
	r := 0.0
	for _, c := range comps {
		r = math.Max(r, c.radius())
	}
	return Scene{Name: name, Family: family, Radius: r, Vis: vis,
		Brightness: func(x, y float64) float64 {
			s := 0.0
			for _, c := range comps {
				s += c.brightness(x, y)
			}
			return s
		}}
}

// unresolvedFWHM is the width of the point-like sources, in resolution elements: a quarter of
// λmin/(2·Bmax), whose V at the longest baseline is exp(−(π/8)²/(4 ln 2)) ≈ 0.95.
const unresolvedFWHM = 0.25

// deg converts degrees to radians.
const deg = math.Pi / 180

// Scenes returns the 24 scenes of the suite, their sizes scaled to the resolution res =
// λmin/(2·Bmax) of an array (radians), so that each object spans a few resolution elements
// and the same scene list suits every array. The objects extend over 2 to 5 resolution
// elements, within the largest scale λmax/Bmin of the four-telescope array (about 5
// resolution elements; CONVENTIONS.md, common practice, no source).
func Scenes(res float64) []Scene {
	r := res
	pt := unresolvedFWHM * r
	var s []Scene

	// Limb-darkened discs with spots of several sizes (FWHM in resolution elements: 0.5, 0.8,
	// 1, 1.5) bright and dark.
	s = append(s,
		compose("Tessaly", "ld-disc", false, ldDisc{Diam: 4 * r, A: 0.5, Law: "linear", Flux: 1,
			Spots: []spot{{X: 0.8 * r, Y: 0.6 * r, FWHM: 1.0 * r, Contrast: 0.8}}}),
		compose("Morwen", "ld-disc", false, ldDisc{Diam: 4 * r, A: 0.3, Law: "power", Flux: 1,
			Spots: []spot{{X: -0.9 * r, Y: 0.4 * r, FWHM: 1.5 * r, Contrast: -0.6}}}),
		compose("Alcarine", "ld-disc", false, ldDisc{Diam: 3.5 * r, A: 0.6, Law: "linear", Flux: 1,
			Spots: []spot{{X: 0.5 * r, Y: -0.7 * r, FWHM: 0.5 * r, Contrast: 2.5}, {X: -0.6 * r, Y: 0.5 * r, FWHM: 0.8 * r, Contrast: -0.7}}}),
		compose("Ondrel", "ld-disc", false, ldDisc{Diam: 4.5 * r, A: 0.15, Law: "power", Flux: 1,
			Spots: []spot{{X: 1.2 * r, Y: 0.9 * r, FWHM: 0.8 * r, Contrast: 1.5}, {X: -0.8 * r, Y: -1.0 * r, FWHM: 1.2 * r, Contrast: 0.7}}}),
		compose("Fenmire", "ld-disc", false, ldDisc{Diam: 3 * r, A: 0.4, Law: "linear", Flux: 1,
			Spots: []spot{{X: 0.3 * r, Y: 0.5 * r, FWHM: 1.0 * r, Contrast: -0.8}}}),
		compose("Quillon", "ld-disc", false, ldDisc{Diam: 5 * r, A: 0.5, Law: "power", Flux: 1,
			Spots: []spot{{X: -1.4 * r, Y: 0.8 * r, FWHM: 1.5 * r, Contrast: 1.0}, {X: 1.0 * r, Y: -0.3 * r, FWHM: 0.5 * r, Contrast: -0.9}, {X: 0.2 * r, Y: 1.5 * r, FWHM: 0.8 * r, Contrast: 1.2}}}),
	)

	// Binaries: a resolved limb-darkened primary and a companion at several separations
	// (resolution elements) and flux ratios.
	bin := func(name string, diam, sep, pa, ratio, compFWHM float64) Scene {
		sp, cp := math.Sincos(pa * deg)
		// The photocentre at the origin, as a calibrated position would be.
		x, y := sep*r*sp, sep*r*cp
		f2 := ratio / (1 + ratio)
		return compose(name, "binary", false,
			ldDisc{X: -f2 * x, Y: -f2 * y, Diam: diam * r, A: 0.4, Law: "linear", Flux: 1 - f2},
			gauss{X: (1 - f2) * x, Y: (1 - f2) * y, FWHM: compFWHM * r, Flux: f2})
	}
	s = append(s,
		bin("Varn", 2, 1.5, 50, 0.5, unresolvedFWHM),
		bin("Idrith", 2, 2.5, 130, 0.2, unresolvedFWHM),
		bin("Calloway", 1.5, 3.0, -70, 0.1, unresolvedFWHM),
		bin("Serune", 2.5, 2.0, 200, 0.3, 0.8), // partly resolved companion
		bin("Mablethorn", 1.5, 4.0, 20, 0.05, unresolvedFWHM),
		bin("Ystral", 2, 3.0, -160, 0.7, 1.0),
	)

	// Inclined rings with a central star and azimuthal modulation.
	rng := func(name string, rad, width, inc, pa, m, phi0, star float64) Scene {
		return compose(name, "ring", false,
			ring{R: rad * r, Width: width * r, Inc: inc * deg, PA: pa * deg, M: m, Phi0: phi0 * deg, Flux: 1 - star},
			gauss{FWHM: pt, Flux: star})
	}
	s = append(s,
		rng("Heliandor", 1.6, 0.5, 50, 30, 0.6, 90, 0.3),
		rng("Pellwyn", 2.0, 0.6, 35, -40, 0.4, 200, 0.4),
		rng("Sarrowick", 1.4, 0.4, 60, 110, 0.8, 0, 0.25),
		rng("Drumlenna", 2.2, 0.8, 25, 75, 0.5, 300, 0.5),
		rng("Ostravel", 1.8, 0.5, 65, 160, 0.7, 130, 0.2),
	)

	// Groups of point-like sources on a diffuse halo.
	group := func(name string, halo gauss, pts ...[3]float64) Scene {
		comps := []component{halo}
		for _, p := range pts {
			comps = append(comps, gauss{X: p[0] * r, Y: p[1] * r, FWHM: pt, Flux: p[2]})
		}
		return compose(name, "group", false, comps...)
	}
	s = append(s,
		group("Kestrin", gauss{FWHM: 3 * r, Ratio: 0.7, PA: 30 * deg, Flux: 0.3},
			[3]float64{0.8, 0.5, 0.3}, [3]float64{-1.0, 0.3, 0.2}, [3]float64{0.1, -1.2, 0.2}),
		group("Lorrimund", gauss{FWHM: 3 * r, Flux: 0.4},
			[3]float64{1.2, 1.0, 0.25}, [3]float64{-0.6, -0.8, 0.15}, [3]float64{-1.3, 0.9, 0.1}, [3]float64{0.6, -1.4, 0.1}),
		group("Tamsery", gauss{FWHM: 2.5 * r, Ratio: 0.5, PA: -60 * deg, Flux: 0.2},
			[3]float64{0.5, 0.0, 0.5}, [3]float64{-0.9, 0.6, 0.3}),
		group("Wendrake", gauss{X: 0.3 * r, Y: -0.2 * r, FWHM: 3 * r, Ratio: 0.8, PA: 100 * deg, Flux: 0.45},
			[3]float64{1.5, -0.4, 0.2}, [3]float64{-0.4, 1.3, 0.12}, [3]float64{-1.2, -1.1, 0.1}, [3]float64{0.2, 0.3, 0.05}, [3]float64{-0.1, -0.2, 0.03}),
		group("Grisholt", gauss{FWHM: 3 * r, Ratio: 0.6, PA: 150 * deg, Flux: 0.25},
			[3]float64{0.0, 1.0, 0.35}, [3]float64{1.0, -0.7, 0.25}, [3]float64{-1.1, -0.6, 0.15}),
	)

	// Off-centre compact cores with knots along a jet; these also give complex visibilities.
	knots := func(name string, cx, cy, pa float64, ks ...[3]float64) Scene {
		core := 1.0
		for _, k := range ks {
			core -= k[2]
		}
		comps := []component{gauss{X: cx * r, Y: cy * r, FWHM: 0.5 * r, Ratio: 0.8, PA: pa * deg, Flux: core}}
		sp, cp := math.Sincos(pa * deg)
		for _, k := range ks { // distance along the jet, FWHM, flux
			comps = append(comps, gauss{X: (cx + k[0]*sp) * r, Y: (cy + k[0]*cp) * r, FWHM: k[1] * r, Flux: k[2]})
		}
		return compose(name, "knots", true, comps...)
	}
	s = append(s,
		knots("Brisca", 0.9, 0.6, 235, [3]float64{1.0, 0.4, 0.18}, [3]float64{2.0, 0.5, 0.12}, [3]float64{3.0, 0.7, 0.08}),
		knots("Tolvane", -0.7, 0.8, 120, [3]float64{0.8, 0.3, 0.2}, [3]float64{1.7, 0.6, 0.15}, [3]float64{2.6, 0.5, 0.05}),
	)
	return s
}

// SceneByName returns the scene of Scenes(res) with that name.
func SceneByName(res float64, name string) (Scene, error) {
	for _, s := range Scenes(res) {
		if s.Name == name {
			return s, nil
		}
	}
	return Scene{}, fmt.Errorf("validate: no scene named %q", name)
}

// Rotated returns the scene turned by 180° about the phase centre: I'(x, y) = I(−x, −y). Its
// visibilities are the complex conjugates of the scene's, so it has the same V² and opposite
// closure phases; an image closer to it than to the scene is mirrored.
func (s Scene) Rotated() Scene {
	b := s.Brightness
	r := s
	r.Name = s.Name + " (rotated)"
	r.Brightness = func(x, y float64) float64 { return b(-x, -y) }
	return r
}

// TruthSub is the number of samples per pixel side with which Truth renders a scene.
const TruthSub = 8

// Truth returns the scene on grid g (pixel (ix, iy) at x = −(ix − N/2)·Pixel,
// y = (iy − N/2)·Pixel, row-major img[iy*N+ix]): each pixel the mean brightness of TruthSub²
// samples spread evenly over it, the image normalised to a total flux of 1.
func (s Scene) Truth(g recon.Grid) []float64 {
	img := render(s.Brightness, g.N, g.Pixel, TruthSub)
	normalize(img)
	return img
}

// render samples f on an n × n grid of the given pixel (CONVENTIONS.md layout), each pixel the
// mean of sub × sub samples at the centres of its sub-pixels.
func render(f func(x, y float64) float64, n int, pixel float64, sub int) []float64 {
	img := make([]float64, n*n)
	h := pixel / float64(sub)
	for iy := 0; iy < n; iy++ {
		y0 := float64(iy-n/2) * pixel
		for ix := 0; ix < n; ix++ {
			x0 := -float64(ix-n/2) * pixel
			sum := 0.0
			for j := 0; j < sub; j++ {
				y := y0 + (float64(j)-float64(sub-1)/2)*h
				for i := 0; i < sub; i++ {
					sum += f(x0+(float64(i)-float64(sub-1)/2)*h, y)
				}
			}
			img[iy*n+ix] = sum / float64(sub*sub)
		}
	}
	return img
}

// normalize scales img to a total of 1 (left alone when its total is not positive).
func normalize(img []float64) {
	t := 0.0
	for _, v := range img {
		t += v
	}
	if t > 0 {
		for i := range img {
			img[i] /= t
		}
	}
}
