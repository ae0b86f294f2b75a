package output

import (
	"errors"
	"math"
	"path/filepath"
	"strings"

	"vcz/dataset"
	"vcz/io/oifits"
	"vcz/io/plots"
	"vcz/recon"
	"vcz/recon/fit"
	"vcz/recon/model"
)

// DataPlots writes the (u,v) coverage of d and each of its data types against spatial
// frequency into dir (which must exist) as uv.png and <word>.png (vis2.png, t3phi.png, …),
// the data coloured by instrument when files hold several, else by wavelength when they
// have several, and returns the files written, those before an error included.
func DataPlots(files []*oifits.File, d *dataset.Data, dir string) ([]string, error) {
	var uv plots.UV
	addUV := func(u, v, l float64) {
		uv.U = append(uv.U, u)
		uv.V = append(uv.V, v)
		uv.Wavelength = append(uv.Wavelength, l)
	}
	for i := range d.Vis2.Value {
		addUV(d.Vis2.U[i], d.Vis2.V[i], d.Vis2.Lambda[i])
	}
	for i := range d.T3.Lambda {
		t := &d.T3
		addUV(t.U1[i], t.V1[i], t.Lambda[i])
		addUV(t.U2[i], t.V2[i], t.Lambda[i])
		addUV(t.U1[i]+t.U2[i], t.V1[i]+t.V2[i], t.Lambda[i])
	}
	for i := range d.Vis.Lambda {
		addUV(d.Vis.U[i], d.Vis.V[i], d.Vis.Lambda[i])
	}
	var written []string
	title := strings.Join(d.Targets, ", ")
	if len(uv.U) > 0 {
		fig, err := plots.UVCoverage(uv, plots.Options{Title: titled("(u,v) coverage", title)})
		if err != nil {
			return written, err
		}
		p := filepath.Join(dir, "uv.png")
		if err := fig.WriteFile(p); err != nil {
			return written, err
		}
		written = append(written, p)
	}
	for _, t := range dataset.DataTypes() {
		m, idx := Measurements(d, t)
		if len(idx) == 0 {
			continue
		}
		m.Group, m.GroupNames = InstrumentGroups(files, d, t, idx)
		fig, err := plots.Measured(m, nil, nil, plots.Options{Title: titled(upperFirst(m.Label), title), LogY: !m.Phase && plots.AutoLog(m.Value)})
		if errors.Is(err, plots.ErrNoData) {
			continue
		}
		if err != nil {
			return written, err
		}
		p := filepath.Join(dir, t.String()+".png")
		if err := fig.WriteFile(p); err != nil {
			return written, err
		}
		written = append(written, p)
	}
	return written, nil
}

// saver returns the function that writes a figure to prefix + suffix and lists the file in
// written; a figure without data (plots.ErrNoData) is skipped, any other error returned.
func saver(prefix string, written *[]string) func(*plots.Figure, error, string) error {
	return func(fig *plots.Figure, err error, suffix string) error {
		if err != nil {
			if errors.Is(err, plots.ErrNoData) {
				return nil
			}
			return err
		}
		p := prefix + suffix
		if err := fig.WriteFile(p); err != nil {
			return err
		}
		*written = append(*written, p)
		return nil
	}
}

