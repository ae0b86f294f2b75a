package workflow

import (
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"strconv"
	"strings"

	"vcz/dataset"
	"vcz/io/plots"
	"vcz/io/preview"
	"vcz/io/safefile"
	"vcz/output"
	"vcz/recon"
)

// ComparePlane is one plane of the cubes of a comparison (-channels): its channel group,
// each regularizer's fit of it, and how far the regularizers' planes agree.
type ComparePlane struct {
	Plane        int               `json:"plane"` // 1-based
	Label        string            `json:"channels"`
	WavelengthUm float64           `json:"wavelength_um"` // mean wavelength of the group
	Runs         []ComparePlaneRun `json:"regularizers"`
	// Spread is Σ_p σ_p / Σ_p m_p over the pixels p where m_p, the regularizers' mean,
	// is at least 5 % of its peak, σ_p their standard deviation there: the spread map's
	// figure of the plane (0 when they agree, and for one regularizer).
	Spread float64 `json:"spread"`
	// Common is Σ_p min_i x_i(p) over the regularizers' planes x_i (each of flux 1), each
	// moved by the whole-pixel shift that aligns its cube to the first (the peak of the
	// cross-correlation of the cubes' sums of planes, one shift for all planes):
	// the share of the flux that every regularizer puts in the same place (1 when they
	// agree; for two planes 1 − ½‖x₁ − x₂‖₁).
	Common float64 `json:"common_flux"`
}

// ComparePlaneRun is one regularizer's fit of one plane.
type ComparePlaneRun struct {
	Regularizer   string        `json:"regularizer"`
	Weight        output.JFloat `json:"weight"`         // μ_k of the plane
	Chi2r         output.JFloat `json:"chi2r"`          // Σχ²/ΣN of the plane's data
	Chi2rExpected output.JFloat `json:"chi2r_expected"` // its expected value
	// Chi2ByType is the plane's χ²ᵣ of each data type it fitted, keyed by the type's word.
	Chi2ByType map[string]output.Chi2J `json:"chi2r_by_type"`
}

// comparePlanes fills rep.Planes from the cubes of the runs in ok (which all have one, of
// the same planes), writes the montage compare-planes.png (a row per regularizer, a
// column per plane, on one colour scale) unless noPNG, and compare-planes.csv.
func comparePlanes(dir string, c *Comparison, ok []*CompareRun, rep *CompareReport, stretch preview.Stretch, noPNG bool) error {
	n := c.Grid.N
	first := ok[0].Cube
	planes := len(first.Planes)
	for _, r := range ok[1:] {
		if len(r.Cube.Planes) != planes || r.Cube.Grid.N != n {
			return fmt.Errorf("compare: the cubes of %s and %s differ in their planes or grids", ok[0].Name, r.Name)
		}
	}
	// Each cube is aligned as a whole: its planes' positions relative to one another are
	// the data's, and its gray image, which the compare of gray images aligns, may sit
	// elsewhere (SolveCube centres the cube after its sweeps).
	sums := make([][]float64, len(ok))
	for i, r := range ok {
		sums[i] = make([]float64, n*n)
		for _, p := range r.Cube.Planes {
			for j, v := range p.Image {
				sums[i][j] += v
			}
		}
	}
	_, shifts := alignImages(sums, n, n/4)
	rep.Planes = make([]ComparePlane, planes)
	for k := range planes {
		pl := &rep.Planes[k]
		pl.Plane, pl.Label, pl.WavelengthUm = k+1, first.Planes[k].Label, first.Planes[k].Coord*1e6
		imgs := make([][]float64, len(ok))
		for i, r := range ok {
			p := &r.Cube.Planes[k]
			run := ComparePlaneRun{Regularizer: r.Name, Weight: output.JFloat(p.Weight), Chi2r: output.JFloat(p.Chi2r),
				Chi2rExpected: output.JFloat(p.Chi2rTarget), Chi2ByType: map[string]output.Chi2J{}}
			for _, c := range p.Chi2 {
				run.Chi2ByType[c.Type.String()] = output.Chi2J{N: c.N, Chi2r: c.Chi2r}
			}
			pl.Runs = append(pl.Runs, run)
			imgs[i] = p.Image
		}
		pl.Spread = spreadFigure(imgs)
		pl.Common = commonFlux(imgs, shifts, n)
	}
	if !noPNG {
		var frames []preview.Frame
		for _, r := range ok {
			for _, p := range r.Cube.Planes {
				frames = append(frames, preview.Frame{Data: p.Image, NX: n, NY: n,
					Label: fmt.Sprintf("%s · %.4f µm\nχ²ᵣ %.2f", r.Name, p.Coord*1e6, p.Chi2r)})
			}
		}
		if stretch == preview.Auto {
			var data [][]float64
			for _, f := range frames {
				data = append(data, f.Data)
			}
			stretch = preview.ChooseStretch(data...)
		}
		size := 0 // the default, near 256 pixels a frame
		if planes > 6 {
			size = 128
		}
		if err := preview.WriteMontage(filepath.Join(dir, "compare-planes.png"), frames, preview.Options{
			Title:    "Regularizers compared plane by plane — " + output.OrNone(rep.Target),
			Subtitle: "a row per regularizer, a column per channel group",
			Pixel:    c.Grid.Pixel / recon.Mas, Beam: preview.Beam{Major: c.Grid.Resolution / recon.Mas}, Columns: planes, Size: size,
			ColorbarLabel: "flux per pixel (each plane total 1)", Stretch: stretch}); err != nil {
			return err
		}
		rep.PlanesMontage = "compare-planes.png"
	}
	return safefile.Write(filepath.Join(dir, "compare-planes.csv"), func(w io.Writer) error { return writePlanesTable(w, rep.Planes) })
}

