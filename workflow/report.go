package workflow

import (
	"bytes"
	"encoding/base64"
	"encoding/csv"
	"encoding/json"
	"errors"
	"fmt"
	"html/template"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"vcz/dataset"

	"vcz/io/fitsimage"
	"vcz/io/oifits"
	"vcz/io/plots"
	"vcz/io/preview"
	"vcz/io/safefile"
	"vcz/output"
	"vcz/recon"
)

// CompareRow is one line of compare.csv and compare.json: one regularizer's result.
type CompareRow struct {
	Regularizer string                  `json:"regularizer"`
	Weight      float64                 `json:"weight"`
	WeightAuto  bool                    `json:"weight_auto"`
	Chi2r       float64                 `json:"chi2r"`
	Chi2ByType  map[string]output.Chi2J `json:"chi2r_by_type"`
	RegValue    float64                 `json:"regularizer_value"`
	Iterations  int                     `json:"iterations"`
	Converged   bool                    `json:"converged"`
	Seconds     float64                 `json:"seconds"`
	// Warnings is the quality verdict of the image (recon.Result.Warnings); an
	// empty list when none or when the run failed.
	Warnings []string `json:"warnings"`
	Error    string   `json:"error,omitempty"`
	FITS     string   `json:"fits,omitempty"`
	// Cube is the regularizer's image cube (NAME-cube.fits, with -channels); FITS is then
	// the gray image of all channels that the cube started from, which this row describes,
	// and CubeChi2r the cube's Σχ²/ΣN over all its planes (CompareReport.Planes compares
	// the cubes plane by plane).
	Cube      string  `json:"cube,omitempty"`
	CubeChi2r float64 `json:"cube_chi2r,omitempty"`
	// BootStd is the bootstrap standard deviation map (FITS) of the image with the
	// replicates that gave one, when compare ran a bootstrap; BootError why it failed.
	BootStd string `json:"bootstrap_std,omitempty"`
	// BootMean, BootSignif and BootPNG are the bootstrap's other files: the mean map,
	// the significance map (mean/σ) and the preview with its 3σ and 5σ contours.
	BootMean       string `json:"bootstrap_mean,omitempty"`
	BootSignif     string `json:"bootstrap_significance,omitempty"`
	BootPNG        string `json:"bootstrap_png,omitempty"`
	BootReplicates int    `json:"bootstrap_replicates,omitempty"`
	BootError      string `json:"bootstrap_error,omitempty"`
	// BootWarnings say why the bootstrap maps may mislead (CompareRun.BootWarnings).
	BootWarnings []string `json:"bootstrap_warnings,omitempty"`
}

// CompareGrid is the grid every regularizer of a comparison used, in the shape of the grid
// of the other commands' JSON (output.GridJ): pixels per side, pixel and resolution in mas.
type CompareGrid struct {
	N             int     `json:"n"`
	PixelMas      float64 `json:"pixel_mas"`
	ResolutionMas float64 `json:"resolution_mas"`
}

// CompareReport is the outcome of a comparison, the JSON form of compare.json.
type CompareReport struct {
	Target    string       `json:"target"`
	Grid      CompareGrid  `json:"grid"`
	Seconds   float64      `json:"seconds"`
	Alignment string       `json:"alignment"`
	Rows      []CompareRow `json:"rows"`
	Shifts    [][2]int     `json:"shifts_px"`
	// Stretch is the display stretch of the panel (preview.Stretch's name), chosen from the
	// images when -stretch is auto.
	Stretch string `json:"stretch,omitempty"`
	// Plots are the files of data against every model, one per data type fitted.
	Plots []string `json:"plots"`
	// Planes compares the regularizers' cubes plane by plane (-channels), also written
	// as compare-planes.csv; PlanesMontage is their montage (a row per regularizer).
	// Both are absent for gray images.
	Planes        []ComparePlane `json:"planes,omitempty"`
	PlanesMontage string         `json:"planes_montage,omitempty"`
	// RobustFlux is the sum of the pixels of compare-robust.fits, the pixel-wise minimum of
	// images each normalised to a total flux of 1: the share of the flux that every
	// regularizer puts in the same place, below 1 and not normalised.
	RobustFlux float64 `json:"robust_flux"`
}

// writeJSON writes v as indented JSON.
func writeJSON(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(v)
}

