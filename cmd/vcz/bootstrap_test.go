package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"vcz/io/fitsimage"
	"vcz/recon"
	"vcz/workflow"
)

// TestImageBootstrap runs `vcz image -bootstrap` on the demo data: the summary holds the
// bootstrap and its feature test, and the maps are on the image's grid.
func TestImageBootstrap(t *testing.T) {
	dir := t.TempDir()
	data := filepath.Join(dir, "demo.oifits")
	if err := os.WriteFile(data, demoOIFITS, 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "rec.fits")
	stdout, errs, code := runCmd(t, "image", "-n", "32", "-iter", "100", "-starts", "1", "-quiet", "-json",
		"-bootstrap", "3", "-bootstrap-seed", "9", "-feature", "0.7,0.5,0.5", "-o", out, data)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var sum bootstrapJSON
	if err := json.Unmarshal([]byte(stdout), &sum); err != nil {
		t.Fatalf("%v in %q", err, stdout)
	}
	b := sum.Bootstrap
	if b == nil || b.Replicates != 3 || b.Seed != 9 || b.Unit != "exposure" || len(b.Features) != 1 || b.Features[0].Pixels == 0 {
		t.Fatalf("bootstrap summary %+v", b)
	}
	if sum.Grid.N != 32 || sum.Outputs.FITS != out {
		t.Fatalf("image summary %+v", sum.ImageSummary)
	}
	for _, p := range []string{b.Outputs.Mean, b.Outputs.Std, b.Outputs.Significance} {
		im, err := fitsimage.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		if im.NX != 32 {
			t.Errorf("%s: %d pixels per side", p, im.NX)
		}
	}
	checkPNG(t, b.Outputs.PNG)
}

// TestBootstrapFewReplicates: a bootstrap on fewer replicates than workflow.MinReplicates is
// warned of on stderr, in the JSON summary and by -strict's exit status, without a feature
// test (the significance map, its peak and contours) and with one (which also says how many
// replicates its probability rests on); one on that many is not warned of.
func TestBootstrapFewReplicates(t *testing.T) {
	dir := t.TempDir()
	data := filepath.Join(dir, "demo.oifits")
	if err := os.WriteFile(data, demoOIFITS, 0o644); err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		k       int
		feature bool
	}{{3, false}, {3, true}, {workflow.MinReplicates, true}} {
		out := filepath.Join(dir, "rec"+strconv.Itoa(c.k)+strconv.FormatBool(c.feature)+".fits")
		args := []string{"image", "-n", "24", "-iter", "60", "-starts", "1", "-quiet", "-json", "-strict",
			"-bootstrap", strconv.Itoa(c.k), "-o", out, data}
		if c.feature {
			args = append(args, "-feature", "0.7,0.5,0.5")
		}
		stdout, errs, code := runCmd(t, args...)
		var sum bootstrapJSON
		if err := json.Unmarshal([]byte(stdout), &sum); err != nil || sum.Bootstrap == nil || len(sum.Bootstrap.Features) != map[bool]int{false: 0, true: 1}[c.feature] {
			t.Fatalf("K = %d: exit %d, %v in %q, stderr %s", c.k, code, err, stdout, errs)
		}
		b := sum.Bootstrap
		warning := ""
		for _, w := range b.Warnings {
			if strings.Contains(w, "bootstrap replicates, fewer than") {
				warning = w
			}
		}
		few := c.k < workflow.MinReplicates
		line := "warning: bootstrap: only " + strconv.Itoa(c.k) + " bootstrap replicates, fewer than "
		if (warning != "") != few || strings.Contains(errs, line) != few {
			t.Errorf("K = %d, feature %v: warning in JSON %q, on stderr %v; want %v: %q", c.k, c.feature, warning, strings.Contains(errs, line), few, errs)
		}
		if few && (!strings.Contains(warning, "the significance map") || strings.Contains(warning, "feature test") != c.feature) {
			t.Errorf("K = %d, feature %v: warning %q does not name what rests on the replicates", c.k, c.feature, warning)
		}
		if few && code != exitFailure {
			t.Errorf("K = %d with -strict: exit %d, want %d", c.k, code, exitFailure)
		}
		if !c.feature {
			continue
		}
		if f := b.Features[0]; f.Replicates != c.k || !strings.Contains(f.Distribution, "Student's t with "+strconv.Itoa(c.k-1)+" degrees of freedom") {
			t.Errorf("K = %d: feature rests on %d replicates, distribution %q", c.k, f.Replicates, f.Distribution)
		}
	}
}