// FitPlots writes the plots of a fit of a model to d: for each fitted data type with data
// PREFIX-<word>.png (data and model against spatial frequency; for V² of a circular model the
// model's curve), PREFIX-residuals.png and, with a companion search g, PREFIX-grid.png. It
// returns the files written, those before an error included.
func FitPlots(files []*oifits.File, d *dataset.Data, res *fit.Result, g *fit.GridResult, prefix string) ([]string, error) {
	m := res.Model
	var written []string
	save := saver(prefix, &written)
	title := strings.Join(d.Targets, ", ")
	smear := recon.ResidualOptions{Smearing: res.Smearing}
	mp := modelPlots{files: files, d: d, pred: recon.PredictVisWith(d, m.VisMany, smear), use: res.Use, name: "fitted model",
		title:         func(what string) string { return titled(what+" and fitted model", title) },
		residualTitle: titled("Normalised residuals of the fit", title)}
	if circular(m) {
		// For a circularly symmetric model, its V² curve against spatial frequency instead of
		// its values at the data points (the curve passes through them).
		fmax := 0.0
		for i := range d.Vis2.U {
			fmax = math.Max(fmax, math.Hypot(d.Vis2.U[i], d.Vis2.V[i]))
		}
		c := plots.Curve{Name: "fitted model"}
		for k := 0; k <= 400; k++ {
			q := 1.05 * fmax * float64(k) / 400
			w := m.Vis(q, 0)
			c.Freq = append(c.Freq, q)
			c.Value = append(c.Value, real(w)*real(w)+imag(w)*imag(w))
		}
		mp.vis2Curve = &c
	}
	if err := mp.write(save); err != nil {
		return written, err
	}
	if g != nil {
		grid := plots.Grid{X: g.Sep, Y: g.PA, Values: g.Chi2, XLabel: "separation (mas)", YLabel: "position angle, east of north (°)", ZLabel: "χ²", XUnit: "mas", YUnit: "°"}
		// The companion the search added is the model's last component: its fitted
		// position with the 1σ error ellipse of separation and position angle.
		for _, p := range res.Pairs {
			if p.Comp == len(res.Model.Components)-1 && !p.AtBound {
				grid.Fit = &plots.FitMark{X: p.Sep, Y: p.PA, VarX: p.SepErr * p.SepErr, VarY: p.PAErr * p.PAErr, CovXY: p.SepPACov,
					Label: "fitted companion, 1σ error ellipse"}
			}
		}
		fig, err := plots.Chi2Map(grid, plots.Options{Title: titled("Companion search χ²", title)})
		if err := save(fig, err, "-grid.png"); err != nil {
			return written, err
		}
	}
	return written, nil
}

// Measurements returns the usable measurements of the single data type t in d as the plots
// draw them: values in the unit of the table of data types (phases in degrees), each with its
// spatial frequency (for a closure triangle its longest baseline), error and wavelength; idx
// gives each point's index in t's slice of a recon.Prediction. Visibility amplitudes and
// phases are the absolute ones (correlated fluxes are left out); differential phases are
// their own type, with the model's reference removed as the data's. A type without a case
// here gives no points.
func Measurements(d *dataset.Data, t dataset.DataType) (m plots.Measurements, idx []int) {
	info := t.Info()
	m = plots.Measurements{Label: info.Label, Unit: info.Unit, Phase: info.Phase, Triangle: info.Table == "OI_T3"}
	add := func(i int, f, v, e, l float64) {
		m.Freq = append(m.Freq, f)
		m.Value = append(m.Value, v)
		m.Err = append(m.Err, e)
		m.Wavelength = append(m.Wavelength, l)
		idx = append(idx, i)
	}
	const deg = 180 / math.Pi
	switch t {
	case dataset.Vis2:
		p := &d.Vis2
		for i := range p.Value {
			add(i, math.Hypot(p.U[i], p.V[i]), p.Value[i], p.Err[i], p.Lambda[i])
		}
	case dataset.T3Amp, dataset.T3Phi:
		p := &d.T3
		for i := range p.Lambda {
			f := plots.LongestBaseline(p.U1[i], p.V1[i], p.U2[i], p.V2[i])
			switch {
			case t == dataset.T3Amp && p.AmpOK[i]:
				add(i, f, p.Amp[i], p.AmpErr[i], p.Lambda[i])
			case t == dataset.T3Phi && p.PhiOK[i]:
				add(i, f, p.Phi[i]*deg, p.PhiErr[i]*deg, p.Lambda[i])
			}
		}
	case dataset.VisAmp, dataset.VisPhi, dataset.VisDiff:
		p := &d.Vis
		for i := range p.Lambda {
			f := math.Hypot(p.U[i], p.V[i])
			switch {
			case t == dataset.VisAmp && p.AmpOK[i] && p.AmpTyp[i] == dataset.AmpAbsolute:
				add(i, f, p.Amp[i], p.AmpErr[i], p.Lambda[i])
			case t == dataset.VisPhi && p.PhiOK[i] && p.PhiTyp[i] == dataset.PhiAbsolute:
				add(i, f, p.Phi[i]*deg, p.PhiErr[i]*deg, p.Lambda[i])
			case t == dataset.VisDiff && p.PhiOK[i] && p.PhiTyp[i] == dataset.PhiDifferential:
				add(i, f, p.Phi[i]*deg, p.PhiErr[i]*deg, p.Lambda[i])
			}
		}
	}
	return m, idx
}