// writePlanesTable writes compare-planes.csv: a row per plane and regularizer, with a
// column of χ²ᵣ per data type fitted (empty where a plane has none of it).
func writePlanesTable(w io.Writer, planes []ComparePlane) error {
	var types []string
	for _, t := range dataset.DataTypes() {
		for _, p := range planes {
			if _, ok := p.Runs[0].Chi2ByType[t.String()]; ok {
				types = append(types, t.String())
				break
			}
		}
	}
	cw := csv.NewWriter(w)
	head := []string{"plane", "wavelength_um", "channels", "regularizer", "weight", "chi2r", "chi2r_expected"}
	for _, t := range types {
		head = append(head, "chi2r_"+t)
	}
	cw.Write(append(head, "spread", "common_flux"))
	for _, p := range planes {
		for _, r := range p.Runs {
			rec := []string{strconv.Itoa(p.Plane), fmtF(p.WavelengthUm), p.Label, r.Regularizer, fmtF(float64(r.Weight)), fmtF(float64(r.Chi2r)),
				fmtF(float64(r.Chi2rExpected))}
			for _, t := range types {
				if c, ok := r.Chi2ByType[t]; ok {
					rec = append(rec, fmtF(c.Chi2r))
				} else {
					rec = append(rec, "")
				}
			}
			cw.Write(append(rec, fmtF(p.Spread), fmtF(p.Common)))
		}
	}
	cw.Flush()
	return cw.Error()
}

// spreadFigure returns Σ_p σ_p / Σ_p m_p over the pixels where the images' mean m_p is at
// least 5 % of its peak (those of pixelSpread's map), σ_p the standard deviation of the
// images at p; 0 when no pixel qualifies.
func spreadFigure(imgs [][]float64) float64 {
	k := float64(len(imgs))
	mean := make([]float64, len(imgs[0]))
	peak := 0.0
	for p := range mean {
		for _, im := range imgs {
			mean[p] += im[p]
		}
		mean[p] /= k
		peak = math.Max(peak, mean[p])
	}
	var sig, tot float64
	for p, m := range mean {
		if m < 0.05*peak || peak == 0 {
			continue
		}
		v := 0.0
		for _, im := range imgs {
			v += (im[p] - m) * (im[p] - m)
		}
		sig += math.Sqrt(v / k)
		tot += m
	}
	if tot == 0 {
		return 0
	}
	return sig / tot
}

// commonFlux returns Σ_p min_i of the n × n images, image i moved by shifts[i] (dx, dy)
// whole pixels as alignImages moves it (zero where it moves in from outside).
func commonFlux(imgs [][]float64, shifts [][2]int, n int) float64 {
	sum := 0.0
	for iy := range n {
		for ix := range n {
			m := math.Inf(1)
			for i, im := range imgs {
				jx, jy := ix, iy
				if i < len(shifts) {
					jx, jy = ix-shifts[i][0], iy-shifts[i][1]
				}
				v := 0.0
				if jx >= 0 && jx < n && jy >= 0 && jy < n {
					v = im[jy*n+jx]
				}
				m = math.Min(m, v)
			}
			sum += m
		}
	}
	return sum
}

