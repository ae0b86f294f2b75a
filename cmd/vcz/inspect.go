package main

import (
	"fmt"
	"io"
	"os"
	"strings"

	"vcz/output"
	"vcz/runspec"
	"vcz/workflow"
)

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
	if *plotDir != "" {
		// The folder is made and tried before the data are read, so that a folder that
		// cannot take the plots is bad input found at once.
		if err := workflow.OutputFolder(*plotDir); err != nil {
			return badInputf("inspect: -o %s: %v", *plotDir, err)
		}
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
		paths, err := output.DataPlots(files, d, *plotDir)
		if err != nil {
			// Part of the plots is not the set asked for: none is left.
			for _, p := range paths {
				os.Remove(p)
			}
			return failure(err)
		}
		rep.Plots = paths
	}
	if *asJSON {
		return writeJSON(stdout, rep)
	}
	rep.WriteText(&escaper{w: stdout})
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
