package workflow

import (
	"math"
	"strings"
	"testing"

	"vcz/io/oifits"
	"vcz/io/preview"
	"vcz/recon"
	"vcz/recon/batch"
)

// The preview of an epoch's joint image labels its colour bar with what it shows and
// draws the circle of the nominal resolution λmin/(2·Bmax) of the epoch's data
// (CONVENTIONS.md; common practice, no source), taken here from the file's UCOORD, VCOORD
// and EFF_WAVE columns, as the preview of the epoch's own image does; its subtitle gives
// the epoch's χ²ᵣ in the joint run.
func TestJointPreviewOptions(t *testing.T) {
	path := writeEpochs(t, t.TempDir(), 1)[0]
	f, err := oifits.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	bmax, lmin := 0.0, math.Inf(1)
	for _, tb := range f.Vis2 {
		for _, r := range tb.Rows {
			bmax = math.Max(bmax, math.Hypot(r.UCoord, r.VCoord))
		}
	}
	for _, w := range f.Wavelengths {
		for _, l := range w.EffWave {
			lmin = math.Min(lmin, l)
		}
	}
	want := lmin / (2 * bmax) / recon.Mas
	_, d, err := ReadData([]string{path}, (&Epoch{}).Spec.Selection())
	if err != nil {
		t.Fatal(err)
	}
	row := batch.Row{Epoch: "night0", MJDMin: 61203.2, MJDMax: 61203.4}
	opt := jointPreviewOptions("night0", row, 0.1*recon.Mas, d, 1.234, preview.Auto)
	if !strings.HasPrefix(opt.ColorbarLabel, "flux per pixel") {
		t.Errorf("colour bar label %q, want it to say what is shown", opt.ColorbarLabel)
	}
	if math.Abs(opt.Beam.Major-want) > 1e-9*want {
		t.Errorf("resolution circle %g mas, want λmin/(2·Bmax) = %g mas", opt.Beam.Major, want)
	}
	if math.Abs(opt.Pixel-0.1) > 1e-12 {
		t.Errorf("pixel %g mas, want 0.1", opt.Pixel)
	}
	if !strings.Contains(opt.Subtitle, "χ²ᵣ 1.23") {
		t.Errorf("subtitle %q does not give the epoch's χ²ᵣ", opt.Subtitle)
	}
}
