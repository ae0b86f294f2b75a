package dataset

import (
	"bytes"
	"errors"
	"math"
	"strings"
	"testing"

	"vcz/io/oifits"
)

// mas is a milliarcsecond in radians.
const mas = math.Pi / (180 * 3600e3)

// smallFiles builds two small files by hand: file a has 2 V² rows × 2 channels (one point
// flagged, one NaN), one T3 row and one VIS row; file b has one V² row of another target.
func smallFiles() []*oifits.File {
	nan := math.NaN()
	wave := []oifits.Wavelength{{HDU: 2, InsName: "INS", EffWave: []float64{1e-6, 2e-6}, EffBand: []float64{1e-7, 1e-7}}}
	a := &oifits.File{
		Name:        "a.oifits",
		Targets:     []oifits.Target{{ID: 1, Name: "Alpha"}, {ID: 2, Name: "Beta"}},
		Wavelengths: wave,
		Vis2: []oifits.Vis2{{HDU: 3, InsName: "INS", Rows: []oifits.Vis2Row{
			{TargetID: 1, MJD: 60000.1, Data: []float64{0.5, 0.4}, Err: []float64{0.01, 0.02},
				UCoord: 30, VCoord: 40, Flag: []bool{false, true}},
			{TargetID: 1, MJD: 60000.2, Data: []float64{0.6, nan}, Err: []float64{0.01, 0.02},
				UCoord: 6, VCoord: 8, Flag: []bool{false, false}},
		}}},
		T3: []oifits.T3{{HDU: 4, InsName: "INS", Rows: []oifits.T3Row{
			{TargetID: 1, MJD: 60001.0, Amp: []float64{nan, nan}, AmpErr: []float64{nan, nan},
				Phi: []float64{90, -45}, PhiErr: []float64{1, 2},
				U1Coord: 30, V1Coord: 40, U2Coord: -24, V2Coord: -32, Flag: []bool{false, false}},
		}}},
		Vis: []oifits.Vis{{HDU: 5, InsName: "INS", PhiTyp: "differential", Rows: []oifits.VisRow{
			{TargetID: 2, MJD: 60001.1, Amp: []float64{0.7, 0.8}, AmpErr: []float64{0.1, 0.1},
				Phi: []float64{10, 20}, PhiErr: []float64{5, 5}, UCoord: 60, VCoord: 80, Flag: []bool{false, false}},
		}}},
	}
	b := &oifits.File{
		Name:        "b.oifits",
		Targets:     []oifits.Target{{ID: 1, Name: "beta "}},
		Wavelengths: wave,
		Vis2: []oifits.Vis2{{HDU: 3, InsName: "INS", Rows: []oifits.Vis2Row{
			{TargetID: 1, MJD: 60003.0, Data: []float64{0.9, 0.8}, Err: []float64{0.05, 0.05},
				UCoord: 3, VCoord: 4, Flag: []bool{false, false}},
		}}},
	}
	return []*oifits.File{a, b}
}

func TestFromFilesCounts(t *testing.T) {
	d, err := FromFiles(smallFiles(), Selection{})
	if err != nil {
		t.Fatal(err)
	}
	if got, want := d.Vis2Count, (Counts{Valid: 4, Flagged: 1, NonFinite: 1}); got != want {
		t.Errorf("Vis2Count = %+v, want %+v", got, want)
	}
	if got, want := d.T3Count, (Counts{Valid: 2}); got != want {
		t.Errorf("T3Count = %+v, want %+v", got, want)
	}
	if d.T3.AmpOK[0] || !d.T3.PhiOK[0] {
		t.Errorf("T3 amplitude NaN should be unusable, phase usable")
	}
	// Degrees to radians and UCOORD/λ: 90° = π/2; 30 m at 1 µm = 3e7 cycles/rad.
	if d.T3.Phi[0] != math.Pi/2 || d.T3.U1[0] != 30/1e-6 {
		t.Errorf("T3 phi %g u1 %g", d.T3.Phi[0], d.T3.U1[0])
	}
	if d.Vis.PhiTyp[0] != PhiDifferential || d.Vis.AmpTyp[0] != AmpAbsolute {
		t.Errorf("VIS types %v %v", d.Vis.AmpTyp[0], d.Vis.PhiTyp[0])
	}
	if want := []string{"Alpha", "Beta", "beta"}; strings.Join(d.Targets, ",") != strings.Join(want, ",") {
		t.Errorf("targets %v", d.Targets)
	}
	if o := d.Vis2.Origin[3]; o != (Origin{File: 1, HDU: 3, Row: 1, Channel: 1}) {
		t.Errorf("origin %+v", o)
	}
}

