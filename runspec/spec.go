package runspec

import (
	"fmt"
	"math"
	"path/filepath"
	"runtime"
	"vcz/dataset"

	"vcz/io/fitsimage"
	"vcz/recon"
	"vcz/recon/model"
	"vcz/regularizers"
)

// Spec is one reconstruction as `vcz image` runs it: the data selection, the grid, the
// regularizers and their weight, the prior and start images, the data terms and the
// optimizer settings. Its zero value is `vcz image` with no option; every field's comment
// gives its flag. Angles are in radians, wavelengths in metres, MJDs in days.
type Spec struct {
	// Target keeps only this target (-target): a name, or a TARGET_ID; "" keeps every one.
	Target string
	// WaveMin and WaveMax bound the channels' wavelengths (-wave, m); 0 is no limit.
	WaveMin, WaveMax float64
	// MJDMin and MJDMax bound the rows' epochs (-mjd, days); 0 is no limit.
	MJDMin, MJDMax float64
	// Instruments keeps only these INSNAMEs (-ins); none keeps every one.
	Instruments []string
	// Use is the set of data types read and fitted (-use); 0 is every type present.
	Use dataset.DataType

	// Grid is the number of pixels per side (-n, even); 0 chooses it from the data.
	Grid int
	// Pixel is the pixel size (-pixel, rad); 0 chooses it from the data.
	Pixel float64
	// FOV is the field of view (-fov, rad); 0 chooses it from the object's size. It sets
	// the grid together with at most one of Grid and Pixel.
	FOV float64

	// Regularizers is the regularizer list (-reg), weights relative to the first term;
	// none is total variation alone ("tv").
	Regularizers []regularizers.NamedTerm
	// Weight is the regularization weight μ (-weight); 0 chooses it from the data.
	Weight float64
	// Prior is the prior image of the regularizers that use one (-prior); the zero value
	// is flat.
	Prior Prior
	// Start is the start image (-start); the zero value is the automatic choice.
	Start Start
	// FromModel is a model file (-from-model) whose extent sets the object size of the
	// grid choice; with Start.Kind StartModel its image is the start.
	FromModel string
	// Support, when positive, holds the pixels farther than this radius from the centre
	// at zero (-support, rad).
	Support float64
	// TVEps is the gradient size below which tv acts quadratically, relative to the mean pixel value (-tv-eps); 0 is
	// regularizers.DefaultTVEps.
	TVEps float64
	// DataWeights multiply each data type's χ² (-data-weights), indexed like
	// dataset.DataTypes(); 0 is 1.
	DataWeights recon.Weights

	// Iterations is the iteration limit of the final run (-iter); 0 is
	// recon.DefaultMaxIter.
	Iterations int
	// Seed drives every random choice (-seed); nil is the default seed 1.
	Seed *uint64
	// Starts is the number of starts at the final weight (-starts); 0 is the default of
	// recon.Settings.
	Starts int
	// Coarse reconstructs on a half-resolution grid first (-coarse).
	Coarse bool
	// NoAmplitudeFirst skips the first pass on amplitudes (-no-amp-first).
	NoAmplitudeFirst bool
	// Smearing says whether each channel's visibility is averaged over its band
	// (-smearing); the zero value is recon.SmearAuto.
	Smearing recon.Smearing
	// Channels groups the channels into the planes of an image cube (-channels); the zero
	// value is one gray image.
	Channels recon.Channels
	// Spectral is the regularizer across the planes of a cube (-spectral) and
	// SpectralFactor the factor on its automatic weight (0 is 1).
	Spectral       recon.Spectral
	SpectralFactor float64
	// Star, with Channels, fits a star of power-law spectrum plus one environment image
	// (-star); nil fits the cube. StarIndex is the star's spectral index (-star-index);
	// nil is DefaultStarIndex.
	Star      *Star
	StarIndex *float64
	// Workers is the number of transform workers and of cube planes fitted at once
	// (-workers); 0 is GOMAXPROCS. The image does not depend on it, and the canonical text
	// leaves it out.
	Workers int
}

// Star is the star of a star + environment fit (-star): its uniform-disc diameter (rad),
// 0 for an unresolved star.
type Star struct {
	Diameter float64
}

