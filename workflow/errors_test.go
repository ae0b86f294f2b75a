package workflow

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"vcz/dataset"

	"vcz/runspec"
)

// Errors caused by the input are *InputError with the one-line message the command prints,
// naming the file where there is one.
func TestInputErrors(t *testing.T) {
	dir := t.TempDir()
	bad := filepath.Join(dir, "bad.oifits")
	if err := os.WriteFile(bad, []byte("SIMPLE  = not a FITS file"), 0o644); err != nil {
		t.Fatal(err)
	}
	job := filepath.Join(dir, "job.toml")
	if err := os.WriteFile(job, []byte("[[epoch]]\nfiles = [\"a.oifits\"]\ncolour = 3\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		name, file, want string
		err              func() error
	}{
		{"no file", "", "no OIFITS file given", func() error { _, _, err := ReadData(nil, dataset.Selection{}); return err }},
		{"missing file", "nosuch.oifits", "nosuch.oifits", func() error { _, _, err := ReadData([]string{"nosuch.oifits"}, dataset.Selection{}); return err }},
		{"bad file", bad, "bad.oifits", func() error { _, _, err := ReadData([]string{bad}, dataset.Selection{}); return err }},
		{"no folder", filepath.Join(dir, "no", "x.fits"), "cannot write: folder", func() error { return CheckOutputs("", filepath.Join(dir, "no", "x.fits")) }},
		{"job key", job, "job.toml:3: unknown key epoch.colour", func() error { _, _, err := ReadJobFile(job, runspec.Spec{}); return err }},
		{"job and files", "", "give either -job or OIFITS files", func() error { _, _, err := Epochs(job, []string{bad}, runspec.Spec{}, 0.5); return err }},
		{"bad gap", "", "-gap 0 must be positive", func() error { _, _, err := Epochs("", []string{bad}, runspec.Spec{}, 0); return err }},
		{"shard", "", "batch: -shard: shard \"3/2\"", func() error { _, err := ChooseShard("3/2", os.Getenv); return err }},
		{"regularizer", "", "-reg: unknown regularizer \"bogus\"", func() error { _, err := CompareEntries(runspec.Spec{}, "bogus", ""); return err }},
		{"no data", "", "no usable data points after selection", func() error { return CheckData(&dataset.Data{}) }},
	} {
		err := c.err()
		var ie *InputError
		if !errors.As(err, &ie) {
			t.Errorf("%s: %T %v, want an *InputError", c.name, err, err)
			continue
		}
		if err == nil || !strings.Contains(err.Error(), c.want) || strings.Contains(err.Error(), "\n") {
			t.Errorf("%s: %v, want one line with %q", c.name, err, c.want)
		}
		if ie != nil && ie.File != c.file {
			t.Errorf("%s: File %q, want %q", c.name, ie.File, c.file)
		}
	}
}

// A job file that cannot be read is named first, as the data files are ("PATH: no such
// file or directory"), not after the system call that failed.
func TestJobFileUnreadable(t *testing.T) {
	dir := t.TempDir()
	for _, c := range []struct{ path, want string }{
		{filepath.Join(dir, "nosuch.toml"), filepath.Join(dir, "nosuch.toml") + ": no such file or directory"},
		{dir, dir + ": not a regular file"},
	} {
		_, _, err := ReadJobFile(c.path, runspec.Spec{})
		var ie *InputError
		if !errors.As(err, &ie) || ie.File != c.path || !strings.HasPrefix(err.Error(), c.want) {
			t.Errorf("%s: %v, want an *InputError starting %q", c.path, err, c.want)
		}
	}
}
