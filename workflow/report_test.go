package workflow

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"

	"vcz/io/fitsfile/fitstest"
	"vcz/io/fitsimage"
	"vcz/output"
	"vcz/runspec"
)

// writtenReport runs a small comparison of two regularizers on the demo data and writes its
// outputs into a new folder, which it returns.
func writtenReport(t *testing.T) string {
	t.Helper()
	dir := t.TempDir()
	files, d := demoData(t)
	entries, err := CompareEntries(runspec.Spec{Grid: 32, Iterations: 40, Starts: 1}, "tv,mem", "")
	if err != nil {
		t.Fatal(err)
	}
	c, err := NewComparison(files, d, entries)
	if err != nil {
		t.Fatal(err)
	}
	c.Run(1, 0, CompareHooks{})
	if _, err := c.Write(dir, output.Outputs{}, 0); err != nil {
		t.Fatal(err)
	}
	return dir
}

// TestReport checks the report of a small comparison: its links, and its width in Chromium.
func TestReport(t *testing.T) {
	dir := writtenReport(t)
	t.Run("links", func(t *testing.T) { reportLinks(t, dir) })
	t.Run("width", func(t *testing.T) { reportWidth(t, dir) })
	t.Run("robust", func(t *testing.T) { reportRobust(t, dir) })
}

// The robust image, the pixel-wise minimum of images normalised to a total flux of 1, sums
// to less than 1; its header does not call it normalised (CONVENTIONS.md: written images
// say so in a header comment), gives its sum as FLUXSUM and says it is not normalised, and
// the report, compare.json and the text table say so too. fitsverify (HEASARC's FITS
// checker) finds nothing to report in it.
func reportRobust(t *testing.T, dir string) {
	path := filepath.Join(dir, "compare-robust.fits")
	im, err := fitsimage.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	sum := 0.0
	for _, v := range im.Data {
		sum += v
	}
	if sum >= 0.999 || sum <= 0 {
		t.Fatalf("robust image sums to %g: want below 1 for this test", sum)
	}
	if im.Normalized {
		t.Error("the robust image's header says it is normalised to a total flux of 1")
	}
	var keyed float64
	var comments []string
	for _, c := range im.Cards {
		switch v := c.Value.(type) {
		case float64:
			if c.Key == "FLUXSUM" {
				keyed = v
			}
		case string:
			if c.Key == "COMMENT" {
				comments = append(comments, v)
			}
		}
	}
	if math.Abs(keyed-sum) > 1e-9 {
		t.Errorf("FLUXSUM = %g, want the sum of the pixels %g", keyed, sum)
	}
	if !strings.Contains(strings.Join(comments, " "), "Not normalised to a total flux of 1") {
		t.Errorf("no comment that the image is not normalised: %q", comments)
	}
	fitstest.Verify(t, path)
	page, err := os.ReadFile(filepath.Join(dir, "report.html"))
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(page), "It is not normalised to a total flux of 1") || !strings.Contains(string(page), fmt.Sprintf("their minimum sums to %.3g", sum)) {
		t.Error("the report does not say that the robust image is not normalised, nor its sum")
	}
	b, err := os.ReadFile(filepath.Join(dir, "compare.json"))
	if err != nil {
		t.Fatal(err)
	}
	var rep CompareReport
	if err := json.Unmarshal(b, &rep); err != nil {
		t.Fatal(err)
	}
	if math.Abs(rep.RobustFlux-sum) > 1e-9 {
		t.Errorf("compare.json: robust_flux %g, want %g", rep.RobustFlux, sum)
	}
	var text strings.Builder
	rep.WriteText(&text)
	if !strings.Contains(text.String(), "not normalised to a total flux of 1") {
		t.Errorf("the text table does not say that the robust image is not normalised:\n%s", text.String())
	}
}

