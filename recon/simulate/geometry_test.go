package simulate

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestUVWZenith: at hour angle 0 with the declination equal to the
// latitude the target is at the zenith, so the projected baseline is the
// horizontal baseline itself, (u, v) = (east, north), and w = up
// (Thompson, Moran & Swenson 2017, ch. 4).
func TestUVWZenith(t *testing.T) {
	for _, lat := range []float64{-62, -24.6, 0, 19.8, 45} {
		phi := lat * math.Pi / 180
		enu := [3]float64{37.5, -120.25, 2.5}
		u, v, w := UVW(enu, 0, phi, phi)
		if math.Abs(u-enu[0]) > 1e-9 || math.Abs(v-enu[1]) > 1e-9 || math.Abs(w-enu[2]) > 1e-9 {
			t.Errorf("lat %g: (u,v,w) = (%g, %g, %g), want %v", lat, u, v, w, enu)
		}
		if e := Elevation(0, phi, phi); math.Abs(e-math.Pi/2) > 1e-7 {
			t.Errorf("lat %g: zenith elevation %g", lat, e)
		}
	}
}

// TestUVWPole: a target at the celestial pole (δ = +90°) traces circles
// in the (u, v) plane whose radius is the baseline's projection on the
// equatorial plane, √(X² + Y²), with w = Z constant (Thompson, Moran &
// Swenson 2017, ch. 4).
func TestUVWPole(t *testing.T) {
	phi := 52.0 * math.Pi / 180
	enu := [3]float64{80, 45, -3}
	x := -enu[1]*math.Sin(phi) + enu[2]*math.Cos(phi)
	y := enu[0]
	z := enu[1]*math.Cos(phi) + enu[2]*math.Sin(phi)
	r := math.Hypot(x, y)
	prev := math.NaN()
	for k := 0; k < 24; k++ {
		h := float64(k) * math.Pi / 12
		u, v, w := UVW(enu, h, math.Pi/2, phi)
		if math.Abs(math.Hypot(u, v)-r) > 1e-9 || math.Abs(w-z) > 1e-9 {
			t.Errorf("h=%dh: |(u,v)| = %g (want %g), w = %g (want %g)", k, math.Hypot(u, v), r, w, z)
		}
		// The position angle of (u, v) turns by the hour angle step.
		a := math.Atan2(u, v)
		if !math.IsNaN(prev) {
			d := math.Mod(a-prev+3*math.Pi, 2*math.Pi) - math.Pi
			if math.Abs(math.Abs(d)-math.Pi/12) > 1e-9 {
				t.Errorf("h=%dh: (u,v) turned by %g rad, want π/12", k, d)
			}
		}
		prev = a
	}
}

// TestUVWAgainstVectors compares UVW with an independent construction:
// the source direction s in local east-north-up coordinates,
// s = (−cos δ sin h, cos φ sin δ − sin φ cos δ cos h, sin φ sin δ + cos φ cos δ cos h)
// (Smart 1977, Textbook on Spherical Astronomy, ch. II, from memory), the
// pole p = (0, cos φ, sin φ), the sky's east unit vector e = p×s/|p×s| and
// north n = s×e; then u = b·e, v = b·n, w = b·s.
func TestUVWAgainstVectors(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for k := 0; k < 200; k++ {
		phi := (rng.Float64()*170 - 85) * math.Pi / 180
		dec := (rng.Float64()*170 - 85) * math.Pi / 180
		h := (rng.Float64()*24 - 12) * math.Pi / 12
		b := [3]float64{rng.NormFloat64() * 100, rng.NormFloat64() * 100, rng.NormFloat64() * 3}
		s := [3]float64{-math.Cos(dec) * math.Sin(h),
			math.Cos(phi)*math.Sin(dec) - math.Sin(phi)*math.Cos(dec)*math.Cos(h),
			math.Sin(phi)*math.Sin(dec) + math.Cos(phi)*math.Cos(dec)*math.Cos(h)}
		p := [3]float64{0, math.Cos(phi), math.Sin(phi)}
		e := cross(p, s)
		ne := math.Sqrt(dot(e, e))
		for i := range e {
			e[i] /= ne
		}
		n := cross(s, e)
		u, v, w := UVW(b, h, dec, phi)
		if math.Abs(u-dot(b, e)) > 1e-9 || math.Abs(v-dot(b, n)) > 1e-9 || math.Abs(w-dot(b, s)) > 1e-9 {
			t.Fatalf("φ=%g δ=%g h=%g: UVW (%g, %g, %g), vectors (%g, %g, %g)", phi, dec, h, u, v, w, dot(b, e), dot(b, n), dot(b, s))
		}
		if el := Elevation(h, dec, phi); math.Abs(math.Sin(el)-s[2]) > 1e-12 {
			t.Fatalf("elevation %g, sin e should be %g", el, s[2])
		}
	}
}

func cross(a, b [3]float64) [3]float64 {
	return [3]float64{a[1]*b[2] - a[2]*b[1], a[2]*b[0] - a[0]*b[2], a[0]*b[1] - a[1]*b[0]}
}

func dot(a, b [3]float64) float64 { return a[0]*b[0] + a[1]*b[1] + a[2]*b[2] }

// TestGeocentric: the ENU-to-geocentric rotation keeps lengths, sends
// "up" to the radial direction of the site, and the WGS 84 position of a
// point on the equator at longitude 0 is (a, 0, 0) and at the pole
// (0, 0, b) with b = 6356752.314 m (from memory).
func TestGeocentric(t *testing.T) {
	lat, lon := -0.5, 1.2
	for _, enu := range [][3]float64{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}, {3, -4, 12}} {
		g := enuToGeocentric(enu, lat, lon)
		if math.Abs(math.Sqrt(dot(g, g))-math.Sqrt(dot(enu, enu))) > 1e-12 {
			t.Errorf("length changed: %v -> %v", enu, g)
		}
	}
	up := enuToGeocentric([3]float64{0, 0, 1}, lat, lon)
	want := [3]float64{math.Cos(lat) * math.Cos(lon), math.Cos(lat) * math.Sin(lon), math.Sin(lat)}
	for i := range up {
		if math.Abs(up[i]-want[i]) > 1e-15 {
			t.Errorf("up = %v, want %v", up, want)
		}
	}
	if g := geodeticToGeocentric(0, 0, 0); math.Abs(g[0]-6378137) > 1e-6 || math.Abs(g[2]) > 1e-6 {
		t.Errorf("equator %v", g)
	}
	if g := geodeticToGeocentric(math.Pi/2, 0, 0); math.Abs(g[2]-6356752.314) > 1e-3 {
		t.Errorf("pole %v", g)
	}
}

// TestTransitMJD: the computed time has the requested local sidereal time
// and lies on the requested UT day; GMST at J2000.0 (MJD 51544.5) is
// 18.697374558 h by the formula's definition (from memory).
func TestTransitMJD(t *testing.T) {
	if g := gmstHours(51544.5); math.Abs(g-18.697374558) > 1e-9 {
		t.Errorf("GMST at J2000 = %g", g)
	}
	for _, h := range []float64{-4, 0, 2.5} {
		mjd := transitMJD(61203.7, 13.42, 2.77, h)
		if math.Floor(mjd) != 61203 {
			t.Errorf("h=%g: MJD %g not on day 61203", h, mjd)
		}
		lst := math.Mod(gmstHours(mjd)+2.77, 24)
		ha := math.Mod(lst-13.42+36, 24) - 12
		if math.Abs(ha-h) > 1e-6 {
			t.Errorf("hour angle at the computed time %g, want %g", ha, h)
		}
	}
}
