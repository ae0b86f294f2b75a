package output

import (
	"fmt"
	"io"
	"math"
	"path/filepath"
	"strings"

	"vcz/dataset"
	"vcz/recon"
	"vcz/recon/batch"
)

// The text reports of the commands: what each prints on stdout without -json. They take
// the summaries that -json prints, so both forms say the same.

// CountWarnings says "1 warning" or "N warnings".
func CountWarnings(n int) string {
	if n == 1 {
		return "1 warning"
	}
	return fmt.Sprintf("%d warnings", n)
}

// StopText is a stop reason that does not claim success, for a summary line of a result
// with warnings.
func StopText(reason string) string {
	return strings.TrimPrefix(reason, "converged: ")
}

// WriteText writes the summary of one reconstruction as 'vcz image' prints it: the grid
// and its reasons, the regularizer and how its weight was chosen, χ²ᵣ per data type, the
// optimizer's end (a result with warnings never reads as a success), notes and the files
// written.
func (s ImageSummary) WriteText(w io.Writer) {
	fmt.Fprintf(w, "Grid:        %d × %d pixels of %.4g mas (field %.4g mas)\n", s.Grid.N, s.Grid.N, s.Grid.PixelMas, s.Grid.FOVMas)
	for _, r := range s.Grid.Reasons {
		fmt.Fprintf(w, "  - %s\n", r)
	}
	how := "given"
	if s.WeightAuto {
		how = fmt.Sprintf("chosen from %d weight%s: χ²ᵣ aimed at %.3g, between %.3g of the least-regularized images and its expected value %.3g", len(s.Path), plural(len(s.Path)), s.Chi2rAim, s.Chi2rFloor, s.Chi2rTarget)
	}
	fmt.Fprintf(w, "Regularizer: %s, weight %.4g (%s)\n", s.Regularizer, s.Weight, how)
	fmt.Fprintf(w, "Fit:         χ²ᵣ %.4g in total", s.Chi2r)
	for _, t := range dataset.DataTypes() {
		name := t.String()
		if c, ok := s.Chi2ByType[name]; ok {
			fmt.Fprintf(w, "; %s %.4g (%d)", name, c.Chi2r, c.N)
		}
	}
	fmt.Fprintln(w)
	switch {
	case len(s.Warnings) > 0:
		// The verdict doubts the result: the line must not read as a success.
		fmt.Fprintf(w, "Optimizer:   %d iterations (%d in all runs), finished with %s (stop: %s), %.1f s\n", s.Iterations, s.TotalIter, CountWarnings(len(s.Warnings)), StopText(s.Status), s.Seconds)
	case s.Converged:
		fmt.Fprintf(w, "Optimizer:   %d iterations (%d in all runs), %s, %.1f s\n", s.Iterations, s.TotalIter, s.Status, s.Seconds)
	default:
		fmt.Fprintf(w, "Optimizer:   %d iterations (%d in all runs), NOT converged: %s, %.1f s\n", s.Iterations, s.TotalIter, s.Status, s.Seconds)
	}
	for _, n := range s.Notices {
		fmt.Fprintf(w, "Note:        %s\n", n)
	}
	fmt.Fprintf(w, "Wrote %s\n", s.Outputs.FITS)
	if s.Outputs.PNG != "" {
		fmt.Fprintf(w, "Wrote %s\n", s.Outputs.PNG)
	}
	for _, p := range s.Outputs.Plots {
		fmt.Fprintf(w, "Wrote %s\n", p)
	}
	fmt.Fprintln(w, "The image is one solution consistent with the data; structure below the resolution is not constrained.")
}

// plural is "s" unless n is 1.
func plural(n int) string {
	if n == 1 {
		return ""
	}
	return "s"
}

