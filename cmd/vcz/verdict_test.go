package main

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"testing"

	"vcz/dataset"
	"vcz/io/fitsfile"
	"vcz/io/fitsfile/fitstest"
	"vcz/io/fitsimage"
	"vcz/output"
	"vcz/recon"
	"vcz/workflow"
)

// headerScript prints a FITS file's primary header as JSON, read with astropy, which
// joins long strings continued on CONTINUE cards itself.
const headerScript = "../../io/fitsfile/testdata/dump_header.py"

// warningLines returns the "warning: " lines of stderr, without the prefix.
func warningLines(stderr string) []string {
	var out []string
	for _, l := range strings.Split(stderr, "\n") {
		if s, ok := strings.CutPrefix(l, "warning: "); ok {
			out = append(out, s)
		}
	}
	return out
}

// writeDemoData writes the embedded demo data into dir and returns the path.
func writeDemoData(t *testing.T, dir string) string {
	t.Helper()
	p := filepath.Join(dir, "demo.oifits")
	if err := os.WriteFile(p, demoOIFITS, 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// checkWarningHeader checks the verdict in the FITS header of path against the
// warnings of the run: NWARN is their number and WARNn the full text of the n-th, in
// printable ASCII (FITS standard 4.0, sect. 4.1.2.1), read back with the project's
// reader and, where available, with astropy; the file passes fitsverify with 0
// warnings and 0 errors (HEASARC fitsverify, which checks the long-string convention).
func checkWarningHeader(t *testing.T, path string, warnings []string) {
	t.Helper()
	raw, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	f, err := fitsfile.Parse(raw)
	if err != nil {
		t.Fatal(err)
	}
	h := f.HDUs[0].Header
	if n, ok, err := h.Int("NWARN"); !ok || err != nil || n != len(warnings) {
		t.Errorf("%s: NWARN = %d (%v, %v), want %d", path, n, ok, err, len(warnings))
	}
	for i, w := range warnings {
		key := fmt.Sprintf("WARN%d", i+1)
		if s, _, _ := h.String(key); s != output.ASCII(w) {
			t.Errorf("%s: %s = %q, want %q", path, key, s, output.ASCII(w))
		}
	}
	if h.Has(fmt.Sprintf("WARN%d", len(warnings)+1)) {
		t.Errorf("%s: more WARNn cards than warnings", path)
	}
	fitstest.Verify(t, path)
	var got map[string]any
	if err := json.Unmarshal(fitstest.RunPython(t, headerScript, path), &got); err != nil {
		t.Fatal(err)
	}
	if got["NWARN"] != float64(len(warnings)) {
		t.Errorf("astropy: NWARN = %v, want %d", got["NWARN"], len(warnings))
	}
	for i, w := range warnings {
		key := fmt.Sprintf("WARN%d", i+1)
		if got[key] != output.ASCII(w) {
			t.Errorf("astropy: %s = %q, want %q", key, got[key], output.ASCII(w))
		}
	}
}

// TestImageVerdict: three iterations stop the final run while its objective still
// falls, so the verdict warns (recon.Result.Warnings). The warnings are on stderr, one
// "warning:" line each, in the JSON summary and in the FITS header, and the exit status
// is 0; with -strict it is 1, with every output written, and the summary line does not
// say "converged".
func TestImageVerdict(t *testing.T) {
	dir := t.TempDir()
	data := writeDemoData(t, dir)
	out := filepath.Join(dir, "rec.fits")
	fast := []string{"image", "-n", "32", "-iter", "3", "-starts", "1"}
	stdout, errs, code := runCmd(t, append(fast, "-json", "-o", out, data)...)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var sum output.ImageSummary
	if err := json.Unmarshal([]byte(stdout), &sum); err != nil {
		t.Fatalf("%v in %q", err, stdout)
	}
	if len(sum.Warnings) == 0 {
		t.Fatalf("no warnings in the JSON summary of a run stopped after 3 iterations: %s", stdout)
	}
	if got := warningLines(errs); !reflect.DeepEqual(got, sum.Warnings) {
		t.Errorf("stderr warnings %q, JSON %q", got, sum.Warnings)
	}
	if !strings.Contains(strings.Join(sum.Warnings, " "), "-iter") {
		t.Errorf("no warning suggests raising -iter: %q", sum.Warnings)
	}
	long := false
	for _, w := range sum.Warnings {
		long = long || len(output.ASCII(w)) > 68
	}
	if !long {
		t.Error("no warning longer than one FITS card: the long-string cards are not exercised")
	}
	checkWarningHeader(t, out, sum.Warnings)

	// -strict: exit 1 after writing every output; the text summary does not claim success.
	strictOut := filepath.Join(dir, "strict.fits")
	stdout, errs, code = runCmd(t, append(fast, "-strict", "-o", strictOut, data)...)
	if code != exitFailure {
		t.Fatalf("-strict: exit %d, want %d: %s", code, exitFailure, errs)
	}
	if len(warningLines(errs)) != len(sum.Warnings) || !strings.Contains(errs, "-strict") {
		t.Errorf("-strict stderr: %s", errs)
	}
	for _, p := range []string{strictOut, output.Stem(strictOut) + ".png", output.Stem(strictOut) + "-vis2.png"} {
		if _, err := os.Stat(p); err != nil {
			t.Errorf("-strict: output missing: %v", err)
		}
	}
	var optimizer string
	for _, l := range strings.Split(stdout, "\n") {
		if strings.HasPrefix(l, "Optimizer:") {
			optimizer = l
		}
	}
	if !strings.Contains(optimizer, "finished with "+output.CountWarnings(len(sum.Warnings))) || strings.Contains(optimizer, "converged") {
		t.Errorf("summary line %q", optimizer)
	}
}

// TestDemoVerdictNone: the demo with its default settings fits the data well, so it
// gives no warning line, NWARN = 0 in its image and exit 0 even with -strict.
func TestDemoVerdictNone(t *testing.T) {
	dir := t.TempDir()
	_, errs, code := runCmd(t, "demo", "-o", dir, "-strict", "-quiet")
	if code != exitOK {
		t.Fatalf("demo -strict: exit %d: %s", code, errs)
	}
	if w := warningLines(errs); len(w) > 0 {
		t.Fatalf("the demo warns: %q", w)
	}
	checkWarningHeader(t, filepath.Join(dir, "vaeloris-image.fits"), nil)
}

// A summary without warnings has "warnings": [] in its JSON, not null (an empty list is
// what a reader iterates over without a special case; common practice, no source).
func TestImageSummaryEmptyWarnings(t *testing.T) {
	b, err := json.Marshal(output.NewImageSummary(output.Run{Result: &recon.Result{}, Data: &dataset.Data{}}, output.Paths{}))
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(b), `"warnings":[]`) {
		t.Fatalf("JSON %s", b)
	}
}

// TestCompareVerdict: each regularizer's warnings are on stderr as "warning: NAME: ...",
// in compare.json (a list per row), compare.csv (a count), the report and each FITS
// header; -strict makes the run exit 1 after writing every output.
func TestCompareVerdict(t *testing.T) {
	dir := t.TempDir()
	data := writeDemoData(t, dir)
	out := filepath.Join(dir, "cmp")
	args := []string{"compare", "-reg", "tv,mem", "-n", "32", "-iter", "3", "-starts", "1", "-quiet", "-o", out, data}
	stdout, errs, code := runCmd(t, append(args, "-json")...)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var rep workflow.CompareReport
	if err := json.Unmarshal([]byte(stdout), &rep); err != nil {
		t.Fatalf("%v in %q", err, stdout)
	}
	raw, err := os.ReadFile(filepath.Join(out, "compare.json"))
	if err != nil {
		t.Fatal(err)
	}
	var file workflow.CompareReport
	if err := json.Unmarshal(raw, &file); err != nil {
		t.Fatal(err)
	}
	var want []string
	for i, r := range rep.Rows {
		if len(r.Warnings) == 0 {
			t.Errorf("%s: no warnings after 3 iterations", r.Regularizer)
		}
		if !reflect.DeepEqual(file.Rows[i].Warnings, r.Warnings) {
			t.Errorf("%s: compare.json warnings %q, stdout %q", r.Regularizer, file.Rows[i].Warnings, r.Warnings)
		}
		for _, w := range r.Warnings {
			want = append(want, r.Regularizer+": "+w)
		}
		checkWarningHeader(t, filepath.Join(out, r.FITS), r.Warnings)
	}
	if got := warningLines(errs); !reflect.DeepEqual(got, want) {
		t.Errorf("stderr warnings %q, want %q", got, want)
	}
	f, err := os.Open(filepath.Join(out, "compare.csv"))
	if err != nil {
		t.Fatal(err)
	}
	recs, err := csv.NewReader(f).ReadAll()
	f.Close()
	if err != nil {
		t.Fatal(err)
	}
	col := indexOf(recs[0], "warnings")
	for i, r := range rep.Rows {
		if col < 0 || recs[i+1][col] != strconv.Itoa(len(r.Warnings)) {
			t.Errorf("compare.csv warnings column %d, row %q; want %d", col, recs[i+1], len(r.Warnings))
		}
	}
	page, _ := os.ReadFile(filepath.Join(out, "report.html"))
	if !strings.Contains(string(page), "Warning: ") {
		t.Error("report.html does not show the warnings")
	}
	for _, p := range []string{"tv.fits", "mem.fits", "report.html", "compare.csv"} {
		os.Remove(filepath.Join(out, p))
	}
	_, errs, code = runCmd(t, append(args, "-strict")...)
	if code != exitFailure || len(warningLines(errs)) != len(want) {
		t.Fatalf("-strict: exit %d, want %d: %s", code, exitFailure, errs)
	}
	for _, p := range []string{"tv.fits", "mem.fits", "report.html", "compare.csv"} {
		if _, err := os.Stat(filepath.Join(out, p)); err != nil {
			t.Errorf("-strict: output missing: %v", err)
		}
	}
}

func indexOf(list []string, s string) int {
	for i, x := range list {
		if x == s {
			return i
		}
	}
	return -1
}

// TestBatchVerdict: each epoch's warnings are on stderr as "warning: epoch NAME: ...",
// in summary.json (a list per row), summary.csv (a count) and the epoch's FITS header
// beside INHASH. A rerun with -strict finds every epoch complete (the hash does not
// depend on -strict or the verdict), prints the warnings again from the status files
// and exits 1; with -joint the joint outputs are written before the exit 1.
func TestBatchVerdict(t *testing.T) {
	dir := t.TempDir()
	files := writeEpochs(t, dir, 2)
	out := filepath.Join(dir, "out")
	args := append(append([]string{"batch", "-out", out}, batchFast...), "-iter", "3")
	_, errs, code := runCmd(t, append(args, files...)...)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	s := readSummary(t, filepath.Join(out, "summary.json"))
	var want []string
	for _, r := range s.Rows {
		if len(r.Warnings) == 0 {
			t.Errorf("epoch %s: no warnings after 3 iterations", r.Epoch)
		}
		for _, w := range r.Warnings {
			want = append(want, "epoch "+r.Epoch+": "+w)
		}
		path := filepath.Join(out, r.FITS)
		checkWarningHeader(t, path, r.Warnings)
		im, err := fitsimage.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		hasHash := false
		for _, c := range im.Cards {
			hasHash = hasHash || c.Key == "INHASH"
		}
		if !hasHash {
			t.Errorf("%s: no INHASH beside the warnings", path)
		}
	}
	if got := warningLines(errs); !reflect.DeepEqual(got, want) {
		t.Errorf("stderr warnings %q, want %q", got, want)
	}
	f, err := os.Open(filepath.Join(out, "summary.csv"))
	if err != nil {
		t.Fatal(err)
	}
	recs, err := csv.NewReader(f).ReadAll()
	f.Close()
	if err != nil {
		t.Fatal(err)
	}
	col := indexOf(recs[0], "warnings")
	for i, r := range s.Rows {
		if col < 0 || recs[i+1][col] != strconv.Itoa(len(r.Warnings)) {
			t.Errorf("summary.csv warnings column %d, row %q; want %d", col, recs[i+1], len(r.Warnings))
		}
	}

	_, errs, code = runCmd(t, append(append(args, "-strict"), files...)...)
	s2 := readSummary(t, filepath.Join(out, "summary.json"))
	if code != exitFailure || !reflect.DeepEqual(warningLines(errs), want) {
		t.Fatalf("-strict rerun: exit %d, want %d: %s", code, exitFailure, errs)
	}
	for i, r := range s2.Rows {
		if !r.Skipped || !reflect.DeepEqual(r.Warnings, s.Rows[i].Warnings) {
			t.Errorf("-strict rerun: epoch %s skipped %v, warnings %q; want found complete with %q", r.Epoch, r.Skipped, r.Warnings, s.Rows[i].Warnings)
		}
	}

	_, errs, code = runCmd(t, append(append(args, "-strict", "-joint"), files...)...)
	if code != exitFailure {
		t.Fatalf("-joint -strict: exit %d, want %d: %s", code, exitFailure, errs)
	}
	if _, err := os.Stat(filepath.Join(out, "joint.fits")); err != nil {
		t.Errorf("-joint -strict: %v", err)
	}
}
