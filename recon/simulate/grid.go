package simulate

import (
	"math"

	"vcz/io/oifits"
	"vcz/recon/model"
)

// DefaultImageGrid proposes a grid for writing model m as an image next
// to data simulated with plan p: a pixel of a quarter of the nominal
// resolution λ_min/(2 B_max), with B_max the longest separation of the
// combined stations, and a square field 2.5 times the model's radius
// (model.Model.Radius) across (CONVENTIONS.md, common practice, no
// source). n is even and between 32 and 1024; when the field would need
// more pixels, the pixel grows so that 1024 cover it.
func DefaultImageGrid(p *Plan, m *model.Model) (n int, pixel float64) {
	var bmax float64
	comb := p.combined()
	for i, a := range comb {
		for _, b := range comb[i+1:] {
			sa, sb := p.Stations[a], p.Stations[b]
			bmax = math.Max(bmax, math.Hypot(math.Hypot(sb.East-sa.East, sb.North-sa.North), sb.Up-sa.Up))
		}
	}
	lmin := math.Inf(1)
	for _, l := range p.Wavelengths {
		lmin = math.Min(lmin, l)
	}
	pixel = lmin / (2 * bmax) / 4
	field := 2.5 * m.Radius() * model.MasToRad
	n = int(math.Ceil(field / pixel))
	n += n % 2
	switch {
	case n < 32:
		n = 32
	case n > 1024:
		n = 1024
		pixel = field / float64(n)
	}
	return n, pixel
}

// DemoData simulates the demo data set: Run(Demo()).
func DemoData() (*oifits.File, Report, error) {
	p, m := Demo()
	return Run(p, ModelSky{Model: m})
}
