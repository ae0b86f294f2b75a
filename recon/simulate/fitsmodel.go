package simulate

import (
	"fmt"
	"math"
	"strings"

	"vcz/io/fitsimage"
	"vcz/recon/model"
)

// LoadImageSky reads a FITS image (fitsimage.ReadFile: any pixel scale,
// WCS per CONVENTIONS.md) as an ImageSky. A cube contributes its first
// plane.
func LoadImageSky(path string) (ImageSky, error) {
	im, err := fitsimage.ReadFile(path)
	if err != nil {
		return ImageSky{}, err
	}
	if im.NX < 1 || im.NY < 1 || len(im.Data) < im.NX*im.NY {
		return ImageSky{}, fmt.Errorf("simulate: %s: image of %d×%d pixels holds %d values", path, im.NX, im.NY, len(im.Data))
	}
	return ImageSky{NX: im.NX, NY: im.NY, Pixel: im.Pixel, Data: im.Data[:im.NX*im.NY]}, nil
}

// IsImagePath reports whether spec names a FITS image by its extension
// (.fits, .fit, .fts, any case), the rule LoadSky uses.
func IsImagePath(spec string) bool {
	s := strings.ToLower(spec)
	return strings.HasSuffix(s, ".fits") || strings.HasSuffix(s, ".fit") || strings.HasSuffix(s, ".fts")
}

// LoadSky turns a command-line model argument into a Sky: a FITS image
// when IsImagePath(spec), otherwise a model file or inline model
// (model.Load). The analytic model is also returned (nil for images), for
// WriteModelImage.
func LoadSky(spec string) (Sky, *model.Model, error) {
	if IsImagePath(spec) {
		s, err := LoadImageSky(spec)
		if err != nil {
			return nil, nil, err
		}
		return s, nil, nil
	}
	m, err := model.Load(spec)
	if err != nil {
		return nil, nil, err
	}
	return ModelSky{Model: m}, m, nil
}

// WriteModelImage writes the analytic model m rasterised on an n×n grid
// of pixel radians (model.Model.Image, normalised to a total flux of 1)
// as a FITS image with the CONVENTIONS.md WCS, centred on the plan's
// target when p is not nil, so that a reconstruction can be compared with
// the truth pixel by pixel. DefaultImageGrid proposes n and pixel.
func WriteModelImage(path string, m *model.Model, n int, pixel float64, p *Plan) error {
	if n < 1 || !(pixel > 0) || math.IsInf(pixel, 0) {
		return fmt.Errorf("simulate: model image: grid of %d pixels of %g rad", n, pixel)
	}
	if err := m.Validate(); err != nil {
		return err
	}
	im := &fitsimage.Image{NX: n, NY: n, Pixel: pixel, Data: m.Image(n, n, pixel), Normalized: true,
		Cards: []fitsimage.Card{
			{Key: "HISTORY", Value: "Analytic model rasterised by vcz simulate: " + m.String()},
		}}
	if p != nil {
		im.RA, im.Dec, im.HasRADec = p.RA, p.Dec, true
		im.Cards = append(im.Cards, fitsimage.Card{Key: "OBJECT", Value: p.TargetName, Comment: "target name"})
	}
	return fitsimage.WriteFile(path, im)
}
