package output

import (
	"encoding/csv"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"vcz/dataset"
	"vcz/io/fitsfile/fitstest"
	"vcz/io/fitsimage"
	"vcz/io/oifits"
	"vcz/recon"
	"vcz/recon/simulate"
)

// fixedCube is a cube result made by hand: three planes of Gaussians of growing width at
// unevenly spaced wavelengths, their correlated-flux scales when flux is set.
func fixedCube(t *testing.T, flux bool) CubeRun {
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
	const n = 16
	res := &recon.CubeResult{Grid: recon.GridChoice{Grid: recon.Grid{N: n, Pixel: 0.2 * recon.Mas}, Resolution: 0.8 * recon.Mas},
		Weight: 12, Spectral: recon.SpectralSmooth, SpectralWeight: 3e4, Chi2r: 1.01, StopReason: "converged"}
	for k, w := range []float64{1.6e-6, 1.7e-6, 1.95e-6} {
		img := make([]float64, n*n)
		s, sum := 2.0+float64(k), 0.0
		for iy := range n {
			for ix := range n {
				x, y := float64(ix-n/2), float64(iy-n/2)
				img[iy*n+ix] = math.Exp(-(x*x + y*y) / (2 * s * s))
				sum += img[iy*n+ix]
			}
		}
		for i := range img {
			img[i] /= sum
		}
		p := recon.PlaneResult{CubePlane: recon.CubePlane{Coord: w, Lo: w - 1e-8, Hi: w + 1e-8, Label: "channel " + strconv.Itoa(k+1)},
			Image: img, Chi2r: 1 + 0.1*float64(k), Chi2rTarget: 1, N: 100, Weight: 4, Size: s * 0.2 * recon.Mas}
		if flux {
			p.FluxScale = 10 - float64(k)
		}
		res.Planes = append(res.Planes, p)
	}
	return CubeRun{Files: files, Data: d, Result: res}
}

// TestWriteCube checks the files of a cube: the FITS cube passes fitsverify and reads back
// with its wavelengths and per-plane χ²ᵣ, the CSV holds one row per plane with its
// wavelength and size, the montage and the moments plot exist, and the spectrum is written
// only with correlated fluxes (otherwise the note says why).
func TestWriteCube(t *testing.T) {
	for _, flux := range []bool{false, true} {
		dir := t.TempDir()
		r := fixedCube(t, flux)
		out := filepath.Join(dir, "c.fits")
		paths, err := Outputs{}.WriteCube(out, r)
		if err != nil {
			t.Fatal(err)
		}
		fitstest.Verify(t, out)
		im, err := fitsimage.ReadFile(out)
		if err != nil {
			t.Fatal(err)
		}
		cards := map[string]any{}
		for _, c := range im.Cards {
			cards[c.Key] = c.Value
		}
		for k, p := range r.Result.Planes {
			if math.Abs(im.Wave[k]-p.Coord) > 1e-15 {
				t.Errorf("plane %d at %g m, want %g m", k+1, im.Wave[k], p.Coord)
			}
			if c := cards["CHI2R00"+strconv.Itoa(k+1)]; c != p.Chi2r {
				t.Errorf("plane %d: CHI2R card %v, want %g", k+1, c, p.Chi2r)
			}
		}
		if cards["SPECREG"] != "smooth" || cards["NPLANES"] != 3 {
			t.Errorf("cards SPECREG %v, NPLANES %v", cards["SPECREG"], cards["NPLANES"])
		}
		fc, err := os.Open(paths.CSV)
		if err != nil {
			t.Fatal(err)
		}
		rows, err := csv.NewReader(fc).ReadAll()
		fc.Close()
		if err != nil || len(rows) != 4 {
			t.Fatalf("CSV: %v, %d rows", err, len(rows))
		}
		for k, p := range r.Result.Planes {
			w, _ := strconv.ParseFloat(rows[k+1][2], 64)
			s, _ := strconv.ParseFloat(rows[k+1][11], 64)
			if math.Abs(w-p.Coord*1e6) > 1e-6 || math.Abs(s-p.Size/recon.Mas) > 1e-6 {
				t.Errorf("CSV row %d: %v", k+1, rows[k+1])
			}
		}
		for _, p := range []string{paths.Montage, paths.Moments} {
			if st, err := os.Stat(p); err != nil || st.Size() == 0 {
				t.Errorf("%s: %v", p, err)
			}
		}
		if flux != (paths.Spectrum != "") || flux == (paths.SpectrumNote != "") {
			t.Errorf("flux %v: spectrum %q, note %q", flux, paths.Spectrum, paths.SpectrumNote)
		}
	}
}

