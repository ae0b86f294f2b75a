package output

import (
	"bytes"
	"flag"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"

	"vcz/dataset"
	"vcz/io/fitsfile/fitstest"
	"vcz/io/fitsimage"
	"vcz/io/oifits"
	"vcz/io/plots"
	"vcz/io/preview"
	"vcz/recon"
	"vcz/recon/optim"
	"vcz/recon/simulate"
	"vcz/regularizers"
	"vcz/runspec"
)

var update = flag.Bool("update", false, "rewrite the golden files in testdata")

// fixedRun is a result made by hand on the simulated demo data, so that every value of
// its header is known: a 16-pixel Gaussian image, two data types, a weight path of three
// steps, a warning longer than one card and non-ASCII text in the notices.
func fixedRun(t testing.TB) Run {
	t.Helper()
	f, _, err := simulate.DemoData()
	if err != nil {
		t.Fatal(err)
	}
	files := []*oifits.File{f}
	d, err := dataset.FromFiles(files, dataset.Selection{})
	if err != nil {
		t.Fatal(err)
	}
	d.Files = []string{"/a/folder/that/is/not/written/night-1.oifits"}
	const n = 16
	img := make([]float64, n*n)
	sum := 0.0
	for iy := range n {
		for ix := range n {
			x, y := float64(ix-n/2), float64(iy-n/2)
			img[iy*n+ix] = math.Exp(-(x*x + y*y) / 8)
			sum += img[iy*n+ix]
		}
	}
	for i := range img {
		img[i] /= sum
	}
	seed := uint64(7)
	spec := runspec.Spec{Grid: n, Regularizers: []regularizers.NamedTerm{{Name: "mem", Rel: 1}, {Name: "compact", Rel: 0.1}}, Seed: &seed, Iterations: 300}
	res := &recon.Result{
		Image: img,
		Grid: recon.GridChoice{Grid: recon.Grid{N: n, Pixel: 0.25 * recon.Mas}, FOV: 4 * recon.Mas, Resolution: 1.1 * recon.Mas,
			SizeModel: "Gaussian", Size: 1.5 * recon.Mas, Reasons: []string{"grid of 16 pixels given", "pixel λ/(2·Bmax)/4 = 0.25 mas"}},
		Chi2:        []recon.TermChi2{{Type: dataset.Vis2, N: 120, Chi2r: 1.0625}, {Type: dataset.T3Phi, N: 80, Chi2r: 0.875}},
		Chi2r:       0.9875,
		Chi2rTarget: 0.95,
		Reg:         3.25,
		Weight:      250,
		Iter:        42, TotalIter: 180,
		Converged: true, Status: optim.CallbackStop,
		StopReason: "converged: relative objective change below 1e-10 per iteration over 5 iterations, confirmed by a restart",
		Path:       []recon.WeightStep{{Weight: 25, Chi2r: 0.9, Reg: 4, Iter: 60, Converged: true}, {Weight: 250, Chi2r: 0.9875, Reg: 3.25, Iter: 42, Converged: true}, {Weight: 2500, Chi2r: 1.5, Reg: 2, Iter: 78, Stalled: true}},
		Notices:    []string{"closure phases with errors ≥ 60° down-weighted"},
		Warnings:   []string{"χ²ᵣ of t3phi is 0.875 while vis2 has 1.0625: one data type is fitted far worse than the other; try -data-weights to balance them, or check the error bars of the files"},
	}
	return Run{Files: files, Data: d, Spec: spec, Result: res, Date: time.Date(2026, 6, 12, 23, 59, 58, 0, time.FixedZone("UTC+2", 7200))}
}

// headerCards returns the primary header of a FITS file as 80-character lines up to END,
// with trailing blanks removed.
func headerCards(t *testing.T, path string) []string {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var out []string
	for i := 0; i+80 <= len(b); i += 80 {
		card := strings.TrimRight(string(b[i:i+80]), " ")
		out = append(out, card)
		if card == "END" {
			return out
		}
	}
	t.Fatalf("%s: no END card", path)
	return nil
}

