package oifits

import (
	"bytes"
	"errors"
	"flag"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"sort"
	"strings"
	"testing"

	"vcz/io/fitsfile"
)

var update = flag.Bool("update", false, "rewrite the broken files under testdata/oifits/bad")

const badDir = "../../testdata/oifits/bad"

// encodeUnchecked writes f without validation, so tests can make files
// that break the rules Decode enforces.
func encodeUnchecked(t testing.TB, f *File) []byte {
	t.Helper()
	var buf bytes.Buffer
	e := &encoder{fw: fitsfile.NewWriter(&buf), f: f}
	if err := e.encode(); err != nil {
		t.Fatal(err)
	}
	return buf.Bytes()
}

// hduOffset returns the byte offset of the header of HDU n (1-based).
func hduOffset(t testing.TB, data []byte, n int) int {
	t.Helper()
	ff, err := fitsfile.Parse(data)
	if err != nil {
		t.Fatal(err)
	}
	return int(ff.HDUs[n-1].Offset)
}

// setCard replaces the first card with keyword key in the header of HDU n
// by card (padded to 80 bytes); an empty card turns it into a blank
// COMMENT, which removes the keyword.
func setCard(t testing.TB, data []byte, n int, key, card string) []byte {
	t.Helper()
	out := append([]byte(nil), data...)
	for p := hduOffset(t, data, n); ; p += 80 {
		k := strings.TrimRight(string(out[p:p+8]), " ")
		if k == "END" {
			t.Fatalf("HDU %d has no keyword %s", n, key)
		}
		if k == key {
			if card == "" {
				card = "COMMENT"
			}
			copy(out[p:p+80], card+strings.Repeat(" ", 80-len(card)))
			return out
		}
	}
}

// badCase is one broken input with the exact message Decode must give.
// HDUs of the sample file: 1 primary, 2 OI_TARGET, 3 OI_ARRAY,
// 4 OI_WAVELENGTH KBAND3 (NWAVE 3), 5 OI_WAVELENGTH HNARROW (NWAVE 1),
// 6 OI_VIS2 KBAND3, 7 OI_VIS2 HNARROW, 8 OI_T3, 9 OI_VIS, 10 OI_FLUX.
type badCase struct {
	name string
	keep bool // written to testdata/oifits/bad by -update
	make func(t testing.TB) []byte
	want string
}