func fmtF(x float64) string { return strconv.FormatFloat(x, 'g', 6, 64) }

// Write writes every output of the comparison into dir (which must exist): each
// regularizer's image and preview as outs says (no fit plots), its weight path, the panel,
// the spread and robust maps, the fit plots of all models, compare.csv, compare.json and
// report.html. seconds is the time of the whole comparison, for the report.
func (c *Comparison) Write(dir string, outs output.Outputs, seconds float64) (*CompareReport, error) {
	d, choice, runs := c.Data, c.Grid, c.Runs
	rep := &CompareReport{Grid: CompareGrid{N: choice.N, PixelMas: choice.Pixel / recon.Mas, ResolutionMas: choice.Resolution / recon.Mas}, Seconds: seconds}
	if len(d.Targets) == 1 {
		rep.Target = d.Targets[0]
	}
	var ok []*CompareRun
	var err error
	rep.Plots = []string{}
	for _, r := range runs {
		row := CompareRow{Regularizer: r.Name, Seconds: r.Seconds, Chi2ByType: map[string]output.Chi2J{}, Warnings: []string{}}
		if r.Err != nil {
			row.Error = output.OneLine(r.Err.Error())
			row.Weight, row.Chi2r, row.RegValue = math.NaN(), math.NaN(), math.NaN()
		} else {
			res := r.Result
			out := filepath.Join(dir, r.Name+".fits")
			run := output.Run{Files: c.Files, Data: d, Spec: r.Spec, Result: res, Label: r.Name}
			outs.NoPlots = true
			if _, err := outs.Write(out, run); err != nil {
				return nil, err
			}
			row.FITS = filepath.Base(out)
			if r.Cube != nil {
				cubeOut := filepath.Join(dir, r.Name+"-cube.fits")
				cr := output.CubeRun{Files: c.Files, Data: d, Spec: r.Spec, Result: r.Cube, Seconds: r.Seconds}
				if _, err := outs.WriteCube(cubeOut, cr); err != nil {
					return nil, err
				}
				row.Cube, row.CubeChi2r = filepath.Base(cubeOut), r.Cube.Chi2r
			}
			row.Weight, row.WeightAuto, row.Chi2r, row.RegValue = res.Weight, len(res.Path) > 0, res.Chi2r, res.Reg
			row.Iterations = res.TotalIter
			row.Warnings = output.NonNil(r.Warnings())
			row.Converged = res.Converged || res.Status.Converged()
			if r.Cube != nil {
				row.Converged = r.Cube.Converged
			}
			for _, t := range res.Chi2 {
				row.Chi2ByType[t.Type.String()] = output.Chi2J{N: t.N, Chi2r: t.Chi2r}
			}
			if b := r.Boot; b != nil {
				paths, err := outs.WriteBootstrap(out, run, output.BootstrapMaps{Mean: b.Mean, Std: b.Std, Significance: b.Significance,
					Replicates: len(b.Images), Good: b.Good(), NotConverged: len(b.NotConverged), Seed: b.Seed, Unit: b.Unit.String(),
					Units: b.Units, Aligned: b.Aligned})
				if err != nil {
					return nil, err
				}
				row.BootStd, row.BootReplicates, row.BootWarnings = filepath.Base(paths.Std), b.Good(), r.BootWarnings()
				row.BootMean, row.BootSignif = filepath.Base(paths.Mean), filepath.Base(paths.Significance)
				if paths.PNG != "" {
					row.BootPNG = filepath.Base(paths.PNG)
				}
				opt := bootStdPreview(r.Name, res.Grid.Pixel/recon.Mas, res.Grid.Resolution/recon.Mas, b.Good(), b.Unit.String())
				if err := preview.WriteFile(filepath.Join(dir, r.Name+"-boot-std.png"), b.Std, res.Grid.N, res.Grid.N, opt); err != nil {
					return nil, err
				}
			} else if r.BootErr != nil {
				row.BootError = output.OneLine(r.BootErr.Error())
			}
			if lp, ok := output.LCurve(r.Name, res); ok {
				if fig, err := plots.LCurve([]plots.LPath{lp}, plots.Options{Title: "Weight path — " + r.Name}); err == nil {
					if err := fig.WriteFile(filepath.Join(dir, r.Name+"-lcurve.png")); err != nil {
						return nil, err
					}
				}
			}
			ok = append(ok, r)
		}
		rep.Rows = append(rep.Rows, row)
	}
	rep.Alignment = "integer-pixel shift to the cross-correlation peak with the first successful image"
	if len(ok) > 0 {
		if err := writeAgreement(dir, c.Files, choice, ok, rep, outs.Stretch); err != nil {
			return nil, err
		}
		if allCubes(ok) {
			if err := comparePlanes(dir, c, ok, rep, outs.Stretch, outs.NoPNG); err != nil {
				return nil, err
			}
			rep.Plots, err = writeCubeComparePlots(dir, ok)
		} else {
			rep.Plots, err = writeComparePlots(dir, d, ok)
		}
		if err != nil {
			return nil, err
		}
	}
	if err := writeCompareTable(dir, rep); err != nil {
		return nil, err
	}
	if err := writeCompareHTML(dir, rep, runs, outs.Stretch); err != nil {
		return nil, err
	}
	return rep, nil
}