// WriteText writes the report as 'vcz inspect' prints it.
func (r InspectReport) WriteText(w io.Writer) {
	fmt.Fprintf(w, "Files:          %s\n", strings.Join(r.Files, ", "))
	fmt.Fprintf(w, "Targets:        %s\n", OrNone(strings.Join(r.Targets, ", ")))
	fmt.Fprintf(w, "Instruments:\n")
	for _, in := range r.Instruments {
		fmt.Fprintf(w, "  %-20s %3d channels, %.4g–%.4g µm\n", in.Name, in.Channels, in.MinUm, in.MaxUm)
	}
	if len(r.Instruments) == 0 {
		fmt.Fprintf(w, "  (none with selected data)\n")
	}
	fmt.Fprintf(w, "Data points:    %-8s %8s %8s %10s\n", "", "valid", "flagged", "non-finite")
	for _, c := range []struct {
		name string
		c    InspectCounts
	}{{"V²", r.Vis2}, {"closure", r.T3}, {"vis", r.Vis}} {
		fmt.Fprintf(w, "                %-8s %8d %8d %10d\n", c.name, c.c.Valid, c.c.Flagged, c.c.NonFinite)
	}
	fmt.Fprintf(w, "(closure = OI_T3 triangle-channels, vis = OI_VIS baseline-channels)\n")
	if r.Baseline.Max == 0 {
		fmt.Fprintf(w, "No valid data points: nothing to image.\n")
	} else {
		fmt.Fprintf(w, "Baselines:      %.4g – %.4g m (%.4g – %.4g Mλ)\n", r.Baseline.Min, r.Baseline.Max, r.Frequency.Min, r.Frequency.Max)
		fmt.Fprintf(w, "Wavelengths:    %.4g – %.4g µm\n", r.Wavelength.Min, r.Wavelength.Max)
		fmt.Fprintf(w, "Resolution:     %.4g mas (λmin/(2·Bmax))\n", r.Resolution)
		if r.Largest > 0 {
			fmt.Fprintf(w, "Largest scale:  %.4g mas (λmax/Bmin)\n", r.Largest)
		}
		if r.Grid.N > 0 {
			fmt.Fprintf(w, "Suggested grid: %d × %d pixels of %.4g mas (field %.4g mas)\n", r.Grid.N, r.Grid.N, r.Grid.PixelMas, r.Grid.FOVMas)
			for _, why := range r.Grid.Reasons {
				fmt.Fprintf(w, "  - %s\n", why)
			}
		}
		fmt.Fprintf(w, "MJD:            %.5f – %.5f (%d night%s)\n", r.MJD.Min, r.MJD.Max, r.Nights, plural(r.Nights))
	}
	if len(r.Breakdown) > 0 {
		fmt.Fprintf(w, "By night and instrument:\n%s", BreakdownText(r.Breakdown))
	}
	for _, n := range r.Notices {
		fmt.Fprintf(w, "Note: %s\n", n)
	}
	for _, p := range r.Plots {
		fmt.Fprintf(w, "Wrote %s\n", p)
	}
}

// CubeSummary is the JSON summary of an image cube ('vcz image -channels').
type CubeSummary struct {
	Planes         []CubePlaneJ `json:"planes"`
	Grid           CubeGridJ    `json:"grid"`
	Weight         float64      `json:"weight"`
	Spectral       string       `json:"spectral"`
	SpectralWeight float64      `json:"spectral_weight"`
	Chi2r          float64      `json:"chi2r"`
	GrayChi2r      float64      `json:"gray_chi2r"`
	TotalIter      int          `json:"total_iter"`
	StopReason     string       `json:"stop_reason"`
	Seconds        float64      `json:"seconds"`
	Notices        []string     `json:"notices,omitempty"`
	Warnings       []string     `json:"warnings"`
	Outputs        CubePaths    `json:"outputs"`
	// WeightFactor is the factor on the planes' shares of Weight; WeightFactors the
	// number of factors tried, Chi2rFloor and Chi2rAim the least χ²ᵣ of all planes over
	// them and the χ²ᵣ aimed at (0 without a search).
	WeightFactor  float64 `json:"weight_factor,omitempty"`
	WeightFactors int     `json:"weight_factors,omitempty"`
	Chi2rFloor    float64 `json:"chi2r_floor,omitempty"`
	Chi2rAim      float64 `json:"chi2r_aim,omitempty"`
	// PhaseFitted says that a plane fitted visibility phases, which fix the planes'
	// positions (the shift theorem); V² and closure phases alone do not.
	PhaseFitted bool `json:"-"`
}

