package workflow

import (
	"errors"

	"vcz/io/oifits"
	"vcz/recon"
)

// ReadData reads OIFITS files and selects their points. Its errors are *InputError and
// name the file.
func ReadData(paths []string, sel recon.Selection) ([]*oifits.File, *recon.Data, error) {
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
	d, err := recon.FromFiles(files, sel)
	if err != nil {
		return nil, nil, inputError("", err)
	}
	return files, d, nil
}
