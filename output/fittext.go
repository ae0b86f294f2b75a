package output

import (
	"fmt"
	"io"
	"math"
	"sort"

	"vcz/dataset"
)

// WriteText writes the fit summary as the text report of 'vcz fit': the parameters with
// their 1σ, each component relative to the primary, the significances, the correlations,
// χ²ᵣ per data type, the convergence, the companion search, the detection limits (every
// tenth separation or so; the CSV file has them all) and the files written. imageN is the
// grid size of the fitted model's image, when one was written.
func (s FitSummary) WriteText(w io.Writer, imageN int) {
	fmt.Fprintf(w, "Fitted model: %s\n\n", s.Model)
	fmt.Fprintf(w, "  %-14s %-9s %16s   %-12s\n", "parameter", "kind", "value", "1σ")
	for _, p := range s.Params {
		e := "n/a"
		if !math.IsNaN(float64(p.Error)) {
			e = fmt.Sprintf("± %.4g", float64(p.Error))
		}
		note := ""
		if p.AtBound {
			note = "  (at a bound: 1σ not meaningful)"
		}
		if p.Undetermined {
			e, note = "undetermined", note+"  (not constrained by the data)"
		}
		if p.BootError != nil {
			note = fmt.Sprintf("  bootstrap ± %.4g", float64(*p.BootError)) + note
		}
		fmt.Fprintf(w, "  %-14s %-9s %16.8g   %-12s %s%s\n", p.Name, p.Kind, float64(p.Value), e, p.Unit, note)
	}
	if b := s.Bootstrap; b != nil {
		fmt.Fprintf(w, "  (bootstrap: %d of %d refits of the data resampled by %s, seed %d; a spread well above 1σ\n", b.Done, b.K, b.Unit, b.Seed)
		fmt.Fprintln(w, "   means errors the error bars do not hold, such as calibration or correlated errors)")
	}
	if len(s.Pairs) > 0 {
		fmt.Fprintf(w, "\nRelative to component %d (the brightest), 1σ propagated from the covariance:\n", s.Pairs[0].Primary)
		fmt.Fprintf(w, "  %-9s %-22s %-22s %-24s %s\n", "component", "separation (mas)", "PA (° east of north)", "flux ratio", "Δmag")
		for _, p := range s.Pairs {
			note := ""
			if p.AtBound {
				note = "  (a parameter at a bound: errors not meaningful)"
			}
			fmt.Fprintf(w, "  %-9d %-22s %-22s %-24s %s%s\n", p.Component, pm(p.Sep, p.SepErr), pm(p.PA, p.PAErr),
				pm(p.Ratio, p.RatioErr), pm(p.DMag, p.DMagErr), note)
			if p.SepBoot != nil {
				fmt.Fprintf(w, "  %-9s %-22s %-22s %-24s\n", "bootstrap", fmt.Sprintf("± %.3g", float64(*p.SepBoot)), fmt.Sprintf("± %.3g", float64(*p.PABoot)), fmt.Sprintf("± %.3g", float64(*p.RatioBoot)))
			}
		}
	}
	if len(s.Detections) > 0 {
		fmt.Fprintln(w, "\nSignificance (χ² without against with the component, both divided by the χ²ᵣ with it):")
		searched := false
		for _, det := range s.Detections {
			fmt.Fprintf(w, "  %s\n", det.Line())
			searched = searched || det.Searched
		}
		fmt.Fprintln(w, "  Caution: calibration errors outside the error bars inflate these figures.")
		if searched {
			fmt.Fprintln(w, "  \"local\" holds at the one position found; a search over a field reaches it by chance")
			fmt.Fprintln(w, "  far more often. \"field-wide\" is the chance that noise alone gives so large a Δχ²")
			fmt.Fprintln(w, "  anywhere in the searched field, from simulated searches on these (u,v) points and")
			fmt.Fprintln(w, "  error bars: quote it for a companion that was searched for.")
		}
	}
	if len(s.Correlations) > 0 {
		fmt.Fprintln(w, "\nCorrelations above 0.5:")
		for _, c := range s.Correlations {
			fmt.Fprintf(w, "  %s – %s  %+.3f\n", c.A, c.B, float64(c.R))
		}
	}
	fmt.Fprintf(w, "\nχ²ᵣ %.4g (expected %.3g; χ² %.6g, N = %d, %d free, DOF = %d)\n", float64(s.Chi2r), float64(s.Chi2rExpected), float64(s.Chi2), s.N, len(s.Params), s.DOF)
	var types []string
	for t := range s.Chi2ByType {
		types = append(types, t)
	}
	sort.Slice(types, func(i, j int) bool { return typeOrder(types[i]) < typeOrder(types[j]) })
	for _, t := range types {
		fmt.Fprintf(w, "  %-7s χ²ᵣ %-10.4g N = %d\n", t, s.Chi2ByType[t].Chi2r, s.Chi2ByType[t].N)
	}
	conv := "converged"
	if !s.Converged {
		conv = "DID NOT CONVERGE"
	}
	if len(s.Warnings) > 0 {
		// The verdict doubts the result: the line must not read as a success.
		fmt.Fprintf(w, "finished with %s after %d iterations (%s: %s)", CountWarnings(len(s.Warnings)), s.Iterations, conv, s.Status)
	} else {
		fmt.Fprintf(w, "%s after %d iterations: %s", conv, s.Iterations, s.Status)
	}
	if s.Starts > 1 {
		fmt.Fprintf(w, " (best of %d starts: start %d", s.Starts, s.BestStart)
		if s.Seeded > 0 {
			fmt.Fprintf(w, "; starts 2 to %d seeded from a χ² map of the free position", s.Seeded+1)
		}
		fmt.Fprint(w, ")")
	}
	fmt.Fprintln(w)
	if g := s.Grid; g != nil {
		fmt.Fprintf(w, "Grid search (flux ratio %g): best separation %.4g mas, PA %.4g° (east %.4g, north %.4g mas), χ² %.6g vs %.6g without a companion\n",
			g.Ratio, g.BestSep, g.BestPA, g.BestX, g.BestY, g.BestChi2, g.Chi2Primary)
		if g.Comp > 0 {
			fmt.Fprintf(w, "  component %d fitted within east %.4g..%.4g, north %.4g..%.4g mas: the search's box, not bounds of the model above\n",
				g.Comp, g.BoxX[0], g.BoxX[1], g.BoxY[0], g.BoxY[1])
		}
	}
	if l := s.Limits; l != nil {
		l.writeText(w)
	}
	for _, p := range s.Plots {
		fmt.Fprintf(w, "Wrote %s\n", p)
	}
	if s.Image != "" {
		fmt.Fprintf(w, "Wrote %s (%d × %d pixels)\n", s.Image, imageN, imageN)
	}
	if s.ModelFile != "" {
		fmt.Fprintf(w, "Wrote %s (model file)\n", s.ModelFile)
	}
	for _, msg := range s.Notices {
		fmt.Fprintf(w, "note: %s\n", msg)
	}
}

