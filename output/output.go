package output

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"runtime/debug"
	"strings"
	"time"

	"vcz/dataset"
	"vcz/io/fitsimage"
	"vcz/io/oifits"
	"vcz/io/plots"
	"vcz/io/preview"
	"vcz/recon"
	"vcz/runspec"
)

// Version is the release this source tree describes, written in the CREATOR card.
const Version = "0.1.0-dev"

// Outputs says which files Write makes beside the FITS image. The zero value writes the
// FITS image, the PNG preview with a linear stretch and the data-fit plots.
type Outputs struct {
	NoPNG   bool            // do not write OUT.png
	NoPlots bool            // do not write the data-fit plots
	Stretch preview.Stretch // display stretch of the PNG preview; the FITS image is not changed
	// Cards are written at the end of the FITS header, after the provenance (e.g. INHASH,
	// the input hash of a batch epoch).
	Cards []fitsimage.Card
}

// Run is a result with what it came from, passed in memory.
type Run struct {
	Files  []*oifits.File // the decoded data files (for the target's coordinates)
	Data   *dataset.Data  // the data fitted (its Files name the files in the header)
	Spec   runspec.Spec   // the options of the run
	Result *recon.Result
	// Label names the regularizer in the header and titles; "" means
	// Spec.RegularizerLabel().
	Label   string
	Seconds float64 // time of the reconstruction, for summaries
	// Date is the creation date written in the DATE card; the zero value means the time
	// the header is made. A workflow that writes a result and keeps its image sets it, so
	// that the image in memory and the file carry the same header.
	Date time.Time
}

// Regularizer is the label of the regularizer of r: Label, or Spec.RegularizerLabel().
func (r *Run) Regularizer() string {
	if r.Label != "" {
		return r.Label
	}
	return r.Spec.RegularizerLabel()
}

// Target is the name of the data's target, or "" when the data hold several or none.
func (r *Run) Target() string {
	if len(r.Data.Targets) == 1 {
		return r.Data.Targets[0]
	}
	return ""
}

// Paths are the files written for one reconstruction.
type Paths struct {
	FITS  string   `json:"fits"`
	PNG   string   `json:"png,omitempty"`
	Plots []string `json:"plots,omitempty"`
}

// Stem returns the path without its .fits/.fit/.fts extension.
func Stem(out string) string {
	ext := filepath.Ext(out)
	switch strings.ToLower(ext) {
	case ".fits", ".fit", ".fts":
		return strings.TrimSuffix(out, ext)
	}
	return out
}

// TargetCoords returns the coordinates (deg) of the target of that name in the files.
func TargetCoords(files []*oifits.File, name string) (ra, dec float64, ok bool) {
	for _, f := range files {
		for _, t := range f.Targets {
			if strings.EqualFold(strings.TrimSpace(t.Name), strings.TrimSpace(name)) {
				return t.RAEp0, t.DecEp0, true
			}
		}
	}
	return 0, 0, false
}

// Image returns the FITS image of r with its provenance cards and o.Cards.
func (o Outputs) Image(r Run) *fitsimage.Image {
	res := r.Result
	var ra, dec float64
	var ok bool
	if len(r.Data.Targets) == 1 {
		ra, dec, ok = TargetCoords(r.Files, r.Data.Targets[0])
	}
	return &fitsimage.Image{
		NX: res.Grid.N, NY: res.Grid.N, Pixel: res.Grid.Pixel, Data: res.Image,
		RA: ra, Dec: dec, HasRADec: ok, BUnit: BUnit, Normalized: true,
		Cards: append(FITSCards(r), o.Cards...),
	}
}

// Write writes the FITS image of r to out and, unless o says otherwise, its PNG preview
// and data-fit plots beside it (package doc), and returns their paths. When any of them
// fails, the files this call wrote are removed, so that no complete-looking result is
// left by a failed run, and no path is returned.
func (o Outputs) Write(out string, r Run) (paths Paths, err error) {
	defer func() {
		if err != nil {
			for _, p := range append([]string{paths.FITS, paths.PNG}, paths.Plots...) {
				if p != "" {
					os.Remove(p)
				}
			}
			paths = Paths{}
		}
	}()
	if err := fitsimage.WriteFile(out, o.Image(r)); err != nil {
		return paths, err
	}
	paths.FITS = out
	stem := Stem(out)
	if !o.NoPNG {
		p := stem + ".png"
		if err := o.writePreview(p, r); err != nil {
			return paths, err
		}
		paths.PNG = p
	}
	if !o.NoPlots {
		ps, err := writeFitPlots(stem, r)
		paths.Plots = ps
		if err != nil {
			return paths, err
		}
	}
	return paths, nil
}

// Title is the title line of a preview of data d: target, date range, regularizer label.
func Title(d *dataset.Data, target, label string) string {
	s := d.Summarize()
	parts := []string{OrNone(target)}
	if s.MJDMax > 0 {
		if s.MJDMax-s.MJDMin < 1 {
			parts = append(parts, preview.FormatMJD(s.MJDMin))
		} else {
			parts = append(parts, preview.FormatMJD(s.MJDMin)+" – "+preview.FormatMJD(s.MJDMax))
		}
	}
	if label != "" {
		parts = append(parts, label)
	}
	return strings.Join(parts, " · ")
}

