package runspec

import (
	"errors"
	"flag"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"
	"vcz/dataset"

	"vcz/recon"
	"vcz/regularizers"
)

// Group is a set of options, for registering the ones a command takes.
type Group uint

// The groups of options.
const (
	// Select is the data selection: -target, -wave, -mjd, -ins.
	Select Group = 1 << iota
	// Types is -use, the data types read and fitted.
	Types
	// Recon is the reconstruction: grid, regularizers, weight, prior, start, support,
	// data weights, iterations, seed, starts, coarse, no-amp-first and workers.
	Recon
	// Model is -from-model.
	Model
	// Cube is the polychromatic reconstruction: -channels, -spectral, -star and
	// -star-index.
	Cube
	// All is every option, the options of `vcz image`.
	All = Select | Types | Recon | Model | Cube
)

// An OptionError is an unknown option or a value an option refuses.
type OptionError struct {
	// Option is the option as written: "-pixel" for a flag, "pixel" for a job-file key or
	// a line of the canonical text.
	Option string
	// Value is the text given ("" when the option is unknown).
	Value string
	// Err says what is wrong; its text names the option, e.g.
	// `-pixel "x": want a positive angle such as 0.25mas`.
	Err error
}

func (e *OptionError) Error() string { return e.Err.Error() }
func (e *OptionError) Unwrap() error { return e.Err }

// ErrUnknownOption is the error of an OptionError for a name that is no option.
var ErrUnknownOption = errors.New("unknown option")

// flagKind is the flag type an option is registered with, which sets how -help shows it
// and how the flag package checks its text.
type flagKind int

const (
	stringFlag flagKind = iota
	intFlag
	uintFlag
	floatFlag
	boolFlag
)

// An option is one setting of a Spec: its flag and job-file key (the same name), its help,
// and the functions that read its text into a Spec and write it back. The same option
// serves flags, job files and the canonical text.
type option struct {
	name  string
	group Group
	kind  flagKind
	def   string // the default shown by -help, as the flag's text
	usage string
	// noText leaves the option out of the canonical text (it does not change the image).
	noText bool
	// parse reads text into s; the error names the option as name ("-pixel" or "pixel").
	// A text meaning the default leaves the field at its zero value.
	parse func(s *Spec, name, text string) error
	// format writes the field's text, "" for the default.
	format func(s *Spec) string
}

