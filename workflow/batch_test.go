package workflow

import (
	"path/filepath"
	"testing"

	"vcz/recon"
	"vcz/recon/batch"
	"vcz/runspec"
)

// The hash of an epoch does not depend on its worker count (the image does not), and
// does on an option that changes the image.
func TestEpochHash(t *testing.T) {
	a := &Epoch{Spec: runspec.Spec{Grid: 64, Workers: 1}}
	b := &Epoch{Spec: runspec.Spec{Grid: 64, Workers: 7}}
	c := &Epoch{Spec: runspec.Spec{Grid: 64, Iterations: 10}}
	if a.SettingsText() != b.SettingsText() || a.SettingsText() == c.SettingsText() {
		t.Errorf("settings texts %q, %q, %q", a.SettingsText(), b.SettingsText(), c.SettingsText())
	}
	ha, err1 := batch.Hash(a.SettingsText(), nil)
	hb, err2 := batch.Hash(b.SettingsText(), nil)
	if err1 != nil || err2 != nil || ha != hb {
		t.Errorf("hashes %s, %s (%v, %v)", ha, hb, err1, err2)
	}
}

// The example job file reads: four epochs, the shared settings and the overrides.
func TestExampleJob(t *testing.T) {
	epochs, out, err := ReadJobFile(filepath.Join("..", "examples", "batch", "job.toml"), runspec.Spec{})
	if err != nil {
		t.Fatal(err)
	}
	if len(epochs) != 4 || filepath.Base(out) != "vaeloris-epochs" || len(epochs[1].Files) != 2 {
		t.Fatalf("%d epochs, output %q", len(epochs), out)
	}
	e0, e2, e3 := epochs[0].Spec, epochs[2].Spec, epochs[3].Spec
	if e0.Grid != 64 || e0.Iterations != 300 || *e0.Seed != 7 || e0.Use != recon.Vis2|recon.T3Phi || e2.Use != recon.Vis2 || e3.WaveMax == 0 {
		t.Fatalf("settings %+v / %+v", e0, e2)
	}
}
