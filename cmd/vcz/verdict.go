package main

import (
	"flag"
	"fmt"
	"io"

	"vcz/output"
)

// The quality verdict of a reconstruction (recon.Result.Warnings) goes
// everywhere the result goes: one "warning:" line per reason on stderr after
// the run's summary, NWARN and WARNn in the image's FITS header, a
// "warnings" list in JSON and a count in tables. -strict turns any warning
// into exit status 1 once every output is written.

// strictUsage is the help text of -strict.
const strictUsage = "exit with status 1 when the quality verdict gives any warning (the outputs are still written)"

// registerStrict adds -strict to fs.
func registerStrict(fs *flag.FlagSet) *bool {
	return fs.Bool("strict", false, strictUsage)
}

// quietUsage is the help text of -quiet: warnings are results, not chatter,
// so they are printed like errors.
const quietUsage = "print nothing on stderr but warnings and errors (the summary on stdout stays)"

// printWarnings writes each warning as one line on w: "warning: TEXT", or
// "warning: LABEL: TEXT" when label is not empty.
func printWarnings(w io.Writer, label string, warnings []string) {
	for _, s := range warnings {
		s = output.OneLine(s)
		if label != "" {
			fmt.Fprintf(w, "warning: %s: %s\n", label, s)
		} else {
			fmt.Fprintf(w, "warning: %s\n", s)
		}
	}
}

// strictFailure is the error of a run with -strict whose results carry n
// warnings (0: nil). what names the command.
func strictFailure(strict bool, what string, n int) error {
	if !strict || n == 0 {
		return nil
	}
	return failure(fmt.Errorf("%s: %s with -strict (outputs written; see the warning lines above)", what, output.CountWarnings(n)))
}