// The star + environment report gives both sides of each profile interval and the
// curvature error, marks a side open to its bound, and its JSON writes an error that is
// not a number as null (encoding/json refuses NaN).
func TestStarEnvSummaryText(t *testing.T) {
	s := StarEnvSummary{StarF0: 0.5877, StarF0Err: 0.002, Lambda0Um: 1.9, StarIndex: -4,
		StarF0Range: ProfileRange{Low: 0.0023, High: 0.0018},
		EnvIndex:    1.87, EnvIndexErr: JFloat(math.NaN()), EnvIndexRange: ProfileRange{Low: 6.2, High: 18.13, HighBound: true}}
	var b strings.Builder
	s.WriteText(&b)
	for _, want := range []string{"0.5877 of the flux at 1.9 µm −0.0023 +0.0018 (± 0.002)", "spectral index 1.87 −6.2 +18 (to the bound) (± n/a: the profile has no positive curvature)"} {
		if !strings.Contains(b.String(), want) {
			t.Errorf("report lacks %q:\n%s", want, b.String())
		}
	}
	j, err := json.Marshal(s)
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{`"env_index_err":null`, `"env_index_profile":{"err_low":6.2,"err_high":18.13,"low_open_to_bound":false,"high_open_to_bound":true}`} {
		if !strings.Contains(string(j), want) {
			t.Errorf("JSON lacks %s:\n%s", want, j)
		}
	}
	if strings.Contains(b.String(), "NaN") {
		t.Errorf("report writes NaN:\n%s", b.String())
	}
	// A fit with a warning does not read as a success; one without says how it converged.
	s.StopReason = "converged: relative objective change below 1e-07 per iteration over 10 iterations"
	s.Warnings, s.Converged = []string{"the fit is not at its minimum along f0"}, true
	b.Reset()
	s.WriteText(&b)
	if !strings.Contains(b.String(), "finished with 1 warning (stop: relative objective change") {
		t.Errorf("report with a warning:\n%s", b.String())
	}
	s.Warnings = nil
	b.Reset()
	s.WriteText(&b)
	if !strings.Contains(b.String(), "iterations, converged: relative objective change") {
		t.Errorf("report without warnings:\n%s", b.String())
	}
	s.Converged, s.StopReason = false, "iteration limit reached"
	b.Reset()
	s.WriteText(&b)
	if !strings.Contains(b.String(), "NOT converged: iteration limit reached") {
		t.Errorf("report of an unconverged fit:\n%s", b.String())
	}
}

// The closing line of a cube's report says whether the planes' positions are measured: a
// shift of the image multiplies each visibility by a phase factor (Fourier shift theorem,
// Bracewell, The Fourier Transform and Its Applications, ch. 6), which V² and closure
// phases cancel and visibility phases keep. A cube that fitted visibility phases is not told
// that its positions are free.
func TestCubeTextPosition(t *testing.T) {
	const free = "do not fix positions"
	r := fixedCube(t, false)
	var b strings.Builder
	NewCubeSummary(r, CubePaths{}).WriteText(&b)
	if !strings.Contains(b.String(), free) {
		t.Errorf("cube of V² and closure phases, report lacks %q:\n%s", free, b.String())
	}
	for k := range r.Result.Planes {
		r.Result.Planes[k].Chi2 = []recon.TermChi2{{Type: dataset.Vis2, N: 60}, {Type: dataset.VisPhi, N: 40}}
	}
	b.Reset()
	NewCubeSummary(r, CubePaths{}).WriteText(&b)
	if s := b.String(); strings.Contains(s, free) || !strings.Contains(s, "visibility phases fix the planes' positions") {
		t.Errorf("cube with visibility phases fitted:\n%s", s)
	}
}