// The report links every FITS, CSV and JSON file of its folder, every link leads to a file
// there, and it names the display stretch and shows a plot per data type fitted.
func reportLinks(t *testing.T, dir string) {
	page, err := os.ReadFile(filepath.Join(dir, "report.html"))
	if err != nil {
		t.Fatal(err)
	}
	linked := map[string]bool{}
	for _, m := range regexp.MustCompile(`href="([^"]+)"`).FindAllStringSubmatch(string(page), -1) {
		linked[m[1]] = true
		if _, err := os.Stat(filepath.Join(dir, m[1])); err != nil {
			t.Errorf("link %q leads nowhere: %v", m[1], err)
		}
	}
	ents, _ := os.ReadDir(dir)
	n := 0
	for _, e := range ents {
		switch filepath.Ext(e.Name()) {
		case ".fits", ".csv", ".json":
			n++
			if !linked[e.Name()] {
				t.Errorf("%s is not linked from the report", e.Name())
			}
		}
	}
	// Two images, the spread and robust maps, the CSV and the JSON.
	if n != 6 {
		t.Errorf("%d FITS, CSV and JSON files, want 6", n)
	}
	if !regexp.MustCompile(`Display stretch: (linear|sqrt|asinh|log)`).Match(page) {
		t.Error("the report does not name the display stretch")
	}
	// The demo night has V², T3 amplitudes and closure phases: one plot each.
	if got := strings.Count(string(page), `data and models"`); got != 3 {
		t.Errorf("%d data plots in the report, want 3", got)
	}
}

// chromium returns the path of a Chromium browser, or "" when there is none.
func chromium() string {
	for _, name := range []string{"chromium", "chromium-browser", "google-chrome"} {
		if p, err := exec.LookPath(name); err == nil {
			return p
		}
	}
	return ""
}

// reportShot is a folder to keep the report's screenshot in, for looking at it.
var reportShot = os.Getenv("VCZ_REPORT_SHOT")

// The report renders without horizontal scrolling in a window 1 280 pixels wide: headless
// Chromium lays out a copy of the page with a script that writes the document's scroll
// width and client width (CSSOM View, W3C) into its title, which --dump-dom prints.
func reportWidth(t *testing.T, dir string) {
	browser := chromium()
	if browser == "" {
		t.Skip("no Chromium browser found (Debian package chromium)")
	}
	page, err := os.ReadFile(filepath.Join(dir, "report.html"))
	if err != nil {
		t.Fatal(err)
	}
	probe := strings.Replace(string(page), "</body>",
		`<script>document.title = document.documentElement.scrollWidth + " " + document.documentElement.clientWidth;</script></body>`, 1)
	pp := filepath.Join(dir, "probe.html")
	if err := os.WriteFile(pp, []byte(probe), 0o644); err != nil {
		t.Fatal(err)
	}
	run := func(args ...string) []byte {
		ctx, cancel := context.WithTimeout(context.Background(), 90*time.Second)
		defer cancel()
		args = append([]string{"--headless", "--no-sandbox", "--disable-gpu", "--hide-scrollbars", "--window-size=1280,900"}, args...)
		out, err := exec.CommandContext(ctx, browser, args...).Output()
		if err != nil {
			t.Fatalf("%s: %v", browser, err)
		}
		return out
	}
	dom := run("--dump-dom", "file://"+pp)
	m := regexp.MustCompile(`<title>(\d+) (\d+)</title>`).FindSubmatch(dom)
	if m == nil {
		t.Fatalf("no widths in the title of the laid-out page:\n%.300s", dom)
	}
	scroll, _ := strconv.Atoi(string(m[1]))
	client, _ := strconv.Atoi(string(m[2]))
	if client != 1280 || scroll > client {
		t.Errorf("scroll width %d px in a window %d px wide, want at most 1280", scroll, client)
	}
	if reportShot != "" {
		run("--screenshot="+filepath.Join(reportShot, "report.png"), "file://"+filepath.Join(dir, "report.html"))
	}
}

// The standard-deviation map of a regularizer's bootstrap says on its colour bar what its
// values are, as every image preview does: flux per pixel of images normalised to a total of
// 1 (CONVENTIONS.md); the bar showed only "asinh stretch (×1e-5)". It shows the resolution
// circle as the images do.
func TestBootStdPreviewLabel(t *testing.T) {
	o := bootStdPreview("mem", 0.12, 0.47, 3, "exposure")
	if o.Beam.Major != 0.47 {
		t.Errorf("resolution circle %+v, want 0.47 mas", o.Beam)
	}
	if !strings.Contains(o.ColorbarLabel, "flux per pixel (total 1)") || !strings.HasPrefix(o.ColorbarLabel, "σ") {
		t.Errorf("colour bar label %q", o.ColorbarLabel)
	}
	if o.Pixel != 0.12 || !strings.Contains(o.Subtitle, "3 replicates") || !strings.Contains(o.Title, "mem") {
		t.Errorf("options %+v", o)
	}
}