// allCubes says whether every run of ok made a cube.
func allCubes(ok []*CompareRun) bool {
	for _, r := range ok {
		if r.Cube == nil {
			return false
		}
	}
	return len(ok) > 0
}

// writeAgreement writes the panel, the spread map and the robust image.
func writeAgreement(dir string, files []*oifits.File, choice recon.GridChoice, ok []*CompareRun, rep *CompareReport, stretch preview.Stretch) error {
	n := choice.N
	pix := choice.Pixel / recon.Mas
	var frames []preview.Frame
	for _, r := range ok {
		frames = append(frames, preview.Frame{Data: r.Result.Image, NX: n, NY: n,
			Label: fmt.Sprintf("%s  μ=%.3g\nχ²ᵣ %s", r.Name, r.Result.Weight, output.Chi2Types(r.Result))})
	}
	beam := preview.Beam{Major: choice.Resolution / recon.Mas}
	cols := min(len(frames), 3)
	if stretch == preview.Auto {
		var data [][]float64
		for _, f := range frames {
			data = append(data, f.Data)
		}
		stretch = preview.ChooseStretch(data...)
	}
	rep.Stretch = stretch.String()
	if err := preview.WritePanel(filepath.Join(dir, "compare-panel.png"), frames, preview.Options{
		Title: "Regularizers compared — " + output.OrNone(rep.Target), Pixel: pix, Beam: beam, Columns: cols,
		ColorbarLabel: "flux per pixel (total 1)", Stretch: stretch}); err != nil {
		return err
	}
	imgs := make([][]float64, len(ok))
	for i, r := range ok {
		imgs[i] = r.Result.Image
	}
	spread := pixelSpread(imgs)
	aligned, shifts := alignImages(imgs, n, n/4)
	rep.Shifts = shifts
	robust := pixelMin(aligned)
	rep.RobustFlux = 0
	for _, v := range robust {
		rep.RobustFlux += v
	}
	// The maps carry the world coordinates, target and regularizers of the images they
	// summarise, as the images do.
	ra, dec, hasRADec := output.TargetCoords(files, rep.Target)
	object := rep.Target
	if object == "" {
		object = "UNKNOWN"
	}
	var names []string
	for _, r := range ok {
		names = append(names, r.Name)
	}
	// The robust image is the minimum of normalised images, so its pixels sum to less than 1:
	// its header says so, with the sum, where a normalised image says it is normalised.
	robustCards := []fitsimage.Card{
		{Key: "FLUXSUM", Value: rep.RobustFlux, Comment: "sum of the pixels: NOT normalised to 1"},
		{Key: "COMMENT", Value: fmt.Sprintf("Not normalised to a total flux of 1: the pixel-wise minimum of images each normalised to 1, so its pixels sum to %.4g, the flux that every regularizer puts in the same place.", rep.RobustFlux)},
	}
	for _, o := range []struct {
		name, title, label, bunit string
		img                       []float64
		cards                     []fitsimage.Card
	}{
		{"compare-spread", "Spread: pixel-wise std / mean flux", "σ / mean", "", spread, nil},
		{"compare-robust", "Robust features: pixel-wise minimum (aligned)", "flux per pixel", output.BUnit, robust, robustCards},
	} {
		im := &fitsimage.Image{NX: n, NY: n, Pixel: choice.Pixel, Data: o.img, RA: ra, Dec: dec, HasRADec: hasRADec, BUnit: o.bunit,
			Cards: append([]fitsimage.Card{
				{Key: "OBJECT", Value: output.ASCII(object), Comment: "target"},
				{Key: "CREATOR", Value: output.Creator, Comment: "software that made this image"},
				{Key: "COMMENT", Value: output.ASCII(o.title)},
				{Key: "HISTORY", Value: output.ASCII("from the images of the regularizers " + strings.Join(names, ", ") + " of vcz compare")},
			}, o.cards...)}
		if err := fitsimage.WriteFile(filepath.Join(dir, o.name+".fits"), im); err != nil {
			return err
		}
		if err := preview.WriteFile(filepath.Join(dir, o.name+".png"), o.img, n, n, preview.Options{
			Title: o.title, Pixel: pix, Beam: beam, ColorbarLabel: o.label}); err != nil {
			return err
		}
	}
	return nil
}

