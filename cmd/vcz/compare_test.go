package main

import (
	"bytes"
	"context"
	"encoding/json"
	"image/png"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"golang.org/x/net/html"

	"vcz/dataset"
	"vcz/io/fitsfile/fitstest"
	"vcz/io/fitsimage"
	"vcz/io/oifits"
	"vcz/recon"
	"vcz/recon/model"
	"vcz/recon/simulate"
	"vcz/regularizers"
	"vcz/workflow"
)

// simulateFile simulates the demo observing plan (six telescopes, 8 hour
// angles, 8 channels) of a model in compact form and writes it to dir.
func simulateFile(t testing.TB, dir, spec string) string {
	t.Helper()
	plan, _ := simulate.Demo()
	m, err := model.ParseCompact(spec)
	if err != nil {
		t.Fatal(err)
	}
	f, _, err := simulate.Run(plan, simulate.ModelSky{Model: m})
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(dir, "sim.oifits")
	if err := oifits.WriteFile(path, f); err != nil {
		t.Fatal(err)
	}
	return path
}

// compareOn runs the whole comparison on a file through the command and returns the
// report it wrote.
func compareOn(t testing.TB, path, dir string, args ...string) *workflow.CompareReport {
	t.Helper()
	var stderr bytes.Buffer
	err := runCompare(append([]string{path, "-o", dir, "-quiet"}, args...), &bytes.Buffer{}, &stderr)
	if err != nil {
		t.Fatalf("compare: %v (%s)", err, stderr.String())
	}
	b, err := os.ReadFile(filepath.Join(dir, "compare.json"))
	if err != nil {
		t.Fatal(err)
	}
	var rep workflow.CompareReport
	if err := json.Unmarshal(b, &rep); err != nil {
		t.Fatal(err)
	}
	return &rep
}

// readImage reads one regularizer's FITS image back.
func readImage(t *testing.T, path string) (img []float64, n int, pixel float64) {
	t.Helper()
	im, err := fitsimage.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return im.Data, im.NX, im.Pixel
}

// TestCompareBinary reconstructs a binary with a resolved primary (uniform
// disc of 1.5 mas, point companion at x = 1.8, y = 1.2 mas, flux 0.3 of the
// primary) with every regularizer. Goals of the issue: the companion at the
// true separation and position angle within one pixel, the flux ratio within
// 10 %.
func TestCompareBinary(t *testing.T) {
	dir := t.TempDir()
	path := simulateFile(t, dir, "ud:diameter=1.5;point:x=1.8,y=1.2,flux=0.3")
	out := filepath.Join(dir, "out")
	rep := compareOn(t, path, out, "-n", "48", "-iter", "150", "-starts", "1")
	if len(rep.Rows) != len(regularizers.Kinds()) {
		t.Fatalf("%d rows, want one per regularizer (%d)", len(rep.Rows), len(regularizers.Kinds()))
	}
	const tx, ty, ratio = 1.8, 1.2, 0.3
	for _, row := range rep.Rows {
		if row.Error != "" {
			t.Errorf("%s failed: %s", row.Regularizer, row.Error)
			continue
		}
		img, n, pixel := readImage(t, filepath.Join(out, row.FITS))
		pm := pixel / recon.Mas
		// The companion is the brightest pixel: a point of 0.23 of the flux
		// against a disc spread over ~100 pixels.
		bi := 0
		for i, v := range img {
			if v > img[bi] {
				bi = i
			}
		}
		cx, cy := float64(bi%n), float64(bi/n)
		const rad = 5.0
		var sf, sx, sy, pf, px, py float64
		for i, v := range img {
			ix, iy := float64(i%n), float64(i/n)
			if math.Hypot(ix-cx, iy-cy) <= rad {
				sf, sx, sy = sf+v, sx+v*ix, sy+v*iy
			} else {
				pf, px, py = pf+v, px+v*ix, py+v*iy
			}
		}
		// Offsets east and north (CONVENTIONS.md: east is −ix).
		dx := -(sx/sf - px/pf) * pm
		dy := (sy/sf - py/pf) * pm
		sep, tsep := math.Hypot(dx, dy), math.Hypot(tx, ty)
		pa, tpa := math.Atan2(dx, dy), math.Atan2(tx, ty)
		// Position error across the line of sight, in pixels.
		perp := tsep * math.Abs(math.Remainder(pa-tpa, 2*math.Pi)) / pm
		got := sf / pf
		t.Logf("%-9s χ²ᵣ %.3f: separation %.3f mas (%+.2f px), PA %.1f° (%.2f px across), ratio %.3f (%+.1f %%)",
			row.Regularizer, row.Chi2r, sep, (sep-tsep)/pm, pa*180/math.Pi, perp, got, 100*(got/ratio-1))
		if math.Abs(sep-tsep) > pm {
			t.Errorf("%s: separation %.3f mas, true %.3f mas, pixel %.3f mas", row.Regularizer, sep, tsep, pm)
		}
		if perp > 1 {
			t.Errorf("%s: position angle %.1f°, true %.1f°: %.2f px off", row.Regularizer, pa*180/math.Pi, tpa*180/math.Pi, perp)
		}
		if math.Abs(got/ratio-1) > 0.1 {
			t.Errorf("%s: flux ratio %.3f, true %.3f", row.Regularizer, got, ratio)
		}
	}
	checkReport(t, out, len(regularizers.Kinds()))
}