func TestFromFilesSelection(t *testing.T) {
	tests := []struct {
		name          string
		sel           Selection
		vis2, t3, vis int
		wantErr       string
	}{
		{"all", Selection{}, 4, 2, 2, ""},
		{"target name any case", Selection{Target: " BETA"}, 2, 0, 2, ""},
		{"target id", Selection{Target: "1"}, 4, 2, 0, ""},
		{"wavelength", Selection{WaveMax: 1.5e-6}, 3, 1, 1, ""},
		{"mjd", Selection{MJDMin: 60000.15, MJDMax: 60001.05}, 1, 2, 0, ""},
		{"types", Selection{Types: T3Phi}, 0, 2, 0, ""},
		{"instrument", Selection{InsNames: []string{"OTHER"}}, 0, 0, 0, ""},
		{"unknown target", Selection{Target: "Gamma"}, 0, 0, 0, `target "Gamma" not found`},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			d, err := FromFiles(smallFiles(), tc.sel)
			if tc.wantErr != "" {
				if err == nil || !strings.Contains(err.Error(), tc.wantErr) {
					t.Fatalf("error %v, want %q", err, tc.wantErr)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			if d.Vis2.Len() != tc.vis2 || d.T3.Len() != tc.t3 || d.Vis.Len() != tc.vis {
				t.Errorf("got %d V², %d T3, %d VIS; want %d, %d, %d", d.Vis2.Len(), d.T3.Len(), d.Vis.Len(), tc.vis2, tc.t3, tc.vis)
			}
		})
	}
}

func TestFromFilesErrors(t *testing.T) {
	f := smallFiles()
	f[0].Vis2[0].InsName = "NOPE"
	if _, err := FromFiles(f, Selection{}); err == nil || err.Error() != `a.oifits: OI_VIS2 (HDU 3): INSNAME "NOPE" has no OI_WAVELENGTH table` {
		t.Errorf("error %v", err)
	}
	f = smallFiles()
	f[1].Vis2[0].Rows[0].Err[1] = -0.01
	if _, err := FromFiles(f, Selection{}); err == nil || err.Error() != "b.oifits: OI_VIS2 (HDU 3) row 1: VIS2ERR is -0.01; errors must be positive" {
		t.Errorf("error %v", err)
	}
	f = smallFiles()
	f[0].T3[0].Rows[0].Phi = []float64{1}
	if _, err := FromFiles(f, Selection{}); err == nil || !strings.Contains(err.Error(), "a.oifits: OI_T3 (HDU 4) row 1: T3PHI has 1 values for 2 channels") {
		t.Errorf("error %v", err)
	}
	// Errors that are not positive on usable values name the column (in-memory files are not
	// checked by the decoder).
	f = smallFiles()
	f[0].T3[0].Rows[0].PhiErr[0] = 0
	if _, err := FromFiles(f, Selection{}); err == nil || err.Error() != "a.oifits: OI_T3 (HDU 4) row 1: T3PHIERR is 0; errors must be positive" {
		t.Errorf("error %v", err)
	}
	f = smallFiles()
	f[0].Vis[0].Rows[0].AmpErr[1] = -2
	if _, err := FromFiles(f, Selection{}); err == nil || err.Error() != "a.oifits: OI_VIS (HDU 5) row 1: VISAMPERR is -2; errors must be positive" {
		t.Errorf("error %v", err)
	}
	// A baseline coordinate longer than the Earth's diameter (1.27e7 m, a fact of the
	// trade) is a corrupt row: it names the file, table, row and column.
	f = smallFiles()
	f[1].Vis2[0].Rows[0].UCoord = 5e160
	if _, err := FromFiles(f, Selection{}); err == nil || err.Error() != "b.oifits: OI_VIS2 (HDU 3) row 1: UCOORD is 5e+160 m, longer than any baseline on the Earth (1.3e+07 m)" {
		t.Errorf("error %v", err)
	}
	f = smallFiles()
	f[0].T3[0].Rows[0].V2Coord = -2e7
	if _, err := FromFiles(f, Selection{}); err == nil || err.Error() != "a.oifits: OI_T3 (HDU 4) row 1: V2COORD is -2e+07 m, longer than any baseline on the Earth (1.3e+07 m)" {
		t.Errorf("error %v", err)
	}
	f = smallFiles()
	f[0].Vis[0].Rows[0].VCoord = 1e300
	if _, err := FromFiles(f, Selection{}); err == nil || err.Error() != "a.oifits: OI_VIS (HDU 5) row 1: VCOORD is 1e+300 m, longer than any baseline on the Earth (1.3e+07 m)" {
		t.Errorf("error %v", err)
	}
}