// options is the table of options, in the order of the canonical text.
var options = []option{
	{name: "target", group: Select, usage: "keep only this target (name, or TARGET_ID)",
		parse:  func(s *Spec, _, text string) error { s.Target = text; return nil },
		format: func(s *Spec) string { return s.Target }},
	{name: "wave", group: Select, usage: "keep channels in this wavelength range, e.g. 1.5um:1.8um (units nm, um, m)",
		parse: func(s *Spec, name, text string) error {
			lo, hi, err := parseOptRange(text, ParseWavelength)
			if err != nil {
				return fmt.Errorf("%s %q: %v", name, text, err)
			}
			s.WaveMin, s.WaveMax = lo, hi
			return nil
		},
		format: func(s *Spec) string { return formatRange(s.WaveMin, s.WaveMax, formatWavelength) }},
	{name: "mjd", group: Select, usage: "keep rows in this MJD range, e.g. 60100.0:60100.9 (either side may be empty)",
		parse: func(s *Spec, name, text string) error {
			lo, hi, err := parseOptRange(text, parseFinite)
			if err != nil {
				return fmt.Errorf("%s %q: %v", name, text, err)
			}
			s.MJDMin, s.MJDMax = lo, hi
			return nil
		},
		format: func(s *Spec) string { return formatRange(s.MJDMin, s.MJDMax, formatNumber) }},
	{name: "ins", group: Select, usage: "keep only these instruments (INSNAME, comma-separated)",
		parse: func(s *Spec, _, text string) error {
			s.Instruments = nil
			for _, n := range strings.Split(text, ",") {
				if n = strings.TrimSpace(n); n != "" {
					s.Instruments = append(s.Instruments, n)
				}
			}
			return nil
		},
		format: func(s *Spec) string { return strings.Join(s.Instruments, ",") }},
	{name: "use", group: Types,
		usage: "data types to fit, comma-separated from " + strings.Join(typeNames(), ", ") + " (default: all present)",
		parse: func(s *Spec, name, text string) error {
			s.Use = 0
			if text == "" {
				return nil
			}
			t, err := ParseTypes(text)
			if err != nil {
				return fmt.Errorf("%s %q: %v", name, text, err)
			}
			s.Use = t
			return nil
		},
		format: func(s *Spec) string { return formatTypes(s.Use) }},

	{name: "n", group: Recon, kind: intFlag, def: "0", usage: "grid size in pixels per side (even; default: chosen from the data)",
		parse: func(s *Spec, name, text string) error {
			n, err := parseInt(name, text)
			if err != nil {
				return err
			}
			if n != 0 && (n < minGrid || n > maxGrid || n%2 != 0) {
				return fmt.Errorf("%s %d: the grid size must be an even number from %d to %d", name, n, minGrid, maxGrid)
			}
			s.Grid = n
			return nil
		},
		format: func(s *Spec) string { return formatInt(s.Grid) }},
	{name: "pixel", group: Recon, usage: "pixel size with a unit, e.g. 0.25mas or 250uas (default: a quarter of λmin/(2·Bmax))",
		parse: func(s *Spec, name, text string) error {
			return parsePositiveAngle(&s.Pixel, name, text, "a positive angle such as 0.25mas")
		},
		format: func(s *Spec) string { return formatAngle(s.Pixel) }},
	{name: "fov", group: Recon, usage: "field of view with a unit, e.g. 12mas (default: three times the fitted object size)",
		parse: func(s *Spec, name, text string) error {
			return parsePositiveAngle(&s.FOV, name, text, "a positive angle such as 12mas")
		},
		format: func(s *Spec) string { return formatAngle(s.FOV) }},
	{name: "reg", group: Recon, def: "tv",
		usage: "regularizer(s): " + regularizers.NameList() + "; several as a list with weights relative to the first, e.g. mem,compact:0.1",
		parse: func(s *Spec, name, text string) error {
			terms, err := regularizers.ParseList(text)
			if err != nil {
				return fmt.Errorf("%s: %v", name, err)
			}
			if isDefaultReg(terms) {
				terms = nil
			}
			s.Regularizers = terms
			return nil
		},
		format: func(s *Spec) string {
			if isDefaultReg(s.Regularizers) {
				return ""
			}
			return regularizers.FormatList(s.Regularizers)
		}},
	{name: "weight", group: Recon, def: "auto",
		usage: "regularization weight μ, or auto (chosen from the data: χ²ᵣ between the floor of the least-regularized images and its expected value, about 1)",
		parse: func(s *Spec, name, text string) error {
			switch w := strings.ToLower(strings.TrimSpace(text)); w {
			case "auto", "":
				s.Weight = 0
			default:
				x, err := strconv.ParseFloat(w, 64)
				if err != nil || !(x > 0) || math.IsInf(x, 0) {
					return fmt.Errorf("%s %q: want a positive number or auto", name, text)
				}
				s.Weight = x
			}
			return nil
		},
		format: func(s *Spec) string { return formatFloat(s.Weight) }},
	{name: "prior", group: Recon, def: "flat", usage: "prior image of mem and priordist: flat, gauss[:FWHM], disc[:DIAMETER] or a FITS file",
		parse: func(s *Spec, name, text string) error {
			p, err := parsePrior(text)
			if err != nil {
				return fmt.Errorf("%s: %v", name, err)
			}
			s.Prior = p
			return nil
		},
		format: func(s *Spec) string { return formatPrior(s.Prior) }},
	{name: "from-model", group: Model,
		usage:  "model file (TOML as written by 'vcz fit -save-model', or the output of 'vcz fit -json') whose extent sets the default field of view and whose image is the default start",
		parse:  func(s *Spec, _, text string) error { s.FromModel = text; return nil },
		format: func(s *Spec) string { return s.FromModel }},
	{name: "start", group: Recon, def: "auto",
		usage: "start image: auto (best of a disc and a Gaussian fitted to V²), gauss[:FWHM], disc[:DIAMETER], ld[:DIAMETER[:COEF]], flat, random, or a FITS file",
		parse: func(s *Spec, name, text string) error {
			st, err := parseStart(text)
			if err != nil {
				return fmt.Errorf("%s: %v", name, err)
			}
			s.Start = st
			return nil
		},
		format: func(s *Spec) string { return formatStart(s.Start) }},
	{name: "support", group: Recon, usage: "hold pixels farther than this radius from the centre at zero, e.g. 3mas",
		parse: func(s *Spec, name, text string) error {
			return parsePositiveAngle(&s.Support, name, text, "a positive radius such as 3mas")
		},
		format: func(s *Spec) string { return formatAngle(s.Support) }},
	{name: "tv-eps", group: Recon, kind: floatFlag, def: "0", usage: "gradient size below which total variation acts quadratically, as a fraction of the mean pixel value (default 0.01)",
		parse: func(s *Spec, name, text string) error {
			x, err := strconv.ParseFloat(strings.TrimSpace(text), 64)
			if err != nil {
				return fmt.Errorf("%s %q: want a number", name, text)
			}
			if math.IsNaN(x) || math.IsInf(x, 0) {
				return fmt.Errorf("%s %q: want a finite number", name, text)
			}
			if x < 0 {
				return fmt.Errorf("%s %g must not be negative", name, x)
			}
			s.TVEps = x
			return nil
		},
		format: func(s *Spec) string { return formatFloat(s.TVEps) }},
	{name: "data-weights", group: Recon, usage: "weights of the data types in χ², e.g. vis2=1,t3phi=2 (default 1 each)",
		parse: func(s *Spec, name, text string) error {
			w, err := parseDataWeights(text)
			if err != nil {
				return fmt.Errorf("%s: %v", name, err)
			}
			s.DataWeights = w
			return nil
		},
		format: func(s *Spec) string { return formatDataWeights(s.DataWeights) }},
	{name: "iter", group: Recon, kind: intFlag, def: "0", usage: fmt.Sprintf("iteration limit of the final reconstruction (default %d)", recon.DefaultMaxIter),
		parse:  func(s *Spec, name, text string) error { return parseCount(&s.Iterations, name, text) },
		format: func(s *Spec) string { return formatInt(s.Iterations) }},
	{name: "seed", group: Recon, kind: uintFlag, def: "1", usage: "seed of every random choice; the same seed gives the same image",
		parse: func(s *Spec, name, text string) error {
			text = strings.TrimSpace(text)
			x, err := strconv.ParseUint(text, 0, 64)
			switch {
			case err != nil && strings.HasPrefix(text, "-"):
				return fmt.Errorf("%s %s must not be negative", name, text)
			case err != nil:
				return fmt.Errorf("%s %q: want a whole number", name, text)
			case x == defaultSeed:
				s.Seed = nil
			default:
				s.Seed = &x
			}
			return nil
		},
		format: func(s *Spec) string {
			if s.Seed == nil || *s.Seed == defaultSeed {
				return ""
			}
			return strconv.FormatUint(*s.Seed, 10)
		}},
	{name: "starts", group: Recon, kind: intFlag, def: "0",
		usage:  "number of starts at the final weight: the start image and seeded random images, keeping the lowest objective (default 1, and 3 when that one fits worse than the noise allows)",
		parse:  func(s *Spec, name, text string) error { return parseCount(&s.Starts, name, text) },
		format: func(s *Spec) string { return formatInt(s.Starts) }},
	{name: "coarse", group: Recon, kind: boolFlag, def: "false", usage: "reconstruct on a half-resolution grid first and start from it",
		parse:  func(s *Spec, name, text string) error { return parseBool(&s.Coarse, name, text) },
		format: func(s *Spec) string { return formatBool(s.Coarse) }},
	{name: "no-amp-first", group: Recon, kind: boolFlag, def: "false", usage: "skip the first pass on amplitudes before phases are fitted",
		parse:  func(s *Spec, name, text string) error { return parseBool(&s.NoAmplitudeFirst, name, text) },
		format: func(s *Spec) string { return formatBool(s.NoAmplitudeFirst) }},
	{name: "smearing", group: Recon, def: "auto",
		usage: "bandwidth smearing: auto (each channel averaged over its band where that exceeds the noise), on or off",
		parse: func(s *Spec, name, text string) error {
			m, err := recon.ParseSmearing(text)
			if err != nil {
				return fmt.Errorf("%s: %v", name, err)
			}
			s.Smearing = m
			return nil
		},
		format: func(s *Spec) string {
			if s.Smearing == recon.SmearAuto {
				return ""
			}
			return s.Smearing.String()
		}},
	{name: "channels", group: Cube, def: "1",
		usage: "image cube over wavelength: all (one plane per channel), K (K groups of adjacent channels) or a list of channel ranges such as 1-4,5-8 (channels numbered by increasing wavelength); 1 is one gray image",
		parse: func(s *Spec, name, text string) error {
			c, err := recon.ParseChannels(text)
			if err != nil {
				return fmt.Errorf("%s %q: %v", name, text, err)
			}
			s.Channels = c
			return nil
		},
		format: func(s *Spec) string { return s.Channels.String() }},
	{name: "spectral", group: Cube, def: "smooth",
		usage: "regularizer across the planes of a cube: smooth (quadratic, along wavelength), joint (shared support, ℓ2,1) or none, with :FACTOR on its automatic weight, e.g. smooth:3",
		parse: func(s *Spec, name, text string) error {
			k, f, err := recon.ParseSpectral(strings.TrimSpace(text))
			if err != nil {
				return fmt.Errorf("%s: %v", name, err)
			}
			s.Spectral, s.SpectralFactor = k, f
			if f == 1 {
				s.SpectralFactor = 0
			}
			return nil
		},
		format: func(s *Spec) string {
			if s.Spectral == recon.SpectralSmooth && (s.SpectralFactor == 0 || s.SpectralFactor == 1) {
				return ""
			}
			if s.SpectralFactor == 0 || s.SpectralFactor == 1 {
				return s.Spectral.String()
			}
			return s.Spectral.String() + ":" + formatFloat(s.SpectralFactor)
		}},
	{name: "star", group: Cube,
		usage: "with -channels: fit a star of power-law spectrum (-star-index) plus one image of its environment with its own spectral index; point (unresolved) or the star's uniform-disc diameter, e.g. 0.8mas",
		parse: func(s *Spec, name, text string) error {
			switch t := strings.TrimSpace(text); t {
			case "":
				s.Star = nil
			case "point":
				s.Star = &Star{}
			default:
				var d float64
				if err := parsePositiveAngle(&d, name, t, "point or a positive diameter such as 0.8mas"); err != nil {
					return err
				}
				s.Star = &Star{Diameter: d}
			}
			return nil
		},
		format: func(s *Spec) string {
			switch {
			case s.Star == nil:
				return ""
			case s.Star.Diameter == 0:
				return "point"
			}
			return formatAngle(s.Star.Diameter)
		}},
	{name: "star-index", group: Cube, def: "-4",
		usage: "spectral index of the star of -star: its flux goes as λ to this power (-4: Rayleigh–Jeans)",
		parse: func(s *Spec, name, text string) error {
			x, err := strconv.ParseFloat(strings.TrimSpace(text), 64)
			if err != nil || math.IsInf(x, 0) || math.Abs(x) > 20 {
				return fmt.Errorf("%s %q: want a number between -20 and 20", name, text)
			}
			s.StarIndex = nil
			if x != DefaultStarIndex {
				s.StarIndex = &x
			}
			return nil
		},
		format: func(s *Spec) string {
			if s.StarIndex == nil {
				return ""
			}
			return strconv.FormatFloat(*s.StarIndex, 'g', -1, 64)
		}},
	{name: "workers", group: Recon, kind: intFlag, def: "0", noText: true,
		usage:  "worker goroutines of the transform, and planes of a cube fitted at once (default: number of CPUs); the image is the same for any number",
		parse:  func(s *Spec, name, text string) error { return parseCount(&s.Workers, name, text) },
		format: func(s *Spec) string { return formatInt(s.Workers) }},
}

