package output

import (
	"errors"
	"math"
	"path/filepath"
	"strings"

	"vcz/dataset"
	"vcz/io/plots"
	"vcz/recon"
	"vcz/recon/fit"
	"vcz/recon/model"
)

// DataPlots writes the (u,v) coverage and the V² of d into dir (which must exist) as
// uv.png and vis2.png, and returns the files written.
func DataPlots(d *dataset.Data, dir string) ([]string, error) {
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
			return nil, err
		}
		p := filepath.Join(dir, "uv.png")
		if err := fig.WriteFile(p); err != nil {
			return nil, err
		}
		written = append(written, p)
	}
	if d.Vis2.Len() > 0 {
		fig, err := plots.V2(plots.V2Data{U: d.Vis2.U, V: d.Vis2.V, Value: d.Vis2.Value, Err: d.Vis2.Err}, nil, nil,
			plots.Options{Title: titled("Squared visibility", title)})
		if err != nil {
			return nil, err
		}
		p := filepath.Join(dir, "vis2.png")
		if err := fig.WriteFile(p); err != nil {
			return nil, err
		}
		written = append(written, p)
	}
	return written, nil
}

// FitPlots writes the plots of a fit of a model to d: PREFIX-vis2.png (with the model's
// curve when it is circular), PREFIX-t3phi.png, PREFIX-residuals.png and, with a companion
// search g, PREFIX-grid.png. It returns the files written, those before an error included.
func FitPlots(d *dataset.Data, res *fit.Result, g *fit.GridResult, prefix string) ([]string, error) {
	m := res.Model
	var written []string
	save := func(fig *plots.Figure, err error, suffix string) error {
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
		written = append(written, p)
		return nil
	}
	title := strings.Join(d.Targets, ", ")
	obs := recon.PredictVis(d, m.VisMany)
	var sets []plots.Residuals
	if nv := d.Vis2.Len(); nv > 0 && res.Use&dataset.Vis2 != 0 {
		mv := obs.Of(dataset.Vis2)
		fq := make([]float64, nv)
		fmax := 0.0
		for i := range mv {
			fq[i] = math.Hypot(d.Vis2.U[i], d.Vis2.V[i])
			fmax = math.Max(fmax, fq[i])
		}
		// The model at the data points, or, for a circularly symmetric model, its curve
		// against spatial frequency instead (which passes through those points).
		models := []plots.ModelValues{{Name: "fitted model", Value: mv}}
		var curves []plots.Curve
		if circular(m) {
			models = nil
			c := plots.Curve{Name: "fitted model"}
			for k := 0; k <= 400; k++ {
				q := 1.05 * fmax * float64(k) / 400
				w := m.Vis(q, 0)
				c.Freq = append(c.Freq, q)
				c.Value = append(c.Value, real(w)*real(w)+imag(w)*imag(w))
			}
			curves = append(curves, c)
		}
		fig, err := plots.V2(plots.V2Data{U: d.Vis2.U, V: d.Vis2.V, Value: d.Vis2.Value, Err: d.Vis2.Err},
			models, curves, plots.Options{Title: titled("V² and fitted model", title)})
		if err := save(fig, err, "-"+dataset.Vis2.String()+".png"); err != nil {
			return written, err
		}
		sets = append(sets, plots.Residuals{Name: dataset.Vis2.Info().Label, Freq: fq, Value: plots.NormalizedResiduals(nil, d.Vis2.Value, mv, d.Vis2.Err)})
	}
	if res.Use&dataset.T3Phi != 0 {
		t := &d.T3
		td := ClosurePhases(d)
		var mp, fq []float64
		for i := range t.Lambda {
			if t.PhiOK[i] {
				mp = append(mp, obs.Of(dataset.T3Phi)[i]*180/math.Pi)
				fq = append(fq, plots.LongestBaseline(t.U1[i], t.V1[i], t.U2[i], t.V2[i]))
			}
		}
		if len(mp) > 0 {
			fig, err := plots.ClosurePhase(td, []plots.ModelValues{{Name: "fitted model", Value: mp}}, plots.Options{Title: titled("Closure phases and fitted model", title)})
			if err := save(fig, err, "-"+dataset.T3Phi.String()+".png"); err != nil {
				return written, err
			}
			sets = append(sets, plots.Residuals{Name: dataset.T3Phi.Info().Label, Freq: fq, Value: plots.PhaseResiduals(nil, td.Phi, mp, td.Err)})
		}
	}
	if len(sets) > 0 {
		fig, err := plots.ResidualPlot(sets, plots.Options{Title: titled("Normalised residuals of the fit", title)})
		if err := save(fig, err, "-residuals.png"); err != nil {
			return written, err
		}
	}
	if g != nil {
		fig, err := plots.Chi2Map(plots.Grid{X: g.Sep, Y: g.PA, Values: g.Chi2, XLabel: "separation (mas)", YLabel: "position angle, east of north (°)", ZLabel: "χ²", XUnit: "mas", YUnit: "°"},
			plots.Options{Title: titled("Companion search χ²", title)})
		if err := save(fig, err, "-grid.png"); err != nil {
			return written, err
		}
	}
	return written, nil
}

// LimitsPlot writes the detection limits L as a plot of Δmag against separation to path:
// for each significance the mean over position angle (solid) and the worst position angle
// (dashed) in one colour. target, when not empty, goes in the title.
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
		case model.Point, model.UniformDisc, model.LinearLD, model.PowerLD, model.Gaussian:
		case model.EllGaussian:
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