// TestSummary checks the summary figures by hand. Resolution = λmin/(2·Bmax) and largest
// scale = λmax/Bmin (CONVENTIONS.md; common practice, no source).
func TestSummary(t *testing.T) {
	d, err := FromFiles(smallFiles(), Selection{})
	if err != nil {
		t.Fatal(err)
	}
	s := d.Summarize()
	// Baselines: V² 50 m and 10 m and 5 m (b.oifits, 3-4-5); T3 has 50 m, 40 m and the third
	// (30-24, 40-32) = (6, 8) → 10 m; VIS 100 m. So Bmin = 5 m, Bmax = 100 m.
	near := func(name string, got, want float64) {
		t.Helper()
		if math.Abs(got-want) > 1e-9*math.Abs(want) {
			t.Errorf("%s = %.12g, want %.12g", name, got, want)
		}
	}
	near("BaselineMin", s.BaselineMin, 5)
	near("BaselineMax", s.BaselineMax, 100)
	near("FreqMax", s.FreqMax, 100/1e-6) // the 100 m VIS baseline at 1 µm
	near("FreqMin", s.FreqMin, 5/2e-6)   // 5 m at 2 µm
	near("Resolution", s.Resolution, 1e-6/(2*100))
	near("LargestScale", s.LargestScale, 2e-6/5)
	near("Resolution mas", s.Resolution/mas, 1e-6/200*180/math.Pi*3600e3) // 1.0313 mas
	near("MJDMin", s.MJDMin, 60000.1)
	near("MJDMax", s.MJDMax, 60003.0)
	// Epochs 60000.1, .2 | 60001.0, 60001.1 | 60003.0: gaps > 0.5 d give 3 nights.
	if s.Nights != 3 {
		t.Errorf("Nights = %d, want 3", s.Nights)
	}
	if s.Vis2 != d.Vis2Count || len(s.Instruments) != 1 || s.Instruments[0].Channels != 2 {
		t.Errorf("summary counts/instruments %+v %+v", s.Vis2, s.Instruments)
	}
}