// pixelSpread returns σ_p/m_p, the standard deviation over the images at
// each pixel divided by their mean there, where the mean is at least 5 % of
// the mean image's peak, and 0 elsewhere (the ratio means nothing on empty
// sky).
func pixelSpread(imgs [][]float64) []float64 {
	np := len(imgs[0])
	k := float64(len(imgs))
	mean := make([]float64, np)
	peak := 0.0
	for p := range mean {
		for _, im := range imgs {
			mean[p] += im[p]
		}
		mean[p] /= k
		peak = math.Max(peak, mean[p])
	}
	out := make([]float64, np)
	for p := range out {
		if mean[p] < 0.05*peak || peak == 0 {
			continue
		}
		v := 0.0
		for _, im := range imgs {
			v += (im[p] - mean[p]) * (im[p] - mean[p])
		}
		out[p] = math.Sqrt(v/k) / mean[p]
	}
	return out
}

// alignImages shifts every image by whole pixels (at most maxShift) to the
// peak of its cross-correlation with the first image, filling with zero, and
// returns the shifted images and the shifts (dx, dy) in pixels.
func alignImages(imgs [][]float64, n, maxShift int) ([][]float64, [][2]int) {
	out := make([][]float64, len(imgs))
	shifts := make([][2]int, len(imgs))
	ref := imgs[0]
	for i, im := range imgs {
		best, bx, by := math.Inf(-1), 0, 0
		if i > 0 {
			for sy := -maxShift; sy <= maxShift; sy++ {
				for sx := -maxShift; sx <= maxShift; sx++ {
					c := 0.0
					for iy := max(0, sy); iy < min(n, n+sy); iy++ {
						r := ref[iy*n:]
						m := im[(iy-sy)*n:]
						for ix := max(0, sx); ix < min(n, n+sx); ix++ {
							c += r[ix] * m[ix-sx]
						}
					}
					if c > best {
						best, bx, by = c, sx, sy
					}
				}
			}
		}
		shifts[i] = [2]int{bx, by}
		o := make([]float64, n*n)
		for iy := 0; iy < n; iy++ {
			jy := iy - by
			if jy < 0 || jy >= n {
				continue
			}
			for ix := 0; ix < n; ix++ {
				if jx := ix - bx; jx >= 0 && jx < n {
					o[iy*n+ix] = im[jy*n+jx]
				}
			}
		}
		out[i] = o
	}
	return out, shifts
}

func pixelMin(imgs [][]float64) []float64 {
	out := append([]float64(nil), imgs[0]...)
	for _, im := range imgs[1:] {
		for p, v := range im {
			out[p] = math.Min(out[p], v)
		}
	}
	return out
}

