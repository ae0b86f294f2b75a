package main

import (
	"bytes"
	"encoding/json"
	"image/png"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"syscall"
	"testing"

	"vcz/io/fitsimage"
	"vcz/io/oifits"
	"vcz/io/safefile"
	"vcz/output"
)

// runCmd runs the program with args and returns stdout, stderr and the exit code.
func runCmd(t *testing.T, args ...string) (string, string, int) {
	t.Helper()
	var out, errb bytes.Buffer
	code := run(args, &out, &errb)
	return out.String(), errb.String(), code
}

func TestHelpAndVersion(t *testing.T) {
	out, _, code := runCmd(t, "help")
	if code != exitOK || !strings.Contains(out, "inspect") || !strings.Contains(out, "image") || !strings.Contains(out, "Exit status") {
		t.Fatalf("help: code %d, output %q", code, out)
	}
	for name := range commands {
		if name == "help" || name == "version" {
			continue
		}
		out, _, code := runCmd(t, name, "--help")
		if code != exitOK || !strings.HasPrefix(out, "Usage: vcz "+name) {
			t.Errorf("%s --help: code %d, output starts %q", name, code, first(out))
		}
		out2, _, _ := runCmd(t, "help", name)
		if out2 != out {
			t.Errorf("'vcz help %s' differs from '%s --help'", name, name)
		}
	}
	out, _, code = runCmd(t, "version")
	if code != exitOK || !strings.HasPrefix(out, "vcz "+output.Version) {
		t.Fatalf("version: code %d, output %q", code, out)
	}
}

func first(s string) string {
	if i := strings.IndexByte(s, '\n'); i >= 0 {
		return s[:i]
	}
	return s
}

// Usage errors and bad input exit with 2 and one line on stderr.
func TestUsageErrors(t *testing.T) {
	for _, args := range [][]string{
		{},
		{"frobnicate"},
		{"inspect"},
		{"inspect", "-nosuchflag", "x"},
		{"inspect", "-wave", "2um:1um", "x.oifits"},
		{"image", "-reg", "nosuch", "x.oifits"},
		{"inspect", filepath.Join("..", "..", "testdata", "oifits", "bad", "vis2err-negative.oifits")},
		{"inspect", "no-such-file.oifits"},
		{"image", "-stretch", "cubic", filepath.Join("demodata", "vaeloris.oifits")},
		// An output folder that does not exist is found before any work.
		{"image", "-o", filepath.Join("no-such-folder", "x.fits"), filepath.Join("demodata", "vaeloris.oifits")},
		{"simulate", "-plan", filepath.Join("..", "..", "examples", "plan-six-demo.toml"), "-model", "ud:diameter=1", "-o", filepath.Join("no-such-folder", "x.oifits")},
	} {
		_, errs, code := runCmd(t, args...)
		if code != exitBadInput {
			t.Errorf("%v: exit %d, want %d (stderr %q)", args, code, exitBadInput, errs)
		}
		// One prefix style: "vcz COMMAND: …" ("vcz: …" when there is no command to name).
		prefix := "vcz: "
		if len(args) > 0 && args[0] != "frobnicate" {
			prefix = "vcz " + args[0] + ": "
		}
		if len(args) > 0 && (strings.Count(errs, "\n") != 1 || !strings.HasPrefix(errs, prefix)) {
			t.Errorf("%v: stderr is not one line starting with %q: %q", args, prefix, errs)
		}
	}
}

// The error for a bad file names the file, the table, the row and the column,
// the form the foundation issue asks for.
func TestBadFileMessage(t *testing.T) {
	_, errs, code := runCmd(t, "inspect", filepath.Join("..", "..", "testdata", "oifits", "bad", "vis2err-negative.oifits"))
	want := "vcz inspect: " + filepath.Join("..", "..", "testdata", "oifits", "bad", "vis2err-negative.oifits") + ": OI_VIS2 (HDU 7) row 1: VIS2ERR is -0.01; errors must be positive\n"
	if code != exitBadInput || errs != want {
		t.Fatalf("got exit %d and %q, want %q", code, errs, want)
	}
}

