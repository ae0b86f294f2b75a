package runspec

import (
	"bytes"
	"encoding/json"
	"fmt"
	"strings"

	"vcz/io/safefile"
	"vcz/recon/model"
)

// readModelFile reads the model of -from-model: a TOML model file (model.ParseTOML) or the
// JSON object 'vcz fit -json' prints, whose "model" member is the fitted model in the
// compact form. Errors are one line naming the file.
func readModelFile(path string) (*model.Model, error) {
	src, err := safefile.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("-from-model: %v", err)
	}
	var m *model.Model
	if t := bytes.TrimSpace(src); len(t) > 0 && t[0] == '{' {
		var j struct {
			Model *string `json:"model"`
		}
		if err := json.Unmarshal(src, &j); err != nil {
			return nil, fmt.Errorf("-from-model %s: not a TOML model file, and as JSON: %v", path, err)
		}
		if j.Model == nil {
			return nil, fmt.Errorf("-from-model %s: JSON without a \"model\" member (want the output of 'vcz fit -json')", path)
		}
		if m, err = model.ParseCompact(*j.Model); err != nil {
			return nil, fmt.Errorf("-from-model %s: %v", path, err)
		}
	} else if m, err = model.ParseTOML(src, path); err != nil {
		return nil, fmt.Errorf("-from-model: %s", strings.ReplaceAll(err.Error(), "\n", " "))
	}
	return m, nil
}