// writePlanesText writes the per-plane table of a comparison of cubes: each
// regularizer's χ²ᵣ of every plane, then the spread and the common flux of the plane, and
// last each cube's χ²ᵣ over all its planes.
func writePlanesText(w io.Writer, rep *CompareReport) {
	if len(rep.Planes) == 0 {
		return
	}
	fmt.Fprintln(w, "Planes: χ²ᵣ of each regularizer's cube, plane by plane; spread (σ/mean over the object) and common flux (shared by all, aligned) between the regularizers")
	runs := rep.Planes[0].Runs
	widths := make([]int, len(runs))
	var b strings.Builder
	line := func(cells ...string) {
		b.Reset()
		for i, c := range cells {
			fmt.Fprintf(&b, "%-*s ", cellWidth(i, widths), c)
		}
		fmt.Fprintln(w, strings.TrimRight(b.String(), " "))
	}
	head := []string{"plane", "λ (µm)", "channels"}
	for i, r := range runs {
		widths[i] = max(len([]rune(r.Regularizer)), 6)
		head = append(head, r.Regularizer)
	}
	line(append(head, "spread", "common")...)
	for _, p := range rep.Planes {
		cells := []string{strconv.Itoa(p.Plane), fmt.Sprintf("%.4f", p.WavelengthUm), truncate(p.Label, 16)}
		for _, r := range p.Runs {
			cells = append(cells, fmt.Sprintf("%.3f", float64(r.Chi2r)))
		}
		line(append(cells, fmt.Sprintf("%.3f", p.Spread), fmt.Sprintf("%.3f", p.Common))...)
	}
	cells := []string{"cube", "", "all planes"}
	for _, r := range runs {
		c := math.NaN()
		for _, row := range rep.Rows {
			if row.Regularizer == r.Regularizer {
				c = row.CubeChi2r
			}
		}
		cells = append(cells, fmt.Sprintf("%.3f", c))
	}
	line(cells...)
}

// cellWidth is the width of column i of the planes' text table: plane, wavelength and
// channels, then the regularizers' (widths), then spread and common flux.
func cellWidth(i int, widths []int) int {
	switch {
	case i < 3:
		return [3]int{5, 8, 16}[i]
	case i-3 < len(widths):
		return widths[i-3]
	}
	return 6
}

// truncate shortens s to at most n characters (runes), ending with "…" when cut.
func truncate(s string, n int) string {
	r := []rune(s)
	if len(r) <= n {
		return s
	}
	return strings.TrimSpace(string(r[:n-1])) + "…"
}

// writeCubeComparePlots is writeComparePlots for cubes: for each data type that some run
// fitted, the data of every plane with each regularizer's model of that plane (its cube's
// plane image through the forward model of the run, with its smearing), as
// compare-<word>.png; the data are those of the planes in plane order.
func writeCubeComparePlots(dir string, ok []*CompareRun) ([]string, error) {
	preds, use, err := cubePredictions(ok)
	if err != nil {
		return nil, err
	}
	names := []string{}
	for _, t := range dataset.DataTypes() {
		if use&t == 0 {
			continue
		}
		m, models := cubeMeasured(ok, preds, t)
		if len(m.Value) == 0 {
			continue
		}
		name, err := writeTypePlot(dir, t, m, models, "each regularizer's cube, plane by plane")
		if err != nil {
			return nil, err
		}
		if name != "" {
			names = append(names, name)
		}
	}
	return names, nil
}

// cubePredictions returns each run's predictions of each plane's data, [run][plane], and
// the data types that some plane fitted.
func cubePredictions(ok []*CompareRun) ([][]*recon.Prediction, dataset.DataType, error) {
	preds := make([][]*recon.Prediction, len(ok))
	var use dataset.DataType
	for i, r := range ok {
		for _, p := range r.Cube.Planes {
			pr, err := recon.PredictWith(p.Data, r.Cube.Grid.Grid, p.Image, nil, recon.ModelOptions{Smearing: r.Problem.Smearing})
			if err != nil {
				return nil, 0, err
			}
			preds[i] = append(preds[i], pr)
			for _, c := range p.Chi2 {
				use |= c.Type
			}
		}
	}
	return preds, use, nil
}

// cubeMeasured gathers the data of type t of every plane, in plane order, and each run's
// model values of them from preds[run][plane]. With several runs the data stay black (no
// wavelengths), the models being told apart by their colours.
func cubeMeasured(ok []*CompareRun, preds [][]*recon.Prediction, t dataset.DataType) (plots.Measurements, []plots.ModelValues) {
	var m plots.Measurements
	models := make([]plots.ModelValues, len(ok))
	for i, r := range ok {
		models[i].Name = r.Name
	}
	for k, p := range ok[0].Cube.Planes {
		mk, idx := output.Measurements(p.Data, t)
		m.Label, m.Unit, m.Phase, m.Triangle = mk.Label, mk.Unit, mk.Phase, mk.Triangle
		m.Freq = append(m.Freq, mk.Freq...)
		m.Value = append(m.Value, mk.Value...)
		m.Err = append(m.Err, mk.Err...)
		m.Wavelength = append(m.Wavelength, mk.Wavelength...)
		for i := range ok {
			models[i].Value = append(models[i].Value, output.ModelValues(preds[i][k], t, idx)...)
		}
	}
	if len(ok) > 1 {
		m.Wavelength = nil
	}
	return m, models
}