// TestBootstrapUsageErrors: bad bootstrap options exit 2 with one line naming the option,
// before any data are read.
func TestBootstrapUsageErrors(t *testing.T) {
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"-bootstrap", "1"}, "-bootstrap 1"},
		{[]string{"-bootstrap", "-3"}, "-bootstrap -3"},
		{[]string{"-bootstrap", "5", "-bootstrap-unit", "night"}, "-bootstrap-unit"},
		{[]string{"-feature", "1,2,0.5"}, "-feature needs -bootstrap"},
		{[]string{"-bootstrap", "5", "-feature", "1,2,0"}, "radius"},
		{[]string{"-bootstrap", "5", "-feature", "no-such-mask.fits"}, "no-such-mask.fits"},
		{[]string{"-bootstrap", "5", "-feature-ref", "ring"}, "-feature-ref"},
		// The option is named once, as the user typed it (not batch's -shard as well).
		{[]string{"-bootstrap", "5", "-bootstrap-shard", "3/2"}, `vcz image: -bootstrap-shard: shard "3/2": want 1 ≤ K ≤ N`},
		{[]string{"-bootstrap-collect"}, "need -bootstrap K"},
		{[]string{"-bootstrap", "5", "-bootstrap-shard", "1/2", "-bootstrap-collect"}, "exclude each other"},
	} {
		args := append(append([]string{"image"}, c.args...), "no-such-data.oifits")
		_, errs, code := runCmd(t, args...)
		if code != exitBadInput || strings.Count(errs, "\n") != 1 || !strings.Contains(errs, c.want) {
			t.Errorf("%v: exit %d, stderr %q; want %d and one line naming %q", c.args, code, errs, exitBadInput, c.want)
		}
	}
}

// TestFeatureRegionEarly: a -feature region that cannot be weighed on the image's grid (a
// mask of another grid, a circle off the field) is bad input found before the
// reconstruction, with one line naming the option, and no output is written (common
// practice, no source).
func TestFeatureRegionEarly(t *testing.T) {
	dir := t.TempDir()
	data := filepath.Join(dir, "demo.oifits")
	if err := os.WriteFile(data, demoOIFITS, 0o644); err != nil {
		t.Fatal(err)
	}
	mask := filepath.Join(dir, "mask.fits")
	m := &fitsimage.Image{NX: 16, NY: 16, Pixel: 0.2 * recon.Mas, Data: make([]float64, 256)}
	m.Data[8*16+8] = 1
	if err := fitsimage.WriteFile(mask, m); err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct{ feature, want string }{
		{mask, "-feature " + mask + ": the mask is 16 × 16 pixels"},
		{"40,0,0.5", "-feature 40,0,0.5: the region holds no pixel centre"},
	} {
		out := filepath.Join(dir, "rec.fits")
		_, errs, code := runCmd(t, "image", "-n", "32", "-iter", "50", "-quiet", "-no-plots",
			"-bootstrap", "2", "-feature", c.feature, "-o", out, data)
		if code != exitBadInput || strings.Count(errs, "\n") != 1 || !strings.Contains(errs, c.want) {
			t.Errorf("-feature %s: exit %d, stderr %q; want %d and one line with %q", c.feature, code, errs, exitBadInput, c.want)
		}
		if _, err := os.Stat(out); err == nil {
			t.Errorf("-feature %s: %s written before the error", c.feature, out)
			os.Remove(out)
		}
	}
}

// TestBootstrapShardsCollect runs the replicates as two tasks of a SLURM job array, then
// collects them: the collect takes all three from the files and its maps equal, bit for
// bit, those of one run; a second collect finds them again.
func TestBootstrapShardsCollect(t *testing.T) {
	dir := t.TempDir()
	data := filepath.Join(dir, "demo.oifits")
	if err := os.WriteFile(data, demoOIFITS, 0o644); err != nil {
		t.Fatal(err)
	}
	common := []string{"image", "-n", "32", "-iter", "60", "-starts", "1", "-quiet", "-json", "-no-plots", "-bootstrap", "3"}
	runJSON := func(extra ...string) bootstrapJSON {
		t.Helper()
		args := append(append(append([]string{}, common...), extra...), data)
		stdout, errs, code := runCmd(t, args...)
		if code != exitOK {
			t.Fatalf("%v: exit %d: %s", extra, code, errs)
		}
		var sum bootstrapJSON
		if err := json.Unmarshal([]byte(stdout), &sum); err != nil {
			t.Fatalf("%v in %q", err, stdout)
		}
		return sum
	}
	one := runJSON("-o", filepath.Join(dir, "one.fits"))
	shardOut := filepath.Join(dir, "arr.fits")
	defer func() { getenv = os.Getenv }()
	for task := 0; task < 2; task++ {
		env := map[string]string{"SLURM_ARRAY_TASK_ID": strconv.Itoa(task), "SLURM_ARRAY_TASK_COUNT": "2"}
		getenv = func(k string) string { return env[k] }
		s := runJSON("-bootstrap-shard", "slurm", "-o", shardOut)
		if b := s.Bootstrap; b == nil || b.Shard != strconv.Itoa(task+1)+"/2" || b.Outputs != nil || b.Good != 2-task {
			t.Fatalf("task %d: %+v", task, s.Bootstrap)
		}
	}
	getenv = os.Getenv
	for range 2 {
		c := runJSON("-bootstrap-collect", "-o", shardOut)
		if c.Bootstrap.Loaded != 3 || c.Bootstrap.Good != 3 {
			t.Fatalf("collect: %+v", c.Bootstrap)
		}
		for _, pair := range [][2]string{{one.Bootstrap.Outputs.Std, c.Bootstrap.Outputs.Std}, {one.Bootstrap.Outputs.Mean, c.Bootstrap.Outputs.Mean}} {
			a, err := fitsimage.ReadFile(pair[0])
			if err != nil {
				t.Fatal(err)
			}
			b, err := fitsimage.ReadFile(pair[1])
			if err != nil {
				t.Fatal(err)
			}
			for i := range a.Data {
				if a.Data[i] != b.Data[i] {
					t.Fatalf("%s and %s differ at pixel %d", pair[0], pair[1], i)
				}
			}
		}
	}
}
