package fitsimage

import (
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"

	"vcz/io/fitsfile"
	"vcz/io/safefile"
)

// Card is one extra header keyword. Value is a string, float64, int, bool
// (other integer and float types are converted); a string too long for one
// card is written with the long-string convention (fitsfile.LongString) and
// reads back whole. For the commentary keys HISTORY and COMMENT the text is
// Value (a string) or, when Value is nil, Comment; long texts continue on
// further cards.
type Card struct {
	Key     string
	Value   any
	Comment string
}

// Image is a sky image or a cube of images on the same grid.
type Image struct {
	NX, NY int
	Planes int     // 0 or 1: a 2-D image; > 1: a cube of Planes images
	Pixel  float64 // pixel size (rad)
	// Wave, when non-nil, holds the wavelength (m) of each plane of a cube, increasing: the
	// third axis is then a spectral axis (FITS WCS Paper III, Greisen et al. 2006, A&A 446,
	// 747): CTYPE3 = 'WAVE' in metres, linear when the wavelengths are evenly spaced (to
	// 1e-6 of the step), otherwise 'WAVE-TAB', tabulated in a binary table WCS-TAB that
	// follows the image (Paper III, sect. 6). Without it the third axis is the plane number.
	Wave []float64
	// Time, when non-nil (and Wave nil), holds the MJD (days, UTC) of each plane of a cube,
	// increasing: the third axis is then a time axis (FITS standard 4.0 sect. 9, Rots et al.
	// 2015, A&A 574, A36): CTYPE3 = 'TIME' in days from MJDREF = 0 (so values are MJDs),
	// TIMESYS = 'UTC', linear when evenly spaced, otherwise 'TIME-TAB' tabulated as for Wave.
	Time []float64
	// Data holds NX*NY*max(Planes, 1) values, Data[(p*NY+iy)*NX+ix].
	Data []float64
	// RA and Dec (deg) of the phase centre, the sky position of pixel
	// (NX/2, NY/2); meaningful when HasRADec is true.
	RA, Dec  float64
	HasRADec bool
	// BUnit is the brightness unit (BUNIT), e.g. "flux/pixel"; omitted
	// when "" (or when Cards holds BUNIT).
	BUnit string
	// Normalized adds a COMMENT card saying that each plane is normalised
	// to a total flux of 1 (CONVENTIONS.md of the project).
	Normalized bool
	// Cards are extra keywords written after the WCS, in order. ReadFile
	// returns every keyword that is not structural or WCS here.
	Cards []Card
}

// wcsKey reports whether key is structural or part of the WCS that
// WriteFile sets itself.
func wcsKey(key string) bool {
	switch key {
	case "SIMPLE", "BITPIX", "NAXIS", "EXTEND", "BSCALE", "BZERO", "BLANK", "END",
		"RADESYS", "RADECSYS", "EQUINOX", "WCSAXES", "LONPOLE", "LATPOLE", "BUNIT", "CHECKSUM", "DATASUM", "TIMESYS", "MJDREF":
		return true
	}
	for _, p := range []string{"NAXIS", "CTYPE", "CRPIX", "CDELT", "CUNIT", "CRVAL", "CROTA", "CD", "PC", "PS", "PV", "SPECSYS"} {
		if strings.HasPrefix(key, p) && len(key) > len(p) {
			rest := strings.ReplaceAll(key[len(p):], "_", "")
			if _, err := strconv.Atoi(rest); err == nil {
				return true
			}
		}
	}
	return false
}

// convert turns a caller's card into a fitsfile card.
func convert(c Card) (fitsfile.Card, error) {
	if c.Key == "HISTORY" || c.Key == "COMMENT" {
		text := c.Comment
		if c.Value != nil {
			s, ok := c.Value.(string)
			if !ok {
				return fitsfile.Card{}, fmt.Errorf("%s card needs a string, not %T", c.Key, c.Value)
			}
			text = s
		}
		return fitsfile.Card{Key: c.Key, Comment: text}, nil
	}
	v := c.Value
	switch x := v.(type) {
	case int8:
		v = int(x)
	case int16:
		v = int(x)
	case int32:
		v = int(x)
	case int64:
		v = int(x)
	case uint8:
		v = int(x)
	case uint16:
		v = int(x)
	case uint32:
		v = int(x)
	case float32:
		v = float64(x)
	case string:
		// Longer strings continue on CONTINUE cards (fitsfile.LongString).
		v = fitsfile.LongString(x)
	case float64, int, bool:
	default:
		return fitsfile.Card{}, fmt.Errorf("keyword %s: unsupported value type %T", c.Key, c.Value)
	}
	return fitsfile.Card{Key: c.Key, Value: v, Comment: c.Comment}, nil
}

