package main

import (
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"sort"
	"strings"

	"vcz/dataset"
	"vcz/io/safefile"
	"vcz/output"
	"vcz/workflow"
)

// Exit codes, documented in doc.go.
const (
	exitOK       = 0 // success
	exitFailure  = 1 // the computation failed (no convergence, non-finite values, I/O while writing)
	exitBadInput = 2 // bad input files, bad options or wrong usage
)

// exitError carries the exit code that an error should produce.
type exitError struct {
	code int
	err  error
}

func (e *exitError) Error() string { return e.err.Error() }
func (e *exitError) Unwrap() error { return e.err }

// badInput marks err as caused by the user's input or options (exit 2).
func badInput(err error) error {
	if err == nil {
		return nil
	}
	return &exitError{code: exitBadInput, err: err}
}

// badInputf formats a bad-input error.
func badInputf(format string, args ...any) error {
	return badInput(fmt.Errorf(format, args...))
}

// failure marks err as a failure of the computation (exit 1).
func failure(err error) error {
	if err == nil {
		return nil
	}
	return &exitError{code: exitFailure, err: err}
}

// errHelp is returned when the user asked for help; it exits with 0.
var errHelp = errors.New("help requested")

// command is one subcommand of vcz.
type command struct {
	name    string
	summary string
	// run executes the subcommand with its own arguments. It returns nil on
	// success, errHelp after printing help, or an error whose exit code is
	// chosen by exitCode.
	run func(args []string, stdout, stderr io.Writer) error
}

// commands lists the subcommands. It is made before any init function runs,
// so a command defined in its own file may add itself with register in that
// file's init.
var commands = map[string]*command{}

// register adds a subcommand; it is called from init functions.
func register(c *command) {
	if _, dup := commands[c.name]; dup {
		panic("vcz: command " + c.name + " registered twice")
	}
	commands[c.name] = c
}

func init() {
	for _, c := range []*command{
		{name: "image", summary: "reconstruct an image from OIFITS data and write FITS, PNG and fit plots", run: runImage},
		{name: "demo", summary: "reconstruct the embedded demo data set and write the results into a folder", run: runDemo},
		{name: "compare", summary: "reconstruct with several regularizers side by side and write a report", run: runCompare},
		{name: "batch", summary: "image many epochs of one target: in parallel, resumable, sharded for job arrays, optionally jointly", run: runBatch},
		{name: "fit", summary: "fit parametric models (discs, limb darkening, binaries) to the data", run: runFit},
		{name: "simulate", summary: "simulate OIFITS data of a model observed with an observing plan", run: runSimulate},
		{name: "inspect", summary: "summarise OIFITS files: targets, data, baselines, resolution", run: runInspect},
		{name: "version", summary: "print the version of vcz", run: runVersion},
		{name: "help", summary: "show help for vcz or for one command", run: runHelp},
	} {
		register(c)
	}
}

// run is the whole program: it takes the argument list (without the program
// name) and the output writers, and returns the exit code.
func run(args []string, stdout, stderr io.Writer) int {
	if len(args) == 0 {
		printUsage(stderr)
		return exitBadInput
	}
	name := args[0]
	switch name {
	case "-h", "-help", "--help":
		printUsage(stdout)
		return exitOK
	case "-version", "--version":
		name = "version"
	}
	c, ok := commands[name]
	if !ok {
		fmt.Fprintf(stderr, "vcz: unknown command %q; run 'vcz help' for the list\n", name)
		return exitBadInput
	}
	w := watchSignals(stderr)
	err := runGuarded(c, args[1:], stdout, stderr)
	if sig := w.stop(); sig != nil {
		// Outputs finished before the signal are kept; a write under way
		// when it came has finished or been abandoned with its temporary.
		safefile.RemoveTemporaries()
		if err != nil {
			fmt.Fprintf(stderr, "vcz %s: %s\n", name, errorText(name, err))
		}
		fmt.Fprintf(stderr, "vcz %s: stopped by %s; files reported as written are complete, nothing else was written\n", name, signalName(sig))
		return exitCodeOf(sig)
	}
	return exitCode(name, err, stderr)
}

// exitCode reports err on stderr in one line, "vcz COMMAND: message" (a message that
// begins with the command's name loses that repetition), and turns it into an exit code.
func exitCode(name string, err error, stderr io.Writer) int {
	if err == nil || errors.Is(err, errHelp) {
		return exitOK
	}
	fmt.Fprintf(stderr, "vcz %s: %s\n", name, errorText(name, err))
	var ee *exitError
	if errors.As(err, &ee) {
		return ee.code
	}
	var ie *workflow.InputError
	if errors.As(err, &ie) {
		return exitBadInput
	}
	return exitFailure
}

// errorText is err on one line, without a leading "COMMAND: " that would repeat the
// "vcz COMMAND: " it is printed after.
func errorText(name string, err error) string {
	msg := strings.TrimSpace(err.Error())
	msg = strings.ReplaceAll(msg, "\n", "; ")
	return strings.TrimPrefix(msg, name+": ")
}

