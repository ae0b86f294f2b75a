package main

import (
	"encoding/json"
	"fmt"
	"io"

	"vcz/dataset"
	"vcz/io/oifits"
	"vcz/output"
	"vcz/recon"
	"vcz/runspec"
	"vcz/workflow"
)

// cubeGrid is the grid of a cube, in the shape of the other commands' grid (output.GridJ).
type cubeGrid struct {
	N        int     `json:"n"`
	PixelMas float64 `json:"pixel_mas"`
}

// cubeSummary is what `vcz image -channels ... -json` prints.
type cubeSummary struct {
	Planes         []cubePlane      `json:"planes"`
	Grid           cubeGrid         `json:"grid"`
	Weight         float64          `json:"weight"`
	Spectral       string           `json:"spectral"`
	SpectralWeight float64          `json:"spectral_weight"`
	Chi2r          float64          `json:"chi2r"`
	GrayChi2r      float64          `json:"gray_chi2r"`
	TotalIter      int              `json:"total_iter"`
	StopReason     string           `json:"stop_reason"`
	Seconds        float64          `json:"seconds"`
	Notices        []string         `json:"notices,omitempty"`
	Warnings       []string         `json:"warnings"`
	Outputs        output.CubePaths `json:"outputs"`
}

type cubePlane struct {
	Channels string  `json:"channels"`
	WaveUm   float64 `json:"wave_um"`
	N        int     `json:"n"`
	Chi2r    float64 `json:"chi2r"`
	XMas     float64 `json:"x_mas"`
	YMas     float64 `json:"y_mas"`
	SizeMas  float64 `json:"size_mas"`
}

// runCube reconstructs d as an image cube (spec.Channels) and prints its summary.
func runCube(files []*oifits.File, d *dataset.Data, spec runspec.Spec, outs output.Outputs, out string, quiet, asJSON, strict bool, stdout, stderr io.Writer) error {
	c, err := workflow.NewCube(files, d, spec)
	if err != nil {
		return err
	}
	if !quiet {
		for _, n := range d.Notices {
			fmt.Fprintf(stderr, "note: %s\n", n)
		}
	}
	if spec.Star != nil {
		return runStarEnv(c, outs, out, quiet, asJSON, stdout, stderr)
	}
	prog := newProgressLine(stderr, quiet)
	run, paths, err := c.Run(outs, out, func(pr recon.Progress) bool {
		prog.report(pr)
		return true
	})
	prog.done()
	if err != nil {
		return failure(err)
	}
	res := run.Result
	sum := cubeSummary{Grid: cubeGrid{N: res.Grid.N, PixelMas: res.Grid.Pixel / recon.Mas}, Weight: res.Weight, Spectral: res.Spectral.String(),
		SpectralWeight: res.SpectralWeight, Chi2r: res.Chi2r, TotalIter: res.TotalIter, StopReason: res.StopReason,
		Seconds: run.Seconds, Notices: res.Notices, Warnings: res.Warnings, Outputs: paths}
	if sum.Warnings == nil {
		sum.Warnings = []string{}
	}
	if res.Gray != nil {
		sum.GrayChi2r = res.Gray.Chi2r
	}
	for _, p := range res.Planes {
		sum.Planes = append(sum.Planes, cubePlane{Channels: p.Label, WaveUm: p.Coord * 1e6, N: p.N, Chi2r: p.Chi2r,
			XMas: p.X / recon.Mas, YMas: p.Y / recon.Mas, SizeMas: p.Size / recon.Mas})
	}
	if asJSON {
		enc := json.NewEncoder(stdout)
		enc.SetIndent("", "  ")
		if err := enc.Encode(sum); err != nil {
			return failure(err)
		}
	} else {
		printCubeSummary(stdout, sum)
	}
	printWarnings(stderr, "", sum.Warnings)
	return strictFailure(strict, "image", len(sum.Warnings))
}

func printCubeSummary(w io.Writer, s cubeSummary) {
	fmt.Fprintf(w, "Grid:        %d × %d pixels of %.4g mas\n", s.Grid.N, s.Grid.N, s.Grid.PixelMas)
	fmt.Fprintf(w, "Cube:        %d planes; spatial weight %.4g (of the gray image, χ²ᵣ %.4g), spectral %s weight %.4g\n",
		len(s.Planes), s.Weight, s.GrayChi2r, s.Spectral, s.SpectralWeight)
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
	for _, p := range []string{s.Outputs.FITS, s.Outputs.Montage, s.Outputs.CSV, s.Outputs.Moments, s.Outputs.Spectrum} {
		if p != "" {
			fmt.Fprintf(w, "Wrote %s\n", p)
		}
	}
	fmt.Fprintln(w, "Each plane is one solution consistent with its data; planes are positioned relative to each other only through the start and the spectral regularizer (V² and closure phases do not fix positions).")
}

// starEnvSummary is what `vcz image -channels ... -star ... -json` prints.
type starEnvSummary struct {
	StarF0      float64      `json:"star_f0"`
	StarF0Err   float64      `json:"star_f0_err"`
	Lambda0Um   float64      `json:"lambda0_um"`
	StarIndex   float64      `json:"star_index"`
	EnvIndex    float64      `json:"env_index"`
	EnvIndexErr float64      `json:"env_index_err"`
	Chi2r       float64      `json:"chi2r"`
	GrayChi2r   float64      `json:"gray_chi2r"`
	Iterations  int          `json:"iterations"`
	Seconds     float64      `json:"seconds"`
	Outputs     output.Paths `json:"outputs"`
}

// runStarEnv fits the star + environment model of c and prints its summary.
func runStarEnv(c *workflow.Cube, outs output.Outputs, out string, quiet, asJSON bool, stdout, stderr io.Writer) error {
	prog := newProgressLine(stderr, quiet)
	run, paths, err := c.RunStarEnv(outs, out, func(pr recon.Progress) bool {
		prog.report(pr)
		return true
	})
	prog.done()
	if err != nil {
		return failure(err)
	}
	r := run.Result
	sum := starEnvSummary{StarF0: r.F0, StarF0Err: r.F0Err, Lambda0Um: r.Lambda0 * 1e6, StarIndex: c.Spec.StarIndexValue(),
		EnvIndex: r.EnvIndex, EnvIndexErr: r.EnvIndexErr, Chi2r: r.Chi2r, GrayChi2r: r.Gray.Chi2r, Iterations: r.Iter,
		Seconds: run.Seconds, Outputs: paths}
	if asJSON {
		enc := json.NewEncoder(stdout)
		enc.SetIndent("", "  ")
		if err := enc.Encode(sum); err != nil {
			return failure(err)
		}
		return nil
	}
	if quiet {
		return nil
	}
	fmt.Fprintf(stdout, "Star:        %.4f of the flux at %.4g µm ± %.2g, spectral index %.3g (given)\n", sum.StarF0, sum.Lambda0Um, sum.StarF0Err, sum.StarIndex)
	fmt.Fprintf(stdout, "Environment: spectral index %.4g ± %.2g\n", sum.EnvIndex, sum.EnvIndexErr)
	fmt.Fprintf(stdout, "Fit:         χ²ᵣ %.4g over all channels (gray image %.4g), %d iterations, %.1f s\n", sum.Chi2r, sum.GrayChi2r, sum.Iterations, sum.Seconds)
	fmt.Fprintln(stdout, "Note:        1σ errors from the profile with the image refitted (noise only; the regularizer's bias is not in them); the image is the environment alone.")
	for _, p := range []string{paths.FITS, paths.PNG} {
		if p != "" {
			fmt.Fprintf(stdout, "Wrote %s\n", p)
		}
	}
	return nil
}