// writeText writes the table of the mean limits at about ten separations and the files.
func (l *FitLimitsJ) writeText(w io.Writer) {
	fmt.Fprintf(w, "\nDetection limits of a further point companion (Δmag, mean over position angle; errors scaled by χ²ᵣ %.3g):\n", float64(l.Scale))
	var names []string
	for name := range l.MeanDMag {
		names = append(names, name)
	}
	sort.Strings(names)
	fmt.Fprintf(w, "  %-16s", "separation (mas)")
	for _, name := range names {
		fmt.Fprintf(w, " %8s", name)
	}
	if l.InjMeanDMag != nil {
		for _, name := range names {
			fmt.Fprintf(w, " %12s", name+" inj.")
		}
	}
	fmt.Fprintln(w)
	step := max(1, len(l.Sep)/10)
	for i := 0; i < len(l.Sep); i += step {
		fmt.Fprintf(w, "  %-16.4g", l.Sep[i])
		for _, name := range names {
			fmt.Fprintf(w, " %8s", pm(l.MeanDMag[name][i], 0))
		}
		if l.InjMeanDMag != nil {
			for _, name := range names {
				fmt.Fprintf(w, " %12s", pm(l.InjMeanDMag[name][i], 0))
			}
		}
		fmt.Fprintln(w)
	}
	if l.InjMeanDMag != nil {
		fmt.Fprintln(w, "  (\"inj.\": by injection–recovery into these data, which follows their noise at each position;")
		fmt.Fprintln(w, "   the others by the χ² method, the limits expected of these observations)")
	}
	fmt.Fprintf(w, "Wrote %s and %s\n", l.CSV, l.Plot)
}

// Line gives the significance of a component in one line.
func (d FitDetectJ) Line() string {
	sig := "n/a"
	if x := float64(d.Sigma); !math.IsNaN(x) {
		sig = fmt.Sprintf("%.1fσ", x)
	}
	p := fmt.Sprintf("p = %.2g", float64(d.PValue))
	if d.PValue == 0 {
		p = "p < 1e-300"
	}
	line := fmt.Sprintf("component %d: Δχ² %.5g for %d parameters, %s, %s", d.Component, float64(d.DeltaChi2), d.Extra, p, sig)
	if d.Searched {
		line = fmt.Sprintf("component %d: Δχ² %.5g for %d parameters, local %s, %s", d.Component, float64(d.DeltaChi2), d.Extra, p, sig)
	}
	if g := float64(d.GlobalSigma); d.SearchDraws > 0 && !math.IsNaN(g) {
		gp := fmt.Sprintf("p = %.2g", float64(d.GlobalPValue))
		if d.GlobalPValue == 0 {
			gp = "p < 1e-300"
		}
		line += fmt.Sprintf("; field-wide %s, %.1fσ (%.3g effective positions, %d simulated searches)", gp, g, float64(d.Trials), d.SearchDraws)
	}
	return line
}

// pm writes a value and its 1σ error with five significant digits of the value ("n/a" for
// a value that is not finite, no error when it is not available or zero because nothing it
// depends on is free).
func pm(v, e JFloat) string {
	x, err := float64(v), float64(e)
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return "n/a"
	}
	s := fmt.Sprintf("%.5g", x)
	if err > 0 && !math.IsInf(err, 0) {
		s += fmt.Sprintf(" ± %.2g", err)
	}
	return s
}

// typeOrder is the place of the data type named name in dataset.DataTypes (unknown names
// last).
func typeOrder(name string) int {
	for i, t := range dataset.DataTypes() {
		if t.String() == name {
			return i
		}
	}
	return len(dataset.DataTypes())
}
