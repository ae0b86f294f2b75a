package batch

import (
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"vcz/io/fitsimage"
	"vcz/io/safefile"
)

// Hash returns the hexadecimal SHA-256 of the settings text followed by the contents of
// each file in order, each part preceded by its length as 8 bytes. File names do not
// enter: a renamed or moved file with the same content gives the same hash.
func Hash(settings string, files []string) (string, error) {
	h := sha256.New()
	var n [8]byte
	binary.LittleEndian.PutUint64(n[:], uint64(len(settings)))
	h.Write(n[:])
	io.WriteString(h, settings)
	for _, p := range files {
		f, err := os.Open(p)
		if err != nil {
			return "", err
		}
		st, err := f.Stat()
		if err != nil {
			f.Close()
			return "", err
		}
		binary.LittleEndian.PutUint64(n[:], uint64(st.Size()))
		h.Write(n[:])
		_, err = io.Copy(h, f)
		f.Close()
		if err != nil {
			return "", fmt.Errorf("%s: %w", p, err)
		}
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}

// Status is the record of one epoch's run, kept as a JSON file beside its outputs.
type Status struct {
	Epoch string `json:"epoch"`
	Hash  string `json:"hash"`
	// Outputs are the files the epoch wrote, relative to the status file's folder.
	Outputs []string `json:"outputs"`
	Row     Row      `json:"summary"`
}

// WriteStatus writes st to path atomically (safefile.Write).
func WriteStatus(path string, st *Status) error { return writeJSONFile(path, st) }

// ReadStatus reads a status file.
func ReadStatus(path string) (*Status, error) { return readJSONFile[Status](path) }

// writeJSONFile writes v as indented JSON and a newline to path atomically.
func writeJSONFile(path string, v any) error {
	b, err := json.MarshalIndent(v, "", "  ")
	if err != nil {
		return err
	}
	return safefile.WriteBytes(path, append(b, '\n'))
}

// readJSONFile reads the JSON file at path (a regular file: safefile.ReadFile) into a new
// T; an error of decoding names the file.
func readJSONFile[T any](path string) (*T, error) {
	b, err := safefile.ReadFile(path)
	if err != nil {
		return nil, err
	}
	var v T
	if err := json.Unmarshal(b, &v); err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return &v, nil
}

// Complete reports whether the status file at path records a finished epoch (state
// "done") with the given hash whose outputs all exist and are not empty. It returns the
// status when it does.
func Complete(path, hash string) (*Status, bool) {
	st, err := ReadStatus(path)
	if err != nil || st.Hash != hash || st.Row.Status != StateDone {
		return nil, false
	}
	dir := filepath.Dir(path)
	for _, o := range st.Outputs {
		p := filepath.Join(dir, o)
		fi, err := os.Stat(p)
		if err != nil || fi.Size() == 0 {
			return nil, false
		}
		// A FITS image of the epoch must carry the same hash: one rewritten by a later
		// run with other settings, killed before its status file, is not this result.
		if strings.EqualFold(filepath.Ext(o), ".fits") && fitsHash(p) != hash {
			return nil, false
		}
	}
	return st, true
}

// fitsHash returns the INHASH card of the FITS image at path, or "".
func fitsHash(path string) string {
	im, err := fitsimage.ReadFile(path)
	if err != nil {
		return ""
	}
	for _, c := range im.Cards {
		if c.Key == "INHASH" {
			if v, ok := c.Value.(string); ok {
				return v
			}
		}
	}
	return ""
}