const radToDeg = 180 / math.Pi

// check reports what is wrong with im's shape, or nil.
func (im *Image) check() error {
	if im.NX <= 0 || im.NY <= 0 || im.Planes < 0 {
		return fmt.Errorf("image size %d × %d × %d", im.NX, im.NY, im.Planes)
	}
	if im.Wave != nil {
		if len(im.Wave) != max(im.Planes, 1) || im.Planes < 2 {
			return fmt.Errorf("%d wavelengths for a cube of %d planes", len(im.Wave), max(im.Planes, 1))
		}
		for k, w := range im.Wave {
			if !(w > 0) || math.IsInf(w, 0) || k > 0 && !(w > im.Wave[k-1]) {
				return fmt.Errorf("wavelength %d of the planes is %g m; want positive, finite and increasing", k+1, w)
			}
		}
	}
	if im.Time != nil {
		if im.Wave != nil || len(im.Time) != max(im.Planes, 1) || im.Planes < 2 {
			return fmt.Errorf("%d times for a cube of %d planes (with %d wavelengths)", len(im.Time), max(im.Planes, 1), len(im.Wave))
		}
		for k, x := range im.Time {
			if math.IsNaN(x) || math.IsInf(x, 0) || k > 0 && !(x > im.Time[k-1]) {
				return fmt.Errorf("MJD %d of the planes is %g; want finite and increasing", k+1, x)
			}
		}
	}
	if n := im.NX * im.NY * max(im.Planes, 1); len(im.Data) != n {
		return fmt.Errorf("image has %d values; %d × %d × %d needs %d", len(im.Data), im.NX, im.NY, max(im.Planes, 1), n)
	}
	if !(im.Pixel > 0) || math.IsInf(im.Pixel, 0) {
		return fmt.Errorf("pixel size %v rad; must be positive and finite", im.Pixel)
	}
	return nil
}

