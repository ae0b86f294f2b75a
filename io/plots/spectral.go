package plots

import (
	"fmt"
	"math"

	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// SpectralSeries is one quantity of the planes of an image cube against wavelength: Y[k]
// at Wave[k] (m), drawn as a line with markers and named Label in the legend.
type SpectralSeries struct {
	Label   string
	Wave, Y []float64
}

// Spectral plots series against wavelength in µm on one y axis labelled ylabel (e.g. the
// photocentre and second-moment size of each plane in mas). Non-finite points are left
// out; a series without any finite point is left out of the plot, and ErrNoData is
// returned (wrapped) when none remains.
func Spectral(series []SpectralSeries, ylabel string, opt Options) (*Figure, error) {
	p := newPlot(opt.title("per plane against wavelength"), "wavelength (µm)", ylabel)
	p.Add(plotter.NewGrid())
	drawn := 0
	for i, s := range series {
		if len(s.Wave) != len(s.Y) {
			return nil, fmt.Errorf("plots: spectral series %q: %d wavelengths and %d values", s.Label, len(s.Wave), len(s.Y))
		}
		var pts plotter.XYs
		for k := range s.Y {
			if x := s.Wave[k] * 1e6; finite(x, s.Y[k]) {
				pts = append(pts, plotter.XY{X: x, Y: s.Y[k]})
			}
		}
		if len(pts) == 0 {
			continue
		}
		l, sc, err := plotter.NewLinePoints(pts)
		if err != nil {
			return nil, fmt.Errorf("plots: spectral series %q: %w", s.Label, err)
		}
		l.Color = seriesColor(i)
		l.Width = vg.Points(1.5)
		sc.GlyphStyle = draw.GlyphStyle{Shape: draw.CircleGlyph{}, Radius: vg.Points(3), Color: seriesColor(i)}
		p.Add(l, sc)
		p.Legend.Add(s.Label, l, sc)
		drawn++
	}
	if drawn == 0 {
		return nil, fmt.Errorf("plots: spectral plot: %w", ErrNoData)
	}
	if p.Y.Max-p.Y.Min < 1e-12*math.Max(math.Abs(p.Y.Max), 1) {
		// A flat series: give the axis some height around it.
		d := 0.05 * math.Max(math.Abs(p.Y.Max), 1)
		p.Y.Min, p.Y.Max = p.Y.Min-d, p.Y.Max+d
	}
	padX(p, false)
	p.X.Min -= 0.02 * (p.X.Max - p.X.Min)
	padY(p, false)
	roomForLegend(p, drawn, false)
	return single(p, opt), nil
}