// TestCompareDisc reconstructs a uniform disc of 2 mas with every
// regularizer and fits the uniform-disc visibility 2J1(x)/x, x = πθq (Born &
// Wolf, Principles of Optics, sect. 8.5.2) to each image's model V² at the
// data points by a 1-D search. The goal is 3 %.
func TestCompareDisc(t *testing.T) {
	dir := t.TempDir()
	path := simulateFile(t, dir, "ud:diameter=2")
	out := filepath.Join(dir, "out")
	rep := compareOn(t, path, out, "-n", "48", "-iter", "150", "-starts", "1")
	f, err := oifits.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	d, err := dataset.FromFiles([]*oifits.File{f}, dataset.Selection{})
	if err != nil {
		t.Fatal(err)
	}
	// Every FITS file compare writes passes fitsverify with no error and no warning (HEASARC
	// fitsverify, the FITS 4.0 standard's checker), the agreement maps included.
	fits, _ := filepath.Glob(filepath.Join(out, "*.fits"))
	if len(fits) < 3 {
		t.Fatalf("compare wrote %d FITS files: %v", len(fits), fits)
	}
	for _, p := range fits {
		fitstest.Verify(t, p)
	}
	const truth = 2.0
	for _, row := range rep.Rows {
		if row.Error != "" {
			t.Errorf("%s failed: %s", row.Regularizer, row.Error)
			continue
		}
		img, n, pixel := readImage(t, filepath.Join(out, row.FITS))
		obs, err := recon.Predict(d, recon.Grid{N: n, Pixel: pixel}, img, nil)
		if err != nil {
			t.Fatal(err)
		}
		cost := func(theta float64) float64 {
			c := 0.0
			for i := range obs.Of(dataset.Vis2) {
				v := model.UniformDiscV(theta*recon.Mas, math.Hypot(d.Vis2.U[i], d.Vis2.V[i]))
				c += (v*v - obs.Of(dataset.Vis2)[i]) * (v*v - obs.Of(dataset.Vis2)[i])
			}
			return c
		}
		// A scan in steps of 0.1 % of the truth from 1 to 3 mas, then the best.
		best, bc := 0.0, math.Inf(1)
		for th := 1.0; th <= 3.0; th += 0.002 {
			if c := cost(th); c < bc {
				best, bc = th, c
			}
		}
		rel := best/truth - 1
		t.Logf("%-9s χ²ᵣ %.3f: diameter %.4f mas (%+.2f %%)", row.Regularizer, row.Chi2r, best, 100*rel)
		if math.Abs(rel) > 0.03 {
			t.Errorf("%s: diameter %.4f mas, true %.1f mas: %.2f %% > 3 %%", row.Regularizer, best, truth, 100*rel)
		}
	}
}

