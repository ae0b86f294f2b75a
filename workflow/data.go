package workflow

import (
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"time"

	"vcz/dataset"
	"vcz/io/oifits"
	"vcz/io/safefile"
)

// ReadData reads OIFITS files and selects their points. Its errors are *InputError and
// name the file.
func ReadData(paths []string, sel dataset.Selection) ([]*oifits.File, *dataset.Data, error) {
	if len(paths) == 0 {
		return nil, nil, inputError("", errors.New("no OIFITS file given"))
	}
	files := make([]*oifits.File, 0, len(paths))
	for _, p := range paths {
		f, err := oifits.ReadFile(p)
		if err != nil {
			return nil, nil, inputError(p, err)
		}
		files = append(files, f)
	}
	d, err := dataset.FromFiles(files, sel)
	if err != nil {
		return nil, nil, inputError("", err)
	}
	return files, d, nil
}

// CheckNotInputs returns an *InputError when one of outputs is one of inputs: the same
// file, also through a symbolic or hard link (os.SameFile), so that a run never replaces
// its own data. An output that does not exist yet cannot be an input; empty paths are
// skipped.
func CheckNotInputs(inputs []string, outputs ...string) error {
	for _, o := range outputs {
		if o == "" {
			continue
		}
		so, err := os.Stat(o)
		if err != nil {
			continue
		}
		for _, in := range inputs {
			if si, err := os.Stat(in); err == nil && os.SameFile(so, si) {
				return inputError(o, fmt.Errorf("%s: the output would replace the input file %s; choose another output name", o, in))
			}
		}
	}
	return nil
}

// CheckOutputs returns an *InputError naming the first of paths that cannot be written,
// so that a run fails at once rather than after its work: its folder does not exist or is
// not a folder, the path is itself a folder, or the folder refuses a new file (a file is
// created there and removed). It also removes, from each folder, the temporary files an
// earlier run that was killed while writing left behind (safefile.SweepStale). Empty paths
// are skipped.
func CheckOutputs(paths ...string) error {
	for _, p := range paths {
		if p == "" {
			continue
		}
		dir := filepath.Dir(p)
		if st, err := os.Stat(dir); err != nil || !st.IsDir() {
			return inputError(p, fmt.Errorf("%s: cannot write: folder %s does not exist", p, dir))
		}
		if st, err := os.Stat(p); err == nil && st.IsDir() {
			return inputError(p, fmt.Errorf("%s: is a folder; give a file name", p))
		}
		if err := CheckFolder(dir); err != nil {
			return inputError(p, fmt.Errorf("%s: %v", p, err))
		}
	}
	return nil
}

// started is when the process started (near enough: when this package was initialised);
// temporary files older than that cannot belong to a write of this process.
var started = time.Now()

// MakeFolder makes the output folder dir and its parents where missing; its error names
// dir and says what stopped it, without the system call's name.
func MakeFolder(dir string) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		var pe *fs.PathError
		if errors.As(err, &pe) {
			err = pe.Err
		}
		return fmt.Errorf("cannot make folder %s: %v", dir, err)
	}
	return nil
}

// OutputFolder makes dir when it does not exist and checks that a run can write its
// outputs there (MakeFolder, then CheckFolder): what every command that writes into a folder
// does before its work.
func OutputFolder(dir string) error {
	if err := MakeFolder(dir); err != nil {
		return err
	}
	return CheckFolder(dir)
}

// CheckFolder creates and removes a file in dir to learn whether the outputs of a run can
// be written there, and sweeps the stale temporaries of an earlier killed run.
func CheckFolder(dir string) error {
	f, err := os.CreateTemp(dir, ".vcz-check-*")
	if err != nil {
		var pe *fs.PathError
		if errors.As(err, &pe) {
			err = pe.Err
		}
		return fmt.Errorf("cannot write in folder %s: %v", dir, err)
	}
	f.Close()
	os.Remove(f.Name())
	safefile.SweepStale(dir, started)
	return nil
}