// DefaultStarIndex is the spectral index of -star's star unless -star-index says
// otherwise: −4, the Rayleigh–Jeans tail of a star's spectrum (Kluska et al. 2014, A&A
// 564, A80, sect. 2).
const DefaultStarIndex = -4.0

// StarIndexValue returns the star's spectral index in force.
func (s Spec) StarIndexValue() float64 {
	if s.StarIndex == nil {
		return DefaultStarIndex
	}
	return *s.StarIndex
}

// PriorKind is the kind of a prior image.
type PriorKind int

// The prior images.
const (
	PriorFlat     PriorKind = iota // flat: every pixel equal
	PriorGaussian                  // a circular Gaussian of FWHM Prior.Size
	PriorDisc                      // a uniform disc of diameter Prior.Size
	PriorFile                      // the FITS image Prior.File, resampled to the grid
)

// Prior is the prior image of mem and priordist, normalised to a total flux of 1.
type Prior struct {
	Kind PriorKind
	// Size is the FWHM or diameter (rad); 0 is the object size of the grid choice, or a
	// quarter of the field without one.
	Size float64
	File string // of PriorFile
}

// StartKind is the kind of a start image.
type StartKind int

// The start images (see recon.StartKind for the images themselves).
const (
	StartAuto         StartKind = iota // the best of a disc and a Gaussian fitted to V²
	StartGaussian                      // a Gaussian of FWHM Start.Size
	StartDisc                          // a uniform disc of diameter Start.Size
	StartLimbDarkened                  // a limb-darkened disc, Start.Size and Start.LimbDarkening
	StartFlat                          // a flat disc filling the field
	StartRandom                        // random pixels from the seed
	StartFile                          // the FITS image Start.File
	StartModel                         // the image of the model of Spec.FromModel
)

// Start is the start image.
type Start struct {
	Kind StartKind
	// Size is the FWHM or diameter (rad); 0 is the object size of the grid choice.
	Size float64
	// LimbDarkening is the linear coefficient of StartLimbDarkened, in [0, 1].
	LimbDarkening float64
	File          string // of StartFile
}

// defaultSeed is the seed of a Spec whose Seed is nil.
const defaultSeed = 1

// minGrid and maxGrid bound the grid Problem accepts, in pixels per side:
// below 8 pixels no image is formed, above 2048 a run takes hours (common
// practice, no source).
const minGrid, maxGrid = 8, 2048

// regTerms returns the regularizer list with its default.
func (s *Spec) regTerms() []regularizers.NamedTerm {
	if len(s.Regularizers) == 0 {
		return []regularizers.NamedTerm{{Name: "tv", Rel: 1}}
	}
	return s.Regularizers
}

// RegularizerLabel is the human-readable form of the regularizer list, e.g.
// "mem + 0.1·compact".
func (s Spec) RegularizerLabel() string { return regularizers.Label(s.regTerms()) }

// SeedValue is the seed of s: *Seed, or the default seed 1 when Seed is nil.
func (s Spec) SeedValue() uint64 {
	if s.Seed != nil {
		return *s.Seed
	}
	return defaultSeed
}

// Selection is the data selection of s.
func (s Spec) Selection() dataset.Selection {
	return dataset.Selection{Target: s.Target, WaveMin: s.WaveMin, WaveMax: s.WaveMax, MJDMin: s.MJDMin, MJDMax: s.MJDMax,
		InsNames: s.Instruments, Types: s.Use}
}