// writeComparePlots writes, for each data type with data that some run fitted, the data
// with every model as compare-<word>.png, and returns the files' names.
func writeComparePlots(dir string, d *dataset.Data, ok []*CompareRun) ([]string, error) {
	preds := make([]*recon.Prediction, len(ok))
	var use dataset.DataType
	for i, r := range ok {
		p, err := recon.PredictWith(d, r.Result.Grid.Grid, r.Result.Image, nil, recon.ModelOptions{Smearing: r.Result.Smearing})
		if err != nil {
			return nil, err
		}
		preds[i] = p
		for _, c := range r.Result.Chi2 {
			use |= c.Type
		}
	}
	names := []string{}
	for _, t := range dataset.DataTypes() {
		if use&t == 0 {
			continue
		}
		m, idx := output.Measurements(d, t)
		if len(idx) == 0 {
			continue
		}
		if len(ok) > 1 {
			// The models are told apart by their colours, so the data stay black.
			m.Wavelength = nil
		}
		var models []plots.ModelValues
		for i, r := range ok {
			models = append(models, plots.ModelValues{Name: r.Name, Value: output.ModelValues(preds[i], t, idx)})
		}
		name, err := writeTypePlot(dir, t, m, models, "each regularizer's image")
		if err != nil {
			return nil, err
		}
		if name != "" {
			names = append(names, name)
		}
	}
	return names, nil
}

// writeTypePlot writes the data m of type t with each regularizer's models (of what) as
// dir/compare-<word>.png and returns its name, "" when m has no data to draw.
func writeTypePlot(dir string, t dataset.DataType, m plots.Measurements, models []plots.ModelValues, what string) (string, error) {
	fig, err := plots.Measured(m, models, nil, plots.Options{Title: upperFirst(m.Label) + " — data and " + what, LogY: !m.Phase && plots.AutoLog(m.Value)})
	if errors.Is(err, plots.ErrNoData) {
		return "", nil
	}
	if err != nil {
		return "", err
	}
	name := "compare-" + t.String() + ".png"
	if err := fig.WriteFile(filepath.Join(dir, name)); err != nil {
		return "", err
	}
	return name, nil
}

// upperFirst returns s with its first letter in upper case ("closure phase" → "Closure
// phase"); a label starting with a symbol ("V²") is unchanged.
func upperFirst(s string) string {
	if s != "" && s[0] >= 'a' && s[0] <= 'z' {
		return string(s[0]-'a'+'A') + s[1:]
	}
	return s
}

// compareTypes are the data types with a χ²ᵣ in some row, in report order.
func compareTypes(rep *CompareReport) []string {
	var out []string
	for _, t := range dataset.DataTypes() {
		for _, r := range rep.Rows {
			if _, ok := r.Chi2ByType[t.String()]; ok {
				out = append(out, t.String())
				break
			}
		}
	}
	return out
}

func writeCompareTable(dir string, rep *CompareReport) error {
	types := compareTypes(rep)
	err := safefile.Write(filepath.Join(dir, "compare.csv"), func(w io.Writer) error {
		cw := csv.NewWriter(w)
		head := []string{"regularizer", "weight", "weight_auto", "chi2r"}
		for _, t := range types {
			head = append(head, "chi2r_"+t)
		}
		head = append(head, "regularizer_value", "iterations", "converged", "warnings", "seconds", "error")
		cw.Write(head)
		for _, r := range rep.Rows {
			rec := []string{r.Regularizer, fmtF(r.Weight), strconv.FormatBool(r.WeightAuto), fmtF(r.Chi2r)}
			for _, t := range types {
				if v, ok := r.Chi2ByType[t]; ok {
					rec = append(rec, fmtF(v.Chi2r))
				} else {
					rec = append(rec, "")
				}
			}
			rec = append(rec, fmtF(r.RegValue), strconv.Itoa(r.Iterations), strconv.FormatBool(r.Converged), strconv.Itoa(len(r.Warnings)), strconv.FormatFloat(r.Seconds, 'f', 2, 64), r.Error)
			cw.Write(rec)
		}
		cw.Flush()
		return cw.Error()
	})
	if err != nil {
		return err
	}
	// JSON has no NaN: failed rows carry null-free zeros and their error.
	jrep := *rep
	jrep.Rows = nil
	for _, r := range rep.Rows {
		if r.Error != "" {
			r.Weight, r.Chi2r, r.RegValue = 0, 0, 0
		}
		jrep.Rows = append(jrep.Rows, r)
	}
	return safefile.Write(filepath.Join(dir, "compare.json"), func(w io.Writer) error { return writeJSON(w, &jrep) })
}

// dataURI returns the PNG at path as a data: URI, or "" when it is absent.
func dataURI(path string) template.URL {
	b, err := os.ReadFile(path)
	if err != nil {
		return ""
	}
	return template.URL("data:image/png;base64," + base64.StdEncoding.EncodeToString(b))
}