// ModelValues returns the model values of data type t at the points idx of its slice of
// pred (from Measurements), in the unit of the plots: phases in degrees.
func ModelValues(pred *recon.Prediction, t dataset.DataType, idx []int) []float64 {
	all := pred.Of(t)
	f := 1.0
	if t.Info().Phase {
		f = 180 / math.Pi
	}
	out := make([]float64, len(idx))
	for k, i := range idx {
		out[k] = all[i] * f
	}
	return out
}

// modelPlots draws data against a model for each fitted data type, and the normalised
// residuals of all of them: the plots of an image and of a fit.
type modelPlots struct {
	files []*oifits.File // the data files, for the instruments; nil for none
	d     *dataset.Data
	pred  *recon.Prediction
	use   dataset.DataType // the fitted types; 0 means all
	name  string           // the model's legend entry
	// title makes a plot's title from the data type's label ("V²").
	title         func(what string) string
	residualTitle string
	// vis2Curve, when not nil, is drawn for V² instead of the model at the data points.
	vis2Curve *plots.Curve
}

// write saves, through save, the plot of each fitted data type with data as
// "-<word>.png" and the residuals as "-residuals.png", in the order of the table of data
// types.
func (mp *modelPlots) write(save func(fig *plots.Figure, err error, suffix string) error) error {
	var sets []plots.Residuals
	for _, t := range dataset.DataTypes() {
		if mp.use != 0 && mp.use&t == 0 {
			continue
		}
		m, idx := Measurements(mp.d, t)
		if len(idx) == 0 {
			continue
		}
		m.Group, m.GroupNames = InstrumentGroups(mp.files, mp.d, t, idx)
		mv := ModelValues(mp.pred, t, idx)
		models := []plots.ModelValues{{Name: mp.name, Value: mv}}
		var curves []plots.Curve
		if t == dataset.Vis2 && mp.vis2Curve != nil {
			models, curves = nil, []plots.Curve{*mp.vis2Curve}
		}
		fig, err := plots.Measured(m, models, curves, plots.Options{Title: mp.title(upperFirst(m.Label)), LogY: !m.Phase && plots.AutoLog(m.Value)})
		if err := save(fig, err, "-"+t.String()+".png"); err != nil {
			return err
		}
		r := plots.Residuals{Name: m.Label, Freq: m.Freq, Wavelength: m.Wavelength}
		if m.Phase {
			r.Value = plots.PhaseResiduals(nil, m.Value, mv, m.Err)
		} else {
			r.Value = plots.NormalizedResiduals(nil, m.Value, mv, m.Err)
		}
		sets = append(sets, r)
	}
	if len(sets) == 0 {
		return nil
	}
	fig, err := plots.ResidualPlot(sets, plots.Options{Title: mp.residualTitle})
	return save(fig, err, "-residuals.png")
}

// upperFirst returns s with its first letter in upper case ("closure phase" → "Closure
// phase"); a label starting with a symbol ("V²") is unchanged.
func upperFirst(s string) string {
	if s != "" && s[0] >= 'a' && s[0] <= 'z' {
		return string(s[0]-'a'+'A') + s[1:]
	}
	return s
}

