package main

import (
	"flag"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"strings"
	"syscall"
	"testing"
	"time"

	"vcz/io/fitsfile"
	"vcz/io/fitsimage"
	"vcz/io/oifits"
	"vcz/recon/batch"
	"vcz/recon/model"
	"vcz/recon/simulate"
	"vcz/runspec"
)

// writeEpoch simulates one small night of an invented target (three hour angles, two
// channels of the demo array) on MJD 61203+k and writes it to path.
func writeEpoch(t testing.TB, path string, k int) {
	t.Helper()
	p, _ := simulate.Demo()
	p.MJD = 61203 + float64(k)
	p.Seed += uint64(k)
	p.HourAngles = []float64{-1.5, 0, 1.5}
	p.Wavelengths = p.Wavelengths[:2]
	p.Bandwidths = p.Bandwidths[:2]
	m, err := model.ParseCompact("gauss:fwhm=2.5;point:x=1.2,y=0.6,flux=0.3")
	if err != nil {
		t.Fatal(err)
	}
	f, _, err := simulate.Run(p, simulate.ModelSky{Model: m})
	if err != nil {
		t.Fatal(err)
	}
	if err := oifits.WriteFile(path, f); err != nil {
		t.Fatal(err)
	}
}

// Options keeping the test reconstructions small and fast.
var batchFast = []string{"-n", "32", "-fov", "", "-weight", "0.001", "-iter", "40", "-starts", "1", "-quiet"}

// writeEpochs writes n nights of data, night0.oifits ... (writeEpoch), in dir and returns
// their paths.
func writeEpochs(t *testing.T, dir string, n int) []string {
	t.Helper()
	var files []string
	for k := range n {
		p := filepath.Join(dir, fmt.Sprintf("night%d.oifits", k))
		writeEpoch(t, p, k)
		files = append(files, p)
	}
	return files
}