// Validate reports the first option of s with a value `vcz image` would refuse, as an
// *OptionError naming its flag. Problem calls it.
func (s Spec) Validate() error {
	for _, o := range options {
		var t Spec
		if text := o.format(&s); text != "" {
			if err := o.parse(&t, "-"+o.name, text); err != nil {
				return &OptionError{Option: "-" + o.name, Value: text, Err: err}
			}
		}
	}
	switch {
	case s.Use&^dataset.AllTypes != 0:
		return &OptionError{Option: "-use", Err: fmt.Errorf("-use: unknown data types %#x", uint(s.Use&^dataset.AllTypes))}
	case s.Prior.Kind == PriorFile && s.Prior.File == "":
		return &OptionError{Option: "-prior", Err: fmt.Errorf("-prior: no file named")}
	case s.Start.Kind == StartFile && s.Start.File == "":
		return &OptionError{Option: "-start", Err: fmt.Errorf("-start: no file named")}
	case s.Start.Kind == StartModel && s.FromModel == "":
		return &OptionError{Option: "-start", Err: fmt.Errorf("-start model needs -from-model")}
	case s.FOV != 0 && s.Grid > 0 && s.Pixel != 0:
		return &OptionError{Option: "-fov", Err: fmt.Errorf("-fov cannot be given with both -n and -pixel")}
	case s.Star != nil && s.Channels.Single():
		return &OptionError{Option: "-star", Err: fmt.Errorf("-star needs -channels (all, or groups narrow enough for the star's share to be constant in each)")}
	case s.StarIndex != nil && s.Star == nil:
		return &OptionError{Option: "-star-index", Err: fmt.Errorf("-star-index needs -star")}
	}
	return nil
}

// Problem turns s into a reconstruction problem on data d and the settings of recon.Solve.
// It reads the files s names (prior, start and model files). Errors are one line naming
// the option (an *OptionError for a bad value) or the file.
func (s Spec) Problem(d *dataset.Data) (recon.Problem, recon.Settings, error) {
	p := recon.Problem{Data: d}
	var st recon.Settings
	if err := s.Validate(); err != nil {
		return p, st, err
	}
	p.GridOptions.N = s.Grid
	p.GridOptions.Pixel = s.Pixel
	var fromModel *model.Model
	if s.FromModel != "" {
		m, err := readModelFile(s.FromModel)
		if err != nil {
			return p, st, err
		}
		// The object's size is the diameter of the circle about the phase centre that
		// holds the model (model.Radius); a model without extent (a centred point) leaves
		// the size to the V² fit.
		fromModel = m
		p.GridOptions.ObjectSize = 2 * m.Radius() * recon.Mas
		p.GridOptions.ObjectSource = "model file " + filepath.Base(s.FromModel)
	}
	if s.FOV > 0 {
		switch {
		case s.Grid > 0:
			p.GridOptions.Pixel = s.FOV / float64(s.Grid)
		case s.Pixel > 0:
			n, err := gridFor(s.FOV, s.Pixel)
			if err != nil {
				return p, st, err
			}
			p.GridOptions.N = n
		default:
			// Keep the default pixel and set N from the field.
			ch, err := recon.ChooseGrid(d, recon.GridOptions{})
			if err != nil {
				return p, st, err
			}
			p.GridOptions.Pixel = ch.Pixel
			n, err := gridFor(s.FOV, ch.Pixel)
			if err != nil {
				return p, st, err
			}
			p.GridOptions.N = n
		}
	}
	if p.GridOptions.N > maxGrid {
		return p, st, fmt.Errorf("grid of %d pixels per side is too large (at most %d)", p.GridOptions.N, maxGrid)
	}
	if err := s.checkScales(d, p.GridOptions); err != nil {
		return p, st, err
	}
	var prior *fitsimage.Image
	if s.Prior.Kind == PriorFile {
		im, err := fitsimage.ReadFile(s.Prior.File)
		if err != nil {
			return p, st, fmt.Errorf("-prior: %v", err)
		}
		if err := checkPriorFile(s.Prior.File, im); err != nil {
			return p, st, fmt.Errorf("-prior: %v", err)
		}
		prior = im
	}
	p.Reg = s.regularizerFunc(d, p.GridOptions, prior)
	p.Weight = s.Weight
	start, err := s.start()
	if err != nil {
		return p, st, fmt.Errorf("-start: %v", err)
	}
	p.Start = start
	if s.Start.Kind == StartModel {
		// Start from the model's image on the grid Solve will choose (the same options
		// give the same grid).
		ch, err := recon.ChooseGrid(d, p.GridOptions)
		if err != nil {
			return p, st, err
		}
		p.Start = recon.Start{Kind: recon.StartImage, Image: fromModel.Image(ch.N, ch.N, ch.Pixel), ImageN: ch.N, ImagePixel: ch.Pixel}
	}
	p.Support = s.Support
	for i, w := range s.DataWeights {
		p.Terms.Weights[i] = w
		if w == 0 {
			p.Terms.Weights[i] = 1
		}
	}
	p.Terms.Use = s.Use
	p.Smearing = s.Smearing
	st.MaxIter = s.Iterations
	st.Seed = s.SeedValue()
	st.Starts = s.Starts
	st.CoarseToFine = s.Coarse
	st.NoAmplitudeFirst = s.NoAmplitudeFirst
	st.Workers = s.Workers
	if st.Workers == 0 {
		st.Workers = runtime.GOMAXPROCS(0)
	}
	return p, st, nil
}

