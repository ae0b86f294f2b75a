package main

import (
	"bytes"
	"encoding/json"
	"flag"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"

	"vcz/io/fitsimage"
	"vcz/io/preview"
	"vcz/recon"
	"vcz/recon/model"
)

// imageFlags are the reconstruction options shared by image, demo, compare
// and batch.
type imageFlags struct {
	sel      selectionFlags
	n        int
	pixel    string
	fov      string
	reg      string
	weight   string
	prior    string
	start    string
	support  string
	tvEps    float64
	weights  string
	iter     int
	seed     uint64
	starts   int
	coarse   bool
	noAmp    bool
	workers  int
	usedRegs []regTerm
	// fromModel is the model file of -from-model (vcz image only); fs is the
	// flag set it was registered on, to learn whether -start was given.
	fromModel string
	fs        *flag.FlagSet
	// stretch is the display stretch of the PNG previews (-stretch, vcz image and
	// compare only).
	stretch    string
	stretchVal preview.Stretch
}

// registerStretch adds -stretch, the display stretch of the previews, to fs.
func (f *imageFlags) registerStretch(fs *flag.FlagSet) {
	fs.StringVar(&f.stretch, "stretch", "linear", "display stretch of the PNG previews: linear, sqrt, asinh or log (the FITS image is not changed)")
}

// parseStretch sets stretchVal from -stretch.
func (f *imageFlags) parseStretch() error {
	for _, s := range []preview.Stretch{preview.Linear, preview.Sqrt, preview.Asinh, preview.Log} {
		if strings.EqualFold(strings.TrimSpace(f.stretch), s.String()) || (f.stretch == "" && s == preview.Linear) {
			f.stretchVal = s
			return nil
		}
	}
	return fmt.Errorf("-stretch %q: want linear, sqrt, asinh or log", f.stretch)
}

func (f *imageFlags) register(fs *flag.FlagSet) {
	f.sel.register(fs, true)
	fs.IntVar(&f.n, "n", 0, "grid size in pixels per side (even; default: chosen from the data)")
	fs.StringVar(&f.pixel, "pixel", "", "pixel size with a unit, e.g. 0.25mas or 250uas (default: a quarter of λmin/(2·Bmax))")
	fs.StringVar(&f.fov, "fov", "", "field of view with a unit, e.g. 12mas (default: three times the fitted object size)")
	fs.StringVar(&f.reg, "reg", "tv", "regularizer(s): "+regList()+"; several as a list with weights relative to the first, e.g. mem,compact:0.1")
	fs.StringVar(&f.weight, "weight", "auto", "regularization weight μ, or auto (chosen from the data: χ²ᵣ between the floor of the least-regularized images and its expected value, about 1)")
	fs.StringVar(&f.prior, "prior", "flat", "prior image of mem and priordist: flat, gauss[:FWHM], disc[:DIAMETER] or a FITS file")
	fs.StringVar(&f.start, "start", "auto", "start image: auto (best of a disc and a Gaussian fitted to V²), gauss[:FWHM], disc[:DIAMETER], ld[:DIAMETER[:COEF]], flat, random, or a FITS file")
	fs.StringVar(&f.support, "support", "", "hold pixels farther than this radius from the centre at zero, e.g. 3mas")
	fs.Float64Var(&f.tvEps, "tv-eps", 0, "edge threshold of tv as a fraction of the mean pixel value (default 0.01)")
	fs.StringVar(&f.weights, "data-weights", "", "weights of the data types in χ², e.g. vis2=1,t3phi=2 (default 1 each)")
	fs.IntVar(&f.iter, "iter", 0, fmt.Sprintf("iteration limit of the final reconstruction (default %d)", recon.DefaultMaxIter))
	fs.Uint64Var(&f.seed, "seed", 1, "seed of every random choice; the same seed gives the same image")
	fs.IntVar(&f.starts, "starts", 0, "number of starts at the final weight: the start image and seeded random images, keeping the lowest objective (default 1, and 3 when that one fits worse than the noise allows)")
	fs.BoolVar(&f.coarse, "coarse", false, "reconstruct on a half-resolution grid first and start from it")
	fs.BoolVar(&f.noAmp, "no-amp-first", false, "skip the first pass on amplitudes before phases are fitted")
	fs.IntVar(&f.workers, "workers", 0, "worker goroutines of the transform (default: number of CPUs); the image is the same for any number")
}

// registerFromModel adds -from-model to fs, which must already hold the
// options of register.
func (f *imageFlags) registerFromModel(fs *flag.FlagSet) {
	f.fs = fs
	fs.StringVar(&f.fromModel, "from-model", "", "model file (TOML as written by 'vcz fit -save-model', or the output of 'vcz fit -json') whose extent sets the default field of view and whose image is the default start")
}