// lookup returns the option of that name, or nil.
func lookup(name string) *option {
	for i := range options {
		if options[i].name == name {
			return &options[i]
		}
	}
	return nil
}

// isDefaultReg reports whether terms is the default list, tv alone.
func isDefaultReg(terms []regularizers.NamedTerm) bool {
	return len(terms) == 0 || len(terms) == 1 && terms[0] == regularizers.NamedTerm{Name: "tv", Rel: 1}
}

// parseOptRange is ParseRange with "" for no limit on either side.
func parseOptRange(text string, parse func(string) (float64, error)) (lo, hi float64, err error) {
	if text == "" {
		return 0, 0, nil
	}
	return ParseRange(text, parse)
}

func parsePositiveAngle(dst *float64, name, text, want string) error {
	if text == "" {
		*dst = 0
		return nil
	}
	a, err := ParseAngle(text)
	if err != nil {
		return fmt.Errorf("%s %q: want %s: %v", name, text, want, err)
	}
	if !(a > 0) {
		return fmt.Errorf("%s %q: want %s", name, text, want)
	}
	*dst = a
	return nil
}

// parseFinite reads a finite number; NaN and infinities are refused.
func parseFinite(text string) (float64, error) {
	x, err := strconv.ParseFloat(strings.TrimSpace(text), 64)
	if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
		return 0, fmt.Errorf("%q is not a finite number", text)
	}
	return x, nil
}