// Encode writes im as a FITS file to w (see the package documentation).
func Encode(w io.Writer, im *Image) error {
	if err := im.check(); err != nil {
		return fmt.Errorf("fitsimage: %w", err)
	}
	deg := im.Pixel * radToDeg
	cards := []fitsfile.Card{
		{Key: "WCSAXES", Value: 2 + b2i(im.Planes > 1), Comment: "number of WCS axes"},
		{Key: "CTYPE1", Value: "RA---SIN", Comment: "right ascension, orthographic projection"},
		{Key: "CTYPE2", Value: "DEC--SIN", Comment: "declination, orthographic projection"},
		{Key: "CRPIX1", Value: float64(im.NX/2 + 1), Comment: "reference pixel: the phase centre"},
		{Key: "CRPIX2", Value: float64(im.NY/2 + 1), Comment: "reference pixel: the phase centre"},
		{Key: "CDELT1", Value: -deg, Comment: "[deg] pixel size; negative: east to the left"},
		{Key: "CDELT2", Value: deg, Comment: "[deg] pixel size; north up"},
		{Key: "CUNIT1", Value: "deg", Comment: "unit of CDELT1 and CRVAL1"},
		{Key: "CUNIT2", Value: "deg", Comment: "unit of CDELT2 and CRVAL2"},
	}
	if im.HasRADec {
		if math.IsNaN(im.RA) || math.IsNaN(im.Dec) || math.Abs(im.Dec) > 90 {
			return fmt.Errorf("fitsimage: phase centre RA %v, Dec %v deg is not a sky position", im.RA, im.Dec)
		}
		cards = append(cards,
			fitsfile.Card{Key: "CRVAL1", Value: im.RA, Comment: "[deg] RA of the phase centre"},
			fitsfile.Card{Key: "CRVAL2", Value: im.Dec, Comment: "[deg] Dec of the phase centre"},
			fitsfile.Card{Key: "RADESYS", Value: "ICRS", Comment: "reference system of RA and Dec"},
		)
	} else {
		cards = append(cards, fitsfile.Card{Key: "COMMENT", Comment: "Phase centre position unknown: CRVAL1/2 omitted (offsets from 0,0)."})
	}
	tab := false
	switch {
	case im.Planes > 1 && im.Wave != nil:
		var wc []fitsfile.Card
		wc, tab = waveCards(im.Wave)
		cards = append(cards, wc...)
	case im.Planes > 1 && im.Time != nil:
		var tc []fitsfile.Card
		tc, tab = timeCards(im.Time)
		cards = append(cards, tc...)
	case im.Planes > 1:
		cards = append(cards,
			fitsfile.Card{Key: "CTYPE3", Value: "PLANE", Comment: "plane number (e.g. epoch), 1-based"},
			fitsfile.Card{Key: "CRPIX3", Value: 1.0},
			fitsfile.Card{Key: "CRVAL3", Value: 1.0},
			fitsfile.Card{Key: "CDELT3", Value: 1.0},
		)
	}
	hasBUnit := false
	for _, c := range im.Cards {
		hasBUnit = hasBUnit || c.Key == "BUNIT"
	}
	if im.BUnit != "" && !hasBUnit {
		cards = append(cards, fitsfile.Card{Key: "BUNIT", Value: im.BUnit, Comment: "brightness unit"})
	}
	if im.Normalized {
		cards = append(cards, fitsfile.Card{Key: "COMMENT", Comment: "Each image plane is normalised to a total flux of 1 (sum of pixels = 1)."})
	}
	for _, c := range im.Cards {
		if wcsKey(c.Key) && c.Key != "BUNIT" {
			return fmt.Errorf("fitsimage: keyword %s is set by the writer (structure or WCS)", c.Key)
		}
		fc, err := convert(c)
		if err != nil {
			return fmt.Errorf("fitsimage: %w", err)
		}
		cards = append(cards, fc)
	}
	axes := []int{im.NX, im.NY}
	if im.Planes > 1 {
		axes = append(axes, im.Planes)
	}
	fw := fitsfile.NewWriter(w)
	fw.Checksum = true // CHECKSUM and DATASUM (FITS checksum convention)
	if err := fw.WriteImage(axes, im.Data, cards); err != nil {
		return err
	}
	if tab {
		// The coordinate array of a one-dimensional -TAB axis has dimensions (1, K): one
		// coordinate per element, K elements (Paper III, sect. 6.1.2).
		coords, unit, what := im.Wave, "m", "wavelength of each plane"
		if im.Wave == nil {
			coords, unit, what = im.Time, "d", "MJD of each plane"
		}
		return fw.WriteTable(waveTable, 1, []fitsfile.ColumnSpec{{Name: waveColumn, Type: 'D', Repeat: len(coords),
			Unit: unit, Dim: []int{1, len(coords)}, Comment: what, Data: coords}}, nil)
	}
	return nil
}

// The binary table and column of a tabulated spectral axis.
const (
	waveTable  = "WCS-TAB"
	waveColumn = "COORDS"
)

// timeCards returns the WCS cards of a time third axis at the MJDs mjd (increasing, at
// least two) and whether the axis is tabulated (FITS standard 4.0 sect. 9.3 and 9.4: time
// in days, CUNIT3 'd', from the reference MJDREF, here 0 so that the coordinate is the MJD,
// in the time scale TIMESYS; -TAB as for waveCards).
func timeCards(mjd []float64) ([]fitsfile.Card, bool) {
	return axisCards(mjd, axisWords{ctype: "TIME", unit: "d", noun: "time", linear: "time of each plane, linear",
		first: "MJD", plural: "times", tail: []fitsfile.Card{
			{Key: "TIMESYS", Value: "UTC", Comment: "time scale of the time axis"},
			{Key: "MJDREF", Value: 0.0, Comment: "[d] reference: the time axis is in MJD"},
		}})
}