// startGiven reports whether -start was given on the command line.
func (f *imageFlags) startGiven() bool {
	given := false
	if f.fs != nil {
		f.fs.Visit(func(fl *flag.Flag) { given = given || fl.Name == "start" })
	}
	return given
}

// readModelFile reads the model of -from-model: a TOML model file
// (model.ParseTOML) or the JSON object 'vcz fit -json' prints, whose
// "model" member is the fitted model in the compact form. Errors are one
// line naming the file.
func readModelFile(path string) (*model.Model, error) {
	src, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("-from-model: %v", err)
	}
	var m *model.Model
	if t := bytes.TrimSpace(src); len(t) > 0 && t[0] == '{' {
		var j struct {
			Model *string `json:"model"`
		}
		if err := json.Unmarshal(src, &j); err != nil {
			return nil, fmt.Errorf("-from-model %s: not a TOML model file, and as JSON: %v", path, err)
		}
		if j.Model == nil {
			return nil, fmt.Errorf("-from-model %s: JSON without a \"model\" member (want the output of 'vcz fit -json')", path)
		}
		if m, err = model.ParseCompact(*j.Model); err != nil {
			return nil, fmt.Errorf("-from-model %s: %v", path, err)
		}
	} else if m, err = model.ParseTOML(src, path); err != nil {
		return nil, fmt.Errorf("-from-model: %s", strings.ReplaceAll(err.Error(), "\n", " "))
	}
	return m, nil
}

// problem turns the flags into a reconstruction problem on data d.
func (f *imageFlags) problem(d *recon.Data) (recon.Problem, recon.Settings, error) {
	p := recon.Problem{Data: d}
	var s recon.Settings
	if f.n < 0 || f.n%2 != 0 {
		return p, s, fmt.Errorf("-n %d: the grid size must be a positive even number", f.n)
	}
	if f.pixel != "" {
		px, err := parseAngle(f.pixel)
		if err != nil || !(px > 0) {
			return p, s, fmt.Errorf("-pixel %q: want a positive angle such as 0.25mas", f.pixel)
		}
		p.GridOptions.Pixel = px
	}
	p.GridOptions.N = f.n
	var fromModel *model.Model
	if f.fromModel != "" {
		m, err := readModelFile(f.fromModel)
		if err != nil {
			return p, s, err
		}
		// The object's size is the diameter of the circle about the phase
		// centre that holds the model (model.Radius); a model without extent
		// (a centred point) leaves the size to the V² fit.
		fromModel = m
		p.GridOptions.ObjectSize = 2 * m.Radius() * recon.Mas
		p.GridOptions.ObjectSource = "model file " + filepath.Base(f.fromModel)
	}
	if f.fov != "" {
		fov, err := parseAngle(f.fov)
		if err != nil || !(fov > 0) {
			return p, s, fmt.Errorf("-fov %q: want a positive angle such as 12mas", f.fov)
		}
		if f.n > 0 && f.pixel != "" {
			return p, s, fmt.Errorf("-fov cannot be given with both -n and -pixel")
		}
		switch {
		case f.n > 0:
			p.GridOptions.Pixel = fov / float64(f.n)
		case f.pixel != "":
			n := int(math.Ceil(fov / p.GridOptions.Pixel))
			p.GridOptions.N = n + n%2
		default:
			// Keep the default pixel and set N from the field.
			ch, err := recon.ChooseGrid(d, recon.GridOptions{})
			if err != nil {
				return p, s, err
			}
			p.GridOptions.Pixel = ch.Pixel
			n := int(math.Ceil(fov / ch.Pixel))
			p.GridOptions.N = n + n%2
		}
	}
	if p.GridOptions.N > 2048 {
		return p, s, fmt.Errorf("grid of %d pixels per side is too large (at most 2048)", p.GridOptions.N)
	}
	terms, err := parseRegSpec(f.reg)
	if err != nil {
		return p, s, fmt.Errorf("-reg: %v", err)
	}
	f.usedRegs = terms
	prior, err := parsePrior(f.prior)
	if err != nil {
		return p, s, fmt.Errorf("-prior: %v", err)
	}
	if f.tvEps < 0 {
		return p, s, fmt.Errorf("-tv-eps %g must not be negative", f.tvEps)
	}
	// The fitted object size is known once the grid is chosen; Solve calls the
	// regularizer function after choosing it, so look it up lazily.
	var fitted float64
	fittedDone := false
	fittedSize := func() float64 {
		if !fittedDone {
			if ch, err := recon.ChooseGrid(d, p.GridOptions); err == nil {
				fitted = ch.Size
			}
			fittedDone = true
		}
		return fitted
	}
	p.Reg = regularizerFunc(terms, prior, f.tvEps, fittedSize)
	switch w := strings.ToLower(strings.TrimSpace(f.weight)); w {
	case "auto", "":
		p.Weight = 0
	default:
		x, err := strconv.ParseFloat(w, 64)
		if err != nil || !(x > 0) || math.IsInf(x, 0) {
			return p, s, fmt.Errorf("-weight %q: want a positive number or auto", f.weight)
		}
		p.Weight = x
	}
	if p.Start, err = parseStart(f.start); err != nil {
		return p, s, fmt.Errorf("-start: %v", err)
	}
	if fromModel != nil && !f.startGiven() {
		// Start from the model's image on the grid Solve will choose (the same
		// options give the same grid).
		ch, err := recon.ChooseGrid(d, p.GridOptions)
		if err != nil {
			return p, s, err
		}
		p.Start = recon.Start{Kind: recon.StartImage, Image: fromModel.Image(ch.N, ch.N, ch.Pixel), ImageN: ch.N, ImagePixel: ch.Pixel}
	}
	if f.support != "" {
		r, err := parseAngle(f.support)
		if err != nil || !(r > 0) {
			return p, s, fmt.Errorf("-support %q: want a positive radius such as 3mas", f.support)
		}
		p.Support = r
	}
	if f.weights != "" {
		if p.Terms.Weights, err = parseDataWeights(f.weights); err != nil {
			return p, s, fmt.Errorf("-data-weights: %v", err)
		}
	} else {
		for i := range p.Terms.Weights {
			p.Terms.Weights[i] = 1
		}
	}
	if f.sel.use != "" {
		if p.Terms.Use, err = parseTypes(f.sel.use); err != nil {
			return p, s, fmt.Errorf("-use: %v", err)
		}
	}
	if f.iter < 0 || f.starts < 0 || f.workers < 0 {
		return p, s, fmt.Errorf("-iter, -starts and -workers must not be negative")
	}
	s.MaxIter = f.iter
	s.Seed = f.seed
	s.Starts = f.starts
	s.CoarseToFine = f.coarse
	s.NoAmplitudeFirst = f.noAmp
	s.Workers = f.workers
	if s.Workers == 0 {
		s.Workers = runtime.GOMAXPROCS(0)
	}
	return p, s, nil
}