// dateValue matches the value of the DATE card (FITS standard 4.0 sect. 4.4.2.1).
var dateValue = regexp.MustCompile(`^DATE    = '\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d'`)

// TestHeaderGolden holds the FITS header of a fixed result, byte for byte (each card is 80
// bytes, FITS standard 4.0 sect. 4.1.1), against testdata/header.golden; the date is the
// run's, in UTC, and Outputs.Cards come last.
func TestHeaderGolden(t *testing.T) {
	r := fixedRun(t)
	path := filepath.Join(t.TempDir(), "night-1-image.fits")
	o := Outputs{NoPNG: true, NoPlots: true, Cards: []fitsimage.Card{{Key: "INHASH", Value: strings.Repeat("0123456789abcdef", 4), Comment: "SHA-256 of inputs"}}}
	paths, err := o.Write(path, r)
	if err != nil {
		t.Fatal(err)
	}
	if paths.PNG != "" || len(paths.Plots) != 0 {
		t.Fatalf("NoPNG and NoPlots wrote %+v", paths)
	}
	cards := headerCards(t, path)
	var b bytes.Buffer
	for _, c := range cards {
		fmt.Fprintln(&b, c)
	}
	golden := filepath.Join("testdata", "header.golden")
	if *update {
		if err := os.WriteFile(golden, b.Bytes(), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	want, err := os.ReadFile(golden)
	if err != nil {
		t.Fatal(err)
	}
	if got := b.String(); got != string(want) {
		t.Errorf("header differs from %s (run go test -update after checking):\n%s", golden, lineDiff(string(want), got))
	}
	if !dateValue.MatchString(cards[indexOf(cards, "DATE    =")]) {
		t.Error("no DATE card of the form YYYY-MM-DDThh:mm:ss (FITS standard 4.0 sect. 4.4.2.1)")
	}
}

func indexOf(cards []string, prefix string) int {
	for i, c := range cards {
		if strings.HasPrefix(c, prefix) {
			return i
		}
	}
	return 0
}

// lineDiff lists the lines that differ between want and got.
func lineDiff(want, got string) string {
	w, g := strings.Split(want, "\n"), strings.Split(got, "\n")
	var b strings.Builder
	for i := range max(len(w), len(g)) {
		var a, c string
		if i < len(w) {
			a = w[i]
		}
		if i < len(g) {
			c = g[i]
		}
		if a != c {
			fmt.Fprintf(&b, "line %d:\n  want %q\n  got  %q\n", i+1, a, c)
		}
	}
	return b.String()
}

// The zero Outputs writes the image, the preview and the four plots, and the image reads
// back exactly as it was in memory (BITPIX −64 holds every float64).
func TestWriteZeroOutputs(t *testing.T) {
	r := fixedRun(t)
	out := filepath.Join(t.TempDir(), "rec.fits")
	paths, err := Outputs{}.Write(out, r)
	if err != nil {
		t.Fatal(err)
	}
	stem := filepath.Join(filepath.Dir(out), "rec")
	want := []string{stem + "-vis2.png", stem + "-t3phi.png", stem + "-residuals.png", stem + "-lcurve.png"}
	if paths.FITS != out || paths.PNG != stem+".png" || strings.Join(paths.Plots, " ") != strings.Join(want, " ") {
		t.Fatalf("paths %+v", paths)
	}
	for _, p := range append([]string{paths.PNG}, paths.Plots...) {
		b, err := os.ReadFile(p)
		// The PNG signature (ISO/IEC 15948, sect. 5.2).
		if err != nil || !bytes.HasPrefix(b, []byte("\x89PNG\r\n\x1a\n")) {
			t.Errorf("%s: not a PNG file (%v)", p, err)
		}
	}
	im, err := fitsimage.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	for i, v := range r.Result.Image {
		if im.Data[i] != v {
			t.Fatalf("pixel %d reads back as %g, was %g", i, im.Data[i], v)
		}
	}
	if !im.HasRADec {
		t.Error("the target's coordinates are not in the header")
	}
}

// TestBUnitAstropy reads a written image with astropy's CCDData.read, which parses BUNIT as
// a FITS unit string (FITS standard 4.0, sect. 4.3) and raises on one it does not know: the
// unit is 1/pixel and the pixels sum to 1, as the header says.
func TestBUnitAstropy(t *testing.T) {
	out := filepath.Join(t.TempDir(), "rec.fits")
	if _, err := (Outputs{NoPNG: true, NoPlots: true}).Write(out, fixedRun(t)); err != nil {
		t.Fatal(err)
	}
	got := strings.Fields(string(fitstest.RunPython(t, "testdata/ccddata.py", out)))
	if len(got) != 2 || got[0] != "pix-1" {
		t.Fatalf("astropy CCDData: %q, want unit pix-1 and the flux", got)
	}
	var sum float64
	if _, err := fmt.Sscan(got[1], &sum); err != nil || math.Abs(sum-1) > 1e-12 {
		t.Errorf("astropy CCDData: flux %q, want 1", got[1])
	}
}

// TestASCII: FITS header text is printable ASCII, 0x20–0x7E (FITS standard 4.0, sect.
// 4.1.2.1).
func TestASCII(t *testing.T) {
	for in, want := range map[string]string{
		"χ²ᵣ 1.2 · μ = 3":  "chi2r 1.2 * mu = 3",
		"λ/(2·Bmax) ≈ 1°":  "lambda/(2*Bmax) ~ 1 deg",
		"0.5–2 µm, a ≤ b":  "0.5-2 um, a <= b",
		"tab\there, ☃":     "tab?here, ?",
		"plain text stays": "plain text stays",
	} {
		if got := ASCII(in); got != want {
			t.Errorf("ASCII(%q) = %q, want %q", in, got, want)
		}
	}
}

// TestParseStretch checks the names of -stretch against the stretches of io/preview.
func TestParseStretch(t *testing.T) {
	for in, want := range map[string]preview.Stretch{"linear": preview.Linear, "sqrt": preview.Sqrt, "ASINH": preview.Asinh, " log": preview.Log, "": preview.Auto, "Auto": preview.Auto} {
		if got, err := ParseStretch(in); err != nil || got != want {
			t.Errorf("%q: %v, %v; want %v", in, got, err, want)
		}
	}
	if _, err := ParseStretch("gamma"); err == nil {
		t.Error("gamma: no error")
	}
}

// TestDateObsAstropy checks DATE-OBS against astropy.time's reading of MJD-OBS: the same
// instant in UTC to the second (MJD 40587 is 1970-01-01, FITS standard 4.0 sect. 9.2).
func TestDateObsAstropy(t *testing.T) {
	out := filepath.Join(t.TempDir(), "rec.fits")
	if _, err := (Outputs{NoPNG: true, NoPlots: true}).Write(out, fixedRun(t)); err != nil {
		t.Fatal(err)
	}
	got := strings.Fields(string(fitstest.RunPython(t, "testdata/dateobs.py", out)))
	if len(got) != 2 || got[0] != got[1] {
		t.Errorf("DATE-OBS %q, astropy's reading of MJD-OBS %q", got[0], got[1])
	}
}

// TestLCurveMarksFinal checks that the weight path marks the weight used with the final
// image's own misfit and regularizer, also when that weight is not a step of the path (a
// marker found by float equality with the steps used to vanish then).
func TestLCurveMarksFinal(t *testing.T) {
	res := &recon.Result{Weight: 31.6, Chi2r: 1.02, Reg: 2.5, Path: []recon.WeightStep{{Weight: 10, Chi2r: 0.9, Reg: 3}, {Weight: 100, Chi2r: 1.3, Reg: 2}}}
	lp, ok := LCurve("tv", res)
	if !ok || lp.Final == nil || lp.Final.Weight != 31.6 || lp.Final.Misfit != 1.02 || lp.Final.Regularizer != 2.5 || lp.Chosen != -1 {
		t.Fatalf("path %+v, final %+v", lp, lp.Final)
	}
	if _, err := plots.LCurve([]plots.LPath{lp}, plots.Options{}); err != nil {
		t.Fatal(err)
	}
}