// waveCards returns the WCS cards of a spectral third axis at wavelengths wave (m,
// increasing, at least two) and whether the axis is tabulated (Greisen et al. 2006, A&A
// 446, 747: sect. 3.1 for WAVE in metres, sect. 6 for -TAB). A linear axis has pixel k
// (1-based) at CRVAL3 + (k − 1)·CDELT3. A tabulated one maps pixel k through CRPIX3 = 1,
// CDELT3 = 1, CRVAL3 = 1 to the index ψ = k of the coordinate array, whose entry k is the
// wavelength (the default index vector 1, 2, ..., K).
func waveCards(wave []float64) ([]fitsfile.Card, bool) {
	return axisCards(wave, axisWords{ctype: "WAVE", unit: "m", noun: "wavelength", linear: "wavelength, linear",
		first: "wavelength", plural: "wavelengths", tail: []fitsfile.Card{
			{Key: "SPECSYS", Value: "TOPOCENT", Comment: "wavelengths as observed"},
		}})
}

// axisWords names a third axis in its cards: CTYPE3 (without -TAB), CUNIT3, the words of
// the comments, and the cards that follow the axis's own.
type axisWords struct {
	ctype, unit, noun, linear, first, plural string
	tail                                     []fitsfile.Card
}

// axisCards returns the WCS cards of a third axis at the coordinates x (increasing, at
// least two), linear when x is evenly spaced to 10⁻⁶ of its step and tabulated in the
// table waveTable otherwise, and whether it is tabulated.
func axisCards(x []float64, w axisWords) ([]fitsfile.Card, bool) {
	n := len(x)
	step := (x[n-1] - x[0]) / float64(n-1)
	lin := true
	for k, v := range x {
		lin = lin && math.Abs(v-(x[0]+float64(k)*step)) <= 1e-6*step
	}
	u := "[" + w.unit + "] "
	if lin {
		return append([]fitsfile.Card{
			{Key: "CTYPE3", Value: w.ctype, Comment: w.linear},
			{Key: "CUNIT3", Value: w.unit, Comment: "unit of CRVAL3 and CDELT3"},
			{Key: "CRPIX3", Value: 1.0, Comment: "reference pixel: the first plane"},
			{Key: "CRVAL3", Value: x[0], Comment: u + w.first + " of the first plane"},
			{Key: "CDELT3", Value: step, Comment: u + w.noun + " step between planes"},
		}, w.tail...), false
	}
	return append([]fitsfile.Card{
		{Key: "CTYPE3", Value: w.ctype + "-TAB", Comment: w.noun + ", tabulated in table " + waveTable},
		{Key: "CUNIT3", Value: w.unit, Comment: "unit of the tabulated " + w.plural},
		{Key: "CRPIX3", Value: 1.0, Comment: "pixel k maps to index k of the table"},
		{Key: "CRVAL3", Value: 1.0, Comment: "index of the first plane"},
		{Key: "CDELT3", Value: 1.0, Comment: "index step between planes"},
		{Key: "PS3_0", Value: waveTable, Comment: "EXTNAME of the table of " + w.plural},
		{Key: "PS3_1", Value: waveColumn, Comment: "column of the " + w.plural},
		{Key: "PV3_3", Value: 1, Comment: "axis of the coordinate array"},
	}, w.tail...), true
}

func b2i(b bool) int {
	if b {
		return 1
	}
	return 0
}

// WriteFile writes im to path atomically (package io/safefile).
func WriteFile(path string, im *Image) error {
	return safefile.Write(path, func(w io.Writer) error { return Encode(w, im) })
}

// ReadFile reads the first image of the FITS file at path: the primary
// HDU, or the first IMAGE extension when the primary HDU has no data.
// Errors begin with path as given.
func ReadFile(path string) (*Image, error) {
	name := path // messages name the file as the user gave it
	data, err := safefile.ReadFile(path)
	if err != nil {
		var pe *os.PathError
		if errors.As(err, &pe) {
			err = pe.Err
		}
		return nil, fmt.Errorf("%s: %w", name, err)
	}
	im, err := Decode(data)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", name, err)
	}
	return im, nil
}