// parseInt reads an integer as the flag package does (base prefixes allowed).
func parseInt(name, text string) (int, error) {
	n, err := strconv.ParseInt(strings.TrimSpace(text), 0, strconv.IntSize)
	if err != nil {
		return 0, fmt.Errorf("%s %q: want a whole number", name, text)
	}
	return int(n), nil
}

// parseCount reads -iter, -starts or -workers.
func parseCount(dst *int, name, text string) error {
	n, err := parseInt(name, text)
	if err != nil {
		return err
	}
	if n < 0 {
		return fmt.Errorf("%s %d must not be negative", name, n)
	}
	*dst = n
	return nil
}

func parseBool(dst *bool, name, text string) error {
	b, err := strconv.ParseBool(strings.TrimSpace(text))
	if err != nil {
		return fmt.Errorf("%s %q: want true or false", name, text)
	}
	*dst = b
	return nil
}

func formatInt(n int) string {
	if n == 0 {
		return ""
	}
	return strconv.Itoa(n)
}

func formatFloat(x float64) string {
	if x == 0 {
		return ""
	}
	return strconv.FormatFloat(x, 'g', -1, 64)
}

func formatBool(b bool) string {
	if !b {
		return ""
	}
	return "true"
}

// parsePrior reads "flat", "gauss[:FWHM]", "disc[:DIAMETER]" or a FITS path.
func parsePrior(s string) (Prior, error) {
	var p Prior
	kind, arg, has := strings.Cut(strings.TrimSpace(s), ":")
	switch k := strings.ToLower(kind); k {
	case "", "flat":
		return p, nil
	case "gauss", "gaussian", "disc", "disk":
		p.Kind = PriorGaussian
		if k == "disc" || k == "disk" {
			p.Kind = PriorDisc
		}
		if has {
			a, err := ParseAngle(arg)
			if err != nil || !(a > 0) {
				return p, fmt.Errorf("prior %q: size must be a positive angle such as 3mas", s)
			}
			p.Size = a
		}
		return p, nil
	}
	return Prior{Kind: PriorFile, File: s}, nil
}