// checkReport parses report.html with the HTML5 parser of golang.org/x/net
// (WHATWG HTML parsing algorithm) and checks that it embeds the images as
// data URIs, has the viewport meta and the caution; in CI it renders it in
// headless Chromium.
func checkReport(t *testing.T, dir string, nreg int) {
	t.Helper()
	path := filepath.Join(dir, "report.html")
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	doc, err := html.Parse(bytes.NewReader(b))
	if err != nil {
		t.Fatal(err)
	}
	imgs, viewport, rows := 0, false, 0
	var walk func(*html.Node)
	walk = func(n *html.Node) {
		if n.Type == html.ElementNode {
			switch n.Data {
			case "img":
				for _, a := range n.Attr {
					if a.Key == "src" {
						if !strings.HasPrefix(a.Val, "data:image/png;base64,") {
							t.Errorf("image source %.40q is not an embedded PNG", a.Val)
						}
						imgs++
					}
				}
			case "meta":
				for _, a := range n.Attr {
					viewport = viewport || a.Key == "name" && a.Val == "viewport"
				}
			case "tr":
				rows++
			}
		}
		for c := n.FirstChild; c != nil; c = c.NextSibling {
			walk(c)
		}
	}
	walk(doc)
	// Panel, spread, robust, V², closure phase, and per regularizer its image and L-curve.
	if imgs < 5+nreg {
		t.Errorf("%d embedded images, want at least %d", imgs, 5+nreg)
	}
	if rows != nreg+1 {
		t.Errorf("%d table rows, want %d", rows, nreg+1)
	}
	if !viewport {
		t.Error("no viewport meta element")
	}
	if !bytes.Contains(b, []byte("only one regularizer shows is suspect")) || !bytes.Contains(b, []byte("λ/(2·B")) {
		t.Error("the caution paragraph is missing")
	}
	if bytes.Contains(b, []byte("http://")) || bytes.Contains(b, []byte("https://")) {
		t.Error("the report refers to the network")
	}
	screenshot(t, path)
}

// screenshot loads the report in headless Chromium and checks that the
// picture is not blank (many distinct colours). It skips when Chromium is
// missing, unless env CI is set.
func screenshot(t *testing.T, page string) {
	t.Helper()
	const bin = "/usr/bin/chromium"
	if _, err := os.Stat(bin); err != nil {
		if os.Getenv("CI") != "" {
			t.Fatalf("chromium is needed in CI: %v", err)
		}
		t.Skip("chromium missing")
	}
	abs, _ := filepath.Abs(page)
	out := filepath.Join(t.TempDir(), "shot.png")
	ctx, cancel := context.WithTimeout(context.Background(), 90*time.Second)
	defer cancel()
	cmd := exec.CommandContext(ctx, bin, "--headless", "--no-sandbox", "--disable-gpu", "--no-first-run",
		"--disable-background-networking", "--disable-component-update", "--disable-sync",
		"--user-data-dir="+t.TempDir(), "--screenshot="+out, "--window-size=800,1200", "file://"+abs)
	if msg, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("chromium: %v\n%s", err, msg)
	}
	f, err := os.Open(out)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	im, err := png.Decode(f)
	if err != nil {
		t.Fatal(err)
	}
	colours := map[uint32]bool{}
	bd := im.Bounds()
	for y := bd.Min.Y; y < bd.Max.Y; y += 2 {
		for x := bd.Min.X; x < bd.Max.X; x += 2 {
			r, g, b, _ := im.At(x, y).RGBA()
			colours[r>>8<<16|g>>8<<8|b>>8] = true
		}
	}
	t.Logf("screenshot %d × %d, %d distinct colours", bd.Dx(), bd.Dy(), len(colours))
	// A page of text alone has a few dozen anti-aliasing greys; the embedded
	// colour images give hundreds (common practice, no source).
	if len(colours) < 200 {
		t.Errorf("screenshot has %d distinct colours: blank or images missing", len(colours))
	}
}