// masRad is one milliarcsecond in radians, π/(180·3600·1000) by definition.
const masRad = 3.141592653589793 / (180 * 3600 * 1000)

// The demo data through inspect: JSON fields the foundation issue names,
// and the resolution λmin/(2·Bmax) recomputed from the printed extremes
// (common practice, no source).
func TestInspectDemoJSON(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "demo.oifits")
	if err := os.WriteFile(path, demoOIFITS, 0o644); err != nil {
		t.Fatal(err)
	}
	out, errs, code := runCmd(t, "inspect", "-json", "-plot", filepath.Join(dir, "plots"), path)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var r map[string]any
	if err := json.Unmarshal([]byte(out), &r); err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{"files", "targets", "vis2", "t3", "vis", "baseline_m", "resolution_mas", "largest_scale_mas", "nights"} {
		if _, ok := r[k]; !ok {
			t.Errorf("JSON lacks %q", k)
		}
	}
	var rep output.InspectReport
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatal(err)
	}
	if rep.Vis2.Valid == 0 || rep.T3.Valid == 0 || rep.Nights != 1 {
		t.Fatalf("counts %+v %+v nights %d", rep.Vis2, rep.T3, rep.Nights)
	}
	res := rep.Wavelength.Min * 1e-6 / (2 * rep.Baseline.Max) / masRad
	if d := res/rep.Resolution - 1; d > 1e-9 || d < -1e-9 {
		t.Fatalf("resolution %g mas, λmin/(2·Bmax) = %g mas", rep.Resolution, res)
	}
	for _, name := range []string{"uv.png", "vis2.png"} {
		checkPNG(t, filepath.Join(dir, "plots", name))
	}
}

func checkPNG(t *testing.T, path string) {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	m, err := png.Decode(f)
	if err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	if b := m.Bounds(); b.Dx() < 200 || b.Dy() < 200 {
		t.Fatalf("%s: only %v", path, b)
	}
}

// requireTool finds an external reference tool, skipping without it on a
// developer machine and failing when CI is set.
func requireTool(t *testing.T, name string) string {
	t.Helper()
	p, err := exec.LookPath(name)
	if err != nil {
		if os.Getenv("CI") != "" {
			t.Fatalf("%s is required in CI: %v", name, err)
		}
		t.Skipf("%s not installed", name)
	}
	return p
}

// A small end-to-end reconstruction of the demo data: exit 0, every output
// written, the FITS file passes fitsverify with 0 warnings and 0 errors
// (HEASARC fitsverify, the FITS standard checker) and reads back with the
// grid the summary printed.
func TestImageEndToEnd(t *testing.T) {
	dir := t.TempDir()
	data := filepath.Join(dir, "demo.oifits")
	if err := os.WriteFile(data, demoOIFITS, 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "rec.fits")
	stdout, errs, code := runCmd(t, "image", "-n", "48", "-iter", "150", "-starts", "1", "-quiet", "-json", "-o", out, data)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var sum output.ImageSummary
	if err := json.Unmarshal([]byte(stdout), &sum); err != nil {
		t.Fatalf("%v in %q", err, stdout)
	}
	if sum.Grid.N != 48 || sum.Outputs.FITS != out || sum.Outputs.PNG == "" || len(sum.Outputs.Plots) < 3 {
		t.Fatalf("summary %+v", sum)
	}
	if !(sum.Chi2r > 0) || sum.Weight <= 0 || !sum.WeightAuto {
		t.Fatalf("χ²ᵣ %g, weight %g, auto %v", sum.Chi2r, sum.Weight, sum.WeightAuto)
	}
	im, err := fitsimage.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	if im.NX != 48 || im.NY != 48 {
		t.Fatalf("FITS image %d × %d", im.NX, im.NY)
	}
	total := 0.0
	for _, v := range im.Data {
		if v < 0 {
			t.Fatalf("negative pixel %g: positivity is violated", v)
		}
		total += v
	}
	if d := total - 1; d > 1e-9 || d < -1e-9 {
		t.Fatalf("total flux %g, want 1 (CONVENTIONS.md)", total)
	}
	checkPNG(t, sum.Outputs.PNG)
	for _, p := range sum.Outputs.Plots {
		checkPNG(t, p)
	}
	fv := requireTool(t, "fitsverify")
	vout, err := exec.Command(fv, "-q", out).CombinedOutput()
	if err != nil || !strings.HasPrefix(string(vout), "verification OK") || strings.Contains(string(vout), "warning") {
		t.Fatalf("fitsverify: %v: %s", err, vout)
	}
}