// LimitsPlot writes the detection limits L as a plot of Δmag against separation to path:
// for each significance the mean over position angle (solid) and the worst position angle
// (dashed) in one colour, and the mean by injection–recovery when computed, in another.
// target, when not empty, goes in the title.
func LimitsPlot(L *fit.Limits, path, target string) error {
	var lines []plots.ContrastLine
	for k, s := range L.Sigmas {
		mean, worst := make([]float64, len(L.Sep)), make([]float64, len(L.Sep))
		for i := range L.Sep {
			mean[i], worst[i] = fit.DMag(L.Mean[k][i]), fit.DMag(L.Worst[k][i])
		}
		name := sigmaName(s)
		lines = append(lines, plots.ContrastLine{Name: name + ", mean over position angle", Sep: L.Sep, DMag: mean, Series: k},
			plots.ContrastLine{Name: name + ", worst position angle", Sep: L.Sep, DMag: worst, Dashed: true, Series: k})
	}
	if in := L.Inj; in != nil {
		// Injection–recovery in colours of their own, its mean only to keep the plot
		// readable (the CSV file has its worst case too).
		for k, s := range L.Sigmas {
			mean := make([]float64, len(L.Sep))
			for i := range L.Sep {
				mean[i] = fit.DMag(in.Mean[k][i])
			}
			lines = append(lines, plots.ContrastLine{Name: sigmaName(s) + ", injection–recovery, mean", Sep: L.Sep, DMag: mean, Series: len(L.Sigmas) + k})
		}
	}
	fig, err := plots.Contrast(lines, plots.Options{Title: titled("Detection limits of a point companion", target)})
	if err != nil {
		return err
	}
	return fig.WriteFile(path)
}

// circular reports whether every component of m is centred and circularly
// symmetric, so that V² depends on the spatial frequency only and a model
// curve against it is meaningful.
func circular(m *model.Model) bool {
	for _, c := range m.Components {
		get := func(name string) float64 { v, _ := c.Get(name); return v }
		switch c.Kind() {
		case model.Background:
			continue
		case model.Point, model.UniformDisc, model.LinearLD, model.PowerLD:
		case model.Gaussian:
			if get("ratio") != 1 {
				return false
			}
		case model.Ring:
			if get("inc") != 0 {
				return false
			}
		default:
			return false
		}
		if get("x") != 0 || get("y") != 0 {
			return false
		}
	}
	return true
}

func titled(what, target string) string {
	if target == "" {
		return what
	}
	return what + " — " + target
}

// writeFitPlots writes the plots of an image's fit to its data: for each fitted data type
// STEM-<word>.png (data and the image's values), STEM-residuals.png and, for a weight path of
// two steps or more, STEM-lcurve.png. It returns the files written, those before an error
// included (Outputs.Write removes them).
func writeFitPlots(stem string, r Run) ([]string, error) {
	d, res := r.Data, r.Result
	target := r.Target()
	pred, err := recon.PredictWith(d, res.Grid.Grid, res.Image, nil, recon.ModelOptions{Smearing: res.Smearing})
	if err != nil {
		return nil, err
	}
	var written []string
	save := saver(stem, &written)
	var use dataset.DataType
	for _, c := range res.Chi2 {
		use |= c.Type
	}
	label := r.Regularizer()
	mp := modelPlots{files: r.Files, d: d, pred: pred, use: use, name: label,
		title:         func(what string) string { return what + " — data and image model — " + OrNone(target) },
		residualTitle: "Normalised residuals (data − model)/σ — " + OrNone(target)}
	if err := mp.write(save); err != nil {
		return written, err
	}
	if lp, ok := LCurve(label, res); ok {
		fig, err := plots.LCurve([]plots.LPath{lp}, plots.Options{Title: "Weight path — " + OrNone(target)})
		if err := save(fig, err, "-lcurve.png"); err != nil {
			return written, err
		}
	}
	return written, nil
}
