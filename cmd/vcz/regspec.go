package main

import (
	"fmt"
	"strconv"
	"strings"

	"vcz/io/fitsimage"
	"vcz/recon"
	"vcz/regularizers"
)

// regNames are the regularizers a user can name, with one line each for help.
var regNames = []struct{ name, about string }{
	{"mem", "maximum entropy relative to the prior (Skilling & Bryan 1984)"},
	{"tv", "edge-preserving total variation (Rudin, Osher & Fatemi 1992)"},
	{"smooth", "quadratic smoothness (Tikhonov)"},
	{"compact", "quadratic penalty growing with distance from the centre"},
	{"priordist", "quadratic distance to the prior image"},
}

// regTerm is one regularizer of a -reg list with its weight relative to the
// first one of the list.
type regTerm struct {
	name string
	rel  float64
}

// parseRegSpec reads a list such as "tv" or "mem,compact:0.1": names from
// regNames, each optionally followed by ":WEIGHT", its weight relative to
// the first term (the first term's weight is 1; the overall weight is set
// with -weight).
func parseRegSpec(s string) ([]regTerm, error) {
	var terms []regTerm
	for _, part := range strings.Split(s, ",") {
		part = strings.TrimSpace(part)
		if part == "" {
			continue
		}
		name, w, hasW := strings.Cut(part, ":")
		name = strings.ToLower(strings.TrimSpace(name))
		known := false
		for _, r := range regNames {
			known = known || r.name == name
		}
		if !known {
			return nil, fmt.Errorf("unknown regularizer %q (use %s)", name, regList())
		}
		t := regTerm{name: name, rel: 1}
		if hasW {
			x, err := strconv.ParseFloat(strings.TrimSpace(w), 64)
			if err != nil || !(x > 0) {
				return nil, fmt.Errorf("regularizer %s: relative weight %q must be a positive number", name, w)
			}
			if len(terms) == 0 && x != 1 {
				return nil, fmt.Errorf("regularizer %s: the first term's weight is 1 by definition; set the overall weight with -weight", name)
			}
			t.rel = x
		}
		terms = append(terms, t)
	}
	if len(terms) == 0 {
		return nil, fmt.Errorf("no regularizer named")
	}
	return terms, nil
}

func regList() string {
	var names []string
	for _, r := range regNames {
		names = append(names, r.name)
	}
	return strings.Join(names, ", ")
}

// regLabel is the human-readable form of a -reg list, e.g. "mem + 0.1·compact".
func regLabel(terms []regTerm) string {
	var parts []string
	for i, t := range terms {
		if i == 0 || t.rel == 1 {
			parts = append(parts, t.name)
		} else {
			parts = append(parts, fmt.Sprintf("%g·%s", t.rel, t.name))
		}
	}
	return strings.Join(parts, " + ")
}

// priorSpec is a prior image: flat, a Gaussian, a uniform disc or a FITS file.
type priorSpec struct {
	kind string  // "flat", "gauss", "disc", "file"
	size float64 // FWHM or diameter (rad); 0 = from the grid choice
	img  *fitsimage.Image
	text string
}

// parsePrior reads "flat", "gauss[:FWHM]", "disc[:DIAMETER]" or a FITS path.
func parsePrior(s string) (priorSpec, error) {
	p := priorSpec{text: s}
	kind, arg, has := strings.Cut(strings.TrimSpace(s), ":")
	switch strings.ToLower(kind) {
	case "", "flat":
		p.kind = "flat"
		return p, nil
	case "gauss", "gaussian", "disc", "disk":
		p.kind = strings.ToLower(kind)[:4]
		if p.kind == "disk" {
			p.kind = "disc"
		}
		if p.kind == "gaus" {
			p.kind = "gauss"
		}
		if has {
			a, err := parseAngle(arg)
			if err != nil || !(a > 0) {
				return p, fmt.Errorf("prior %q: size must be a positive angle such as 3mas", s)
			}
			p.size = a
		}
		return p, nil
	}
	im, err := fitsimage.ReadFile(s)
	if err != nil {
		return p, err
	}
	p.kind, p.img = "file", im
	return p, nil
}

// image returns the prior on grid g, normalised to unit flux. size is the
// object size fitted by the grid choice, used when the spec gives none.
func (p priorSpec) image(g recon.Grid, fitted float64) ([]float64, error) {
	n := g.N
	size := p.size
	if size == 0 {
		size = fitted
	}
	if size == 0 {
		size = float64(n) * g.Pixel / 4
	}
	switch p.kind {
	case "gauss":
		return regularizers.GaussianPrior(n, n, size/g.Pixel, 1, 0)
	case "disc":
		return regularizers.DiscPrior(n, n, size/g.Pixel, 1, 0)
	case "file":
		if p.img.Planes > 1 {
			return nil, fmt.Errorf("prior %s: a cube of %d planes; give a 2-D image", p.text, p.img.Planes)
		}
		dst := make([]float64, n*n)
		src := p.img.Data
		if p.img.NX != p.img.NY {
			return nil, fmt.Errorf("prior %s: %d × %d pixels; only square images can be resampled", p.text, p.img.NX, p.img.NY)
		}
		recon.Resample(dst, n, g.Pixel, src, p.img.NX, p.img.Pixel)
		return regularizers.ImagePrior(dst, 1, 0)
	default:
		return regularizers.FlatPrior(n, n, 1)
	}
}

// regularizerFunc builds the recon.RegularizerFunc of a -reg list.
func regularizerFunc(terms []regTerm, prior priorSpec, tvEps float64, fitted func() float64) recon.RegularizerFunc {
	return func(g recon.Grid) (recon.Regularizer, error) {
		n := g.N
		var priorImg []float64
		needPrior := false
		for _, t := range terms {
			needPrior = needPrior || t.name == "mem" || t.name == "priordist"
		}
		if needPrior {
			var err error
			if priorImg, err = prior.image(g, fitted()); err != nil {
				return nil, err
			}
		}
		sum := &regularizers.Sum{}
		for _, t := range terms {
			var r regularizers.Regularizer
			switch t.name {
			case "mem":
				r = &regularizers.MaxEnt{NX: n, NY: n, Prior: priorImg}
			case "tv":
				r = &regularizers.TV{NX: n, NY: n, Eps: tvEps}
			case "smooth":
				r = &regularizers.Smooth{NX: n, NY: n}
			case "compact":
				r = &regularizers.Compact{NX: n, NY: n}
			case "priordist":
				r = &regularizers.PriorDistance{NX: n, NY: n, Prior: priorImg}
			}
			if len(terms) == 1 {
				return r, nil
			}
			sum.Terms = append(sum.Terms, regularizers.Term{Weight: t.rel, R: r})
		}
		return sum, nil
	}
}
