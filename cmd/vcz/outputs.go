package main

import (
	"fmt"
	"math"
	"path/filepath"
	"strings"
	"time"

	"vcz/io/fitsimage"
	"vcz/io/oifits"
	"vcz/io/plots"
	"vcz/io/preview"
	"vcz/recon"
)

// runInfo is the provenance of one reconstruction, written into its FITS
// header and used for titles.
type runInfo struct {
	files    []string
	target   string
	options  string // canonical text of the run's options (runspec.Spec.String)
	reg      string
	seed     uint64
	ra, dec  float64
	hasRADec bool
	seconds  float64
	title    string
	stretch  preview.Stretch // of the PNG preview
}

// outputPaths are the files written for one reconstruction.
type outputPaths struct {
	FITS      string   `json:"fits"`
	PNG       string   `json:"png,omitempty"`
	Plots     []string `json:"plots,omitempty"`
	plotsBase string
}

// outputStem returns the path without its .fits/.fit/.fts extension.
func outputStem(out string) string {
	for _, ext := range []string{".fits", ".fit", ".fts", ".FITS"} {
		if strings.HasSuffix(out, ext) {
			return strings.TrimSuffix(out, ext)
		}
	}
	return out
}

// targetCoords returns the coordinates of the data's target from the files.
func targetCoords(files []*oifits.File, name string) (ra, dec float64, ok bool) {
	for _, f := range files {
		for _, t := range f.Targets {
			if strings.EqualFold(strings.TrimSpace(t.Name), strings.TrimSpace(name)) {
				return t.RAEp0, t.DecEp0, true
			}
		}
	}
	return 0, 0, false
}

// fitsCards is the provenance of a result as FITS header cards. Keys are at
// most eight characters (longer keys would become HIERARCH cards).
func fitsCards(res *recon.Result, info runInfo) []fitsimage.Card {
	c := []fitsimage.Card{
		{Key: "OBJECT", Value: orUnknown(info.target), Comment: "target"},
		{Key: "DATE", Value: time.Now().UTC().Format("2006-01-02T15:04:05"), Comment: "file creation date (UTC)"},
		{Key: "CREATOR", Value: "vcz " + version, Comment: "software that made this image"},
		{Key: "REGUL", Value: info.reg, Comment: "regularizer(s)"},
		{Key: "REGWT", Value: res.Weight, Comment: "regularization weight mu"},
		{Key: "REGVAL", Value: res.Reg, Comment: "regularizer value R(x)"},
		{Key: "WTAUTO", Value: len(res.Path) > 0, Comment: "weight chosen from the data (chi2r aim)"},
		{Key: "CHI2R", Value: res.Chi2r, Comment: "reduced chi2 of all fitted data"},
		{Key: "CHI2EXP", Value: res.Chi2rTarget, Comment: "expected reduced chi2 (target of the weight)"},
	}
	for _, t := range res.Chi2 {
		key := "CHI2" + t.Type.Info().Key
		c = append(c, fitsimage.Card{Key: key, Value: t.Chi2r, Comment: fmt.Sprintf("reduced chi2 of %s (%d points)", t.Type, t.N)})
		c = append(c, fitsimage.Card{Key: "NPT" + t.Type.Info().Key, Value: t.N, Comment: fmt.Sprintf("number of %s points fitted", t.Type)})
	}
	c = append(c,
		fitsimage.Card{Key: "NITER", Value: res.Iter, Comment: "iterations of the final run"},
		fitsimage.Card{Key: "NITERTOT", Value: res.TotalIter, Comment: "iterations of all runs"},
		fitsimage.Card{Key: "STOPWHY", Value: truncate(res.StopReason, 68), Comment: "why the final run stopped"},
		fitsimage.Card{Key: "SEED", Value: int(info.seed), Comment: "seed of the random choices"},
		fitsimage.Card{Key: "GRIDN", Value: res.Grid.N, Comment: "pixels per side"},
		fitsimage.Card{Key: "PIXMAS", Value: res.Grid.Pixel / recon.Mas, Comment: "pixel size (mas)"},
		fitsimage.Card{Key: "RESOLMAS", Value: res.Grid.Resolution / recon.Mas, Comment: "nominal resolution lambda_min/(2 B_max) (mas)"},
	)
	c = append(c, warningCards(res.Warnings)...)
	for i, f := range info.files {
		c = append(c, fitsimage.Card{Key: "HISTORY", Value: fmt.Sprintf("data file %d: %s", i+1, filepath.Base(f))})
	}
	for _, line := range strings.Split(strings.TrimSuffix(info.options, "\n"), "\n") {
		if line != "" {
			c = append(c, fitsimage.Card{Key: "HISTORY", Value: "option: " + line})
		}
	}
	for _, r := range res.Grid.Reasons {
		c = append(c, fitsimage.Card{Key: "HISTORY", Value: "grid: " + r})
	}
	for _, s := range res.Path {
		c = append(c, fitsimage.Card{Key: "HISTORY", Value: fmt.Sprintf("weight path: mu=%.6g chi2r=%.6g R=%.6g iter=%d%s", s.Weight, s.Chi2r, s.Reg, s.Iter, stepFlags(s))})
	}
	for _, n := range res.Notices {
		c = append(c, fitsimage.Card{Key: "HISTORY", Value: "note: " + n})
	}
	for i := range c {
		if v, ok := c[i].Value.(string); ok {
			c[i].Value = fitsASCII(v)
		}
		c[i].Comment = fitsASCII(c[i].Comment)
	}
	c = append(c, fitsimage.Card{Key: "COMMENT", Value: "One image consistent with the data, not a photograph: features smaller"},
		fitsimage.Card{Key: "COMMENT", Value: "than the resolution lambda/(2 B_max) are not constrained by the data."})
	return c
}

