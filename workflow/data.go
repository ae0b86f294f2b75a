package workflow

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"vcz/dataset"

	"vcz/io/oifits"
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

// CheckOutputs returns an *InputError naming the first of paths whose folder does not
// exist (or is not a folder), so that a run fails at once rather than after its work.
// Empty paths are skipped.
func CheckOutputs(paths ...string) error {
	for _, p := range paths {
		if p == "" {
			continue
		}
		dir := filepath.Dir(p)
		if st, err := os.Stat(dir); err != nil || !st.IsDir() {
			return inputError(p, fmt.Errorf("%s: cannot write: folder %s does not exist", p, dir))
		}
	}
	return nil
}