func printUsage(w io.Writer) {
	fmt.Fprint(w, `vcz rebuilds images of the sky from interferometric data (OIFITS).

Usage:
  vcz COMMAND [options] [arguments]

Commands:
`)
	names := make([]string, 0, len(commands))
	for n := range commands {
		names = append(names, n)
	}
	sort.Strings(names)
	for _, n := range names {
		fmt.Fprintf(w, "  %-10s %s\n", n, commands[n].summary)
	}
	fmt.Fprint(w, `
Run 'vcz help COMMAND' or 'vcz COMMAND --help' for the options of one command.

Exit status: 0 success (warnings included), 1 the computation failed (or,
with -strict, the quality verdict warned), 2 bad input or usage, 130 or 143
after SIGINT or SIGTERM.
`)
}

// newFlagSet makes the flag set of one subcommand. Its usage text starts with
// the given synopsis and description, followed by the flags. Parse errors are
// reported by parseFlags, not by the flag package.
func newFlagSet(name, synopsis, description string, stderr io.Writer) *flag.FlagSet {
	fs := flag.NewFlagSet("vcz "+name, flag.ContinueOnError)
	fs.SetOutput(io.Discard)
	fs.Usage = func() {
		out := fs.Output()
		fmt.Fprintf(out, "Usage: vcz %s %s\n\n%s\n", name, synopsis, strings.TrimSpace(description))
		has := false
		fs.VisitAll(func(*flag.Flag) { has = true })
		if has {
			fmt.Fprint(out, "\nOptions:\n")
			fs.PrintDefaults()
		}
	}
	return fs
}

// parseFlags parses args with fs. Help goes to stdout and yields errHelp;
// a bad flag yields a one-line bad-input error.
//
// Flags may come before, between or after the positional arguments, as in
// "vcz image data.oifits -o img.fits"; after "--" everything is positional.
// The positional arguments are then available as fs.Args().
func parseFlags(fs *flag.FlagSet, args []string, stdout io.Writer) error {
	var pos []string
	rest := args
	var err error
	for {
		if err = fs.Parse(rest); err != nil {
			break
		}
		rest = fs.Args()
		if len(rest) == 0 {
			break
		}
		// fs.Parse stops at the first non-flag argument or after "--".
		consumed := len(args) - len(rest)
		if consumed > 0 && args[consumed-1] == "--" {
			pos = append(pos, rest...)
			break
		}
		pos = append(pos, rest[0])
		rest = rest[1:]
		args = rest
	}
	if err == nil {
		// Leave the positional arguments in fs.Args().
		_ = fs.Parse(append([]string{"--"}, pos...))
		return nil
	}
	if errors.Is(err, flag.ErrHelp) {
		fs.SetOutput(stdout)
		fs.Usage()
		return errHelp
	}
	return badInputf("%s: %v (run '%s --help')", fs.Name()[len("vcz "):], err, fs.Name())
}

func runVersion(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("version", "", "Print the version of vcz and of the Go toolchain that built it.", stderr)
	if err := parseFlags(fs, args, stdout); err != nil {
		return err
	}
	if fs.NArg() > 0 {
		return badInputf("version takes no arguments")
	}
	fmt.Fprintf(stdout, "vcz %s\n", output.VersionString())
	return nil
}

func runHelp(args []string, stdout, stderr io.Writer) error {
	if len(args) == 0 {
		printUsage(stdout)
		return nil
	}
	if len(args) > 1 {
		return badInputf("help takes at most one command name")
	}
	c, ok := commands[args[0]]
	if !ok {
		return badInputf("unknown command %q; run 'vcz help' for the list", args[0])
	}
	if c.name == "help" {
		printUsage(stdout)
		return nil
	}
	return c.run([]string{"--help"}, stdout, stderr)
}

// flagGiven reports whether the flag name was set on the command line.
func flagGiven(fs *flag.FlagSet, name string) bool {
	given := false
	fs.Visit(func(f *flag.Flag) { given = given || f.Name == name })
	return given
}

// writeJSONTo writes v as indented JSON.
func writeJSONTo(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(v)
}

// writeJSON writes v as indented JSON; an error of writing exits 1.
func writeJSON(w io.Writer, v any) error {
	return failure(writeJSONTo(w, v))
}

// printNotices prints the notes of reading d, one "note: TEXT" line each, unless quiet.
func printNotices(w io.Writer, d *dataset.Data, quiet bool) {
	if quiet {
		return
	}
	for _, n := range d.Notices {
		fmt.Fprintf(w, "note: %s\n", n)
	}
}

// runGuarded runs c and turns a panic on this goroutine (one raised again from a helper
// goroutine included) into an error of one line, so that a defect shows the user what
// failed, not a stack trace; the exit status is then 1.
func runGuarded(c *command, args []string, stdout, stderr io.Writer) (err error) {
	defer func() {
		if v := recover(); v != nil {
			safefile.RemoveTemporaries() // a write under way is abandoned, not finished
			err = failure(fmt.Errorf("internal error, a defect of vcz (please report it with the command and data): %v", v))
		}
	}()
	return c.run(args, stdout, stderr)
}
