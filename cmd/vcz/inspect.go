package main

import (
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"

	"vcz/io/plots"
	"vcz/output"
	"vcz/recon"
	"vcz/runspec"
	"vcz/workflow"
)

const inspectDoc = `Summarise one or more OIFITS files, merged into one data set: targets,
instruments with their wavelength range and channel count, the number of
points per data type (valid, flagged, non-finite), baseline lengths, the
nominal resolution λmin/(2·Bmax), the largest constrained scale λmax/Bmin, a
suggested pixel size and grid, and the MJD range with the number of nights.

With -plot DIR it also writes DIR/uv.png (the (u,v) coverage) and DIR/vis2.png
(V² against spatial frequency).`

// inspectReport is the JSON form of the summary. Angles are in
// milliarcseconds, baselines in metres, frequencies in Mλ, wavelengths in µm.
type inspectReport struct {
	Files       []string            `json:"files"`
	Targets     []string            `json:"targets"`
	Instruments []inspectInstrument `json:"instruments"`
	Vis2        inspectCounts       `json:"vis2"`
	T3          inspectCounts       `json:"t3"`
	Vis         inspectCounts       `json:"vis"`
	Baseline    inspectRange        `json:"baseline_m"`
	Frequency   inspectRange        `json:"frequency_mlambda"`
	Wavelength  inspectRange        `json:"wavelength_um"`
	Resolution  float64             `json:"resolution_mas"`
	Largest     float64             `json:"largest_scale_mas"`
	Grid        inspectGrid         `json:"suggested_grid"`
	MJD         inspectRange        `json:"mjd"`
	Nights      int                 `json:"nights"`
	Notices     []string            `json:"notices"`
	Plots       []string            `json:"plots,omitempty"`
}

type inspectInstrument struct {
	Name     string  `json:"name"`
	Channels int     `json:"channels"`
	MinUm    float64 `json:"wavelength_min_um"`
	MaxUm    float64 `json:"wavelength_max_um"`
}

type inspectCounts struct {
	Valid     int `json:"valid"`
	Flagged   int `json:"flagged"`
	NonFinite int `json:"nonfinite"`
}

type inspectRange struct {
	Min float64 `json:"min"`
	Max float64 `json:"max"`
}

type inspectGrid struct {
	N         int      `json:"n"`
	PixelMas  float64  `json:"pixel_mas"`
	FOVMas    float64  `json:"fov_mas"`
	SizeModel string   `json:"size_model,omitempty"`
	SizeMas   float64  `json:"size_mas,omitempty"`
	Reasons   []string `json:"reasons"`
}

func runInspect(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("inspect", "[options] FILE...", inspectDoc, stderr)
	selFlags := runspec.RegisterFlags(fs, runspec.Select)
	asJSON := fs.Bool("json", false, "print the summary as one JSON object on stdout")
	plotDir := fs.String("plot", "", "write PNG plots of the data into this folder (made if missing)")
	if err := parseFlags(fs, args, stdout); err != nil {
		return err
	}
	if fs.NArg() == 0 {
		return badInputf("inspect: no OIFITS file given (run 'vcz inspect --help')")
	}
	spec, err := selFlags.Spec()
	if err != nil {
		return badInputf("inspect: %v", err)
	}
	_, d, err := workflow.ReadData(fs.Args(), spec.Selection())
	if err != nil {
		return err
	}
	rep := makeInspectReport(d)
	if *plotDir != "" {
		paths, err := inspectPlots(d, *plotDir)
		if err != nil {
			return err
		}
		rep.Plots = paths
	}
	if *asJSON {
		enc := json.NewEncoder(stdout)
		enc.SetIndent("", "  ")
		return enc.Encode(rep)
	}
	printInspect(stdout, rep)
	return nil
}

func makeInspectReport(d *recon.Data) inspectReport {
	s := d.Summarize()
	r := inspectReport{
		Files:      s.Files,
		Targets:    nonNil(s.Targets),
		Vis2:       inspectCounts(s.Vis2),
		T3:         inspectCounts(s.T3),
		Vis:        inspectCounts(s.Vis),
		Baseline:   inspectRange{s.BaselineMin, s.BaselineMax},
		Frequency:  inspectRange{s.FreqMin / 1e6, s.FreqMax / 1e6},
		Wavelength: inspectRange{s.LambdaMin * 1e6, s.LambdaMax * 1e6},
		Resolution: s.Resolution / recon.Mas,
		Largest:    s.LargestScale / recon.Mas,
		MJD:        inspectRange{s.MJDMin, s.MJDMax},
		Nights:     s.Nights,
		Notices:    nonNil(d.Notices),
		Grid: inspectGrid{
			N: s.Grid.N, PixelMas: s.Grid.Pixel / recon.Mas, FOVMas: s.Grid.FOV / recon.Mas,
			SizeModel: s.Grid.SizeModel, SizeMas: s.Grid.Size / recon.Mas, Reasons: nonNil(s.Grid.Reasons),
		},
	}
	for _, in := range s.Instruments {
		r.Instruments = append(r.Instruments, inspectInstrument{in.Name, in.Channels, in.LambdaMin * 1e6, in.LambdaMax * 1e6})
	}
	if r.Instruments == nil {
		r.Instruments = []inspectInstrument{}
	}
	if math.IsInf(r.Largest, 0) {
		r.Largest = 0
	}
	return r
}

func nonNil(s []string) []string {
	if s == nil {
		return []string{}
	}
	return s
}

func printInspect(w io.Writer, r inspectReport) {
	fmt.Fprintf(w, "Files:          %s\n", strings.Join(r.Files, ", "))
	fmt.Fprintf(w, "Targets:        %s\n", output.OrNone(strings.Join(r.Targets, ", ")))
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
		c    inspectCounts
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
	for _, n := range r.Notices {
		fmt.Fprintf(w, "Note: %s\n", n)
	}
	for _, p := range r.Plots {
		fmt.Fprintf(w, "Wrote %s\n", p)
	}
}

func plural(n int) string {
	if n == 1 {
		return ""
	}
	return "s"
}

// inspectPlots writes the (u,v) coverage and V² plots of d into dir.
func inspectPlots(d *recon.Data, dir string) ([]string, error) {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, badInputf("inspect: -plot: %v", err)
	}
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
			return nil, failure(err)
		}
		p := filepath.Join(dir, "uv.png")
		if err := fig.WriteFile(p); err != nil {
			return nil, failure(err)
		}
		written = append(written, p)
	}
	if d.Vis2.Len() > 0 {
		fig, err := plots.V2(plots.V2Data{U: d.Vis2.U, V: d.Vis2.V, Value: d.Vis2.Value, Err: d.Vis2.Err}, nil, nil,
			plots.Options{Title: titled("Squared visibility", title)})
		if err != nil {
			return nil, failure(err)
		}
		p := filepath.Join(dir, "vis2.png")
		if err := fig.WriteFile(p); err != nil {
			return nil, failure(err)
		}
		written = append(written, p)
	}
	return written, nil
}

func titled(what, target string) string {
	if target == "" {
		return what
	}
	return what + " — " + target
}