const reportTemplate = `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>vcz compare — {{.Target}}</title>
<style>
body { font-family: sans-serif; margin: 1em auto; max-width: 60em; padding: 0 1em; color: #222; background: #fff; }
img { max-width: 100%; height: auto; display: block; margin: 0.5em 0; }
.scroll { overflow-x: auto; }
table { border-collapse: collapse; font-size: 0.9em; }
td, th { border: 1px solid #bbb; padding: 0.2em 0.5em; text-align: right; }
th:first-child, td:first-child { text-align: left; }
.failed { background: #fdd; }
.warned { background: #ffd; }
.caution { background: #ffd; border-left: 4px solid #cc0; padding: 0.5em 1em; }
.files { overflow-wrap: anywhere; }
</style>
</head>
<body>
<h1>Regularizers compared: {{.Target}}</h1>
<p>Grid {{.Grid.N}} × {{.Grid.N}} pixels of {{printf "%.4g" .Grid.PixelMas}} mas; nominal resolution λ/(2·B<sub>max</sub>) = {{printf "%.4g" .Grid.ResolutionMas}} mas. Every regularizer used this grid, the same start image and the same stopping rules. Total time {{printf "%.1f" .Seconds}} s.</p>
<p class="caution">Caution: an image is one solution consistent with the data, not a photograph. Features smaller than the resolution λ/(2·B<sub>max</sub>) = {{printf "%.3g" .Grid.ResolutionMas}} mas are not constrained by the data, and a feature that only one regularizer shows is suspect.</p>
<h2>Results</h2>
<div class="scroll"><table>
<tr><th>regularizer</th><th>weight μ</th><th>χ²ᵣ</th>{{range .Types}}<th>χ²ᵣ {{.}}</th>{{end}}<th>R(x)</th><th>iterations</th><th>converged</th><th>warnings</th><th>seconds</th><th>error</th></tr>
{{range .Rows}}<tr{{if .Error}} class="failed"{{end}}><td>{{if .FITS}}<a href="{{.FITS}}">{{.Regularizer}}</a>{{else}}{{.Regularizer}}{{end}}</td>{{if .Error}}<td>–</td><td>–</td>{{range $.Types}}<td>–</td>{{end}}<td>–</td>{{else}}<td>{{printf "%.4g" .Weight}}{{if .WeightAuto}} (auto){{end}}</td><td>{{printf "%.4g" .Chi2r}}</td>{{$r := .}}{{range $.Types}}<td>{{with index $r.Chi2ByType .}}{{printf "%.4g" .Chi2r}}{{end}}</td>{{end}}<td>{{printf "%.4g" .RegValue}}</td>{{end}}<td>{{.Iterations}}</td><td>{{if .Error}}–{{else}}{{.Converged}}{{end}}</td><td{{if .Warnings}} class="warned"{{end}}>{{if .Error}}–{{else}}{{len .Warnings}}{{end}}</td><td>{{printf "%.1f" .Seconds}}</td><td>{{.Error}}</td></tr>
{{end}}</table></div>
{{if .Panel}}<h2>Images on one colour scale</h2>{{if .Stretch}}<p>Display stretch: {{.Stretch}}{{if .StretchAuto}} (chosen from the images; <code>-stretch</code> sets it){{end}}.</p>{{end}}<img src="{{.Panel}}" alt="panel of the images">{{end}}
{{if .Spread}}<h2>Agreement</h2>
<p>Spread: the pixel-wise standard deviation across regularizers divided by their mean there (shown where the mean exceeds 5 % of its peak).</p>
<img src="{{.Spread}}" alt="spread map">
<p>Robust features: the pixel-wise minimum across regularizers, after aligning each image to the first by the peak of their cross-correlation (whole-pixel shifts{{range .Shifts}} ({{index . 0}}, {{index . 1}}){{end}}). Closure phases fix the orientation but not always the exact position. It is not normalised to a total flux of 1: each image sums to 1, and their minimum sums to {{printf "%.3g" .RobustFlux}}, the share of the flux that every regularizer puts in the same place.</p>
<img src="{{.Robust}}" alt="robust features">{{end}}
{{if .Planes}}<h2>Planes</h2>
<p>Each regularizer's cube, plane by plane: the χ²ᵣ of each plane's data (expected value in brackets), the spread between the regularizers' planes (pixel-wise standard deviation over their mean, summed over the object: Σσ/Σmean) and the common flux (the share of the flux that every regularizer puts in the same place, the pixel-wise minimum after the gray images' shifts). The table of the regularizers above describes the gray images the cubes started from.</p>
<div class="scroll"><table>
<tr><th>plane</th><th>λ (µm)</th><th>channels</th>{{range (index .Planes 0).Runs}}<th>χ²ᵣ {{.Regularizer}}</th>{{end}}<th>spread</th><th>common flux</th></tr>
{{range .Planes}}<tr><td>{{.Plane}}</td><td>{{printf "%.4f" .WavelengthUm}}</td><td>{{.Label}}</td>{{range .Runs}}<td>{{printf "%.3f" .Chi2r}} ({{printf "%.2f" .Chi2rExpected}})</td>{{end}}<td>{{printf "%.3f" .Spread}}</td><td>{{printf "%.3f" .Common}}</td></tr>
{{end}}</table></div>
{{if .PlanesImage}}<img src="{{.PlanesImage}}" alt="montage of the planes: a row per regularizer">{{end}}
{{end}}<h2>Fit to the data</h2>
{{range .Fit}}<img src="{{.URI}}" alt="{{.Alt}}">
{{end}}
<h2>Files</h2>
<p>In the folder of this report:</p>
<ul class="files">{{range .Files}}<li><a href="{{.Name}}">{{.Name}}</a> — {{.What}}</li>
{{end}}</ul>
<h2>Each regularizer</h2>
{{range .Each}}<h3>{{.Name}}</h3>{{if .Error}}<p class="failed">Failed: {{.Error}}</p>{{end}}{{if .Warnings}}<ul class="warned">{{range .Warnings}}<li>Warning: {{.}}</li>{{end}}</ul>{{end}}{{if .Image}}<img src="{{.Image}}" alt="{{.Name}} image">{{end}}{{if .LCurve}}<img src="{{.LCurve}}" alt="{{.Name}} L-curve">{{end}}{{if .BootStd}}<img src="{{.BootStd}}" alt="{{.Name}} bootstrap standard deviation">{{end}}
{{end}}
</body>
</html>
`