// CubeGridJ is the grid of a cube, in the shape of GridJ.
type CubeGridJ struct {
	N        int     `json:"n"`
	PixelMas float64 `json:"pixel_mas"`
}

// CubePlaneJ is one plane of a cube.
type CubePlaneJ struct {
	Channels string  `json:"channels"`
	WaveUm   float64 `json:"wave_um"`
	N        int     `json:"n"`
	Chi2r    float64 `json:"chi2r"`
	XMas     float64 `json:"x_mas"`
	YMas     float64 `json:"y_mas"`
	SizeMas  float64 `json:"size_mas"`
}

// NewCubeSummary is the summary of the cube run whose files are paths.
func NewCubeSummary(run CubeRun, paths CubePaths) CubeSummary {
	res := run.Result
	s := CubeSummary{Grid: CubeGridJ{N: res.Grid.N, PixelMas: res.Grid.Pixel / recon.Mas}, Weight: res.Weight, Spectral: res.Spectral.String(),
		SpectralWeight: res.SpectralWeight, Chi2r: res.Chi2r, TotalIter: res.TotalIter, StopReason: res.StopReason,
		Seconds: run.Seconds, Notices: res.Notices, Warnings: NonNil(res.Warnings), Outputs: paths}
	if res.Gray != nil {
		s.GrayChi2r = res.Gray.Chi2r
	}
	s.WeightFactor, s.WeightFactors, s.Chi2rFloor, s.Chi2rAim = res.WeightFactor, len(res.WeightPath), res.Chi2rFloor, res.Chi2rAim
	for _, p := range res.Planes {
		for _, c := range p.Chi2 {
			if c.Type&dataset.VisPhi != 0 && c.N > 0 {
				s.PhaseFitted = true
			}
		}
		s.Planes = append(s.Planes, CubePlaneJ{Channels: p.Label, WaveUm: p.Coord * 1e6, N: p.N, Chi2r: p.Chi2r,
			XMas: p.X / recon.Mas, YMas: p.Y / recon.Mas, SizeMas: p.Size / recon.Mas})
	}
	return s
}

// WriteText writes the summary of a cube as 'vcz image -channels' prints it.
func (s CubeSummary) WriteText(w io.Writer) {
	fmt.Fprintf(w, "Grid:        %d × %d pixels of %.4g mas\n", s.Grid.N, s.Grid.N, s.Grid.PixelMas)
	fmt.Fprintf(w, "Cube:        %d planes; spatial weight %.4g (of the gray image, χ²ᵣ %.4g), spectral %s weight %.4g\n",
		len(s.Planes), s.Weight, s.GrayChi2r, s.Spectral, s.SpectralWeight)
	if s.WeightFactors > 0 {
		fmt.Fprintf(w, "             planes' spatial weights %.4g times their share of it, chosen from %d factors: χ²ᵣ of all planes aimed at %.4g, above %.4g of the least-regularized cubes\n",
			s.WeightFactor, s.WeightFactors, s.Chi2rAim, s.Chi2rFloor)
	}
	fmt.Fprintf(w, "  %-16s %9s %7s %8s %9s %9s %9s\n", "channels", "λ (µm)", "data", "χ²ᵣ", "x (mas)", "y (mas)", "size (mas)")
	for _, p := range s.Planes {
		fmt.Fprintf(w, "  %-16s %9.4f %7d %8.4g %9.4f %9.4f %9.4f\n", p.Channels, p.WaveUm, p.N, p.Chi2r, p.XMas, p.YMas, p.SizeMas)
	}
	fmt.Fprintf(w, "Fit:         χ²ᵣ %.4g over all planes\n", s.Chi2r)
	fmt.Fprintf(w, "Optimizer:   %d iterations in all runs, %s, %.1f s\n", s.TotalIter, s.StopReason, s.Seconds)
	for _, n := range s.Notices {
		fmt.Fprintf(w, "Note:        %s\n", n)
	}
	if s.Outputs.SpectrumNote != "" {
		fmt.Fprintf(w, "Note:        %s\n", s.Outputs.SpectrumNote)
	}
	writePaths(w, s.Outputs.FITS, s.Outputs.Montage, s.Outputs.CSV, s.Outputs.Moments, s.Outputs.Spectrum)
	if s.PhaseFitted {
		fmt.Fprintln(w, "Each plane is one solution consistent with its data; the visibility phases fix the planes' positions.")
		return
	}
	fmt.Fprintln(w, "Each plane is one solution consistent with its data; planes are positioned relative to each other only through the start and the spectral regularizer (V² and closure phases do not fix positions).")
}