func orUnknown(s string) string {
	if s == "" {
		return "UNKNOWN"
	}
	return s
}

// writeResult writes the FITS image of res to out and, when wanted, its PNG
// preview and data-fit plots beside it (OUT.png, OUT-vis2.png, OUT-t3phi.png,
// OUT-residuals.png, OUT-lcurve.png).
func writeResult(out string, d *recon.Data, res *recon.Result, info runInfo, png, withPlots bool) (outputPaths, error) {
	paths := outputPaths{FITS: out}
	im := &fitsimage.Image{
		NX: res.Grid.N, NY: res.Grid.N, Pixel: res.Grid.Pixel, Data: res.Image,
		RA: info.ra, Dec: info.dec, HasRADec: info.hasRADec, BUnit: "flux/pixel", Normalized: true,
		Cards: fitsCards(res, info),
	}
	if err := fitsimage.WriteFile(out, im); err != nil {
		return paths, failure(err)
	}
	stem := outputStem(out)
	if png {
		p := stem + ".png"
		if err := writePreview(p, res, info); err != nil {
			return paths, failure(err)
		}
		paths.PNG = p
	}
	if withPlots {
		ps, err := writeFitPlots(stem, d, res, info)
		if err != nil {
			return paths, failure(err)
		}
		paths.Plots = ps
	}
	return paths, nil
}

// imageTitle is the title line of a preview: target, date range, regularizer.
func imageTitle(d *recon.Data, info runInfo) string {
	s := d.Summarize()
	parts := []string{orNone(info.target)}
	if s.MJDMax > 0 {
		if s.MJDMax-s.MJDMin < 1 {
			parts = append(parts, preview.FormatMJD(s.MJDMin))
		} else {
			parts = append(parts, preview.FormatMJD(s.MJDMin)+" – "+preview.FormatMJD(s.MJDMax))
		}
	}
	if info.reg != "" {
		parts = append(parts, info.reg)
	}
	return strings.Join(parts, " · ")
}

func chi2Text(res *recon.Result) string {
	var parts []string
	for _, t := range res.Chi2 {
		parts = append(parts, fmt.Sprintf("%s %.2f", t.Type, t.Chi2r))
	}
	return "χ²ᵣ " + strings.Join(parts, ", ")
}

func writePreview(path string, res *recon.Result, info runInfo) error {
	opt := preview.Options{
		Title:         info.title,
		Subtitle:      fmt.Sprintf("μ = %.3g · %s", res.Weight, chi2Text(res)),
		Pixel:         res.Grid.Pixel / recon.Mas,
		Beam:          preview.Beam{Major: res.Grid.Resolution / recon.Mas},
		ColorbarLabel: "flux per pixel (total 1)",
		Stretch:       info.stretch,
	}
	return preview.WriteFile(path, res.Image, res.Grid.N, res.Grid.N, opt)
}

