package simulate

import "math"

// UVW returns the projection (u, v, w) in metres of a baseline given in
// local east, north, up metres, for a source at hour angle h and
// declination dec seen from latitude lat (all angles in radians). u points
// east and v north on the sky, w towards the source.
//
// The baseline is first turned into equatorial components
//
//	X = −N sin φ + U cos φ   (towards h = 0, δ = 0)
//	Y =  E                   (towards h = −6h, δ = 0)
//	Z =  N cos φ + U sin φ   (towards the celestial pole)
//
// (Thompson, Moran & Swenson 2017, Interferometry and Synthesis in Radio
// Astronomy, 3rd ed., ch. 4), then projected (ibid. eq. 4.1):
//
//	u =  sin h X + cos h Y
//	v = −sin δ cos h X + sin δ sin h Y + cos δ Z
//	w =  cos δ cos h X − cos δ sin h Y + sin δ Z
func UVW(enu [3]float64, h, dec, lat float64) (u, v, w float64) {
	sl, cl := math.Sincos(lat)
	x := -enu[1]*sl + enu[2]*cl
	y := enu[0]
	z := enu[1]*cl + enu[2]*sl
	sh, ch := math.Sincos(h)
	sd, cd := math.Sincos(dec)
	u = sh*x + ch*y
	v = -sd*ch*x + sd*sh*y + cd*z
	w = cd*ch*x - cd*sh*y + sd*z
	return u, v, w
}

// Elevation returns the elevation (radians) of a source at hour angle h
// and declination dec from latitude lat: sin e = sin φ sin δ + cos φ cos δ
// cos h (Smart 1977, Textbook on Spherical Astronomy, ch. II, from memory).
func Elevation(h, dec, lat float64) float64 {
	s := math.Sin(lat)*math.Sin(dec) + math.Cos(lat)*math.Cos(dec)*math.Cos(h)
	return math.Asin(math.Max(-1, math.Min(1, s)))
}

// enuToGeocentric turns a local east, north, up offset (m) at geodetic
// latitude lat and longitude lon (radians) into an offset in the
// Earth-centred Earth-fixed frame (X towards lon 0 on the equator, Z
// towards the north pole), the frame of OI_ARRAY STAXYZ with FRAME =
// 'GEOCENTRIC' (Pauls et al. 2005, sect. 6.2). It is the transpose of the
// usual ECEF-to-ENU rotation (common practice, no source).
func enuToGeocentric(enu [3]float64, lat, lon float64) [3]float64 {
	sl, cl := math.Sincos(lat)
	so, co := math.Sincos(lon)
	e, n, up := enu[0], enu[1], enu[2]
	return [3]float64{
		-so*e - sl*co*n + cl*co*up,
		co*e - sl*so*n + cl*so*up,
		cl*n + sl*up,
	}
}

// geodeticToGeocentric returns the ECEF position (m) of a point at
// geodetic latitude lat, longitude lon (radians) and height h (m) above
// the WGS 84 ellipsoid (a = 6378137 m, 1/f = 298.257223563; from memory).
func geodeticToGeocentric(lat, lon, h float64) [3]float64 {
	const a = 6378137.0
	const f = 1 / 298.257223563
	e2 := f * (2 - f)
	sl, cl := math.Sincos(lat)
	so, co := math.Sincos(lon)
	n := a / math.Sqrt(1-e2*sl*sl)
	return [3]float64{(n + h) * cl * co, (n + h) * cl * so, (n*(1-e2) + h) * sl}
}

// siderealRatio is the ratio of the mean solar to the mean sidereal day
// (from memory), so that one hour of hour angle lasts 1/siderealRatio
// hours of UT.
const siderealRatio = 1.00273790935

// gmstHours returns the Greenwich mean sidereal time in hours at a UT
// given as MJD, with the linear approximation
// GMST = 18.697374558 + 24.06570982441908 D, D = JD − 2451545.0 (the
// U.S. Naval Observatory's approximate formula, from memory; better than a
// second per century, enough for the MJD columns of simulated data).
func gmstHours(mjd float64) float64 {
	d := mjd + 2400000.5 - 2451545.0
	g := math.Mod(18.697374558+24.06570982441908*d, 24)
	if g < 0 {
		g += 24
	}
	return g
}

// transitMJD returns the first UT (as MJD) on or after the start of the
// day mjd0 (its integer part) at which the hour angle of a source at right
// ascension ra (hours) seen from east longitude lon (hours) is h (hours).
func transitMJD(mjd0, ra, lon, h float64) float64 {
	day := math.Floor(mjd0)
	lst0 := gmstHours(day) + lon
	dt := math.Mod(ra+h-lst0, 24)
	if dt < 0 {
		dt += 24
	}
	return day + dt/siderealRatio/24
}