// writePaths writes "Wrote PATH" for each path that is not empty.
func writePaths(w io.Writer, paths ...string) {
	for _, p := range paths {
		if p != "" {
			fmt.Fprintf(w, "Wrote %s\n", p)
		}
	}
}

// StarEnvSummary is the JSON summary of a star + environment fit ('vcz image -channels
// ... -star ...').
type StarEnvSummary struct {
	StarF0    float64 `json:"star_f0"`
	StarF0Err JFloat  `json:"star_f0_err"` // from the profile's curvature; null when it has none
	// StarF0Range and EnvIndexRange are the lower and upper errors where the profile
	// rises by 1 (recon.ProfileInterval).
	StarF0Range   ProfileRange `json:"star_f0_profile"`
	Lambda0Um     float64      `json:"lambda0_um"`
	StarIndex     float64      `json:"star_index"`
	EnvIndex      float64      `json:"env_index"`
	EnvIndexErr   JFloat       `json:"env_index_err"`
	EnvIndexRange ProfileRange `json:"env_index_profile"`
	Chi2r         float64      `json:"chi2r"`
	Chi2rTarget   JFloat       `json:"chi2r_expected"`
	GrayChi2r     float64      `json:"gray_chi2r"`
	Iterations    int          `json:"iterations"`
	Converged     bool         `json:"converged"`
	StopReason    string       `json:"stop_reason"`
	Seconds       float64      `json:"seconds"`
	Notices       []string     `json:"notices,omitempty"`
	// Warnings is the quality verdict (recon.StarEnvResult.Warnings): an empty list when
	// none.
	Warnings []string `json:"warnings"`
	Outputs  Paths    `json:"outputs"`
}

// ProfileRange is an asymmetric 1σ interval (recon.ProfileInterval) in a JSON summary:
// the errors below and above the value, and whether the profile stays below the rise of 1
// up to the parameter's bound on that side (the error is then the distance to it).
type ProfileRange struct {
	Low       JFloat `json:"err_low"`
	High      JFloat `json:"err_high"`
	LowBound  bool   `json:"low_open_to_bound"`
	HighBound bool   `json:"high_open_to_bound"`
}

func profileRange(iv recon.ProfileInterval) ProfileRange {
	return ProfileRange{Low: JFloat(iv.Low), High: JFloat(iv.High), LowBound: iv.LowBound, HighBound: iv.HighBound}
}

// NewStarEnvSummary is the summary of the star + environment run whose files are paths.
func NewStarEnvSummary(run StarEnvRun, paths Paths) StarEnvSummary {
	r := run.Result
	return StarEnvSummary{StarF0: r.F0, StarF0Err: JFloat(r.F0Err), StarF0Range: profileRange(r.F0Interval), Lambda0Um: r.Lambda0 * 1e6,
		StarIndex: run.Spec.StarIndexValue(), EnvIndex: r.EnvIndex, EnvIndexErr: JFloat(r.EnvIndexErr), EnvIndexRange: profileRange(r.EnvIndexInterval),
		Chi2r: r.Chi2r, Chi2rTarget: JFloat(r.Chi2rTarget), GrayChi2r: r.Gray.Chi2r, Iterations: r.Iter, Converged: r.Converged, StopReason: r.StopReason,
		Seconds: run.Seconds, Notices: r.Notices, Warnings: NonNil(r.Warnings), Outputs: paths}
}