func formatPrior(p Prior) string {
	kind := ""
	switch p.Kind {
	case PriorFlat:
		return ""
	case PriorGaussian:
		kind = "gauss"
	case PriorDisc:
		kind = "disc"
	case PriorFile:
		return p.File
	default:
		return fmt.Sprintf("kind%d", p.Kind)
	}
	if p.Size != 0 {
		kind += ":" + formatAngle(p.Size)
	}
	return kind
}

// defaultLimbDarkening is the coefficient of "ld" without one.
const defaultLimbDarkening = 0.5

// parseStart reads a start-image specification.
func parseStart(s string) (Start, error) {
	var st Start
	kind, rest, _ := strings.Cut(strings.TrimSpace(s), ":")
	args := []string{}
	if rest != "" {
		args = strings.Split(rest, ":")
	}
	size := func() error {
		if len(args) == 0 || args[0] == "" {
			return nil
		}
		a, err := ParseAngle(args[0])
		if err != nil || !(a > 0) {
			return fmt.Errorf("%q: the size must be a positive angle such as 3mas", s)
		}
		st.Size = a
		return nil
	}
	switch strings.ToLower(kind) {
	case "", "auto":
	case "gauss", "gaussian":
		st.Kind = StartGaussian
		return st, size()
	case "disc", "disk", "ud":
		st.Kind = StartDisc
		return st, size()
	case "ld":
		st.Kind = StartLimbDarkened
		st.LimbDarkening = defaultLimbDarkening
		if err := size(); err != nil {
			return st, err
		}
		if len(args) > 1 {
			a, err := strconv.ParseFloat(args[1], 64)
			if err != nil || !(a >= 0) || a > 1 {
				return st, fmt.Errorf("%q: the limb-darkening coefficient must be in [0, 1]", s)
			}
			st.LimbDarkening = a
		}
	case "flat":
		st.Kind = StartFlat
	case "random":
		st.Kind = StartRandom
	case "model":
		st.Kind = StartModel
	default:
		st = Start{Kind: StartFile, File: s}
	}
	return st, nil
}