// Decode reads an image from the bytes of a FITS file (see ReadFile).
func Decode(data []byte) (*Image, error) {
	ff, err := fitsfile.Parse(data)
	if err != nil {
		return nil, err
	}
	var h *fitsfile.HDU
	for _, x := range ff.HDUs {
		if (x.Kind == fitsfile.Primary || x.Kind == fitsfile.Image) && len(x.Axes) > 0 && len(x.Data) > 0 {
			h = x
			break
		}
	}
	if h == nil {
		return nil, errors.New("no image: no HDU holds an image array")
	}
	where := fmt.Sprintf("HDU %d", h.Index)
	bad := func(format string, args ...any) error {
		return fmt.Errorf("%s: %s", where, fmt.Sprintf(format, args...))
	}
	// Axes beyond the third must have length 1.
	for i, a := range h.Axes {
		if i >= 3 && a != 1 {
			return nil, bad("NAXIS%d = %d; only images and cubes (3 axes) are supported", i+1, a)
		}
	}
	if len(h.Axes) < 2 {
		return nil, bad("NAXIS = %d; an image needs 2 axes", len(h.Axes))
	}
	im := &Image{NX: h.Axes[0], NY: h.Axes[1]}
	if len(h.Axes) >= 3 && h.Axes[2] > 1 {
		im.Planes = h.Axes[2]
	}
	if im.Data, err = h.Float64Image(); err != nil {
		return nil, err
	}
	hd := &h.Header
	for _, ax := range []string{"1", "2"} {
		ct, _, err := hd.String("CTYPE" + ax)
		if err != nil {
			return nil, bad("%v", err)
		}
		want := map[string]string{"1": "RA--", "2": "DEC-"}[ax]
		if ct != "" && !strings.HasPrefix(ct, want) {
			return nil, bad("CTYPE%s = '%s'; expected a %s... axis (RA on axis 1, Dec on axis 2)", ax, ct, want)
		}
	}
	m, err := linear(hd)
	if err != nil {
		return nil, bad("%v", err)
	}
	// m maps pixel offsets to intermediate coordinates (rad): x = m[0]*dp1
	// + m[1]*dp2, y = m[2]*dp1 + m[3]*dp2.
	sx, sy := m[0], m[3]
	scale := math.Max(math.Abs(sx), math.Abs(sy))
	if scale == 0 || math.IsNaN(scale) || math.IsInf(scale, 0) {
		return nil, bad("no pixel scale: CDELT1/CDELT2 or a CD matrix is needed")
	}
	if math.Abs(m[1]) > 1e-9*scale || math.Abs(m[2]) > 1e-9*scale {
		return nil, bad("the image is rotated (off-diagonal CD/PC terms); only north-up images are supported")
	}
	if math.Abs(math.Abs(sx)-math.Abs(sy)) > 1e-6*scale {
		return nil, bad("pixels are not square (%g × %g rad)", math.Abs(sx), math.Abs(sy))
	}
	im.Pixel = math.Abs(sy)
	flipX, flipY := sx > 0, sy < 0
	if flipX || flipY {
		flip(im, flipX, flipY)
	}
	ra, okRA, err1 := hd.Float("CRVAL1")
	dec, okDec, err2 := hd.Float("CRVAL2")
	if err := errors.Join(err1, err2); err != nil {
		return nil, bad("%v", err)
	}
	im.RA, im.Dec, im.HasRADec = ra, dec, okRA && okDec
	if im.Planes > 1 {
		if im.Wave, err = readWave(ff, hd, im.Planes); err != nil {
			return nil, bad("%v", err)
		}
		if im.Time, err = readTime(ff, hd, im.Planes); err != nil {
			return nil, bad("%v", err)
		}
	}
	if u, _, _ := hd.String("BUNIT"); u != "" {
		im.BUnit = strings.TrimSpace(u)
	}
	for _, c := range hd.Cards {
		switch {
		case c.Key == "HISTORY" || c.Key == "COMMENT":
			if strings.HasPrefix(c.Comment, "Each image plane is normalised") {
				im.Normalized = true
				continue
			}
			if strings.HasPrefix(c.Comment, "Phase centre position unknown") {
				continue
			}
			im.Cards = append(im.Cards, Card{Key: c.Key, Value: c.Comment})
		case c.Key == "" || wcsKey(c.Key):
		default:
			if _, raw := c.Value.(fitsfile.RawValue); raw || c.Value == nil {
				continue
			}
			im.Cards = append(im.Cards, Card{Key: c.Key, Value: c.Value, Comment: c.Comment})
		}
	}
	return im, nil
}

