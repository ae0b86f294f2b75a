package batch

import (
	"bytes"
	"flag"
	"os"
	"path/filepath"
	"testing"
)

var update = flag.Bool("update", false, "rewrite the golden files in testdata")

// TestCSVGolden holds the CSV summary table, header and rows, byte for byte against
// testdata/summary.golden.csv: a finished epoch with two data types and a warning, a
// failed one whose error holds a comma and a quote (quoted as RFC 4180 sect. 2 says), and a
// finished one found complete whose MJD range is unknown.
func TestCSVGolden(t *testing.T) {
	s := &Summary{Shard: "1/1", Epochs: 3, Rows: []Row{
		{Index: 0, Epoch: "night-1", MJDMin: 61203.0412345, MJDMax: 61203.2998765, Status: StateDone,
			Points: map[string]int{"vis2": 120, "t3phi": 80}, Chi2r: map[string]float64{"vis2": 1.0625, "t3phi": 0.875},
			Chi2rTotal: 0.9875, Weight: 250, Iterations: 180, Seconds: 12.345, FITS: "night-1.fits", PNG: "night-1.png",
			Warnings: []string{"χ²ᵣ well above its expected value"}},
		{Index: 1, Epoch: "night-2", Status: StateFailed, Error: `night-2.oifits: HDU 3 (OI_VIS2), row 4: column "VIS2DATA", has 3 values`, Seconds: 0.25},
		{Index: 2, Epoch: "night-3", Status: StateDone, Skipped: true, Points: map[string]int{"vis2": 60}, Chi2r: map[string]float64{"vis2": 1},
			Chi2rTotal: 1, Weight: 1e-3, Iterations: 40, Seconds: 3},
	}}
	var b bytes.Buffer
	if err := EncodeCSV(&b, s); err != nil {
		t.Fatal(err)
	}
	golden := filepath.Join("testdata", "summary.golden.csv")
	if *update {
		if err := os.WriteFile(golden, b.Bytes(), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	want, err := os.ReadFile(golden)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(b.Bytes(), want) {
		t.Errorf("CSV differs from %s (run go test -update after checking):\n%s\nwant:\n%s", golden, b.Bytes(), want)
	}
}
