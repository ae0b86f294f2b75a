package fit

import (
	"encoding/json"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"vcz/recon/model"
)

// The model file written from a fit reads back (model.ParseTOML) to the
// same components, bit-identical values, free flags and bounds, and an
// independent TOML reader (Python's tomllib, TOML 1.0) reads the same
// numbers from it.
func TestModelTOMLRoundTrip(t *testing.T) {
	truth := mustLoad(t, "ud:diameter=1.2;point:x=4,y=-3,flux=0.3;background:flux=0.05")
	d := synth(modelVis(truth), exactNoise)
	start := mustLoad(t, "ud:diameter~1.1(0.5..3);point:x~4.2,y~-2.8,flux~0.25(0..1);background:flux=0.05")
	res, err := Fit(d, start, Options{})
	if err != nil {
		t.Fatal(err)
	}
	src := res.ModelTOML("fitted to test data", "second line")
	t.Logf("model file:\n%s", src)
	back, err := model.ParseTOML(src, "fit.toml")
	if err != nil {
		t.Fatalf("%v in\n%s", err, src)
	}
	if len(back.Components) != len(res.Model.Components) {
		t.Fatalf("%d components read back, want %d", len(back.Components), len(res.Model.Components))
	}
	for i, c := range res.Model.Components {
		bc := back.Components[i]
		if bc.Kind() != c.Kind() {
			t.Fatalf("component %d: kind %s, want %s", i+1, bc.Kind(), c.Kind())
		}
		for j, p := range c.Params() {
			if q := bc.Params()[j]; q != p {
				t.Errorf("component %d: %+v read back as %+v", i+1, p, q)
			}
		}
	}
	if !strings.HasPrefix(string(src), "# fitted to test data\n# second line\n") || !strings.Contains(string(src), "± ") {
		t.Errorf("header or uncertainty comments missing:\n%s", src)
	}
	if len(res.Pairs) != 1 || !strings.Contains(string(src), "# "+res.Pairs[0].String()+"\n") ||
		!strings.Contains(string(src), "component 2 from component 1: separation 5") {
		t.Errorf("pair comment missing:\n%s", src)
	}

	py := "/usr/bin/python3"
	if _, err := os.Stat(py); err != nil {
		if os.Getenv("CI") != "" {
			t.Fatal("CI: /usr/bin/python3 is required")
		}
		t.Skip("no /usr/bin/python3")
	}
	path := filepath.Join(t.TempDir(), "fit.toml")
	if err := os.WriteFile(path, src, 0o644); err != nil {
		t.Fatal(err)
	}
	script := `import json, sys, tomllib
doc = tomllib.load(open(sys.argv[1], "rb"))
out = []
for c in doc["component"]:
    out.append({k: (v["value"] if isinstance(v, dict) else v) for k, v in c.items() if k != "kind"})
print(json.dumps(out))`
	cmd := exec.Command(py, "-c", script, path)
	cmd.Env = append(os.Environ(), "PYTHONNOUSERSITE=1")
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("tomllib: %v", err)
	}
	var got []map[string]float64
	if err := json.Unmarshal(out, &got); err != nil {
		t.Fatalf("%v in %s", err, out)
	}
	for i, c := range res.Model.Components {
		for _, p := range c.Params() {
			if v, ok := got[i][p.Name]; !ok || v != p.Value && !(math.IsNaN(v) && math.IsNaN(p.Value)) {
				t.Errorf("component %d: tomllib reads %s = %v, want %v", i+1, p.Name, v, p.Value)
			}
		}
	}
}