// WriteText writes the summary of a star + environment fit: the star's share and the
// indices with their errors, χ²ᵣ, the optimizer's end (a result with warnings never reads
// as a success), notes and the files written.
func (s StarEnvSummary) WriteText(w io.Writer) {
	fmt.Fprintf(w, "Star:        %.4f of the flux at %.4g µm %s, spectral index %.3g (held fixed: -star-index)\n", s.StarF0, s.Lambda0Um, s.StarF0Range.text(s.StarF0Err), s.StarIndex)
	fmt.Fprintf(w, "Environment: spectral index %.4g %s\n", s.EnvIndex, s.EnvIndexRange.text(s.EnvIndexErr))
	fmt.Fprintf(w, "Fit:         χ²ᵣ %.4g over all channels (expected %.3g; gray image %.4g)\n", s.Chi2r, s.Chi2rTarget, s.GrayChi2r)
	switch {
	case len(s.Warnings) > 0:
		fmt.Fprintf(w, "Optimizer:   %d iterations, finished with %s (stop: %s), %.1f s\n", s.Iterations, CountWarnings(len(s.Warnings)), StopText(s.StopReason), s.Seconds)
	case s.Converged:
		fmt.Fprintf(w, "Optimizer:   %d iterations, %s, %.1f s\n", s.Iterations, s.StopReason, s.Seconds)
	default:
		fmt.Fprintf(w, "Optimizer:   %d iterations, NOT converged: %s, %.1f s\n", s.Iterations, s.StopReason, s.Seconds)
	}
	fmt.Fprintln(w, "Note:        1σ errors from the profile with the image refitted, where it rises by 1 (times χ²ᵣ when above 1) on each side, and from its curvature (±); noise only, the regularizer's bias is not in them; the image is the environment alone.")
	for _, n := range s.Notices {
		fmt.Fprintf(w, "Note:        %s\n", n)
	}
	writePaths(w, s.Outputs.FITS, s.Outputs.PNG)
}

// text writes the interval as "−0.0021 +0.0018 (± 0.002)", an open side as "+0.35 (to the
// bound)", with the curvature error sym; a side or error that is not a number as "n/a",
// the curvature error then with its reason.
func (r ProfileRange) text(sym JFloat) string {
	side := func(sign string, v JFloat, open bool) string {
		if !isFinite(float64(v)) {
			return sign + "n/a"
		}
		s := fmt.Sprintf("%s%.2g", sign, v)
		if open {
			s += " (to the bound)"
		}
		return s
	}
	c := fmt.Sprintf("± %.2g", sym)
	if !isFinite(float64(sym)) {
		c = "± n/a: the profile has no positive curvature"
	}
	return fmt.Sprintf("%s %s (%s)", side("−", r.Low, r.LowBound), side("+", r.High, r.HighBound), c)
}

func isFinite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// WriteBatchText writes the summary of a batch as 'vcz batch' prints it: a line of counts,
// a line for each epoch that failed or has warnings, and the names of the summary files
// dir/name.json and .csv, which hold the full table.
func WriteBatchText(w io.Writer, s *batch.Summary, dir, name string) {
	skipped, warned := 0, 0
	for _, r := range s.Rows {
		if r.Skipped {
			skipped++
		}
		if len(r.Warnings) > 0 {
			warned++
		}
	}
	fmt.Fprintf(w, "%d of %d epochs (shard %s): %d done (%d of them found complete, %d with warnings), %d failed\n",
		len(s.Rows), s.Epochs, s.Shard, len(s.Rows)-s.Failed(), skipped, warned, s.Failed())
	for _, r := range s.Rows {
		switch {
		case r.Status != batch.StateDone:
			fmt.Fprintf(w, "  %s FAILED: %s\n", r.Epoch, r.Error)
		case len(r.Warnings) > 0:
			fmt.Fprintf(w, "  %s finished with %s\n", r.Epoch, CountWarnings(len(r.Warnings)))
		}
	}
	fmt.Fprintf(w, "Wrote %s and %s\n", filepath.Join(dir, name+".json"), filepath.Join(dir, name+".csv"))
}