// parseDataWeights reads "vis2=1,t3phi=2".
func parseDataWeights(s string) (recon.Weights, error) {
	var w recon.Weights
	for i := range w {
		w[i] = 1
	}
	for _, part := range strings.Split(s, ",") {
		part = strings.TrimSpace(part)
		if part == "" {
			continue
		}
		name, val, ok := strings.Cut(part, "=")
		if !ok {
			return w, fmt.Errorf("%q: want TYPE=WEIGHT", part)
		}
		t, err := parseTypes(name)
		if err != nil {
			return w, err
		}
		x, err := strconv.ParseFloat(strings.TrimSpace(val), 64)
		if err != nil || !(x > 0) || math.IsInf(x, 0) {
			return w, fmt.Errorf("%q: the weight must be a positive number (leave a data type out with -use)", part)
		}
		for i, ty := range recon.DataTypes() {
			if t&ty != 0 {
				w[i] = x
			}
		}
	}
	return w, nil
}

// parseStart reads a start-image specification.
func parseStart(s string) (recon.Start, error) {
	var st recon.Start
	kind, rest, _ := strings.Cut(strings.TrimSpace(s), ":")
	args := []string{}
	if rest != "" {
		args = strings.Split(rest, ":")
	}
	size := func() error {
		if len(args) == 0 {
			return nil
		}
		a, err := parseAngle(args[0])
		if err != nil || !(a > 0) {
			return fmt.Errorf("%q: the size must be a positive angle such as 3mas", s)
		}
		st.Size = a
		return nil
	}
	switch strings.ToLower(kind) {
	case "", "auto":
		st.Kind = recon.StartAuto
	case "gauss", "gaussian":
		st.Kind = recon.StartGaussian
		return st, size()
	case "disc", "disk", "ud":
		st.Kind = recon.StartUniformDisc
		return st, size()
	case "ld":
		st.Kind = recon.StartLimbDarkened
		st.LimbDarkening = 0.5
		if err := size(); err != nil {
			return st, err
		}
		if len(args) > 1 {
			a, err := strconv.ParseFloat(args[1], 64)
			if err != nil || a < 0 || a > 1 {
				return st, fmt.Errorf("%q: the limb-darkening coefficient must be in [0, 1]", s)
			}
			st.LimbDarkening = a
		}
	case "flat":
		st.Kind = recon.StartFlat
	case "random":
		st.Kind = recon.StartRandom
	default:
		im, err := fitsimage.ReadFile(s)
		if err != nil {
			return st, err
		}
		if im.NX != im.NY || im.Planes > 1 {
			return st, fmt.Errorf("%s: start image must be a square 2-D image, not %d × %d × %d", s, im.NX, im.NY, max(im.Planes, 1))
		}
		st.Kind = recon.StartImage
		st.Image, st.ImageN, st.ImagePixel = im.Data, im.NX, im.Pixel
	}
	return st, nil
}