// TestCompareBootstrap checks that compare -bootstrap K writes, per regularizer, the
// bootstrap maps with the image's world coordinates (fitsverify: 0 warnings, 0 errors) and
// shows the standard deviation map in the report, and refuses K = 1. With K below
// workflow.MinReplicates, each regularizer's significance map is warned of on stderr (which
// -strict counts), in compare.json and in the report.
func TestCompareBootstrap(t *testing.T) {
	dir := t.TempDir()
	data := writeDemoData(t, dir)
	out := filepath.Join(dir, "cmp")
	_, errs, code := runCmd(t, "compare", data, "-o", out, "-quiet", "-strict", "-reg", "tv,mem", "-n", "32", "-iter", "60", "-starts", "1", "-bootstrap", "4")
	if code != exitFailure {
		t.Fatalf("compare -strict with 4 replicates: exit %d, want %d: %s", code, exitFailure, errs)
	}
	var rep workflow.CompareReport
	if b, err := os.ReadFile(filepath.Join(out, "compare.json")); err != nil {
		t.Fatal(err)
	} else if err := json.Unmarshal(b, &rep); err != nil {
		t.Fatal(err)
	}
	html, err := os.ReadFile(filepath.Join(out, "report.html"))
	if err != nil {
		t.Fatal(err)
	}
	const few = "only 4 bootstrap replicates, fewer than "
	for _, r := range rep.Rows {
		if !strings.Contains(errs, "warning: "+r.Regularizer+" bootstrap: "+few) {
			t.Errorf("%s: no warning of few replicates on stderr: %s", r.Regularizer, errs)
		}
		warned := false
		for _, w := range r.BootWarnings {
			warned = warned || strings.Contains(w, few) && strings.Contains(w, r.Regularizer+"-boot-signif.fits")
		}
		if !warned {
			t.Errorf("%s: bootstrap warnings in compare.json %q", r.Regularizer, r.BootWarnings)
		}
	}
	if strings.Count(string(html), "Warning: bootstrap: "+few) != len(rep.Rows) {
		t.Errorf("the report does not warn of few replicates once per regularizer")
	}
	fv := requireTool(t, "fitsverify")
	for _, r := range rep.Rows {
		if r.BootStd != r.Regularizer+"-boot-std.fits" || r.BootReplicates != 4 {
			t.Fatalf("%s: bootstrap %q of %d replicates (%s)", r.Regularizer, r.BootStd, r.BootReplicates, r.BootError)
		}
		vout, err := exec.Command(fv, "-q", filepath.Join(out, r.BootStd)).CombinedOutput()
		if err != nil || !strings.HasPrefix(string(vout), "verification OK") {
			t.Errorf("fitsverify %s: %v: %s", r.BootStd, err, vout)
		}
		if !strings.Contains(string(html), r.Regularizer+" bootstrap standard deviation") || !strings.Contains(string(html), r.BootStd) {
			t.Errorf("the report shows no bootstrap map of %s", r.Regularizer)
		}
		// Every file the bootstrap wrote is in compare.json and linked from the report.
		for _, f := range []string{r.BootMean, r.BootSignif, r.BootPNG} {
			if _, err := os.Stat(filepath.Join(out, f)); f == "" || err != nil {
				t.Errorf("%s: bootstrap file %q of compare.json: %v", r.Regularizer, f, err)
			} else if !strings.Contains(string(html), `href="`+f+`"`) {
				t.Errorf("%s: the report does not link %s", r.Regularizer, f)
			}
		}
	}
	if _, errs, code := runCmd(t, "compare", "-bootstrap", "1", "-o", filepath.Join(dir, "x"), data); code != exitBadInput {
		t.Errorf("-bootstrap 1: exit %d: %s", code, errs)
	}
}

// An output folder that cannot be made (a file is in its way) is bad input, told in one
// line that names the option and the folder, before any reconstruction (common practice,
// no source). demo and batch take -o the same way.
func TestCompareOutputNotFolder(t *testing.T) {
	file := filepath.Join(t.TempDir(), "taken")
	if err := os.WriteFile(file, []byte("x"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, args := range [][]string{
		{"compare", "-o", file, filepath.Join("demodata", "vaeloris.oifits")},
		{"demo", "-o", filepath.Join(file, "sub")},
		{"batch", "-o", file, filepath.Join("demodata", "vaeloris.oifits")},
	} {
		_, errs, code := runCmd(t, args...)
		want := "vcz " + args[0] + ": -o: cannot make folder " + args[2] + ": "
		if code != exitBadInput || strings.Count(errs, "\n") != 1 || !strings.HasPrefix(errs, want) {
			t.Errorf("%v: exit %d, stderr %q; want exit %d and one line starting %q", args, code, errs, exitBadInput, want)
		}
	}
}
