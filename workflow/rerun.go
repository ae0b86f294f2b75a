package workflow

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"strconv"
	"strings"

	"vcz/io/fitsimage"
	"vcz/io/safefile"
	"vcz/output"
	"vcz/runspec"
)

// Rerun is what a result's header says of the run that made it: its options and its data
// files, by the paths the user gave and their SHA-256.
type Rerun struct {
	Spec   runspec.Spec
	Files  []string
	Hashes []string // "" where the header has none
}

// ReadRerun reads the provenance cards (output.RunSpecKey, DataPathKey, DataHashKey) of
// the FITS image at path and checks that every data file is still there with the same
// SHA-256, so that the run can be made again. Errors are *InputError naming the file.
func ReadRerun(path string) (*Rerun, error) {
	im, err := fitsimage.ReadFile(path)
	if err != nil {
		return nil, inputError(path, err)
	}
	cards := map[string]string{}
	for _, c := range im.Cards {
		if s, ok := c.Value.(string); ok {
			cards[c.Key] = s
		}
	}
	text, ok := cards[output.RunSpecKey]
	if !ok {
		return nil, inputError(path, fmt.Errorf("%s: no %s card: not an image of vcz image, or of a version before -rerun", path, output.RunSpecKey))
	}
	var lines []string
	if err := json.Unmarshal([]byte(text), &lines); err != nil {
		return nil, inputError(path, fmt.Errorf("%s: %s is not a JSON list of options: %v", path, output.RunSpecKey, err))
	}
	spec, err := runspec.Parse(strings.Join(lines, "\n"))
	if err != nil {
		return nil, inputError(path, fmt.Errorf("%s: %s: %v", path, output.RunSpecKey, err))
	}
	r := &Rerun{Spec: spec}
	for i := 1; ; i++ {
		p, ok := cards[output.DataPathKey+strconv.Itoa(i)]
		if !ok {
			break
		}
		r.Files = append(r.Files, p)
		r.Hashes = append(r.Hashes, cards[output.DataHashKey+strconv.Itoa(i)])
	}
	if len(r.Files) == 0 {
		return nil, inputError(path, fmt.Errorf("%s: no %s1 card: the data files of this result are not known", path, output.DataPathKey))
	}
	for i, p := range r.Files {
		b, err := safefile.ReadFile(p)
		if err != nil {
			return nil, inputError(p, fmt.Errorf("%s: data file %d of %s: %v", p, i+1, path, err))
		}
		sum := sha256.Sum256(b)
		if h := r.Hashes[i]; h != "" && h != hex.EncodeToString(sum[:]) {
			return nil, inputError(p, fmt.Errorf("%s: data file %d of %s has changed since (its SHA-256 differs)", p, i+1, path))
		}
	}
	return r, nil
}