func readSummary(t *testing.T, path string) *batch.Summary {
	t.Helper()
	s, err := batch.ReadJSON(path)
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// Three epochs, one of them a corrupt file: two images, one failure naming the file,
// exit 1; a rerun redoes only the failed epoch; -force redoes all; after the file is
// repaired a rerun images only that epoch.
func TestBatchFailureRerunForce(t *testing.T) {
	dir := t.TempDir()
	for k, name := range []string{"n1.oifits", "n2.oifits"} {
		writeEpoch(t, filepath.Join(dir, name), 2*k)
	}
	if err := os.WriteFile(filepath.Join(dir, "n3.oifits"), []byte("SIMPLE  = this is no FITS file"), 0o644); err != nil {
		t.Fatal(err)
	}
	job := filepath.Join(dir, "job.toml")
	src := `output = "out"
[image]
reg = "tv"
seed = 3

[[epoch]]
name = "first"
files = ["n1.oifits"]

[[epoch]]
name = "second"
files = ["n2.oifits"]
seed = 4

[[epoch]]
name = "broken"
files = ["n3.oifits"]
`
	if err := os.WriteFile(job, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "out")
	args := append([]string{"batch", "-job", job}, batchFast...)
	_, errs, code := runCmd(t, args...)
	if code != exitFailure {
		t.Fatalf("exit %d, want %d: %s", code, exitFailure, errs)
	}
	s := readSummary(t, filepath.Join(out, "summary.json"))
	if len(s.Rows) != 3 || s.Failed() != 1 {
		t.Fatalf("rows %+v", s.Rows)
	}
	if r := s.Rows[2]; r.Status != batch.StateFailed || !strings.Contains(r.Error, "n3.oifits") {
		t.Fatalf("failed row %+v", r)
	}
	for _, name := range []string{"first", "second"} {
		if _, err := fitsimage.ReadFile(filepath.Join(out, name+".fits")); err != nil {
			t.Fatal(err)
		}
	}
	if _, err := os.Stat(filepath.Join(out, "broken.fits")); err == nil {
		t.Fatal("an image of the broken epoch was written")
	}
	if _, err := os.Stat(filepath.Join(out, "montage.png")); err != nil {
		t.Fatal(err)
	}
	skipped := func(s *batch.Summary) []bool {
		var b []bool
		for _, r := range s.Rows {
			b = append(b, r.Skipped)
		}
		return b
	}
	_, _, code = runCmd(t, args...)
	s = readSummary(t, filepath.Join(out, "summary.json"))
	if code != exitFailure || !reflect.DeepEqual(skipped(s), []bool{true, true, false}) {
		t.Fatalf("rerun: exit %d, skipped %v", code, skipped(s))
	}
	writeEpoch(t, filepath.Join(dir, "n3.oifits"), 4)
	_, errs, code = runCmd(t, args...)
	s = readSummary(t, filepath.Join(out, "summary.json"))
	if code != exitOK || !reflect.DeepEqual(skipped(s), []bool{true, true, false}) || s.Failed() != 0 {
		t.Fatalf("after repair: exit %d, skipped %v: %s", code, skipped(s), errs)
	}
	im, err := fitsimage.ReadFile(filepath.Join(out, "broken.fits"))
	if err != nil {
		t.Fatal(err)
	}
	hasHash := false
	for _, c := range im.Cards {
		hasHash = hasHash || (c.Key == "INHASH" && len(fmt.Sprint(c.Value)) == 64)
	}
	if !hasHash {
		t.Fatal("no INHASH card of 64 hex digits (SHA-256, FIPS 180-4)")
	}
	_, _, code = runCmd(t, append(args, "-force")...)
	s = readSummary(t, filepath.Join(out, "summary.json"))
	if code != exitOK || !reflect.DeepEqual(skipped(s), []bool{false, false, false}) {
		t.Fatalf("-force: exit %d, skipped %v", code, skipped(s))
	}
	// A changed setting changes the hash: the epoch is redone.
	_, _, code = runCmd(t, append(args, "-iter", "39")...)
	s = readSummary(t, filepath.Join(out, "summary.json"))
	if code != exitOK || !reflect.DeepEqual(skipped(s), []bool{false, false, false}) {
		t.Fatalf("changed setting: exit %d, skipped %v", code, skipped(s))
	}
}

// An unknown key of a job file is an error naming the key and its line; a key of the
// earlier job files says the name it has now, and a bad value names the key.
func TestBatchJobUnknownKey(t *testing.T) {
	dir := t.TempDir()
	job := filepath.Join(dir, "job.toml")
	for _, c := range []struct{ src, want string }{
		{"[image]\nreg = \"tv\"\ncolour = 3\n[[epoch]]\nfiles = [\"a.oifits\"]\n", "job.toml:3: unknown key image.colour (see 'vcz batch --help')"},
		{"colour = 3\n[[epoch]]\nfiles = [\"a.oifits\"]\n", "job.toml:1: unknown key colour"},
		{"[image]\nregularizer = \"tv\"\n[[epoch]]\nfiles = [\"a.oifits\"]\n", "job.toml:2: unknown key image.regularizer (see 'vcz batch --help'; job keys are the flag names: reg)"},
		{"[[epoch]]\nfiles = [\"a.oifits\"]\n[[epoch]]\nfiles = [\"b.oifits\"]\niterations = 3\n", "job.toml:5: unknown key epoch.iterations (see 'vcz batch --help'; job keys are the flag names: iter)"},
		{"[image]\npixel = \"x\"\n[[epoch]]\nfiles = [\"a.oifits\"]\n", `job.toml: [image] pixel "x": want a positive angle such as 0.25mas`},
		{"[[epoch]]\nname = \"e\"\nfiles = [\"a.oifits\"]\nn = 33\n", `job.toml: epoch "e": n 33: the grid size must be an even number from 8 to 2048`},
		{"[[epoch]]\nfiles = [\"a.oifits\"]\nseed = -3\n", `job.toml: epoch "epoch-01": seed -3 must not be negative`},
		{"[[epoch]]\nfiles = [\"a.oifits\"]\nuse = [\"vis2\"]\n", `job.toml: epoch "epoch-01": use: want a string, number or boolean, not [vis2]`},
	} {
		if err := os.WriteFile(job, []byte(c.src), 0o644); err != nil {
			t.Fatal(err)
		}
		_, errs, code := runCmd(t, "batch", "-job", job)
		if code != exitBadInput || !strings.Contains(errs, c.want) || strings.Count(errs, "\n") != 1 {
			t.Errorf("%q: exit %d, %q; want %q", c.src, code, errs, c.want)
		}
	}
}

// A bad -stretch is refused with one line naming it, before any file is read.
func TestBatchBadStretch(t *testing.T) {
	_, errs, code := runCmd(t, "batch", "-stretch", "loud", "missing.oifits")
	if code != exitBadInput || !strings.Contains(errs, `-stretch "loud"`) || strings.Count(errs, "\n") != 1 {
		t.Errorf("exit %d, %q", code, errs)
	}
}

// Files split at gaps of a night; -shard 1/2 and 2/2 take every epoch exactly once and
// their collected summary equals the unsharded run's apart from the timings.
func TestBatchShardCollect(t *testing.T) {
	dir := t.TempDir()
	files := writeEpochs(t, dir, 3)
	whole, shards := filepath.Join(dir, "whole"), filepath.Join(dir, "shards")
	if _, errs, code := runCmd(t, append(append([]string{"batch", "-out", whole}, batchFast...), files...)...); code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, sh := range []string{"1/2", "2/2"} {
		if _, errs, code := runCmd(t, append(append([]string{"batch", "-out", shards, "-shard", sh}, batchFast...), files...)...); code != exitOK {
			t.Fatalf("shard %s: exit %d: %s", sh, code, errs)
		}
	}
	a := readSummary(t, filepath.Join(shards, "summary-1-of-2.json"))
	b := readSummary(t, filepath.Join(shards, "summary-2-of-2.json"))
	if len(a.Rows) != 2 || len(b.Rows) != 1 || a.Rows[0].Index != 0 || a.Rows[1].Index != 2 || b.Rows[0].Index != 1 {
		t.Fatalf("shards %+v / %+v", a.Rows, b.Rows)
	}
	if _, errs, code := runCmd(t, "batch", "-collect", "-out", shards, "-quiet"); code != exitOK {
		t.Fatalf("collect: exit %d: %s", code, errs)
	}
	got := readSummary(t, filepath.Join(shards, "summary.json"))
	want := readSummary(t, filepath.Join(whole, "summary.json"))
	if len(want.Rows) != 3 {
		t.Fatalf("%d epochs from three nights", len(want.Rows))
	}
	for _, s := range []*batch.Summary{got, want} {
		for i := range s.Rows {
			s.Rows[i].Seconds = 0
		}
	}
	if !reflect.DeepEqual(got, want) {
		t.Fatalf("collected %+v\nunsharded %+v", got, want)
	}
	if _, err := os.Stat(filepath.Join(shards, "epochs.gif")); err != nil {
		t.Fatal(err)
	}
}

// TestBatchChild runs vcz with the arguments in VCZ_BATCH_ARGS when re-executed by
// TestBatchKill.
func TestBatchChild(t *testing.T) {
	a := os.Getenv("VCZ_BATCH_ARGS")
	if a == "" {
		t.Skip("helper process of TestBatchKill")
	}
	os.Exit(run(strings.Split(a, "\x1f"), os.Stdout, os.Stderr))
}

// A batch killed with SIGKILL after its first epoch, then rerun, ends with every epoch
// present, every FITS file valid for fitsverify (HEASARC's FITS checker) and none
// truncated, and the finished epoch not redone.
func TestBatchKill(t *testing.T) {
	fv := requireTool(t, "fitsverify")
	dir := t.TempDir()
	files := writeEpochs(t, dir, 4)
	out := filepath.Join(dir, "out")
	// More iterations than the other tests, so that the kill falls inside an epoch.
	args := append(append([]string{"batch", "-out", out, "-parallel", "1"}, batchFast...), "-iter", "400", "-weight", "auto")
	args = append(args, files...)
	cmd := exec.Command(os.Args[0], "-test.run=^TestBatchChild$")
	cmd.Env = append(os.Environ(), "VCZ_BATCH_ARGS="+strings.Join(args, "\x1f"))
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	deadline := time.Now().Add(60 * time.Second)
	for {
		m, _ := filepath.Glob(filepath.Join(out, "*.status.json"))
		if len(m) > 0 {
			break
		}
		if time.Now().After(deadline) {
			cmd.Process.Kill()
			t.Fatal("no epoch finished within 60 s")
		}
		time.Sleep(20 * time.Millisecond)
	}
	time.Sleep(150 * time.Millisecond) // into the next epoch's work
	cmd.Process.Signal(syscall.SIGKILL)
	cmd.Wait()
	m, _ := filepath.Glob(filepath.Join(out, "*.status.json"))
	finished := len(m)
	t.Logf("%d of 4 epochs finished before the kill", finished)
	if _, errs, code := runCmd(t, args...); code != exitOK {
		t.Fatalf("rerun: exit %d: %s", code, errs)
	}
	s := readSummary(t, filepath.Join(out, "summary.json"))
	skipped := 0
	for _, r := range s.Rows {
		if r.Status != batch.StateDone {
			t.Fatalf("row %+v", r)
		}
		if r.Skipped {
			skipped++
		}
		p := filepath.Join(out, r.FITS)
		if _, err := fitsimage.ReadFile(p); err != nil {
			t.Fatal(err)
		}
		vout, err := exec.Command(fv, "-q", p).CombinedOutput()
		if err != nil || !strings.HasPrefix(string(vout), "verification OK") {
			t.Fatalf("fitsverify %s: %v: %s", p, err, vout)
		}
	}
	if len(s.Rows) != 4 || skipped < finished {
		t.Fatalf("%d rows, %d skipped, %d finished before the kill", len(s.Rows), skipped, finished)
	}
}

// -joint writes a cube with one plane per epoch and the epochs' MJDs, valid for
// fitsverify, and per-epoch images.
func TestBatchJoint(t *testing.T) {
	dir := t.TempDir()
	files := writeEpochs(t, dir, 3)
	out := filepath.Join(dir, "out")
	args := append(append([]string{"batch", "-out", out, "-joint"}, batchFast...), files...)
	if _, errs, code := runCmd(t, args...); code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	cube, err := fitsimage.ReadFile(filepath.Join(out, "joint.fits"))
	if err != nil {
		t.Fatal(err)
	}
	if cube.Planes != 3 || cube.NX != 32 {
		t.Fatalf("cube %d × %d × %d", cube.NX, cube.NY, cube.Planes)
	}
	s := readSummary(t, filepath.Join(out, "summary.json"))
	for k, r := range s.Rows {
		// The third axis is time (FITS standard 4.0 sect. 9), each plane within its epoch.
		if len(cube.Time) != len(s.Rows) || cube.Time[k] < r.MJDMin || cube.Time[k] > r.MJDMax {
			t.Fatalf("plane %d at MJD %v, epoch %g..%g", k+1, cube.Time, r.MJDMin, r.MJDMax)
		}
		if _, err := fitsimage.ReadFile(filepath.Join(out, r.Epoch+"-joint.fits")); err != nil {
			t.Fatal(err)
		}
	}
	fv := requireTool(t, "fitsverify")
	vout, err := exec.Command(fv, "-q", filepath.Join(out, "joint.fits")).CombinedOutput()
	if err != nil || !strings.HasPrefix(string(vout), "verification OK") || strings.Contains(string(vout), "warning") {
		t.Fatalf("fitsverify: %v: %s", err, vout)
	}
}

// batch --help lists every option of a job file, says what -json replaces (the count
// line, the failed or warned epochs and the summary files' names that
// output.WriteBatchText prints: there is no table on stdout) and that the summary's
// iterations count the whole weight search, not the final run alone.
func TestBatchJobKeys(t *testing.T) {
	fs := newFlagSet("x", "", "", io.Discard)
	runspec.RegisterFlags(fs, runspec.Select|runspec.Types|runspec.Recon|runspec.Cube)
	fs.VisitAll(func(f *flag.Flag) {
		if !strings.Contains(batchDoc, " "+f.Name+",") && !strings.Contains(batchDoc, " "+f.Name+" (") {
			t.Errorf("batch --help does not list the job key %s", f.Name)
		}
	})
	help, _, _ := runCmd(t, "batch", "--help")
	flat := strings.Join(strings.Fields(help), " ")
	for _, want := range []string{
		"instead of the count line, the failed or warned epochs and the names of the summary files",
		"iterations counts all of the epoch's runs (the automatic weight search, every start and the final run), so it can be several times -iter",
	} {
		if !strings.Contains(flat, want) {
			t.Errorf("batch --help does not say %q", want)
		}
	}
	if strings.Contains(flat, "instead of the table") {
		t.Error("batch --help says -json replaces a table, which batch does not print")
	}
}

// TestBatchStaleFITS checks the resume rule: an epoch is complete only when its status
// file and its FITS file's INHASH card both carry the run's hash. A run with other
// settings killed after rewriting an epoch's FITS but before its status left the old
// status beside the new FITS; the next plain run must redo that epoch, not keep it.
func TestBatchStaleFITS(t *testing.T) {
	dir := t.TempDir()
	files := writeEpochs(t, dir, 2)
	out, other := filepath.Join(dir, "out"), filepath.Join(dir, "other")
	args := append(append([]string{"batch", "-out", out}, batchFast...), files...)
	if _, errs, code := runCmd(t, args...); code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	otherArgs := append(append([]string{"batch", "-out", other}, batchFast...), "-iter", "39")
	if _, errs, code := runCmd(t, append(otherArgs, files...)...); code != exitOK {
		t.Fatalf("other settings: exit %d: %s", code, errs)
	}
	s := readSummary(t, filepath.Join(out, "summary.json"))
	name := s.Rows[0].FITS
	b, err := os.ReadFile(filepath.Join(other, name))
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(out, name), b, 0o644); err != nil {
		t.Fatal(err)
	}
	if _, errs, code := runCmd(t, args...); code != exitOK {
		t.Fatalf("rerun: exit %d: %s", code, errs)
	}
	s = readSummary(t, filepath.Join(out, "summary.json"))
	if s.Rows[0].Skipped || !s.Rows[1].Skipped {
		t.Fatalf("skipped %v, %v: want the epoch with the stale FITS redone and the other kept", s.Rows[0].Skipped, s.Rows[1].Skipped)
	}
}