// A run that fails leaves no output file behind.
func TestImageFailureLeavesNoFile(t *testing.T) {
	dir := t.TempDir()
	out := filepath.Join(dir, "rec.fits")
	_, _, code := runCmd(t, "image", "-o", out, filepath.Join("..", "..", "testdata", "oifits", "bad", "truncated-data.oifits"))
	if code != exitBadInput {
		t.Fatalf("exit %d", code)
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 0 {
		t.Fatalf("left %d files behind", len(entries))
	}
}

// Flags may follow the positional arguments ("vcz image FILE -o OUT").
func TestInterspersedFlags(t *testing.T) {
	for _, c := range []struct {
		args []string
		pos  []string
		o    string
	}{
		{[]string{"a", "-o", "x", "b"}, []string{"a", "b"}, "x"},
		{[]string{"-o", "x", "a"}, []string{"a"}, "x"},
		{[]string{"a", "b", "-o=y"}, []string{"a", "b"}, "y"},
		{[]string{"a", "--", "-o", "z"}, []string{"a", "-o", "z"}, ""},
	} {
		fs := newFlagSet("t", "", "", nil)
		o := fs.String("o", "", "")
		if err := parseFlags(fs, c.args, nil); err != nil {
			t.Fatalf("%v: %v", c.args, err)
		}
		if *o != c.o || strings.Join(fs.Args(), " ") != strings.Join(c.pos, " ") {
			t.Errorf("%v: -o %q, args %q; want %q, %q", c.args, *o, fs.Args(), c.o, c.pos)
		}
	}
}

// An output that is one of the inputs, by its own name or through a symbolic link, is
// refused before anything is read or written (exit 2, one line naming both), and the data
// file is left as it was.
func TestOutputIsInput(t *testing.T) {
	dir := t.TempDir()
	data := writeDemoData(t, dir)
	before, err := os.ReadFile(data)
	if err != nil {
		t.Fatal(err)
	}
	link := filepath.Join(dir, "link.oifits")
	if err := os.Symlink(data, link); err != nil {
		t.Fatal(err)
	}
	for _, args := range [][]string{
		{"image", "-quiet", "-o", data, data},
		{"image", "-quiet", "-o", link, data},
		{"fit", "-model", "ud:diameter~3", "-save-model", data, data},
		{"fit", "-model", "ud:diameter~3", "-write-image", link, data},
	} {
		_, errs, code := runCmd(t, args...)
		if code != exitBadInput || strings.Count(errs, "\n") != 1 || !strings.Contains(errs, "would replace the input file") {
			t.Errorf("%q: exit %d, stderr %q", args, code, errs)
		}
	}
	after, err := os.ReadFile(data)
	if err != nil || !bytes.Equal(before, after) {
		t.Fatalf("the data file changed (%v)", err)
	}
}

// TestSpecialInputs checks that a named pipe or a device given as input is
// refused at once with one line naming the file, exit 2, by every command
// that reads data; a named pipe used to block in open(2) forever and
// /dev/zero behind a link to read until memory ran out.
func TestSpecialInputs(t *testing.T) {
	dir := t.TempDir()
	fifo := filepath.Join(dir, "pipe.oifits")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Skipf("mkfifo: %v", err)
	}
	zero := filepath.Join(dir, "zero.oifits")
	if err := os.Symlink("/dev/zero", zero); err != nil {
		t.Fatal(err)
	}
	for _, in := range []string{fifo, zero} {
		for _, args := range [][]string{
			{"inspect", in},
			{"image", "-quiet", "-o", filepath.Join(dir, "out.fits"), in},
			{"fit", "-model", "ud:diameter~3", in},
		} {
			_, errs, code := runCmd(t, args...)
			if code != exitBadInput || strings.Count(errs, "\n") != 1 || !strings.Contains(errs, filepath.Base(in)+": not a regular file") {
				t.Errorf("%q: exit %d, stderr %q", args, code, errs)
			}
		}
	}
	if _, err := os.Stat(filepath.Join(dir, "out.fits")); err == nil {
		t.Error("an output was written")
	}
}