// reportFile is a file the report links: its name in the report's folder and what it holds.
type reportFile struct{ Name, What string }

// reportPlot is a plot shown in the report.
type reportPlot struct {
	URI template.URL
	Alt string
}

type reportEach struct {
	Name, Error            string
	Warnings               []string
	Image, LCurve, BootStd template.URL
}

func writeCompareHTML(dir string, rep *CompareReport, runs []*CompareRun, stretch preview.Stretch) error {
	tpl, err := template.New("report").Parse(reportTemplate)
	if err != nil {
		return err
	}
	data := struct {
		*CompareReport
		Types                 []string
		Panel, Spread, Robust template.URL
		PlanesImage           template.URL
		StretchAuto           bool
		Fit                   []reportPlot
		Files                 []reportFile
		Each                  []reportEach
	}{CompareReport: rep, Types: compareTypes(rep), StretchAuto: stretch == preview.Auto,
		Panel: dataURI(filepath.Join(dir, "compare-panel.png")), Spread: dataURI(filepath.Join(dir, "compare-spread.png")),
		Robust: dataURI(filepath.Join(dir, "compare-robust.png"))}
	if rep.PlanesMontage != "" {
		data.PlanesImage = dataURI(filepath.Join(dir, rep.PlanesMontage))
	}
	for _, p := range rep.Plots {
		data.Fit = append(data.Fit, reportPlot{dataURI(filepath.Join(dir, p)), strings.TrimSuffix(strings.TrimPrefix(p, "compare-"), ".png") + " data and models"})
	}
	for _, r := range rep.Rows {
		if r.FITS != "" {
			data.Files = append(data.Files, reportFile{r.FITS, "image of " + r.Regularizer + " (FITS)"})
		}
		if r.Cube != "" {
			data.Files = append(data.Files, reportFile{r.Cube, "image cube of " + r.Regularizer + " (FITS)"})
		}
		for _, f := range []reportFile{
			{r.BootMean, "bootstrap mean of " + r.Regularizer + " (FITS)"},
			{r.BootStd, "bootstrap standard deviation of " + r.Regularizer + " (FITS)"},
			{r.BootSignif, "bootstrap significance (mean/σ) of " + r.Regularizer + " (FITS)"},
			{r.BootPNG, "bootstrap significance of " + r.Regularizer + " with 3σ and 5σ contours (PNG)"},
		} {
			if f.Name != "" {
				data.Files = append(data.Files, f)
			}
		}
	}
	for _, f := range []reportFile{
		{"compare-spread.fits", "spread map (FITS)"}, {"compare-robust.fits", "robust features (FITS; not normalised to a total flux of 1)"},
		{"compare.csv", "the results table (CSV)"}, {"compare-planes.csv", "the table of the planes (CSV)"},
		{"compare.json", "the results and settings (JSON)"},
	} {
		if _, err := os.Stat(filepath.Join(dir, f.Name)); err == nil {
			data.Files = append(data.Files, f)
		}
	}
	if data.Target == "" {
		data.Target = "unknown target"
	}
	for i, r := range runs {
		e := reportEach{Name: r.Name, Error: rep.Rows[i].Error, Warnings: append([]string(nil), rep.Rows[i].Warnings...)}
		for _, w := range rep.Rows[i].BootWarnings {
			e.Warnings = append(e.Warnings, "bootstrap: "+w)
		}
		if r.Err == nil {
			e.Image = dataURI(filepath.Join(dir, r.Name+".png"))
			e.LCurve = dataURI(filepath.Join(dir, r.Name+"-lcurve.png"))
			if r.Boot != nil {
				e.BootStd = dataURI(filepath.Join(dir, r.Name+"-boot-std.png"))
			}
		}
		data.Each = append(data.Each, e)
	}
	var buf bytes.Buffer
	if err := tpl.Execute(&buf, data); err != nil {
		return err
	}
	return safefile.Write(filepath.Join(dir, "report.html"), func(w io.Writer) error {
		_, err := w.Write(buf.Bytes())
		return err
	})
}

