package simulate

import (
	"bytes"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"vcz/io/fitsfile/fitstest"
	"vcz/io/oifits"
)

// TestWrittenFile writes the demo data (with complex visibilities) with
// oifits.WriteFile, checks it with fitsverify (0 warnings, 0 errors; the
// issue's requirement) and reads it back with oifits.ReadFile.
func TestWrittenFile(t *testing.T) {
	p, m := Demo()
	p.WriteVis = true
	f, _, err := Run(p, ModelSky{m})
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(t.TempDir(), "demo.oifits")
	if err := oifits.WriteFile(path, f); err != nil {
		t.Fatal(err)
	}
	fitstest.Verify(t, path)
	g, err := oifits.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if len(g.Vis2) != 1 || len(g.T3) != 1 || len(g.Vis) != 1 || len(g.Vis2[0].Rows) != len(f.Vis2[0].Rows) {
		t.Fatalf("read back %d/%d/%d tables", len(g.Vis2), len(g.T3), len(g.Vis))
	}
	for i, r := range g.T3[0].Rows {
		w := f.T3[0].Rows[i]
		for c := range r.Phi {
			if r.Phi[c] != w.Phi[c] || r.Amp[c] != w.Amp[c] || r.PhiErr[c] != w.PhiErr[c] {
				t.Fatalf("T3 row %d channel %d changed on the round trip", i, c)
			}
		}
		if r.U1Coord != w.U1Coord || r.V2Coord != w.V2Coord || r.StaIndex != w.StaIndex || r.MJD != w.MJD {
			t.Fatalf("T3 row %d coordinates changed on the round trip", i)
		}
	}
	for i, r := range g.Vis2[0].Rows {
		for c := range r.Data {
			if r.Data[c] != f.Vis2[0].Rows[i].Data[c] {
				t.Fatalf("V² row %d changed on the round trip", i)
			}
		}
	}
}

// TestSameSeedSameBytes: with the file date fixed, two simulations with
// the same seed encode to identical bytes.
func TestSameSeedSameBytes(t *testing.T) {
	enc := func() []byte {
		p, m := Demo()
		f, _, err := Run(p, ModelSky{m})
		if err != nil {
			t.Fatal(err)
		}
		f.Primary.Date = "2026-06-13T00:00:00"
		var b bytes.Buffer
		if err := oifits.Encode(&b, f); err != nil {
			t.Fatal(err)
		}
		return b.Bytes()
	}
	if a, b := enc(), enc(); !bytes.Equal(a, b) {
		t.Error("same seed, different bytes")
	}
}

// TestTimesAgainstAstropy: at each written MJD the target's hour angle,
// from astropy's mean sidereal time at the site longitude, is the
// planned one to better than 0.5 s of time (the linear GMST formula and
// UT1 = UTC make the difference).
func TestTimesAgainstAstropy(t *testing.T) {
	p, m := Demo()
	f, _, err := Run(p, ModelSky{m})
	if err != nil {
		t.Fatal(err)
	}
	var mjds []string
	last := math.NaN()
	for _, r := range f.Vis2[0].Rows {
		if r.MJD != last {
			mjds = append(mjds, strconv.FormatFloat(r.MJD, 'g', 17, 64))
			last = r.MJD
		}
	}
	script := filepath.Join(t.TempDir(), "lst.py")
	src := `import sys
import warnings
warnings.simplefilter("ignore")
from astropy.utils import iers
iers.conf.auto_download = False
iers.conf.iers_degraded_accuracy = "ignore"
from astropy.time import Time
lon = float(sys.argv[1])
for a in sys.argv[2:]:
    t = Time(float(a), format="mjd", scale="ut1")
    print(repr(t.sidereal_time("mean", longitude=lon).hour))
`
	if err := os.WriteFile(script, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	out := fitstest.RunPython(t, script, append([]string{strconv.FormatFloat(p.Longitude, 'g', -1, 64)}, mjds...)...)
	lines := strings.Fields(string(out))
	if len(lines) != len(p.HourAngles) {
		t.Fatalf("astropy gave %d times for %d hour angles", len(lines), len(p.HourAngles))
	}
	for i, l := range lines {
		lst, err := strconv.ParseFloat(l, 64)
		if err != nil {
			t.Fatal(err)
		}
		ha := math.Mod(lst-p.RA/15+36, 24) - 12
		if d := math.Abs(ha-p.HourAngles[i]) * 3600; d > 0.5 {
			t.Errorf("hour angle %d: astropy %.6f h, plan %.6f h (%.2f s)", i, ha, p.HourAngles[i], d)
		}
	}
}