func formatStart(st Start) string {
	size := func(kind string) string {
		if st.Size == 0 {
			return kind
		}
		return kind + ":" + formatAngle(st.Size)
	}
	switch st.Kind {
	case StartAuto:
		return ""
	case StartGaussian:
		return size("gauss")
	case StartDisc:
		return size("disc")
	case StartLimbDarkened:
		if st.LimbDarkening == defaultLimbDarkening {
			return size("ld")
		}
		return "ld:" + formatAngle(st.Size) + ":" + strconv.FormatFloat(st.LimbDarkening, 'g', -1, 64)
	case StartFlat:
		return "flat"
	case StartRandom:
		return "random"
	case StartFile:
		return st.File
	case StartModel:
		return "model"
	}
	return fmt.Sprintf("kind%d", st.Kind)
}

// parseDataWeights reads "vis2=1,t3phi=2"; a weight of 1 is kept as 0, the default.
func parseDataWeights(s string) (recon.Weights, error) {
	var w recon.Weights
	for _, part := range strings.Split(s, ",") {
		part = strings.TrimSpace(part)
		if part == "" {
			continue
		}
		name, val, ok := strings.Cut(part, "=")
		if !ok {
			return w, fmt.Errorf("%q: want TYPE=WEIGHT", part)
		}
		t, err := ParseTypes(name)
		if err != nil {
			return w, err
		}
		x, err := strconv.ParseFloat(strings.TrimSpace(val), 64)
		if err != nil || !(x > 0) || math.IsInf(x, 0) {
			return w, fmt.Errorf("%q: the weight must be a positive number (leave a data type out with -use)", part)
		}
		if x == 1 {
			x = 0
		}
		for i, ty := range dataset.DataTypes() {
			if t&ty != 0 {
				w[i] = x
			}
		}
	}
	return w, nil
}

func formatDataWeights(w recon.Weights) string {
	var parts []string
	for i, ty := range dataset.DataTypes() {
		if w[i] != 0 && w[i] != 1 {
			parts = append(parts, ty.String()+"="+strconv.FormatFloat(w[i], 'g', -1, 64))
		}
	}
	return strings.Join(parts, ",")
}

// set applies the options given as text, by name, in the order of the table; prefix goes
// before the name in errors ("-" for flags). With user set, a model file given without a
// start makes the model's image the start, as `vcz image -from-model` does.
func (s *Spec) set(given map[string]string, prefix string, user bool) error {
	for i := range options {
		o := &options[i]
		text, ok := given[o.name]
		if !ok {
			continue
		}
		if err := o.parse(s, prefix+o.name, text); err != nil {
			return &OptionError{Option: prefix + o.name, Value: text, Err: err}
		}
	}
	if _, hasStart := given["start"]; user && !hasStart && given["from-model"] != "" {
		s.Start = Start{Kind: StartModel}
	}
	return nil
}

// Set sets one option from its text as the flag -name would, e.g. s.Set("weight", "1e4").
func (s *Spec) Set(name, text string) error {
	if lookup(name) == nil {
		return &OptionError{Option: "-" + name, Err: fmt.Errorf("%w -%s", ErrUnknownOption, name)}
	}
	return s.set(map[string]string{name: text}, "-", false)
}

// SetTable sets the options of a job-file table, decoded TOML whose keys are the flag
// names and whose values are strings, integers, floats or booleans (their text is read as
// the flag's). Keys outside the groups g are *OptionErrors wrapping ErrUnknownOption; the
// first one in the order of the names is reported. Errors name the key without a dash.
func (s *Spec) SetTable(table map[string]any, g Group) error {
	names := make([]string, 0, len(table))
	for k := range table {
		names = append(names, k)
	}
	slices.Sort(names)
	given := map[string]string{}
	for _, k := range names {
		if o := lookup(k); o == nil || o.group&g == 0 {
			return &OptionError{Option: k, Err: fmt.Errorf("%w %s", ErrUnknownOption, k)}
		}
		switch v := table[k].(type) {
		case string:
			given[k] = v
		case int64:
			given[k] = strconv.FormatInt(v, 10)
		case float64:
			given[k] = strconv.FormatFloat(v, 'g', -1, 64)
		case bool:
			given[k] = strconv.FormatBool(v)
		default:
			return &OptionError{Option: k, Value: fmt.Sprint(v), Err: fmt.Errorf("%s: want a string, number or boolean, not %v", k, v)}
		}
	}
	return s.set(given, "", true)
}