// WriteText writes the table of the comparison as 'vcz compare' prints it: the grid, then a
// row per regularizer (a row with warnings never reads as a success).
func (rep *CompareReport) WriteText(w io.Writer) {
	fmt.Fprintf(w, "Grid: %d × %d pixels of %.4g mas; resolution %.4g mas\n", rep.Grid.N, rep.Grid.N, rep.Grid.PixelMas, rep.Grid.ResolutionMas)
	fmt.Fprintf(w, "%-10s %-10s %-8s %-10s %-6s %-13s %s\n", "reg", "weight", "χ²ᵣ", "R(x)", "iter", "result", "seconds")
	for _, r := range rep.Rows {
		if r.Error != "" {
			fmt.Fprintf(w, "%-10s FAILED: %s\n", r.Regularizer, r.Error)
			continue
		}
		result := "converged"
		switch {
		case len(r.Warnings) > 0:
			result = output.CountWarnings(len(r.Warnings))
		case !r.Converged:
			result = "stopped"
		}
		fmt.Fprintf(w, "%-10s %-10.4g %-8.4g %-10.4g %-6d %-13s %.1f\n", r.Regularizer, r.Weight, r.Chi2r, r.RegValue, r.Iterations, result, r.Seconds)
	}
	if rep.RobustFlux > 0 {
		fmt.Fprintf(w, "Robust features (compare-robust.fits): the pixel-wise minimum sums to %.3g, not normalised to a total flux of 1\n", rep.RobustFlux)
	}
	writePlanesText(w, rep)
}

// bootStdPreview is the look of a regularizer's bootstrap standard-deviation map in the
// report: its title, the replicates behind it, the resolution circle and a colour bar that
// says what it measures, in the unit of the images (pixel and resolution in mas).
func bootStdPreview(name string, pixel, resolution float64, good int, unit string) preview.Options {
	return preview.Options{Title: name + ": bootstrap standard deviation per pixel", Pixel: pixel, Beam: preview.Beam{Major: resolution},
		Subtitle:      fmt.Sprintf("%d replicates, resampled by %s", good, unit),
		ColorbarLabel: "σ of the flux per pixel (total 1)"}
}