// regularizerFunc builds the regularizer list of s on the grid Solve chooses. The object
// size fitted by the grid choice with options opt, the default size of a Gaussian or disc
// prior, is looked up when a regularizer that uses the prior is first made (Solve makes it
// after choosing the grid).
func (s *Spec) regularizerFunc(d *dataset.Data, opt recon.GridOptions, file *fitsimage.Image) recon.RegularizerFunc {
	terms := s.regTerms()
	prior := s.Prior
	tvEps := s.TVEps
	var fitted float64
	fittedDone := false
	fittedSize := func() float64 {
		if !fittedDone {
			if ch, err := recon.ChooseGrid(d, opt); err == nil {
				fitted = ch.Size
			}
			fittedDone = true
		}
		return fitted
	}
	return func(g recon.Grid) (recon.Regularizer, error) {
		o := regularizers.Options{TVEps: tvEps}
		if regularizers.UsesPrior(terms) {
			img, err := priorImage(prior, file, g, fittedSize())
			if err != nil {
				return nil, err
			}
			o.Prior = img
		}
		return regularizers.Build(terms, g.N, g.N, o)
	}
}

// checkPriorFile refuses a prior image that cannot be one, before any reconstruction: a
// cube, a rectangle (only square images are resampled), pixels that are not finite, or no
// positive pixel (a prior is a brightness distribution).
func checkPriorFile(path string, im *fitsimage.Image) error {
	if im.Planes > 1 {
		return fmt.Errorf("%s: a cube of %d planes; give a 2-D image", path, im.Planes)
	}
	if im.NX != im.NY {
		return fmt.Errorf("%s: %d × %d pixels; only square images can be resampled", path, im.NX, im.NY)
	}
	pos := false
	for _, v := range im.Data {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("%s: prior image has pixels that are not finite (%v)", path, v)
		}
		pos = pos || v > 0
	}
	if !pos {
		return fmt.Errorf("%s: prior image has no positive pixel", path)
	}
	return nil
}

// priorImage returns the prior p on grid g, normalised to unit flux; file is the image of
// a PriorFile. fitted is the object size fitted by the grid choice, used when p gives none.
func priorImage(p Prior, file *fitsimage.Image, g recon.Grid, fitted float64) ([]float64, error) {
	n := g.N
	size := p.Size
	if size == 0 {
		size = fitted
	}
	if size == 0 {
		size = float64(n) * g.Pixel / 4
	}
	switch p.Kind {
	case PriorGaussian:
		return regularizers.GaussianPrior(n, n, size/g.Pixel, 1, 0)
	case PriorDisc:
		return regularizers.DiscPrior(n, n, size/g.Pixel, 1, 0)
	case PriorFile:
		if file.Planes > 1 {
			return nil, fmt.Errorf("prior %s: a cube of %d planes; give a 2-D image", p.File, file.Planes)
		}
		if file.NX != file.NY {
			return nil, fmt.Errorf("prior %s: %d × %d pixels; only square images can be resampled", p.File, file.NX, file.NY)
		}
		dst := make([]float64, n*n)
		recon.Resample(dst, n, g.Pixel, file.Data, file.NX, file.Pixel)
		return regularizers.ImagePrior(dst, 1, 0)
	default:
		return regularizers.FlatPrior(n, n, 1)
	}
}

