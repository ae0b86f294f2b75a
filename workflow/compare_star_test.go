package workflow

import (
	"errors"
	"strings"
	"testing"

	"vcz/runspec"
)

// TestCompareStarRefused checks that a comparison with -star is refused before any run with
// one *InputError on one line that names the option and what to run instead.
func TestCompareStarRefused(t *testing.T) {
	files, d := demoData(t)
	base := runspec.Spec{Grid: 32, Iterations: 30, Starts: 1}
	for _, kv := range [][2]string{{"channels", "2"}, {"star", "point"}} {
		if err := base.Set(kv[0], kv[1]); err != nil {
			t.Fatal(err)
		}
	}
	entries, err := CompareEntries(base, "tv,smooth", "")
	if err != nil {
		t.Fatal(err)
	}
	c, err := NewComparison(files, d, entries)
	var ie *InputError
	if c != nil || !errors.As(err, &ie) {
		t.Fatalf("comparison %v, error %v: want an *InputError", c, err)
	}
	msg := err.Error()
	if strings.Contains(msg, "\n") || !strings.Contains(msg, "-star") || !strings.Contains(msg, "vcz image -star") {
		t.Errorf("message %q: want one line naming -star and vcz image -star", msg)
	}
}
