package output

import (
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"strconv"
	"time"

	"vcz/dataset"
	"vcz/io/fitsimage"
	"vcz/io/oifits"
	"vcz/io/plots"
	"vcz/io/preview"
	"vcz/io/safefile"
	"vcz/recon"
	"vcz/runspec"
)

// CubeRun is a polychromatic reconstruction (recon.SolveCube) with what it came from,
// passed in memory.
type CubeRun struct {
	Files  []*oifits.File
	Data   *dataset.Data
	Spec   runspec.Spec
	Result *recon.CubeResult
	// Seconds and Date are as in Run.
	Seconds float64
	Date    time.Time
}

// CubePaths are the files written for a cube.
type CubePaths struct {
	FITS     string `json:"fits"`
	Montage  string `json:"montage,omitempty"`
	CSV      string `json:"csv"`
	Moments  string `json:"moments,omitempty"`
	Spectrum string `json:"spectrum,omitempty"`
	// SpectrumNote says why no spectrum of the total flux was written, "" when one was.
	SpectrumNote string `json:"spectrum_note,omitempty"`
}

// NoSpectrumNote is CubePaths.SpectrumNote for data that do not constrain the total flux.
const NoSpectrumNote = "no spectrum of the total flux: the data (V², closure phases, visibility amplitudes) are normalised, so every plane has flux 1; only correlated fluxes constrain it"

// maxPlanes is the largest number of planes whose per-plane cards (CHI2Rnnn) fit the
// FITS key length of 8.
const maxPlanes = 999

// WriteCube writes the cube of r to out: the FITS cube with a spectral third axis (the
// mean wavelength of each plane's channels) and the per-plane χ²ᵣ in CHI2Rnnn; unless o
// says otherwise, OUT.png, the planes on one colour scale labelled with their wavelengths;
// always OUT-planes.csv, per plane the wavelengths, data, χ²ᵣ, weight, photocentre and
// second-moment size; unless NoPlots, OUT-planes.png, the photocentre and size against
// wavelength, and OUT-spectrum.png, the total correlated flux of each plane, when the data
// have correlated fluxes (CubePaths.SpectrumNote says otherwise why not). It returns the
// paths written, those before an error included.
func (o Outputs) WriteCube(out string, r CubeRun) (CubePaths, error) {
	res := r.Result
	paths := CubePaths{FITS: out}
	P := len(res.Planes)
	if P > maxPlanes {
		return paths, fmt.Errorf("%s: %d planes; at most %d can be written", filepath.Base(out), P, maxPlanes)
	}
	if err := fitsimage.WriteFile(out, o.CubeImage(r)); err != nil {
		return paths, err
	}
	stem := Stem(out)
	wave := make([]float64, P)
	for k, p := range res.Planes {
		wave[k] = p.Coord
	}
	if !o.NoPNG {
		p := stem + ".png"
		frames := make([]preview.Frame, P)
		for k, pl := range res.Planes {
			frames[k] = preview.Frame{Data: pl.Image, NX: res.Grid.N, NY: res.Grid.N,
				Label: fmt.Sprintf("%.4f µm · χ²ᵣ %.2f", pl.Coord*1e6, pl.Chi2r)}
		}
		opt := preview.Options{
			Title:         Title(r.Data, targetOf(r.Data), r.Spec.RegularizerLabel()),
			Subtitle:      fmt.Sprintf("%d planes (%s, η = %.3g) · χ²ᵣ %.3f", P, res.Spectral, res.SpectralWeight, res.Chi2r),
			Pixel:         res.Grid.Pixel / recon.Mas,
			Beam:          preview.Beam{Major: res.Grid.Resolution / recon.Mas},
			ColorbarLabel: "flux per pixel (each plane total 1)",
			Stretch:       o.Stretch,
		}
		if err := preview.WriteMontage(p, frames, opt); err != nil {
			return paths, err
		}
		paths.Montage = p
	}
	paths.CSV = stem + "-planes.csv"
	if err := safefile.Write(paths.CSV, func(w io.Writer) error { return writePlanesCSV(w, res) }); err != nil {
		return paths, err
	}
	if o.NoPlots {
		return paths, nil
	}
	x, y, size := make([]float64, P), make([]float64, P), make([]float64, P)
	var flux []float64
	for k, p := range res.Planes {
		x[k], y[k], size[k] = p.X/recon.Mas, p.Y/recon.Mas, p.Size/recon.Mas
		if p.FluxScale > 0 {
			flux = append(flux, p.FluxScale)
		}
	}
	f, err := plots.Spectral([]plots.SpectralSeries{
		{Label: "photocentre east", Wave: wave, Y: x},
		{Label: "photocentre north", Wave: wave, Y: y},
		{Label: "second-moment radius", Wave: wave, Y: size},
	}, "mas", plots.Options{Title: "photocentre and size of each plane"})
	if err != nil {
		return paths, err
	}
	paths.Moments = stem + "-planes.png"
	if err := f.WriteFile(paths.Moments); err != nil {
		return paths, err
	}
	if len(flux) != P {
		paths.SpectrumNote = NoSpectrumNote
		return paths, nil
	}
	f, err = plots.Spectral([]plots.SpectralSeries{{Label: "total correlated flux", Wave: wave, Y: flux}},
		"correlated flux (unit of the data)", plots.Options{Title: "spectrum of the total flux"})
	if err != nil {
		return paths, err
	}
	paths.Spectrum = stem + "-spectrum.png"
	return paths, f.WriteFile(paths.Spectrum)
}

