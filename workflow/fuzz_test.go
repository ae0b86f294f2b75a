package workflow

import (
	"os"
	"path/filepath"
	"testing"

	"vcz/runspec"
)

// FuzzJobFile reads arbitrary bytes as a job file: it never panics, an error is an
// *InputError, and accepted epochs have names fit for files, none twice, and files to read.
func FuzzJobFile(f *testing.F) {
	if b, err := os.ReadFile(filepath.Join("..", "examples", "batch", "job.toml")); err == nil {
		f.Add(b)
	}
	f.Add([]byte("[[epoch]]\nname = \"a\"\nfiles = [\"a.oifits\"]\n"))
	f.Add([]byte("output = \"out\"\n[image]\nreg = \"mem\"\nn = 64\n[[epoch]]\nfiles = [\"x.oifits\", \"y.oifits\"]\niter = 50\n"))
	f.Fuzz(func(t *testing.T, src []byte) {
		epochs, _, err := parseJobFile(src, "job.toml", runspec.Spec{})
		if err != nil {
			if _, ok := err.(*InputError); !ok {
				t.Fatalf("error %v is %T, not *InputError", err, err)
			}
			return
		}
		seen := map[string]bool{}
		for _, e := range epochs {
			if err := CheckEpochName(e.Name); err != nil || seen[e.Name] || len(e.Files) == 0 {
				t.Fatalf("accepted epoch %q (%v, twice %v, %d files)", e.Name, err, seen[e.Name], len(e.Files))
			}
			seen[e.Name] = true
		}
	})
}