// angleUnit returns the size in radians of one unit of CUNITn; FITS
// celestial axes default to degrees (Greisen & Calabretta 2002, sect. 2.1).
func angleUnit(u string) (float64, error) {
	switch strings.TrimSpace(u) {
	case "", "deg":
		return math.Pi / 180, nil
	case "arcmin":
		return math.Pi / (180 * 60), nil
	case "arcsec":
		return math.Pi / (180 * 3600), nil
	case "mas":
		return math.Pi / (180 * 3600e3), nil
	case "rad":
		return 1, nil
	}
	return 0, fmt.Errorf("CUNIT '%s' is not an angle unit (deg, arcmin, arcsec, mas or rad)", u)
}

// linear returns the 2×2 matrix (row-major, rad per pixel) from pixel
// offsets to intermediate world coordinates: the CDi_j matrix when present,
// otherwise CDELTi times PCi_j (PC defaults to the identity, Greisen &
// Calabretta 2002, eq. 1-3). CROTA2 other than 0 is treated as a rotation.
func linear(hd *fitsfile.Header) ([4]float64, error) {
	var m [4]float64
	var units [2]float64
	for i := range units {
		u, _, err := hd.String("CUNIT" + strconv.Itoa(i+1))
		if err != nil {
			return m, err
		}
		if units[i], err = angleUnit(u); err != nil {
			return m, err
		}
	}
	keys := [4]string{"1_1", "1_2", "2_1", "2_2"}
	hasCD := false
	for i, k := range keys {
		v, ok, err := hd.Float("CD" + k)
		if err != nil {
			return m, err
		}
		hasCD = hasCD || ok
		m[i] = v * units[i/2]
	}
	if hasCD {
		return m, nil
	}
	pc := [4]float64{1, 0, 0, 1}
	for i, k := range keys {
		v, ok, err := hd.Float("PC" + k)
		if err != nil {
			return m, err
		}
		if ok {
			pc[i] = v
		}
	}
	if rot, ok, err := hd.Float("CROTA2"); err != nil {
		return m, err
	} else if ok && rot != 0 {
		pc[1] = 1 // marks a rotation; Decode rejects rotated images
	}
	for i := range units {
		d, _, err := hd.Float("CDELT" + strconv.Itoa(i+1))
		if err != nil {
			return m, err
		}
		m[2*i] = d * units[i] * pc[2*i]
		m[2*i+1] = d * units[i] * pc[2*i+1]
	}
	return m, nil
}

// flip mirrors every plane of im along x and/or y in place.
func flip(im *Image, fx, fy bool) {
	nx, ny := im.NX, im.NY
	for p := 0; p < max(im.Planes, 1); p++ {
		pl := im.Data[p*nx*ny : (p+1)*nx*ny]
		if fx {
			for iy := 0; iy < ny; iy++ {
				row := pl[iy*nx : (iy+1)*nx]
				for i, j := 0, nx-1; i < j; i, j = i+1, j-1 {
					row[i], row[j] = row[j], row[i]
				}
			}
		}
		if fy {
			for i, j := 0, ny-1; i < j; i, j = i+1, j-1 {
				for ix := 0; ix < nx; ix++ {
					pl[i*nx+ix], pl[j*nx+ix] = pl[j*nx+ix], pl[i*nx+ix]
				}
			}
		}
	}
}