// start returns the recon start of s, reading a start file; StartModel is made by Problem.
func (s *Spec) start() (recon.Start, error) {
	st := recon.Start{Size: s.Start.Size}
	switch s.Start.Kind {
	case StartGaussian:
		st.Kind = recon.StartGaussian
	case StartDisc:
		st.Kind = recon.StartUniformDisc
	case StartLimbDarkened:
		st.Kind, st.LimbDarkening = recon.StartLimbDarkened, s.Start.LimbDarkening
	case StartFlat:
		st.Kind, st.Size = recon.StartFlat, 0
	case StartRandom:
		st.Kind, st.Size = recon.StartRandom, 0
	case StartFile:
		im, err := fitsimage.ReadFile(s.Start.File)
		if err != nil {
			return st, err
		}
		if im.NX != im.NY || im.Planes > 1 {
			return st, fmt.Errorf("%s: start image must be a square 2-D image, not %d × %d × %d", s.Start.File, im.NX, im.NY, max(im.Planes, 1))
		}
		flux := 0.0
		for _, v := range im.Data {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return st, fmt.Errorf("%s: start image has pixels that are not finite (%v)", s.Start.File, v)
			}
			flux += v
		}
		if !(flux > 0) || math.IsInf(flux, 0) {
			return st, fmt.Errorf("%s: start image has total flux %g; it must be positive", s.Start.File, flux)
		}
		st = recon.Start{Kind: recon.StartImage, Image: im.Data, ImageN: im.NX, ImagePixel: im.Pixel}
	default:
		st = recon.Start{Kind: recon.StartAuto}
	}
	return st, nil
}

// gridFor returns the even number of pixels of size pixel that covers fov,
// refusing, before any conversion to int can overflow, a count beyond
// maxGrid.
func gridFor(fov, pixel float64) (int, error) {
	n := math.Ceil(fov / pixel)
	if !(n <= maxGrid) {
		return 0, &OptionError{Option: "-fov", Err: fmt.Errorf("-fov %s with pixels of %s needs %.3g pixels per side; at most %d",
			formatAngle(fov), roundMas(pixel), n, maxGrid)}
	}
	k := int(n)
	return k + k%2, nil
}

// Bounds of a plausible pixel, in units of the resolution λmin/(2·Bmax):
// pixels much coarser cannot show what the data resolve, and pixels much
// finer give fields too small to hold anything the data constrain (common
// practice, no source).
const (
	maxPixelPerResolution = 10
	minPixelPerResolution = 0.01
)

// checkScales refuses a pixel or field of view that is absurd for the data's
// resolution, naming the option at fault.
func (s Spec) checkScales(d *dataset.Data, g recon.GridOptions) error {
	res := d.Summarize().Resolution
	if !(res > 0) {
		return nil // ChooseGrid reports data without baselines
	}
	opt := "-pixel"
	if s.Pixel == 0 {
		opt = "-fov"
	}
	switch r := g.Pixel / res; {
	case g.Pixel == 0:
	case r > maxPixelPerResolution:
		return &OptionError{Option: opt, Err: fmt.Errorf("%s: a pixel of %s is %.3g times the resolution λmin/(2·Bmax) = %s of these data; at most %d times, or the image cannot show what the data resolve",
			opt, roundMas(g.Pixel), r, roundMas(res), maxPixelPerResolution)}
	case r < minPixelPerResolution:
		return &OptionError{Option: opt, Err: fmt.Errorf("%s: a pixel of %s is %.3g of the resolution λmin/(2·Bmax) = %s of these data; at least %g of it, or the field holds nothing the data constrain",
			opt, roundMas(g.Pixel), r, roundMas(res), minPixelPerResolution)}
	}
	if s.FOV > 0 && s.FOV < res {
		return &OptionError{Option: "-fov", Err: fmt.Errorf("-fov %s is smaller than the resolution λmin/(2·Bmax) = %s of these data",
			formatAngle(s.FOV), roundMas(res))}
	}
	return nil
}

// roundMas writes an angle derived from the data (not typed by the user) in
// mas with four significant digits.
func roundMas(x float64) string { return fmt.Sprintf("%.4gmas", x/recon.Mas) }