// TestFailedPlotsLeaveNothing checks that a run whose last output fails (here a data-fit
// plot whose name is taken by a folder) exits 1 and removes the FITS image and preview it
// had written, so that no complete-looking result is left.
func TestFailedPlotsLeaveNothing(t *testing.T) {
	dir := t.TempDir()
	data := writeDemoData(t, dir)
	out := filepath.Join(dir, "star.fits")
	if err := os.Mkdir(filepath.Join(dir, "star-vis2.png"), 0o755); err != nil {
		t.Fatal(err)
	}
	_, errs, code := runCmd(t, "image", "-quiet", "-n", "32", "-iter", "20", "-weight", "0.001", "-starts", "1", "-o", out, data)
	if code != exitFailure || !strings.Contains(errs, "star-vis2.png") {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, p := range []string{"star.fits", "star.png", "star-t3phi.png", "star-residuals.png"} {
		if _, err := os.Stat(filepath.Join(dir, p)); err == nil {
			t.Errorf("%s left after the failure", p)
		}
	}
}

// TestInspectEscapes checks that inspect's text shows a target name holding terminal
// control codes (ESC [ 2 J clears the screen, ECMA-48) escaped, never raw.
func TestInspectEscapes(t *testing.T) {
	var b bytes.Buffer
	e := &escaper{w: &b}
	e.Write([]byte("Targets:        Orrin\x1b[2J\x07\u009b\tA\n"))
	if got, want := b.String(), "Targets:        Orrin\\x1b[2J\\x07\\u009b\tA\n"; got != want {
		t.Errorf("got %q, want %q", got, want)
	}
	dir := t.TempDir()
	data := writeDemoData(t, dir)
	f, err := oifits.ReadFile(data)
	if err != nil {
		t.Fatal(err)
	}
	// The writer refuses control characters, so a placeholder of the same length is
	// written and replaced in the table's bytes.
	f.Targets[0].Name, f.Primary.Object = "OrrinQQQQ", "other"
	var buf bytes.Buffer
	if err := oifits.Encode(&buf, f); err != nil {
		t.Fatal(err)
	}
	raw := bytes.Replace(buf.Bytes(), []byte("OrrinQQQQ"), []byte("Orrin\x1b[2J"), -1)
	bad := filepath.Join(dir, "esc.oifits")
	if err := os.WriteFile(bad, raw, 0o644); err != nil {
		t.Fatal(err)
	}
	out, _, code := runCmd(t, "inspect", bad)
	if code != exitOK || strings.ContainsRune(out, 0x1b) || !strings.Contains(out, `Orrin\x1b[2J`) {
		t.Errorf("exit %d, output %q", code, out)
	}
}

// TestOutputExtension checks that image refuses an output name whose extension says it is
// not FITS (star.png used to receive the FITS bytes, with the preview in star.png.png),
// before any work, and writes nothing.
func TestOutputExtension(t *testing.T) {
	dir := t.TempDir()
	data := writeDemoData(t, dir)
	for _, out := range []string{"star.png", "star", "star.json"} {
		_, errs, code := runCmd(t, "image", "-quiet", "-o", filepath.Join(dir, out), data)
		if code != exitBadInput || !strings.Contains(errs, "give a name ending in .fits") {
			t.Errorf("-o %s: exit %d: %s", out, code, errs)
		}
		if m, _ := filepath.Glob(filepath.Join(dir, "star*")); len(m) != 0 {
			t.Errorf("-o %s wrote %v", out, m)
		}
	}
}

// TestQuietKeepsStdout checks that -quiet silences stderr only, as its help says: the
// summary on stdout stays.
func TestQuietKeepsStdout(t *testing.T) {
	dir := t.TempDir()
	data := writeDemoData(t, dir)
	out, errs, code := runCmd(t, "image", "-quiet", "-n", "32", "-iter", "200", "-starts", "1", "-o", filepath.Join(dir, "q.fits"), data)
	if code != exitOK || !strings.Contains(out, "Wrote ") || strings.Contains(errs, "iter") {
		t.Errorf("exit %d, stdout %q, stderr %q", code, out, errs)
	}
}

// TestOneNamePerIdea checks the command language: -o names the output of image, compare
// and batch (batch's earlier -out still works), -iter the iteration limit of image and fit
// (fit's earlier -max-iter still works), and fit describes its models with -help-model.
func TestOneNamePerIdea(t *testing.T) {
	for _, c := range [][]string{{"image", "o"}, {"compare", "o"}, {"batch", "o"}, {"batch", "out"}, {"image", "iter"}, {"fit", "iter"}, {"fit", "max-iter"}, {"fit", "help-model"}, {"batch", "cpus"}, {"compare", "parallel"}, {"fit", "write-n"}, {"fit", "write-pixel"}, {"simulate", "write-n"}, {"simulate", "write-pixel"}, {"fit", "o"}, {"inspect", "o"}, {"simulate", "o"}, {"demo", "o"}} {
		out, _, _ := runCmd(t, c[0], "--help")
		if !strings.Contains(out, "  -"+c[1]+" ") && !strings.Contains(out, "  -"+c[1]+"\n") {
			t.Errorf("%s has no -%s", c[0], c[1])
		}
	}
	out, _, code := runCmd(t, "fit", "-help-model")
	if code != exitOK || !strings.Contains(out, "gauss") {
		t.Errorf("fit -help-model: exit %d, %q", code, out)
	}
}

// TestDocNamesEveryOption checks that the manual, doc.go, names every option that a
// command's -help lists, so that an option added to a command is also documented.
func TestDocNamesEveryOption(t *testing.T) {
	doc, err := os.ReadFile("doc.go")
	if err != nil {
		t.Fatal(err)
	}
	flagLine := regexp.MustCompile(`(?m)^  (-[a-z0-9-]+)`)
	for name := range commands {
		if name == "help" || name == "version" {
			continue
		}
		out, _, _ := runCmd(t, name, "--help")
		opts := flagLine.FindAllStringSubmatch(out, -1)
		if len(opts) == 0 {
			t.Errorf("%s --help lists no options", name)
		}
		for _, m := range opts {
			named := regexp.MustCompile(`(^|[^a-z0-9-])` + regexp.QuoteMeta(m[1]) + `($|[^a-z0-9-])`)
			if !named.Match(doc) {
				t.Errorf("doc.go does not name %s of %s", m[1], name)
			}
		}
	}
}

// TestJSONEveryCommand checks that simulate and batch, like image, fit, compare and inspect,
// print one JSON object on stdout with -json, and nothing else there.
func TestJSONEveryCommand(t *testing.T) {
	dir := t.TempDir()
	out, errs, code := runCmd(t, "simulate", "-plan", filepath.Join("..", "..", "examples", "plan-six-snapshot.toml"),
		"-model", "ud:diameter=2", "-o", filepath.Join(dir, "s.oifits"), "-json")
	var sim map[string]any
	if code != exitOK || json.Unmarshal([]byte(out), &sim) != nil || sim["output"] != filepath.Join(dir, "s.oifits") {
		t.Fatalf("simulate -json: exit %d, %q, %s", code, out, errs)
	}
	out, errs, code = runCmd(t, append(append([]string{"batch", "-o", filepath.Join(dir, "b"), "-json"}, batchFast...), filepath.Join(dir, "s.oifits"))...)
	var sum map[string]any
	if code != exitOK || json.Unmarshal([]byte(out), &sum) != nil || sum["rows"] == nil {
		t.Fatalf("batch -json: exit %d, %q, %s", code, out, errs)
	}
}

// TestInspectPathsAsGiven checks that inspect lists the files by the paths the user gave,
// so that files of the same name in different folders are told apart.
func TestInspectPathsAsGiven(t *testing.T) {
	dir := t.TempDir()
	var paths []string
	for _, night := range []string{"n1", "n2"} {
		os.Mkdir(filepath.Join(dir, night), 0o755)
		paths = append(paths, writeDemoData(t, filepath.Join(dir, night)))
	}
	out, errs, code := runCmd(t, append([]string{"inspect"}, paths...)...)
	if code != exitOK || !strings.Contains(out, paths[0]+", "+paths[1]) {
		t.Errorf("exit %d: %q %s", code, out, errs)
	}
}

// TestJSONSchema checks that the JSON of every command that reports a fit has one shape:
// "chi2r" a number (the total), "chi2r_by_type" an object of {"n", "chi2r"} per data type,
// and "grid" an object with "n" (image, fit, compare and its rows, batch rows, inspect's grid).
func TestJSONSchema(t *testing.T) {
	dir := t.TempDir()
	data := writeDemoData(t, dir)
	fast := []string{"-n", "32", "-iter", "30", "-starts", "1", "-weight", "0.001"}
	decode := func(args ...string) map[string]any {
		t.Helper()
		out, errs, code := runCmd(t, args...)
		var v map[string]any
		if code != exitOK || json.Unmarshal([]byte(out), &v) != nil {
			t.Fatalf("%q: exit %d, %q, %s", args, code, out, errs)
		}
		return v
	}
	check := func(what string, v map[string]any, wantGrid bool) {
		t.Helper()
		if _, hasFit := v["chi2r"]; hasFit != (v["chi2r_by_type"] != nil) {
			t.Errorf("%s: chi2r and chi2r_by_type come together (%v, %v)", what, v["chi2r"], v["chi2r_by_type"])
		}
		if c, ok := v["chi2r"]; ok {
			if _, isNum := c.(float64); !isNum {
				t.Errorf("%s: chi2r is %T, not a number", what, c)
			}
		}
		if by, ok := v["chi2r_by_type"]; ok {
			m, _ := by.(map[string]any)
			if len(m) == 0 {
				t.Errorf("%s: chi2r_by_type is %v", what, by)
			}
			for k, e := range m {
				o, isObj := e.(map[string]any)
				if !isObj || o["n"] == nil || o["chi2r"] == nil {
					t.Errorf("%s: chi2r_by_type[%s] is %v, not {n, chi2r}", what, k, e)
				}
			}
		}
		if wantGrid {
			g, ok := v["grid"].(map[string]any)
			if !ok || g["n"] == nil {
				t.Errorf("%s: grid is %v, not an object with n", what, v["grid"])
			}
		}
	}
	img := decode(append(append([]string{"image", "-json", "-quiet", "-o", filepath.Join(dir, "i0.fits")}, fast...), data)...)
	if img["chi2r_by_type"] == nil {
		t.Fatal("image: no chi2r_by_type")
	}
	check("image", decode(append(append([]string{"image", "-json", "-quiet", "-o", filepath.Join(dir, "i.fits")}, fast...), data)...), true)
	check("fit", decode("fit", "-json", "-model", "ud:diameter~3", data), false)
	check("inspect", decode("inspect", "-json", data), true)
	check("demo", decode("demo", "-json", "-quiet", "-o", filepath.Join(dir, "demo")), true)
	cmp := decode(append(append([]string{"compare", "-json", "-quiet", "-reg", "tv", "-o", filepath.Join(dir, "c")}, fast...), data)...)
	check("compare", cmp, true)
	rows, _ := cmp["rows"].([]any)
	if len(rows) == 0 {
		t.Fatal("compare: no rows")
	}
	check("compare row", rows[0].(map[string]any), false)
	b := decode(append(append([]string{"batch", "-json", "-quiet", "-o", filepath.Join(dir, "b")}, fast...), data)...)
	brows, _ := b["rows"].([]any)
	if len(brows) == 0 {
		t.Fatal("batch: no rows")
	}
	check("batch row", brows[0].(map[string]any), false)
}

// TestInspectPlotFolderErrors checks inspect -o against folders that cannot take the plots:
// a path through a file is bad input (exit 2) named by the option the user typed, and a
// plot whose name is taken by a folder fails the run (exit 1) with none of the other plots
// left, so that no complete-looking set of plots remains.
func TestInspectPlotFolderErrors(t *testing.T) {
	dir := t.TempDir()
	data := writeDemoData(t, dir)
	file := filepath.Join(dir, "afile")
	if err := os.WriteFile(file, nil, 0o644); err != nil {
		t.Fatal(err)
	}
	_, errs, code := runCmd(t, "inspect", "-o", filepath.Join(file, "plots"), data)
	if code != exitBadInput || strings.Count(errs, "\n") != 1 || !strings.HasPrefix(errs, "vcz inspect: -o ") || !strings.Contains(errs, "not a directory") {
		t.Errorf("-o through a file: exit %d, stderr %q", code, errs)
	}
	// A folder that exists but takes no file (Linux's /proc, even for root) is bad input
	// found before the data are read.
	if st, err := os.Stat("/proc/self"); err == nil && st.IsDir() {
		_, errs, code = runCmd(t, "inspect", "-o", "/proc", data)
		if code != exitBadInput || strings.Count(errs, "\n") != 1 || !strings.HasPrefix(errs, "vcz inspect: -o /proc: cannot write") {
			t.Errorf("-o /proc: exit %d, stderr %q", code, errs)
		}
	}
	plots := filepath.Join(dir, "plots")
	if err := os.MkdirAll(filepath.Join(plots, "t3phi.png"), 0o755); err != nil {
		t.Fatal(err)
	}
	_, errs, code = runCmd(t, "inspect", "-o", plots, data)
	if code != exitFailure || strings.Count(errs, "\n") != 1 || !strings.Contains(errs, "t3phi.png") {
		t.Fatalf("plot in the way: exit %d, stderr %q", code, errs)
	}
	for _, p := range []string{"uv.png", "vis2.png", "t3amp.png"} {
		if _, err := os.Stat(filepath.Join(plots, p)); err == nil {
			t.Errorf("%s left after the failure", p)
		}
	}
}

// TestPanicIsOneLine checks that a panic inside a command (a defect of vcz) ends in one
// line on stderr and exit 1, not a stack trace, and that a write it abandoned leaves no
// temporary file behind.
func TestPanicIsOneLine(t *testing.T) {
	dir := t.TempDir()
	commands["paniccheck"] = &command{name: "paniccheck", run: func(args []string, _, _ io.Writer) error {
		return safefile.Write(filepath.Join(dir, "x.fits"), func(w io.Writer) error {
			var s []int
			_ = s[len(args)+3] // index out of range, in the middle of a write
			return nil
		})
	}}
	defer delete(commands, "paniccheck")
	_, errs, code := runCmd(t, "paniccheck")
	if code != exitFailure || strings.Count(errs, "\n") != 1 || strings.Contains(errs, "goroutine") ||
		!strings.HasPrefix(errs, "vcz paniccheck: internal error") {
		t.Errorf("exit %d, stderr %q; want exit %d and one line", code, errs, exitFailure)
	}
	if m, _ := filepath.Glob(filepath.Join(dir, "*")); len(m) > 0 {
		t.Errorf("left %v", m)
	}
}