// A data file that does not exist is bad input: batch refuses it before any work, naming the
// file and its epoch, exit 2 (README: 2 bad input), and writes nothing.
func TestBatchMissingFile(t *testing.T) {
	dir := t.TempDir()
	files := writeEpochs(t, dir, 1)
	out := filepath.Join(dir, "out")
	_, errs, code := runCmd(t, "batch", "-o", out, files[0], filepath.Join(dir, "missing.oifits"))
	if code != exitBadInput || !strings.Contains(errs, "missing.oifits: no such file") {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if m, _ := filepath.Glob(filepath.Join(out, "*.fits")); len(m) != 0 {
		t.Errorf("wrote %v", m)
	}
}

// TestBatchJointVerdict: a joint run cut short by -iter 5 gives its own quality verdict
// (recon.CubeResult.Warnings): "warning: joint: ..." lines on stderr, NWARN and WARNn
// in joint.fits and in each EPOCH-joint.fits (checkWarningHeader), exit status 0, and 1
// with -strict with every output written.
func TestBatchJointVerdict(t *testing.T) {
	dir := t.TempDir()
	files := writeEpochs(t, dir, 3)
	out := filepath.Join(dir, "out")
	args := append(append([]string{"batch", "-out", out, "-joint"}, batchFast...), "-iter", "5")
	_, errs, code := runCmd(t, append(args, files...)...)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var warnings []string
	for _, l := range strings.Split(errs, "\n") {
		if s, ok := strings.CutPrefix(l, "warning: joint: "); ok {
			warnings = append(warnings, s)
		}
	}
	if len(warnings) == 0 {
		t.Fatalf("no joint warning on stderr after 5 iterations per plane:\n%s", errs)
	}
	checkWarningHeader(t, filepath.Join(out, "joint.fits"), warnings)
	s := readSummary(t, filepath.Join(out, "summary.json"))
	for _, r := range s.Rows {
		checkWarningHeader(t, filepath.Join(out, r.Epoch+"-joint.fits"), warnings)
	}
	if _, errs, code := runCmd(t, append(append(args, "-strict"), files...)...); code != exitFailure || !strings.Contains(errs, "warning: joint: ") {
		t.Fatalf("-strict: exit %d, want %d: %s", code, exitFailure, errs)
	}
	if _, err := os.Stat(filepath.Join(out, "joint.fits")); err != nil {
		t.Fatal(err)
	}
}

// TestBatchJointWeightEdge: on three nights of an unchanging target every temporal weight
// of the automatic search keeps each epoch's χ²ᵣ within 5 % of its own image's, so the
// kept λ is the largest searched; the joint verdict says so, as the verdict of 'vcz
// image' does for a spatial weight at the edge of its search: a "warning: joint: ..."
// line, NWARN and WARNn in joint.fits, and exit 1 with -strict (common practice, no
// source).
func TestBatchJointWeightEdge(t *testing.T) {
	dir := t.TempDir()
	files := writeEpochs(t, dir, 3)
	out := filepath.Join(dir, "out")
	args := append([]string{"batch", "-out", out, "-joint"}, batchFast...)
	_, errs, code := runCmd(t, append(args, files...)...)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	raw, err := os.ReadFile(filepath.Join(out, "joint.fits"))
	if err != nil {
		t.Fatal(err)
	}
	f, err := fitsfile.Parse(raw)
	if err != nil {
		t.Fatal(err)
	}
	// The path is in the HISTORY cards, one step a line, which may wrap.
	path := strings.Join(f.HDUs[0].Header.Commentary("HISTORY"), " ")
	if n := strings.Count(path, "kept"); n != batch.JointSteps || strings.Contains(path, "rejected") {
		t.Fatalf("%d of %d temporal weights kept: the data no longer put λ at the top of its range:\n%s", n, batch.JointSteps, path)
	}
	var warnings, edge []string
	for _, l := range strings.Split(errs, "\n") {
		if s, ok := strings.CutPrefix(l, "warning: joint: "); ok {
			warnings = append(warnings, s)
			if strings.Contains(s, "temporal weight") && strings.Contains(s, "upper edge of the searched range") {
				edge = append(edge, s)
			}
		}
	}
	if len(edge) != 1 {
		t.Fatalf("no warning of the temporal weight at the upper edge of its range:\n%s", errs)
	}
	checkWarningHeader(t, filepath.Join(out, "joint.fits"), warnings)
	if _, errs, code := runCmd(t, append(append(args, "-strict"), files...)...); code != exitFailure || !strings.Contains(errs, edge[0]) {
		t.Fatalf("-strict: exit %d, want %d: %s", code, exitFailure, errs)
	}
}