// TestFromFilesDecoded reads a file written and read back by io/oifits (OIFITS v2, Duvert,
// Young & Hummel 2017) and checks that the data set equals the one made from the in-memory
// tables, values compared after the float32 storage of the E-format columns.
func TestFromFilesDecoded(t *testing.T) {
	f := smallFiles()[0]
	f.Revision = 2
	f.Arrays = []oifits.Array{{Name: "ARR", Frame: "GEOCENTRIC", Stations: []oifits.Station{
		{TelName: "T1", StaName: "S1", Index: 1, Diameter: 1}, {TelName: "T2", StaName: "S2", Index: 2, Diameter: 1},
		{TelName: "T3", StaName: "S3", Index: 3, Diameter: 1}}}}
	for i := range f.Vis2 {
		f.Vis2[i].ArrName = "ARR"
		for j := range f.Vis2[i].Rows {
			f.Vis2[i].Rows[j].StaIndex = [2]int{1, 2}
		}
	}
	for i := range f.T3 {
		f.T3[i].ArrName = "ARR"
		for j := range f.T3[i].Rows {
			f.T3[i].Rows[j].StaIndex = [3]int{1, 2, 3}
		}
	}
	for i := range f.Vis {
		f.Vis[i].ArrName = "ARR"
		for j := range f.Vis[i].Rows {
			f.Vis[i].Rows[j].StaIndex = [2]int{1, 2}
		}
	}
	var buf bytes.Buffer
	if err := oifits.Encode(&buf, f); err != nil {
		t.Fatal(err)
	}
	g, err := oifits.Decode(bytes.NewReader(buf.Bytes()), "a.oifits")
	if err != nil {
		t.Fatal(err)
	}
	want, err := FromFiles([]*oifits.File{f}, Selection{})
	if err != nil {
		t.Fatal(err)
	}
	got, err := FromFiles([]*oifits.File{g}, Selection{})
	if err != nil {
		t.Fatal(err)
	}
	if got.Vis2Count != want.Vis2Count || got.T3Count != want.T3Count || got.VisCount != want.VisCount {
		t.Fatalf("counts %+v %+v %+v, want %+v %+v %+v", got.Vis2Count, got.T3Count, got.VisCount, want.Vis2Count, want.T3Count, want.VisCount)
	}
	same := func(name string, a, b []float64) {
		t.Helper()
		if len(a) != len(b) {
			t.Fatalf("%s: %d values, want %d", name, len(a), len(b))
		}
		for i := range a {
			if !(math.IsNaN(a[i]) && math.IsNaN(b[i])) && math.Abs(a[i]-b[i]) > 1e-6*math.Abs(b[i]) {
				t.Errorf("%s[%d] = %g, want %g", name, i, a[i], b[i])
			}
		}
	}
	same("V² u", got.Vis2.U, want.Vis2.U)
	same("V² value", got.Vis2.Value, want.Vis2.Value)
	same("T3 phi", got.T3.Phi, want.T3.Phi)
	same("T3 u2", got.T3.U2, want.T3.U2)
	same("VIS amp", got.Vis.Amp, want.Vis.Amp)
	if got.Vis.PhiTyp[0] != PhiDifferential {
		t.Errorf("PHITYP lost in the round trip")
	}
}

// TestErrorPosition checks that FromFiles's errors carry their position as fields, as
// encoding/csv's ParseError does, and unwrap to the underlying error.
func TestErrorPosition(t *testing.T) {
	f := smallFiles()
	f[0].Vis[0].Rows[0].AmpErr[1] = -2
	_, err := FromFiles(f, Selection{})
	var e *Error
	if !errors.As(err, &e) {
		t.Fatalf("error %v (%T) is not an *Error", err, err)
	}
	want := Error{File: "a.oifits", HDU: 5, ExtName: "OI_VIS", Row: 1, Column: "VISAMPERR"}
	if e.File != want.File || e.HDU != want.HDU || e.ExtName != want.ExtName || e.Row != want.Row || e.Column != want.Column {
		t.Errorf("position %+v, want %+v", *e, want)
	}
	if errors.Unwrap(err) == nil || errors.Unwrap(err).Error() != "VISAMPERR is -2; errors must be positive" {
		t.Errorf("underlying error %v", errors.Unwrap(err))
	}

	f = smallFiles()
	f[0].Wavelengths[0].EffWave[1] = 0
	_, err = FromFiles(f, Selection{})
	if !errors.As(err, &e) || e.ExtName != "OI_WAVELENGTH" || e.HDU != 2 || e.Row != 2 || e.Column != "EFF_WAVE" ||
		err.Error() != "a.oifits: OI_WAVELENGTH (HDU 2) row 2: EFF_WAVE is 0; wavelengths must be positive" {
		t.Errorf("error %v (%+v)", err, e)
	}

	_, err = FromFiles(smallFiles(), Selection{Target: "Gamma"})
	if !errors.As(err, &e) || e.File != "" || e.ExtName != "" || e.Row != 0 ||
		err.Error() != `target "Gamma" not found; the files have "Alpha" (id 1 in a.oifits), "Beta" (id 2 in a.oifits), "beta" (id 1 in b.oifits)` {
		t.Errorf("error %v (%+v)", err, e)
	}
}