func badCases() []badCase {
	good := func(t testing.TB) []byte { return encodeUnchecked(t, sampleFile()) }
	edit := func(change func(f *File)) func(t testing.TB) []byte {
		return func(t testing.TB) []byte {
			f := sampleFile()
			change(f)
			return encodeUnchecked(t, f)
		}
	}
	card := func(hdu int, key, text string) func(t testing.TB) []byte {
		return func(t testing.TB) []byte { return setCard(t, good(t), hdu, key, text) }
	}
	return []badCase{
		{"not-fits", true, func(testing.TB) []byte { return []byte("TARGET_ID,MJD,VIS2DATA\n1,60999.25,0.81\n") },
			"bad.oifits: not a FITS file: it does not begin with the keyword SIMPLE"},
		{"empty", true, func(testing.TB) []byte { return nil }, "bad.oifits: empty file (0 bytes); not a FITS file"},
		{"truncated-header", true, func(t testing.TB) []byte { d := good(t); return d[:hduOffset(t, d, 10)+1000] },
			"bad.oifits: HDU 10: truncated file: header block ends after 1000 of 2880 bytes"},
		{"truncated-data", true, func(t testing.TB) []byte { d := good(t); return d[:hduOffset(t, d, 6)+2*2880+10] },
			"bad.oifits: OI_VIS2 (HDU 6): truncated file: NAXIS1 = 97, NAXIS2 = 2 and PCOUNT = 0 declare 194 bytes of data, but only 10 bytes are left in the file"},
		{"cut-at-block-in-header", false, func(t testing.TB) []byte { d := good(t); return d[:hduOffset(t, d, 2)+2880] },
			"bad.oifits: HDU 2: truncated file: header has no END card before the end of the file"},
		{"cut-at-hdu-boundary", true, func(t testing.TB) []byte { d := good(t); return d[:hduOffset(t, d, 6)] },
			"bad.oifits: no data tables: the file has no OI_VIS2, OI_T3, OI_VIS or OI_FLUX table"},
		{"no-data-tables", true, edit(func(f *File) { f.Vis2, f.T3, f.Vis, f.Flux = nil, nil, nil, nil }),
			"bad.oifits: no data tables: the file has no OI_VIS2, OI_T3, OI_VIS or OI_FLUX table"},
		{"no-target-table", false, card(2, "EXTNAME", "EXTNAME = 'OI_TARGETS'"),
			"bad.oifits: no OI_TARGET table; every OIFITS file needs one"},
		{"insname-unknown", true, card(6, "INSNAME", "INSNAME = 'NOSUCH'"),
			"bad.oifits: OI_VIS2 (HDU 6): INSNAME 'NOSUCH' matches no OI_WAVELENGTH table"},
		{"arrname-unknown", false, edit(func(f *File) { f.T3[0].ArrName = "NOSUCH" }),
			"bad.oifits: OI_T3 (HDU 8): ARRNAME 'NOSUCH' matches no OI_ARRAY table"},
		{"arrname-missing-v2", false, card(6, "ARRNAME", ""),
			"bad.oifits: OI_VIS2 (HDU 6): mandatory keyword ARRNAME is missing"},
		{"target-id-unknown", true, edit(func(f *File) { f.Vis2[0].Rows[1].TargetID = 7 }),
			"bad.oifits: OI_VIS2 (HDU 6) row 2: TARGET_ID 7 is not in OI_TARGET"},
		{"target-id-duplicate", false, edit(func(f *File) { f.Targets[1].ID = 1 }),
			"bad.oifits: OI_TARGET (HDU 2) row 2: TARGET_ID 1 is used again (first in row 1)"},
		{"vis2err-negative", true, edit(func(f *File) { f.Vis2[1].Rows[0].Err[0] = -0.01 }),
			"bad.oifits: OI_VIS2 (HDU 7) row 1: VIS2ERR is -0.01; errors must be positive"},
		{"t3phierr-zero", false, edit(func(f *File) { f.T3[0].Rows[0].PhiErr[1] = 0 }),
			"bad.oifits: OI_T3 (HDU 8) row 1: T3PHIERR is 0 in channel 2; errors must be positive"},
		{"visamperr-nan", true, edit(func(f *File) { f.Vis[0].Rows[0].AmpErr[0] = math.NaN() }),
			"bad.oifits: OI_VIS (HDU 9) row 1: VISAMPERR is NaN in channel 1; errors must be finite"},
		{"fluxerr-inf", false, edit(func(f *File) { f.Flux[0].Rows[0].Err[2] = math.Inf(1) }),
			"bad.oifits: OI_FLUX (HDU 10) row 1: FLUXERR is +Inf in channel 3; errors must be finite"},
		{"nwave-mismatch", true, card(7, "INSNAME", "INSNAME = 'KBAND3'"),
			"bad.oifits: OI_VIS2 (HDU 7): column FLAG holds 1 value per row (TFORM '1L') but OI_WAVELENGTH 'KBAND3' (HDU 4) has NWAVE = 3"},
		{"oi-revn-unknown", true, card(6, "OI_REVN", "OI_REVN =                    3"),
			"bad.oifits: OI_VIS2 (HDU 6): unknown OI_REVN = 3; this reader knows revision 1 or 2 of OI_VIS2"},
		{"oi-revn-flux", false, card(10, "OI_REVN", "OI_REVN =                    2"),
			"bad.oifits: OI_FLUX (HDU 10): unknown OI_REVN = 2; this reader knows revision 1 of OI_FLUX"},
		{"oi-revn-missing", false, card(8, "OI_REVN", ""),
			"bad.oifits: OI_T3 (HDU 8): mandatory keyword OI_REVN is missing"},
		{"naxis2-huge", true, card(6, "NAXIS2", "NAXIS2  =            999999999"),
			"bad.oifits: OI_VIS2 (HDU 6): truncated file: NAXIS1 = 97, NAXIS2 = 999999999 and PCOUNT = 0 declare 96999999903 bytes of data, but only 34560 bytes are left in the file"},
		{"naxis-string", true, card(6, "NAXIS", "NAXIS   = '2'"),
			"bad.oifits: OI_VIS2 (HDU 6): NAXIS is a string ('2'); must be an integer"},
		{"ttype-missing", true, card(6, "TTYPE3", ""),
			"bad.oifits: OI_VIS2 (HDU 6): TTYPE3 is missing; every OIFITS column must be named"},
		{"column-missing", false, card(6, "TTYPE5", "TTYPE5  = 'VIS2DATX'"),
			"bad.oifits: OI_VIS2 (HDU 6): mandatory column VIS2DATA is missing"},
		{"column-wrong-type", false, card(2, "TFORM2", "TFORM2  = '2D'"),
			"bad.oifits: OI_TARGET (HDU 2): column TARGET has TFORM '2D'; must be a character string (TFORM nA)"},
		// OIFITS fixes VIS2DATA as a real column, TFORM D (Pauls et al. 2005,
		// table 5; Duvert, Young & Hummel 2017, table 7): doubles declared
		// as 64-bit integers would read as values near 4.6e18.
		{"column-integer-for-real", false, card(6, "TFORM5", "TFORM5  = '3K'"),
			"bad.oifits: OI_VIS2 (HDU 6): column VIS2DATA has TFORM '3K'; must be a real number (TFORM D or E)"},
		// STA_INDEX refers to OI_ARRAY (Pauls et al. 2005, table 5; Duvert,
		// Young & Hummel 2017, table 7).
		{"sta-index-unknown", false, edit(func(f *File) { f.Vis2[0].Rows[1].StaIndex[1] = 99 }),
			"bad.oifits: OI_VIS2 (HDU 6) row 2: STA_INDEX 99 is not a station of OI_ARRAY 'KESTREL'"},
		{"mjd-nan", false, edit(func(f *File) { f.T3[0].Rows[0].MJD = math.NaN() }),
			"bad.oifits: OI_T3 (HDU 8) row 1: MJD is NaN; must be a finite date"},
		{"vis2err-tiny", false, edit(func(f *File) { f.Vis2[1].Rows[0].Err[0] = 1e-300 }),
			"bad.oifits: OI_VIS2 (HDU 7) row 1: VIS2ERR is 1e-300; an error below 1e-100 is not a measurement's, and its χ² would overflow"},
		{"amptyp-unknown", false, card(9, "AMPTYP", "AMPTYP  = 'relative'"),
			"bad.oifits: OI_VIS (HDU 9): AMPTYP is 'relative'; must be 'absolute', 'differential' or 'correlated flux'"},
		{"tfields-missing", false, card(6, "TFIELDS", ""),
			"bad.oifits: OI_VIS2 (HDU 6): mandatory keyword TFIELDS is missing"},
	}
}

