package output

import (
	"fmt"
	"image/color"

	"vcz/io/fitsimage"
	"vcz/io/preview"
	"vcz/recon"
)

// BootstrapMaps are the per-pixel maps of a bootstrap of a reconstruction (workflow.Bootstrap),
// on the grid of the run's image, with what the header says of them.
type BootstrapMaps struct {
	Mean, Std, Significance []float64
	Replicates, Good        int    // replicates run, and those that gave an image
	NotConverged            int    // replicates stopped at the iteration limit
	Seed                    uint64 // of the resampling
	Unit                    string // "exposure" or "baseline"
	Units                   int    // resampling units of the data
	Aligned                 bool   // replicates moved onto the full data's image
}

// BootstrapPaths are the files WriteBootstrap writes.
type BootstrapPaths struct {
	Mean         string `json:"mean"`
	Std          string `json:"std"`
	Significance string `json:"significance"`
	PNG          string `json:"png,omitempty"`
}

// Significance levels of the contours of the bootstrap preview.
var bootstrapLevels = []struct {
	level float64
	color color.RGBA
}{{3, color.RGBA{255, 255, 255, 255}}, {5, color.RGBA{230, 40, 40, 255}}}

// WriteBootstrap writes the maps of a bootstrap of r beside out (the path of r's image):
// STEM-boot-mean.fits, STEM-boot-std.fits and STEM-boot-signif.fits, each with the world
// coordinates and the provenance cards of r's image (Image) followed by the bootstrap cards,
// and, unless o.NoPNG, STEM-boot.png: r's image with the contours of the significance at 3
// (white) and 5 (red).
func (o Outputs) WriteBootstrap(out string, r Run, m BootstrapMaps) (BootstrapPaths, error) {
	stem := Stem(out)
	res := r.Result
	n := res.Grid.N
	if len(m.Mean) != n*n || len(m.Std) != n*n || len(m.Significance) != n*n {
		panic(fmt.Sprintf("output: WriteBootstrap: maps of %d, %d, %d values for a %d × %d grid", len(m.Mean), len(m.Std), len(m.Significance), n, n))
	}
	p := BootstrapPaths{Mean: stem + "-boot-mean.fits", Std: stem + "-boot-std.fits", Significance: stem + "-boot-signif.fits"}
	cards := []fitsimage.Card{
		{Key: "BOOTK", Value: m.Replicates, Comment: "bootstrap replicates run"},
		{Key: "BOOTGOOD", Value: m.Good, Comment: "replicates that gave an image"},
		{Key: "BOOTNCNV", Value: m.NotConverged, Comment: "replicates stopped at the iteration limit"},
		{Key: "BOOTSEED", Value: int(m.Seed), Comment: "seed of the resampling"},
		{Key: "BOOTUNIT", Value: m.Unit, Comment: "unit drawn with replacement"},
		{Key: "BOOTNU", Value: m.Units, Comment: "resampling units in the data"},
		{Key: "BOOTALGN", Value: m.Aligned, Comment: "replicates shifted onto the image before"},
	}
	for _, f := range []struct {
		path, what, bunit string
		data              []float64
		normalized        bool
	}{
		{p.Mean, "bootstrap mean of the replicate images", BUnit, m.Mean, true},
		{p.Std, "bootstrap standard deviation per pixel (K-1 in the denominator)", BUnit, m.Std, false},
		{p.Significance, "bootstrap significance per pixel: mean / standard deviation", "", m.Significance, false},
	} {
		im := o.Image(r)
		im.Data, im.BUnit, im.Normalized = f.data, f.bunit, f.normalized
		im.Cards = append(append(im.Cards, cards...), fitsimage.Card{Key: "COMMENT", Value: f.what})
		if !f.normalized {
			im.Cards = append(im.Cards, fitsimage.Card{Key: "COMMENT", Value: "of images each normalised to a total flux of 1"})
		}
		if f.path == p.Significance {
			im.Cards = append(im.Cards, fitsimage.Card{Key: "COMMENT", Value: sigmaFrom(m.Good)})
		}
		if err := fitsimage.WriteFile(f.path, im); err != nil {
			return p, err
		}
	}
	if o.NoPNG {
		return p, nil
	}
	png := stem + "-boot.png"
	var cs []preview.Contour
	for _, l := range bootstrapLevels {
		cs = append(cs, preview.Contour{Data: m.Significance, Level: l.level, Color: l.color})
	}
	opt := preview.Options{
		Title:         Title(r.Data, r.Target(), r.Regularizer()),
		Subtitle:      bootstrapSubtitle(m),
		Pixel:         res.Grid.Pixel / recon.Mas,
		Beam:          preview.Beam{Major: res.Grid.Resolution / recon.Mas},
		ColorbarLabel: "flux per pixel (total 1)",
		Stretch:       o.Stretch,
	}
	if err := preview.WriteContours(png, res.Image, n, n, cs, opt); err != nil {
		return p, err
	}
	p.PNG = png
	return p, nil
}

// sigmaFrom says, in the ASCII of FITS header text, from how many replicates the standard
// deviation of the maps is estimated, and so which distribution their mean/σ follows.
func sigmaFrom(good int) string {
	return fmt.Sprintf("std estimated from %d replicates: mean/std follows Student's t with %d degrees of freedom, not a normal distribution", good, good-1)
}

// bootstrapSubtitle is the subtitle of the bootstrap preview: the replicates, the contour
// levels of mean/σ and from how many replicates σ is estimated.
func bootstrapSubtitle(m BootstrapMaps) string {
	return fmt.Sprintf("bootstrap of %d %s resamplings: mean/σ 3 (white), 5 (red); σ estimated from %d replicates", m.Good, m.Unit, m.Good)
}