// readWave returns the wavelengths (m) of the planes of a cube whose third axis is WAVE
// (linear, in m, um or nm) or WAVE-TAB (the table and column that PS3_0 and PS3_1 name),
// nil for any other third axis.
func readWave(ff *fitsfile.File, hd *fitsfile.Header, planes int) ([]float64, error) {
	return readAxis3(ff, hd, planes, "WAVE", map[string]float64{"": 1, "m": 1, "um": 1e-6, "nm": 1e-9, "Angstrom": 1e-10}, "m, um, nm or Angstrom")
}

// readTime returns the MJDs of the planes of a cube whose third axis is TIME or TIME-TAB
// in days from MJDREF (0 when absent), nil for any other third axis.
func readTime(ff *fitsfile.File, hd *fitsfile.Header, planes int) ([]float64, error) {
	t, err := readAxis3(ff, hd, planes, "TIME", map[string]float64{"": 1, "d": 1}, "d")
	if t == nil || err != nil {
		return t, err
	}
	ref, _, err := hd.Float("MJDREF")
	if err != nil {
		return nil, err
	}
	for k := range t {
		t[k] += ref
	}
	return t, nil
}

// readAxis3 returns the coordinates of the planes along a third axis of type ctype, linear
// or ctype-TAB, in the unit of factor 1 of units (named by want in errors); nil when the
// third axis is of another type.
func readAxis3(ff *fitsfile.File, hd *fitsfile.Header, planes int, ctype string, units map[string]float64, want string) ([]float64, error) {
	ct, _, err := hd.String("CTYPE3")
	if err != nil {
		return nil, err
	}
	ct = strings.TrimSpace(ct)
	if ct != ctype && ct != ctype+"-TAB" {
		return nil, nil
	}
	cu, _, err := hd.String("CUNIT3")
	if err != nil {
		return nil, err
	}
	f, ok := units[strings.TrimSpace(cu)]
	if !ok {
		return nil, fmt.Errorf("CUNIT3 = '%s'; want %s", cu, want)
	}
	get := func(key string, def float64) (float64, error) {
		v, ok, err := hd.Float(key)
		if !ok && err == nil {
			v = def
		}
		return v, err
	}
	crpix, err1 := get("CRPIX3", 0)
	crval, err2 := get("CRVAL3", 0)
	cdelt, err3 := get("CDELT3", 1)
	if err := errors.Join(err1, err2, err3); err != nil {
		return nil, err
	}
	wave := make([]float64, planes)
	if ct == ctype {
		for k := range wave {
			wave[k] = f * (crval + (float64(k+1)-crpix)*cdelt)
		}
		return wave, nil
	}
	tabName, _, err1 := hd.String("PS3_0")
	colName, _, err2 := hd.String("PS3_1")
	if err := errors.Join(err1, err2); err != nil {
		return nil, err
	}
	for _, h := range ff.HDUs {
		if h.Kind != fitsfile.BinTable || h.ExtName() != strings.TrimSpace(tabName) {
			continue
		}
		t, err := h.Table()
		if err != nil {
			return nil, fmt.Errorf("table %s: %v", tabName, err)
		}
		c := t.Column(strings.TrimSpace(colName))
		if c == nil || t.Rows < 1 {
			return nil, fmt.Errorf("table %s has no column %s of coordinates", tabName, colName)
		}
		coords := make([]float64, c.Repeat)
		if err := t.Float64s(coords, c, 0); err != nil {
			return nil, fmt.Errorf("table %s: %v", tabName, err)
		}
		for k := range wave {
			// ψ = CRVAL3 + CDELT3·(k+1 − CRPIX3) is a 1-based index of the array.
			psi := crval + cdelt*(float64(k+1)-crpix)
			i := int(math.Round(psi)) - 1
			if math.Abs(psi-math.Round(psi)) > 1e-9 || i < 0 || i >= len(coords) {
				return nil, fmt.Errorf("plane %d falls at index %g of the %d tabulated coordinates; only whole indices are read", k+1, psi, len(coords))
			}
			wave[k] = f * coords[i]
		}
		return wave, nil
	}
	return nil, fmt.Errorf("CTYPE3 = '%s' but no table %s", ct, tabName)
}