func targetOf(d *dataset.Data) string {
	if len(d.Targets) == 1 {
		return d.Targets[0]
	}
	return ""
}

// CubeImage returns the FITS cube of r: the planes, their wavelengths and the provenance.
func (o Outputs) CubeImage(r CubeRun) *fitsimage.Image {
	res := r.Result
	P := len(res.Planes)
	n := res.Grid.N
	var ra, dec float64
	var ok bool
	target := targetOf(r.Data)
	if target != "" {
		ra, dec, ok = TargetCoords(r.Files, target)
	}
	im := &fitsimage.Image{NX: n, NY: n, Planes: P, Pixel: res.Grid.Pixel, RA: ra, Dec: dec, HasRADec: ok,
		BUnit: BUnit, Normalized: true}
	if P > 1 {
		im.Wave = make([]float64, P)
	}
	for k, p := range res.Planes {
		im.Data = append(im.Data, p.Image...)
		if P > 1 {
			im.Wave[k] = p.Coord
		}
	}
	im.Cards = append(CubeCards(r), o.Cards...)
	return im
}

// CubeCards is the provenance of a cube as FITS header cards: those of an image (FITSCards)
// where they apply, the spectral regularizer, and per plane nnn its χ²ᵣ (CHI2Rnnn), number of
// data (NPTnnn), spatial weight (PENWTnnn) and channels (CHANnnn).
func CubeCards(r CubeRun) []fitsimage.Card {
	res := r.Result
	date := r.Date
	if date.IsZero() {
		date = time.Now()
	}
	expect := 0.0
	nAll := 0
	for _, p := range res.Planes {
		expect += p.Chi2rTarget * float64(p.N)
		nAll += p.N
	}
	c := []fitsimage.Card{
		{Key: "OBJECT", Value: orUnknown(targetOf(r.Data)), Comment: "target"},
		{Key: "DATE", Value: date.UTC().Format("2006-01-02T15:04:05"), Comment: "file creation date (UTC)"},
		{Key: "CREATOR", Value: Creator, Comment: "software that made this image"},
		{Key: "PENALTY", Value: r.Spec.RegularizerLabel(), Comment: "spatial regularizer(s) of each plane"},
		{Key: "PENWT", Value: res.Weight, Comment: "spatial weight (mu) of the gray image, shared"},
		{Key: "SPECREG", Value: res.Spectral.String(), Comment: "regularizer across planes"},
		{Key: "SPECWT", Value: res.SpectralWeight, Comment: "weight eta of the regularizer across planes"},
		{Key: "SPECVAL", Value: res.SpectralValue, Comment: "value of the regularizer across planes"},
		{Key: "NPLANES", Value: len(res.Planes), Comment: "planes (channel groups) of the cube"},
		{Key: "CHI2R", Value: res.Chi2r, Comment: "reduced chi2 of all planes"},
		{Key: "CHI2EXP", Value: expect / float64(max(nAll, 1)), Comment: "expected reduced chi2"},
		{Key: "NITER", Value: res.Iter, Comment: "iterations of the planes' last runs"},
		{Key: "NITERTOT", Value: res.TotalIter, Comment: "iterations of all runs, gray image included"},
		{Key: "STOPWHY", Value: res.StopReason, Comment: "why the sweeps stopped"},
		{Key: "SEED", Value: int(r.Spec.SeedValue()), Comment: "seed of the random choices"},
		{Key: "GRIDN", Value: res.Grid.N, Comment: "pixels per side"},
		{Key: "PIXMAS", Value: res.Grid.Pixel / recon.Mas, Comment: "pixel size (mas)"},
		{Key: "RESOLMAS", Value: res.Grid.Resolution / recon.Mas, Comment: "nominal resolution lambda_min/(2 B_max) (mas)"},
	}
	if res.Gray != nil {
		c = append(c, fitsimage.Card{Key: "CHI2RGRY", Value: res.Gray.Chi2r, Comment: "reduced chi2 of the gray image"})
		c = append(c, fitsimage.Card{Key: "PENFAC", Value: res.WeightFactor, Comment: "factor on the planes' shares of PENWT"})
	}
	if len(res.WeightPath) > 0 {
		c = append(c, fitsimage.Card{Key: "CHI2AIM", Value: res.Chi2rAim, Comment: "reduced chi2 of all planes aimed at by PENFAC"})
	}
	for k, p := range res.Planes {
		c = append(c,
			fitsimage.Card{Key: fmt.Sprintf("CHI2R%03d", k+1), Value: p.Chi2r, Comment: fmt.Sprintf("reduced chi2 of plane %d", k+1)},
			fitsimage.Card{Key: fmt.Sprintf("NPT%03d", k+1), Value: p.N, Comment: fmt.Sprintf("data fitted by plane %d", k+1)},
			fitsimage.Card{Key: fmt.Sprintf("PENWT%03d", k+1), Value: p.Weight, Comment: fmt.Sprintf("spatial weight of plane %d", k+1)},
			fitsimage.Card{Key: fmt.Sprintf("CHAN%03d", k+1), Value: ASCII(p.Label), Comment: fmt.Sprintf("%.6g-%.6g um", p.Lo*1e6, p.Hi*1e6)},
		)
	}
	var path []recon.WeightStep
	if res.Gray != nil {
		path = res.Gray.Path
	}
	c = append(c, observationCards(r.Files, r.Data)...)
	c = append(c, WarningCards(res.Warnings)...)
	c = append(c, historyCards(r.Files, r.Data, r.Spec, res.Grid.Reasons, "gray weight path", path, res.Notices)...)
	return finishCards(c, "One image per wavelength consistent with the data, not a photograph:",
		"features smaller than lambda/(2 B_max) are not constrained by the data.")
}

