// Package runspec is the typed run specification of a reconstruction: everything
// `vcz image` can be asked to do, as one struct, Spec, whose zero value is `vcz image`
// with no option.
//
// Spec.Problem turns a Spec into the recon.Problem and recon.Settings of recon.Solve on a
// data set (reading the prior, start and model files it names), and Spec.Selection gives
// the dataset.Selection of the data to read. Angles are in radians, wavelengths in metres.
//
// # One table of options
//
// Every option is a row of one table (options.go): its name, help line, default, and the
// functions that read its text into a Spec and write it back. The same rows register the
// command-line flags (RegisterFlags, with the flag types and defaults -help shows), apply
// the keys of a job file (Spec.SetTable: the keys are the flag names) and write and read
// the canonical text (Spec.String, Parse). Adding an option is one row plus its Spec field.
//
// Text that means the default (-reg tv, -weight auto, -prior flat, -start auto, -seed 1)
// leaves the field at its zero value, so that options meaning the same image give the same
// Spec.
//
// # Canonical text
//
// Spec.String writes one line "name=value" for each option whose value is not the default,
// in the fixed order of the table, with the worker count left out: the default Spec is "".
// Values are exact: angles in mas and wavelengths in µm with the fewest digits that read
// back as the same float64 (in rad or m when no such digits exist). Parse reads the text
// back into an equal Spec. The text is the input of the batch resume hash and the option
// record of the FITS header; only options that change the image are in it, so a new option
// at its default leaves old hashes valid.
//
// -start also takes "model", the image of the -from-model file: `vcz image -from-model F`
// without -start gives Start{Kind: StartModel}, written "start=model".
//
// # Errors
//
// A bad value is an *OptionError whose text names the option as the user wrote it
// (`-pixel "x": want a positive angle such as 0.25mas`, or `pixel "x": ...` for a job-file
// key). Problem checks a Spec built in Go with Validate, by writing each field's text and
// reading it back, so it refuses exactly what the flags refuse.
package runspec