func TestBadInputs(t *testing.T) {
	if *update {
		os.MkdirAll(badDir, 0o755)
		old, _ := filepath.Glob(filepath.Join(badDir, "*.oifits"))
		for _, p := range old {
			os.Remove(p)
		}
	}
	var table []string
	for _, tc := range badCases() {
		t.Run(tc.name, func(t *testing.T) {
			data := tc.make(t)
			f, err := Decode(bytes.NewReader(data), "bad.oifits")
			if err == nil {
				t.Fatalf("no error; file has %d OI_VIS2", len(f.Vis2))
			}
			var oe *Error
			if !errors.As(err, &oe) {
				t.Fatalf("error %v is %T, not *Error", err, err)
			}
			if err.Error() != tc.want {
				t.Errorf("error:\n got %s\nwant %s", err, tc.want)
			}
			if *update && tc.keep {
				if err := os.WriteFile(filepath.Join(badDir, tc.name+".oifits"), data, 0o644); err != nil {
					t.Fatal(err)
				}
			}
		})
		if !tc.keep {
			continue
		}
		table = append(table, fmt.Sprintf("%s.oifits\t%s", tc.name, strings.TrimPrefix(tc.want, "bad.oifits: ")))
	}
	if *update {
		sort.Strings(table)
		head := "# Broken OIFITS files and the message vcz gives for each (file name, tab, message).\n" +
			"# Regenerate with: go test ./io/oifits -run TestBadInputs -update\n"
		os.WriteFile(filepath.Join(badDir, "expected.tsv"), []byte(head+strings.Join(table, "\n")+"\n"), 0o644)
	}
}

// TestBadFiles reads the committed broken files with ReadFile and checks
// each message against testdata/oifits/bad/expected.tsv.
func TestBadFiles(t *testing.T) {
	list, err := os.ReadFile(filepath.Join(badDir, "expected.tsv"))
	if err != nil {
		t.Fatal(err)
	}
	n := 0
	for _, line := range strings.Split(string(list), "\n") {
		if line == "" || strings.HasPrefix(line, "#") {
			continue
		}
		name, want, ok := strings.Cut(line, "\t")
		if !ok {
			t.Fatalf("bad line %q", line)
		}
		// The message names the file as the reader was given it.
		path := filepath.Join(badDir, name)
		_, err := ReadFile(path)
		if err == nil || err.Error() != path+": "+want {
			t.Errorf("%s: got %v\nwant %s: %s", name, err, path, want)
		}
		n++
	}
	kept := 0
	for _, c := range badCases() {
		if c.keep {
			kept++
		}
	}
	if n != kept {
		t.Errorf("expected.tsv lists %d files, the test has %d cases; run with -update", n, kept)
	}
	if _, err := ReadFile(filepath.Join(badDir, "no-such-file.oifits")); err == nil || !strings.HasPrefix(err.Error(), filepath.Join(badDir, "no-such-file.oifits")+": ") {
		t.Errorf("missing file: %v", err)
	}
}

