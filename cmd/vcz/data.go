package main

import (
	"vcz/io/oifits"
	"vcz/recon"
)

// readData reads OIFITS files and selects their points. Errors name the
// file and are marked as bad input.
func readData(paths []string, sel recon.Selection) ([]*oifits.File, *recon.Data, error) {
	if len(paths) == 0 {
		return nil, nil, badInputf("no OIFITS file given")
	}
	files := make([]*oifits.File, 0, len(paths))
	for _, p := range paths {
		f, err := oifits.ReadFile(p)
		if err != nil {
			return nil, nil, badInput(err)
		}
		files = append(files, f)
	}
	d, err := recon.FromFiles(files, sel)
	if err != nil {
		return nil, nil, badInput(err)
	}
	return files, d, nil
}