// writeFitPlots writes data-versus-model plots of res.
func writeFitPlots(stem string, d *recon.Data, res *recon.Result, info runInfo) ([]string, error) {
	obs, err := recon.Predict(d, res.Grid.Grid, res.Image, nil)
	if err != nil {
		return nil, err
	}
	var written []string
	save := func(fig *plots.Figure, suffix string) error {
		p := stem + suffix
		if err := fig.WriteFile(p); err != nil {
			return err
		}
		written = append(written, p)
		return nil
	}
	label := info.reg
	if label == "" {
		label = "model"
	}
	var resid []plots.Residuals
	if n := d.Vis2.Len(); n > 0 {
		fig, err := plots.V2(plots.V2Data{U: d.Vis2.U, V: d.Vis2.V, Value: d.Vis2.Value, Err: d.Vis2.Err},
			[]plots.ModelValues{{Name: label, Value: obs.Of(recon.Vis2)}}, nil,
			plots.Options{Title: "V² — data and image model — " + orNone(info.target)})
		if err != nil {
			return nil, err
		}
		if err := save(fig, "-"+recon.Vis2.String()+".png"); err != nil {
			return nil, err
		}
		r := plots.Residuals{Name: recon.Vis2.Info().Label}
		for i := 0; i < n; i++ {
			r.Freq = append(r.Freq, math.Hypot(d.Vis2.U[i], d.Vis2.V[i]))
			r.Value = append(r.Value, (d.Vis2.Value[i]-obs.Of(recon.Vis2)[i])/d.Vis2.Err[i])
		}
		resid = append(resid, r)
	}
	t := &d.T3
	var td plots.T3Data
	var tm []float64
	rp := plots.Residuals{Name: recon.T3Phi.Info().Label}
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
		tm = append(tm, obs.Of(recon.T3Phi)[i]*180/math.Pi)
		dphi := math.Remainder(t.Phi[i]-obs.Of(recon.T3Phi)[i], 2*math.Pi)
		rp.Freq = append(rp.Freq, plots.LongestBaseline(t.U1[i], t.V1[i], t.U2[i], t.V2[i]))
		rp.Value = append(rp.Value, dphi/t.PhiErr[i])
	}
	if len(td.Phi) > 0 {
		fig, err := plots.ClosurePhase(td, []plots.ModelValues{{Name: label, Value: tm}},
			plots.Options{Title: "Closure phase — data and image model — " + orNone(info.target)})
		if err != nil {
			return nil, err
		}
		if err := save(fig, "-"+recon.T3Phi.String()+".png"); err != nil {
			return nil, err
		}
		resid = append(resid, rp)
	}
	if len(resid) > 0 {
		fig, err := plots.ResidualPlot(resid, plots.Options{Title: "Normalised residuals (data − model)/σ — " + orNone(info.target)})
		if err != nil {
			return nil, err
		}
		if err := save(fig, "-residuals.png"); err != nil {
			return nil, err
		}
	}
	if len(res.Path) > 1 {
		lp := plots.LPath{Name: label, Chosen: -1}
		for i, s := range res.Path {
			lp.Points = append(lp.Points, plots.LPoint{Weight: s.Weight, Misfit: s.Chi2r, Regularizer: s.Reg, Stalled: s.Stalled})
			if s.Weight == res.Weight {
				lp.Chosen = i
			}
		}
		fig, err := plots.LCurve([]plots.LPath{lp}, plots.Options{Title: "Weight path — " + orNone(info.target)})
		if err == nil {
			if err := save(fig, "-lcurve.png"); err != nil {
				return nil, err
			}
		}
	}
	return written, nil
}

// truncate shortens s to at most n bytes, for FITS string values.
func truncate(s string, n int) string {
	if len(s) <= n {
		return s
	}
	return s[:n]
}

// fitsASCII replaces the non-ASCII characters of the project's messages by
// ASCII spellings, since FITS header text is printable ASCII only (FITS
// standard 4.0, sect. 4.1.2.1); anything else becomes '?'.
func fitsASCII(s string) string {
	var b strings.Builder
	for _, r := range s {
		switch {
		case r >= 0x20 && r < 0x7f:
			b.WriteRune(r)
		case r == '×':
			b.WriteString("x")
		case r == '·':
			b.WriteString("*")
		case r == 'λ':
			b.WriteString("lambda")
		case r == 'μ':
			b.WriteString("mu")
		case r == 'χ':
			b.WriteString("chi")
		case r == '²':
			b.WriteString("2")
		case r == 'ᵣ':
			b.WriteString("r")
		case r == 'µ':
			b.WriteString("u")
		case r == '–' || r == '—' || r == '−':
			b.WriteString("-")
		case r == '≤':
			b.WriteString("<=")
		case r == '≥':
			b.WriteString(">=")
		case r == '≈':
			b.WriteString("~")
		case r == '°':
			b.WriteString(" deg")
		default:
			b.WriteByte('?')
		}
	}
	return b.String()
}

// stepFlags says how a run of the weight search ended, for the HISTORY cards.
func stepFlags(s recon.WeightStep) string {
	switch {
	case s.Stalled:
		return " stalled"
	case s.Converged:
		return " converged"
	}
	return ""
}
