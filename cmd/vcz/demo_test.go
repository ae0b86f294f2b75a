package main

import (
	"bytes"
	"flag"
	"os"
	"path/filepath"
	"reflect"
	"testing"

	"vcz/io/oifits"
	"vcz/recon/simulate"
)

var update = flag.Bool("update", false, "rewrite the embedded demo data from simulate.Demo()")

// TestDemoData checks that the embedded demo data set is what simulate.Demo
// makes today, so the demo never drifts from the simulator. With -update it
// rewrites demodata/vaeloris.oifits.
func TestDemoData(t *testing.T) {
	plan, m := simulate.Demo()
	f, _, err := simulate.Run(plan, simulate.ModelSky{Model: m})
	if err != nil {
		t.Fatal(err)
	}
	if *update {
		if err := oifits.WriteFile(filepath.Join("demodata", "vaeloris.oifits"), f); err != nil {
			t.Fatal(err)
		}
		return
	}
	var buf bytes.Buffer
	if err := oifits.Encode(&buf, f); err != nil {
		t.Fatal(err)
	}
	want, err := oifits.Decode(&buf, "vaeloris.oifits")
	if err != nil {
		t.Fatal(err)
	}
	got, err := oifits.Decode(bytes.NewReader(demoOIFITS), "vaeloris.oifits")
	if err != nil {
		t.Fatalf("embedded demo data do not decode: %v", err)
	}
	// The creation date differs between runs; everything else must agree.
	got.Primary.Date, want.Primary.Date = "", ""
	if !reflect.DeepEqual(got.Vis2, want.Vis2) || !reflect.DeepEqual(got.T3, want.T3) ||
		!reflect.DeepEqual(got.Targets, want.Targets) || !reflect.DeepEqual(got.Arrays, want.Arrays) ||
		!reflect.DeepEqual(got.Wavelengths, want.Wavelengths) {
		t.Fatal("embedded demo data differ from simulate.Demo(); run go test ./cmd/vcz -run TestDemoData -update")
	}
	if _, err := os.Stat(filepath.Join("demodata", "vaeloris.oifits")); err != nil {
		t.Fatal(err)
	}
}