// TestHugeTableNoAllocation checks that a header declaring about 85 GB of
// rows is rejected without allocating more than a small multiple of the
// file size.
func TestHugeTableNoAllocation(t *testing.T) {
	var tc badCase
	for _, c := range badCases() {
		if c.name == "naxis2-huge" {
			tc = c
		}
	}
	data := tc.make(t)
	var before, after runtime.MemStats
	runtime.GC()
	runtime.ReadMemStats(&before)
	_, err := Decode(bytes.NewReader(data), "bad.oifits")
	runtime.ReadMemStats(&after)
	if err == nil {
		t.Fatal("no error")
	}
	got := after.TotalAlloc - before.TotalAlloc
	t.Logf("allocated %d bytes for a %d-byte file", got, len(data))
	if got > uint64(20*len(data)) {
		t.Errorf("allocated %d bytes for a %d-byte file", got, len(data))
	}
}

// TestFlaggedAndNonFiniteKept checks that flagged points with bad errors
// and non-finite values are kept for the data set model to drop and count.
func TestFlaggedAndNonFiniteKept(t *testing.T) {
	f, err := Decode(bytes.NewReader(encodeSample(t)), "s.oifits")
	if err != nil {
		t.Fatal(err)
	}
	r := f.Vis2[0].Rows[1]
	if !r.Flag[1] || r.Err[1] != -1 {
		t.Errorf("flagged point with negative error: flag %v err %v", r.Flag[1], r.Err[1])
	}
	if v := f.Vis2[0].Rows[0].Data[2]; !math.IsNaN(v) {
		t.Errorf("non-finite value = %v, want NaN", v)
	}
	if f.Vis2[0].Rows[0].Flag[0] || !f.Vis2[0].Rows[0].Flag[1] {
		t.Errorf("FLAG = %v, want [F T F]", f.Vis2[0].Rows[0].Flag)
	}
}

// TestWarnings checks the notices Decode gives for what the standards do
// not allow but reading survives: two tables with the same EXTNAME and
// EXTVER (Pence et al. 2010, sect. 7.1.1: the pair identifies an
// extension) and mixed OI_REVN in one file (Duvert, Young & Hummel 2017,
// sect. 4). The unaltered sample gives none.
func TestWarnings(t *testing.T) {
	good := encodeUnchecked(t, sampleFile())
	for _, c := range []struct {
		name string
		data []byte
		want string
	}{
		{"clean", good, ""},
		{"extver-twice", setCard(t, good, 7, "EXTVER", "EXTVER  =                    1"),
			"HDU 7: OI_VIS2 has EXTVER 1 like HDU 6; if it is the same table appended twice, its data are counted twice"},
		{"mixed-revn", setCard(t, good, 8, "OI_REVN", "OI_REVN =                    1"),
			"HDU 8: OI_T3 has OI_REVN = 1 but HDU 2 has 2; one file should hold tables of one OIFITS revision"},
		// Plausibility (common practice, no source): optical and infrared
		// wavelengths, phases in degrees, V² between 0 and 1 but for noise.
		{"wave-metres-as-microns", encodeUnchecked(t, edited(func(f *File) {
			for i := range f.Wavelengths[1].EffWave {
				f.Wavelengths[1].EffWave[i] *= 1e6
			}
		})), "HDU 5: OI_WAVELENGTH 'HNARROW' has EFF_WAVE from 1.65 to 1.65 m, outside the 0.1–30 µm of optical and infrared interferometry; check the unit (metres)"},
		{"phase-huge", encodeUnchecked(t, edited(func(f *File) { f.T3[0].Rows[0].Phi[0] = 1e300 })),
			"HDU 8: OI_T3 has 1 value of T3PHI beyond ±720° (up to 1e+300°); phases are in degrees"},
		{"baselines-tiny", encodeUnchecked(t, edited(func(f *File) {
			for i := range f.Vis2[1].Rows {
				f.Vis2[1].Rows[i].UCoord *= 1e-300
				f.Vis2[1].Rows[i].VCoord *= 1e-300
			}
		})), "HDU 7: OI_VIS2 has projected baselines up to 5.6e-299 m, outside 1 cm–100 km; check the unit of UCOORD and VCOORD (metres)"},
		{"v2-negative", encodeUnchecked(t, edited(func(f *File) {
			for _, r := range f.Vis2[1].Rows {
				r.Data[0] = -1
			}
		})), "HDU 7: OI_VIS2 has only negative VIS2DATA (1 value); squared visibilities lie between 0 and 1 but for noise"},
	} {
		f, err := Decode(bytes.NewReader(c.data), "w.oifits")
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		got := strings.Join(f.Warnings, "\n")
		if got != c.want {
			t.Errorf("%s: warnings %q, want %q", c.name, got, c.want)
		}
	}
}

// edited returns the sample file changed by change.
func edited(change func(f *File)) *File {
	f := sampleFile()
	change(f)
	return f
}
