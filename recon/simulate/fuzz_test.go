package simulate

import (
	"os"
	"path/filepath"
	"testing"
)

// FuzzParsePlan: plan files either parse to a plan that passes Validate
// or give an error; never a panic.
func FuzzParsePlan(f *testing.F) {
	f.Add([]byte(DemoPlanTOML))
	for _, name := range []string{"plan-four-compact.toml", "plan-six-snapshot.toml"} {
		if b, err := os.ReadFile(filepath.Join("..", "..", "examples", name)); err == nil {
			f.Add(b)
		}
	}
	f.Add([]byte("[site]\nlatitude = 100\n"))
	f.Fuzz(func(t *testing.T, src []byte) {
		p, err := ParsePlan(src, "f.toml")
		if err != nil {
			return
		}
		if err := p.Validate(); err != nil {
			t.Fatalf("invalid plan accepted: %v", err)
		}
	})
}