// OrNone returns s, or "(none)" when s is empty.
func OrNone(s string) string {
	if s == "" {
		return "(none)"
	}
	return s
}

func chi2Text(res *recon.Result) string { return "χ²ᵣ " + Chi2Types(res) }

// Chi2Types lists χ²ᵣ of each fitted data type with two decimals, "vis2 1.02, t3phi 0.98",
// for titles and labels.
func Chi2Types(res *recon.Result) string {
	var parts []string
	for _, t := range res.Chi2 {
		parts = append(parts, fmt.Sprintf("%s %.2f", t.Type, t.Chi2r))
	}
	return strings.Join(parts, ", ")
}

func (o Outputs) writePreview(path string, r Run) error {
	res := r.Result
	opt := preview.Options{
		Title:         Title(r.Data, r.Target(), r.Regularizer()),
		Subtitle:      fmt.Sprintf("μ = %.3g · %s", res.Weight, chi2Text(res)),
		Pixel:         res.Grid.Pixel / recon.Mas,
		Beam:          preview.Beam{Major: res.Grid.Resolution / recon.Mas},
		ColorbarLabel: "flux per pixel (total 1)",
		Stretch:       o.Stretch,
	}
	return preview.WriteFile(path, res.Image, res.Grid.N, res.Grid.N, opt)
}

// LCurve is the weight path of res as a plot path named name, with the final image's own
// misfit and regularizer at the weight used marked (plots.LPath.Final), so that the marker
// is where the result lies even when its weight is not a step of the path; ok is false for
// a path of fewer than two steps.
func LCurve(name string, res *recon.Result) (lp plots.LPath, ok bool) {
	if len(res.Path) < 2 {
		return lp, false
	}
	lp = plots.LPath{Name: name, Chosen: -1, Final: &plots.LPoint{Weight: res.Weight, Misfit: res.Chi2r, Regularizer: res.Reg}}
	for i, s := range res.Path {
		lp.Points = append(lp.Points, plots.LPoint{Weight: s.Weight, Misfit: s.Chi2r, Regularizer: s.Reg, Stalled: s.Stalled})
		// The final weight is that of one step of the path (recon.Result.Path).
		if s.Weight == res.Weight {
			lp.Chosen = i
		}
	}
	return lp, true
}

// ClosurePhases returns the usable closure phases of d (degrees) for plotting.
func ClosurePhases(d *dataset.Data) plots.T3Data {
	t := &d.T3
	var td plots.T3Data
	for i := range t.Lambda {
		if !t.PhiOK[i] {
			continue
		}
		td.U1 = append(td.U1, t.U1[i])
		td.V1 = append(td.V1, t.V1[i])
		td.U2 = append(td.U2, t.U2[i])
		td.V2 = append(td.V2, t.V2[i])
		td.Phi = append(td.Phi, t.Phi[i]*180/math.Pi)
		td.Err = append(td.Err, t.PhiErr[i]*180/math.Pi)
	}
	return td
}

// BUnit is the BUNIT of every image the project writes: images are normalised to a total of
// 1 (a COMMENT card says so), so a pixel holds a fraction of the flux, a quantity per pixel.
// "pixel-1" is a unit string of the FITS standard (FITS 4.0, sect. 4.3: the symbol pixel, and
// a power written as the exponent after the symbol), which astropy reads as 1/pix.
const BUnit = "pixel-1"

// ParseStretch reads the value of -stretch, the display stretch of the previews; "" is
// auto (linear, or asinh or log for an image whose brightest pixels outshine the rest:
// see preview.ChooseStretch).
func ParseStretch(text string) (preview.Stretch, error) {
	for _, s := range []preview.Stretch{preview.Auto, preview.Linear, preview.Sqrt, preview.Asinh, preview.Log} {
		if strings.EqualFold(strings.TrimSpace(text), s.String()) || (text == "" && s == preview.Auto) {
			return s, nil
		}
	}
	return preview.Auto, fmt.Errorf("-stretch %q: want auto, linear, sqrt, asinh or log", text)
}

// VersionString is Version with the VCS revision and the Go toolchain of the build when
// the build records them.
func VersionString() string {
	v := Version
	if bi, ok := debug.ReadBuildInfo(); ok {
		var rev, dirty string
		for _, s := range bi.Settings {
			switch s.Key {
			case "vcs.revision":
				if len(s.Value) > 12 {
					rev = s.Value[:12]
				} else {
					rev = s.Value
				}
			case "vcs.modified":
				if s.Value == "true" {
					dirty = "+modified"
				}
			}
		}
		if rev != "" {
			v += " (" + rev + dirty + ")"
		}
		v += " " + bi.GoVersion
	}
	return v
}
