package main

import (
	"encoding/json"
	"fmt"
	"io"
	"os"
	"strings"

	"vcz/output"
	"vcz/runspec"
	"vcz/workflow"
)

const inspectDoc = `Summarise one or more OIFITS files, merged into one data set: targets,
instruments with their wavelength range and channel count, the number of
points per data type (valid, flagged, non-finite), baseline lengths, the
nominal resolution λmin/(2·Bmax), the largest constrained scale λmax/Bmin, a
suggested pixel size and grid, and the MJD range with the number of nights;
then, for each night and instrument, the date, array, OIFITS revision,
stations, the number of distinct baselines and closure triangles, and for each
data type the number of points, their errors (median and range) and median
signal-to-noise ratio (-json: "breakdown").

With -o DIR it also writes DIR/uv.png (the (u,v) coverage) and, for each
data type present, DIR/<type>.png against spatial frequency (vis2.png,
t3phi.png for closure phases against the longest baseline of the triangle,
t3amp.png, visamp.png, visphi.png), coloured by instrument when there are
several, else by wavelength; V² and amplitudes that span more than two decades
on a logarithmic axis.`

func runInspect(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("inspect", "[options] FILE...", inspectDoc, stderr)
	selFlags := runspec.RegisterFlags(fs, runspec.Select)
	asJSON := fs.Bool("json", false, "print the summary as one JSON object on stdout")
	plotDir := fs.String("o", "", "write PNG plots of the data into this folder (made if missing)")
	fs.StringVar(plotDir, "plot", "", "earlier name of -o")
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
	files, d, err := workflow.ReadData(fs.Args(), spec.Selection())
	if err != nil {
		return err
	}
	rep := output.NewInspectReport(d)
	// The files as the user named them: three nights in three folders, all named
	// data.oifits, are told apart by their paths.
	rep.Files = append([]string(nil), fs.Args()...)
	rep.Breakdown = output.Breakdown(files, d)
	if *plotDir != "" {
		if err := os.MkdirAll(*plotDir, 0o755); err != nil {
			return badInputf("inspect: -plot: %v", err)
		}
		paths, err := output.DataPlots(files, d, *plotDir)
		if err != nil {
			return failure(err)
		}
		rep.Plots = paths
	}
	if *asJSON {
		enc := json.NewEncoder(stdout)
		enc.SetIndent("", "  ")
		return enc.Encode(rep)
	}
	printInspect(&escaper{w: stdout}, rep)
	return nil
}

// escaper writes text with its control characters escaped, so that a header string of a
// file (a target name holding ESC[2J, say) cannot drive the terminal: every C0 control but
// newline and tab, DEL and the C1 controls become \xNN or \u00NN (ECMA-48 sect. 5, from
// memory: these are the codes a terminal acts on). JSON output escapes them itself.
type escaper struct{ w io.Writer }

func (e *escaper) Write(p []byte) (int, error) {
	var b strings.Builder
	for _, r := range string(p) {
		switch {
		case r == '\n' || r == '\t':
			b.WriteRune(r)
		case r < 0x20 || r == 0x7f:
			fmt.Fprintf(&b, "\\x%02x", r)
		case r >= 0x80 && r <= 0x9f:
			fmt.Fprintf(&b, "\\u%04x", r)
		default:
			b.WriteRune(r)
		}
	}
	if _, err := io.WriteString(e.w, b.String()); err != nil {
		return 0, err
	}
	return len(p), nil
}

func printInspect(w io.Writer, r output.InspectReport) {
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
		c    output.InspectCounts
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
		fmt.Fprintf(w, "By night and instrument:\n%s", output.BreakdownText(r.Breakdown))
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