// Flags are the options registered on a flag set.
type Flags struct {
	fs    *flag.FlagSet
	names map[string]bool
}

// RegisterFlags registers the options of the groups g on fs, except those named, with
// their help and defaults; Flags.Spec reads them after fs.Parse.
func RegisterFlags(fs *flag.FlagSet, g Group, except ...string) *Flags {
	f := &Flags{fs: fs, names: map[string]bool{}}
	for _, o := range options {
		if o.group&g == 0 || slices.Contains(except, o.name) {
			continue
		}
		f.names[o.name] = true
		switch o.kind {
		case stringFlag:
			fs.String(o.name, o.def, o.usage)
		case intFlag:
			n, _ := strconv.Atoi(o.def)
			fs.Int(o.name, n, o.usage)
		case uintFlag:
			n, _ := strconv.ParseUint(o.def, 10, 64)
			fs.Uint64(o.name, n, o.usage)
		case floatFlag:
			x, _ := strconv.ParseFloat(o.def, 64)
			fs.Float64(o.name, x, o.usage)
		case boolFlag:
			fs.Bool(o.name, o.def == "true", o.usage)
		}
	}
	return f
}

// Spec returns the Spec of the options given on the command line, the others at their
// defaults.
func (f *Flags) Spec() (Spec, error) {
	var s Spec
	err := f.Apply(&s)
	return s, err
}

// Apply sets in s the options given on the command line and leaves the others.
func (f *Flags) Apply(s *Spec) error {
	given := map[string]string{}
	f.fs.Visit(func(fl *flag.Flag) {
		if f.names[fl.Name] {
			given[fl.Name] = fl.Value.String()
		}
	})
	return s.set(given, "-", true)
}

// String is the canonical text of s: one line "name=value" for each option whose value is
// not the default, in a fixed order, names as the flags'. The worker count is left out, as
// the image does not depend on it; a value with a line break, a leading quote or blanks at
// either end is written as a Go string literal. Equal images come from equal texts: the
// default Spec gives "", and Parse reads the text back.
func (s Spec) String() string {
	var b strings.Builder
	for _, o := range options {
		if o.noText {
			continue
		}
		v := o.format(&s)
		if v == "" {
			continue
		}
		if strings.ContainsAny(v, "\r\n") || strings.HasPrefix(v, `"`) || strings.TrimSpace(v) != v {
			v = strconv.Quote(v)
		}
		b.WriteString(o.name)
		b.WriteByte('=')
		b.WriteString(v)
		b.WriteByte('\n')
	}
	return b.String()
}

// Parse reads the canonical text of Spec.String (and any option given as a line
// "name=value", workers included) into a Spec. Blank lines are skipped; an unknown or
// repeated name and a bad value are errors naming the line.
func Parse(text string) (Spec, error) {
	var s Spec
	given := map[string]string{}
	for i, line := range strings.Split(text, "\n") {
		line = strings.TrimSuffix(line, "\r")
		if strings.TrimSpace(line) == "" {
			continue
		}
		name, v, ok := strings.Cut(line, "=")
		switch {
		case !ok:
			return s, fmt.Errorf("line %d: want name=value, not %q", i+1, line)
		case lookup(name) == nil:
			return s, &OptionError{Option: name, Err: fmt.Errorf("line %d: %w %s", i+1, ErrUnknownOption, name)}
		}
		if _, dup := given[name]; dup {
			return s, fmt.Errorf("line %d: %s given twice", i+1, name)
		}
		if strings.HasPrefix(v, `"`) {
			u, err := strconv.Unquote(v)
			if err != nil {
				return s, fmt.Errorf("line %d: %s: bad quoted value %s", i+1, name, v)
			}
			v = u
		}
		given[name] = v
	}
	return s, s.set(given, "", false)
}