// planesHeader are the columns of OUT-planes.csv.
var planesHeader = []string{"plane", "channels", "wave_um", "wave_min_um", "wave_max_um", "n_data", "chi2r", "chi2r_expected",
	"weight", "x_mas", "y_mas", "size_mas", "flux_scale"}

// writePlanesCSV writes one row per plane of res: wavelengths in µm, the photocentre (x
// east, y north) and the second-moment radius in mas, the correlated-flux scale (empty
// without correlated fluxes).
func writePlanesCSV(w io.Writer, res *recon.CubeResult) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(planesHeader); err != nil {
		return err
	}
	g := func(v float64) string { return strconv.FormatFloat(v, 'g', 8, 64) }
	for k, p := range res.Planes {
		flux := ""
		if p.FluxScale > 0 {
			flux = g(p.FluxScale)
		}
		row := []string{strconv.Itoa(k + 1), p.Label, g(p.Coord * 1e6), g(p.Lo * 1e6), g(p.Hi * 1e6), strconv.Itoa(p.N),
			g(p.Chi2r), g(p.Chi2rTarget), g(p.Weight), g(p.X / recon.Mas), g(p.Y / recon.Mas), g(p.Size / recon.Mas), flux}
		if err := cw.Write(row); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// StarEnvRun is a star + environment fit (recon.SolveStarEnv) with what it came from.
type StarEnvRun struct {
	Files   []*oifits.File
	Data    *dataset.Data
	Spec    runspec.Spec
	Result  *recon.StarEnvResult
	Seconds float64
	Date    time.Time
}

// WriteStarEnv writes the environment image of r to out, with the star's share at the
// reference wavelength and the spectral indices in the header (STARF0, STARIDX, ENVIDX,
// LAMBDA0; the errors from the profile's curvature STARF0E, ENVIDXE, and where it rises by
// 1 below and above, STARF0L, STARF0U, ENVIDXL, ENVIDXU; the quality verdict in NWARN and
// WARNn), and, unless o.NoPNG, its PNG preview.
func (o Outputs) WriteStarEnv(out string, r StarEnvRun) (Paths, error) {
	res := r.Result
	paths := Paths{FITS: out}
	date := r.Date
	if date.IsZero() {
		date = time.Now()
	}
	target := targetOf(r.Data)
	ra, dec, ok := TargetCoords(r.Files, target)
	c := []fitsimage.Card{
		{Key: "OBJECT", Value: orUnknown(target), Comment: "target"},
		{Key: "DATE", Value: date.UTC().Format("2006-01-02T15:04:05"), Comment: "file creation date (UTC)"},
		{Key: "CREATOR", Value: Creator, Comment: "software that made this image"},
		{Key: "PENALTY", Value: r.Spec.RegularizerLabel(), Comment: "regularizer(s) of the environment"},
		{Key: "PENWT", Value: res.Gray.Weight, Comment: "weight of the regularizer (mu, of the gray image)"},
		{Key: "LAMBDA0", Value: res.Lambda0, Comment: "[m] reference wavelength"},
		{Key: "STARF0", Value: res.F0, Comment: "star's share of the flux at LAMBDA0"},
		{Key: "STARF0E", Value: finiteOr(res.F0Err), Comment: "1 sigma, profile with the image refitted"},
		{Key: "STARF0L", Value: finiteOr(res.F0Interval.Low), Comment: profileComment("lower", res.F0Interval.LowBound)},
		{Key: "STARF0U", Value: finiteOr(res.F0Interval.High), Comment: profileComment("upper", res.F0Interval.HighBound)},
		{Key: "STARIDX", Value: r.Spec.StarIndexValue(), Comment: "star's spectral index (held fixed)"},
		{Key: "ENVIDX", Value: res.EnvIndex, Comment: "environment's spectral index (fitted)"},
		{Key: "ENVIDXE", Value: finiteOr(res.EnvIndexErr), Comment: "1 sigma, profile with the image refitted"},
		{Key: "ENVIDXL", Value: finiteOr(res.EnvIndexInterval.Low), Comment: profileComment("lower", res.EnvIndexInterval.LowBound)},
		{Key: "ENVIDXU", Value: finiteOr(res.EnvIndexInterval.High), Comment: profileComment("upper", res.EnvIndexInterval.HighBound)},
		{Key: "CHI2R", Value: res.Chi2r, Comment: "reduced chi2 of all channels"},
		{Key: "CHI2RGRY", Value: res.Gray.Chi2r, Comment: "reduced chi2 of the gray image"},
		{Key: "NITER", Value: res.Iter, Comment: "iterations of the fit"},
		{Key: "COMMENT", Value: "The image is the environment alone, flux 1; the star is the parametric component."},
	}
	c = append(c, WarningCards(res.Warnings)...)
	if r.Spec.Star != nil && r.Spec.Star.Diameter > 0 {
		c = append(c, fitsimage.Card{Key: "STARDIAM", Value: r.Spec.Star.Diameter / recon.Mas, Comment: "star's uniform-disc diameter (mas)"})
	}
	c = append(c, observationCards(r.Files, r.Data)...)
	c = append(c, historyCards(r.Files, r.Data, r.Spec, nil, "", nil, nil)...)
	c = finishCards(c)
	n := res.Grid.N
	im := &fitsimage.Image{NX: n, NY: n, Pixel: res.Grid.Pixel, Data: res.Env, RA: ra, Dec: dec, HasRADec: ok,
		BUnit: BUnit, Normalized: true, Cards: append(c, o.Cards...)}
	if err := fitsimage.WriteFile(out, im); err != nil {
		return paths, err
	}
	if o.NoPNG {
		return paths, nil
	}
	p := Stem(out) + ".png"
	opt := preview.Options{
		Title:         Title(r.Data, target, r.Spec.RegularizerLabel()) + " · environment",
		Subtitle:      fmt.Sprintf("star %.3f of the flux at %.4g µm, index %.3g; environment index %.3g · χ²ᵣ %.3f", res.F0, res.Lambda0*1e6, r.Spec.StarIndexValue(), res.EnvIndex, res.Chi2r),
		Pixel:         res.Grid.Pixel / recon.Mas,
		Beam:          preview.Beam{Major: res.Grid.Resolution / recon.Mas},
		ColorbarLabel: "flux per pixel (environment total 1)",
		Stretch:       o.Stretch,
	}
	if err := preview.WriteFile(p, res.Env, n, n, opt); err != nil {
		return paths, err
	}
	paths.PNG = p
	return paths, nil
}

// finiteOr returns v, or 0 when it is not finite (FITS has no NaN keyword value).
// profileComment is the comment of a card of one side of a profile interval.
func profileComment(side string, open bool) string {
	if open {
		return side + " 1 sigma: open, to the bound"
	}
	return side + " 1 sigma, profile rise 1 (x chi2r)"
}

func finiteOr(v float64) float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return 0
	}
	return v
}
