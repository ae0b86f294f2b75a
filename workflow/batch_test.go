package workflow

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
	"vcz/dataset"

	"vcz/io/fitsimage"
	"vcz/io/oifits"
	"vcz/recon/batch"
	"vcz/recon/model"
	"vcz/recon/simulate"
	"vcz/runspec"
)

// The hash of an epoch does not depend on its worker count (the image does not), and
// does on an option that changes the image.
func TestEpochHash(t *testing.T) {
	a := &Epoch{Spec: runspec.Spec{Grid: 64, Workers: 1}}
	b := &Epoch{Spec: runspec.Spec{Grid: 64, Workers: 7}}
	c := &Epoch{Spec: runspec.Spec{Grid: 64, Iterations: 10}}
	if a.SettingsText() != b.SettingsText() || a.SettingsText() == c.SettingsText() {
		t.Errorf("settings texts %q, %q, %q", a.SettingsText(), b.SettingsText(), c.SettingsText())
	}
	ha, err1 := batch.Hash(a.SettingsText(), nil)
	hb, err2 := batch.Hash(b.SettingsText(), nil)
	if err1 != nil || err2 != nil || ha != hb {
		t.Errorf("hashes %s, %s (%v, %v)", ha, hb, err1, err2)
	}
}

// The example job file reads: four epochs, the shared settings and the overrides.
func TestExampleJob(t *testing.T) {
	epochs, out, err := ReadJobFile(filepath.Join("..", "examples", "batch", "job.toml"), runspec.Spec{})
	if err != nil {
		t.Fatal(err)
	}
	if len(epochs) != 4 || filepath.Base(out) != "vaeloris-epochs" || len(epochs[1].Files) != 2 {
		t.Fatalf("%d epochs, output %q", len(epochs), out)
	}
	e0, e2, e3 := epochs[0].Spec, epochs[2].Spec, epochs[3].Spec
	if e0.Grid != 64 || e0.Iterations != 300 || *e0.Seed != 7 || e0.Use != dataset.Vis2|dataset.T3Phi || e2.Use != dataset.Vis2 || e3.WaveMax == 0 {
		t.Fatalf("settings %+v / %+v", e0, e2)
	}
}

// writeEpochs simulates n small nights of an invented target (three hour angles, two
// channels of the demo array) on MJD 61203+k into dir and returns the files.
func writeEpochs(t testing.TB, dir string, n int) []string {
	t.Helper()
	var files []string
	for k := range n {
		p, _ := simulate.Demo()
		p.MJD = 61203 + float64(k)
		p.Seed += uint64(k)
		p.HourAngles = []float64{-1.5, 0, 1.5}
		p.Wavelengths, p.Bandwidths = p.Wavelengths[:2], p.Bandwidths[:2]
		m, err := model.ParseCompact("gauss:fwhm=2.5;point:x=1.2,y=0.6,flux=0.3")
		if err != nil {
			t.Fatal(err)
		}
		f, _, err := simulate.Run(p, simulate.ModelSky{Model: m})
		if err != nil {
			t.Fatal(err)
		}
		path := filepath.Join(dir, fmt.Sprintf("night%d.oifits", k))
		if err := oifits.WriteFile(path, f); err != nil {
			t.Fatal(err)
		}
		files = append(files, path)
	}
	return files
}

// An epoch's FITS file is written once, with its input hash (INHASH, the SHA-256 of
// FIPS 180-4 as 64 hex digits) among the cards, and the image the batch keeps in memory is
// the file's content: same pixels, grid and cards. A rerun finds the epochs complete and
// keeps no image, and the joint reconstruction then reads the files: it gives the same
// bits as from memory.
func TestBatchInMemory(t *testing.T) {
	dir := t.TempDir()
	files := writeEpochs(t, dir, 2)
	seed := uint64(3)
	epochs := SplitEpochs(files, runspec.Spec{Grid: 32, Weight: 1e-3, Iterations: 40, Starts: 1, Seed: &seed}, dataset.NightGap)
	if len(epochs) != 2 {
		t.Fatalf("%d epochs from two nights", len(epochs))
	}
	out := filepath.Join(dir, "out")
	if err := os.Mkdir(out, 0o755); err != nil {
		t.Fatal(err)
	}
	if err := CommonGrid(epochs); err != nil {
		t.Fatal(err)
	}
	b := &Batch{Out: out, Budget: 2}
	first := b.Run(epochs, nil)
	for _, r := range first {
		if r.Row.Status != batch.StateDone || r.Image == nil {
			t.Fatalf("epoch %s: %+v", r.Row.Epoch, r.Row)
		}
		file, err := fitsimage.ReadFile(filepath.Join(out, r.Row.FITS))
		if err != nil {
			t.Fatal(err)
		}
		if !reflect.DeepEqual(file.Data, r.Image.Data) || file.NX != r.Image.NX || file.Pixel != r.Image.Pixel {
			t.Errorf("%s: the image in memory differs from the file", r.Row.Epoch)
		}
		// The reader splits long HISTORY texts and adds LONGSTRN, so compare the cards the
		// header is made of, DATE included.
		hash := card(file.Cards, "INHASH")
		for _, key := range []string{"DATE", "INHASH", "CHI2R", "PENWT", "NITERTOT"} {
			if card(file.Cards, key) != card(r.Image.Cards, key) {
				t.Errorf("%s: %s = %v in the file, %v in memory", r.Row.Epoch, key, card(file.Cards, key), card(r.Image.Cards, key))
			}
		}
		st, err := batch.ReadStatus(filepath.Join(out, r.Row.Epoch+".status.json"))
		if h, _ := hash.(string); err != nil || len(h) != 64 || st.Hash != h {
			t.Errorf("%s: INHASH %q, status %+v (%v)", r.Row.Epoch, h, st, err)
		}
	}
	jointOf := func(results []EpochResult) [][]float64 {
		t.Helper()
		jr, err := b.Joint(epochs, results, JointSettings{Lambda: 0.5})
		if err != nil {
			t.Fatal(err)
		}
		return jr.Images
	}
	fromMemory := jointOf(first)
	again := b.Run(epochs, nil)
	for _, r := range again {
		if !r.Row.Skipped || r.Image != nil {
			t.Fatalf("rerun of %s: skipped %v, image %v", r.Row.Epoch, r.Row.Skipped, r.Image != nil)
		}
	}
	if fromFiles := jointOf(again); !reflect.DeepEqual(fromMemory, fromFiles) {
		t.Error("the joint images from the files differ from those from memory")
	}
}

// card returns the value of the first card of that key, nil when there is none.
func card(cards []fitsimage.Card, key string) any {
	for _, c := range cards {
		if c.Key == key {
			return c.Value
		}
	}
	return nil
}

// TestEpochNameCollisions checks that epochs whose outputs would overwrite each other's or
// the batch's own files are refused before any work, and that names unfit for a file are
// refused wherever they come from.
func TestEpochNameCollisions(t *testing.T) {
	eps := func(names ...string) []*Epoch {
		var e []*Epoch
		for i, n := range names {
			e = append(e, &Epoch{Index: i, Name: n})
		}
		return e
	}
	for _, c := range []struct {
		names []string
		joint bool
		want  string // "" for accepted
	}{
		{[]string{"a", "b"}, true, ""},
		{[]string{"a", "a-joint"}, false, ""},
		{[]string{"a", "a-joint"}, true, `epoch "a-joint" would write a-joint.fits, as epoch "a" does`},
		{[]string{"montage"}, false, `epoch "montage" would write montage.png, as the batch's own montage.png does`},
		{[]string{"joint"}, false, ""},
		{[]string{"joint"}, true, `epoch "joint" would write joint.fits, as the batch's own joint.fits does`},
		{[]string{"Night", "night"}, false, `epoch "night" would write night.fits, as epoch "Night" does`},
		{[]string{"../outside"}, false, `must not contain a path separator`},
		{[]string{"a\x1b[2J"}, false, `must not contain control characters`},
	} {
		err := CheckEpochNames(eps(c.names...), c.joint)
		var ie *InputError
		if c.want == "" && err != nil || c.want != "" && (!errors.As(err, &ie) || !strings.Contains(err.Error(), c.want)) {
			t.Errorf("%q joint %v: %v, want %q", c.names, c.joint, err, c.want)
		}
	}
}

// TestCollectRefusesOutsideNames checks that batch -collect refuses a shard summary whose
// epoch names would build paths outside the folder, before reading anything they name.
func TestCollectRefusesOutsideNames(t *testing.T) {
	dir := t.TempDir()
	s := &batch.Summary{Shard: "1/1", Epochs: 1, Rows: []batch.Row{{Index: 0, Epoch: "../outside/secret", Status: batch.StateDone, FITS: "../outside/secret.fits"}}}
	if err := batch.WriteJSON(filepath.Join(dir, "summary-1-of-1.json"), s); err != nil {
		t.Fatal(err)
	}
	_, err := Collect([]string{dir})
	var ie *InputError
	if !errors.As(err, &ie) || !strings.Contains(err.Error(), "must not contain a path separator") {
		t.Fatalf("error %v", err)
	}
}

// Epochs with -channels from a job file are imaged as cubes: each epoch's FITS file holds
// one plane per channel with the channels' wavelengths on a WAVE axis (FITS WCS Paper III,
// Greisen et al. 2006), its status is written and a rerun finds it complete; -joint
// refuses such epochs.
func TestBatchCubeEpochs(t *testing.T) {
	dir := t.TempDir()
	files := writeEpochs(t, dir, 2)
	job := fmt.Sprintf("[image]\nn = 32\nweight = 0.001\niter = 30\nstarts = 1\nchannels = \"all\"\nspectral = \"smooth:0.5\"\n[[epoch]]\nfiles = [%q]\n[[epoch]]\nfiles = [%q]\n", files[0], files[1])
	epochs, _, err := parseJobFile([]byte(job), filepath.Join(dir, "job.toml"), runspec.Spec{})
	if err != nil {
		t.Fatal(err)
	}
	if len(epochs) != 2 || epochs[0].Spec.Channels.String() != "all" || epochs[1].Spec.SpectralFactor != 0.5 {
		t.Fatalf("job file: %d epochs, channels %q, spectral factor %g", len(epochs), epochs[0].Spec.Channels, epochs[1].Spec.SpectralFactor)
	}
	if err := CheckJoint(epochs); err == nil {
		t.Error("-joint accepted epochs imaged as cubes")
	}
	out := filepath.Join(dir, "out")
	if err := os.Mkdir(out, 0o755); err != nil {
		t.Fatal(err)
	}
	if err := CommonGrid(epochs); err != nil {
		t.Fatal(err)
	}
	b := &Batch{Out: out, Budget: 2}
	for _, r := range b.Run(epochs, nil) {
		if r.Row.Status != batch.StateDone {
			t.Fatalf("epoch %s: %+v", r.Row.Epoch, r.Row)
		}
		cube, err := fitsimage.ReadFile(filepath.Join(out, r.Row.FITS))
		if err != nil {
			t.Fatal(err)
		}
		// writeEpochs' two channels of the demo array.
		if cube.Planes != 2 || len(cube.Wave) != 2 || !(cube.Wave[0] < cube.Wave[1]) || card(cube.Cards, "INHASH") == nil {
			t.Fatalf("epoch %s: %d planes, wavelengths %v, INHASH %v", r.Row.Epoch, cube.Planes, cube.Wave, card(cube.Cards, "INHASH"))
		}
		if !reflect.DeepEqual(cube.Data, r.Image.Data) {
			t.Errorf("epoch %s: the cube in memory differs from the file", r.Row.Epoch)
		}
	}
	for _, r := range b.Run(epochs, nil) {
		if !r.Row.Skipped {
			t.Errorf("rerun of %s was not skipped", r.Row.Epoch)
		}
	}
	// An epoch whose table of planes is gone is not complete: a rerun redoes it and
	// writes the table again; the other stays complete.
	planes := filepath.Join(out, epochs[0].Name+"-planes.csv")
	if err := os.Remove(planes); err != nil {
		t.Fatal(err)
	}
	again := b.Run(epochs, nil)
	if again[0].Row.Skipped || !again[1].Row.Skipped {
		t.Errorf("after removing %s: skipped %v, %v; want the first epoch redone", filepath.Base(planes), again[0].Row.Skipped, again[1].Row.Skipped)
	}
	if _, err := os.Stat(planes); err != nil {
		t.Error(err)
	}
}

// -joint fits every epoch with the first epoch's data terms and regularizers, so epochs
// that differ there are refused before any work, naming both; a different date range is
// what epochs are for and passes.
func TestCheckJointSameTerms(t *testing.T) {
	a, b := runspec.Spec{MJDMin: 60000, MJDMax: 60001}, runspec.Spec{MJDMin: 60002, MJDMax: 60003}
	if err := CheckJoint([]*Epoch{{Name: "n1", Spec: a}, {Name: "n2", Spec: b}}); err != nil {
		t.Fatalf("epochs differing in dates only: %v", err)
	}
	for _, opt := range [][2]string{{"reg", "mem"}, {"use", "vis2"}, {"support", "3mas"}, {"smearing", "off"}} {
		c := b
		if err := c.Set(opt[0], opt[1]); err != nil {
			t.Fatal(err)
		}
		err := CheckJoint([]*Epoch{{Name: "n1", Spec: a}, {Name: "n2", Spec: c}})
		var ie *InputError
		if !errors.As(err, &ie) || !strings.Contains(err.Error(), "epoch n1") || !strings.Contains(err.Error(), "epoch n2") {
			t.Errorf("-%s %s in one epoch: error %v", opt[0], opt[1], err)
		}
		// The options are shown as the user gives them, not as escaped canonical text.
		want := fmt.Sprintf("epoch n1 has the defaults, epoch n2 %s=%s", opt[0], opt[1])
		if err != nil && (!strings.Contains(err.Error(), want) || strings.Contains(err.Error(), `\n`)) {
			t.Errorf("-%s %s in one epoch: error %q, want it to say %q", opt[0], opt[1], err, want)
		}
	}
	c := b
	if err := c.Set("reg", "mem"); err != nil {
		t.Fatal(err)
	}
	if err := c.Set("use", "vis2"); err != nil {
		t.Fatal(err)
	}
	if err := CheckJoint([]*Epoch{{Name: "n1", Spec: a}, {Name: "n2", Spec: c}}); err == nil || !strings.Contains(err.Error(), "epoch n2 use=vis2; reg=mem") {
		t.Errorf("two options in one epoch: error %v", err)
	}
}

// -temporal-weight takes a positive finite number or auto; any other text, trailing
// characters included, is bad input (an *InputError) before any work.
func TestPlanBatchTemporalWeight(t *testing.T) {
	dir := t.TempDir()
	files := writeEpochs(t, dir, 2)
	getenv := func(string) string { return "" }
	for _, tc := range []struct {
		text string
		want float64 // 0: refused
	}{
		{"auto", 0}, {"AUTO", 0}, {"1e3", 1000}, {" 250 ", 250},
		{"1e3abc", -1}, {"5mas", -1}, {"0", -1}, {"-2", -1}, {"inf", -1}, {"NaN", -1}, {"", -1},
	} {
		r := BatchRequest{Files: files, Gap: 0.5, Out: filepath.Join(dir, "out"), Joint: true, TemporalWeight: tc.text}
		p, err := PlanBatch(r, getenv)
		var ie *InputError
		switch {
		case tc.want < 0 && !errors.As(err, &ie):
			t.Errorf("-temporal-weight %q: error %v, want an *InputError", tc.text, err)
		case tc.want < 0 && !strings.Contains(err.Error(), "-temporal-weight"):
			t.Errorf("-temporal-weight %q: error %q does not name the option", tc.text, err)
		case tc.want >= 0 && err != nil:
			t.Errorf("-temporal-weight %q: %v", tc.text, err)
		case tc.want >= 0 && p.Lambda != tc.want:
			t.Errorf("-temporal-weight %q: λ = %g, want %g", tc.text, p.Lambda, tc.want)
		}
	}
}

// A broken [[epoch]] table gets a message that names its actual fault: a misspelt key is
// unknown (with its line), not an epoch without files, and files given as one string
// rather than a list (TOML 1.0: an array is written in brackets) says so.
func TestJobFileEpochFaults(t *testing.T) {
	for _, c := range []struct{ name, src, want string }{
		{"misspelt files", "[[epoch]]\nname = \"x\"\nfils = [\"a.oifits\"]\n", "job.toml:3: unknown key epoch.fils"},
		{"files a string", "[[epoch]]\nfiles = \"a.oifits\"\n", `epoch "epoch-01": files = "a.oifits": want a list of file names`},
		{"files a number", "[[epoch]]\nfiles = 3\n", `epoch "epoch-01": files = 3: want a list of file names`},
		{"no files", "[[epoch]]\nname = \"x\"\n", `epoch "x" lists no files`},
		{"empty files", "[[epoch]]\nfiles = []\n", `epoch "epoch-01" lists no files`},
		{"file not a string", "[[epoch]]\nfiles = [1]\n", `files: 1 is not a file name`},
	} {
		_, _, err := parseJobFile([]byte(c.src), "job.toml", runspec.Spec{})
		var ie *InputError
		if !errors.As(err, &ie) || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: %v, want an *InputError with %q", c.name, err, c.want)
		}
	}
}

// Shards run into folders of their own are collected into a third folder, which does not
// exist yet: it is made, and the montage and animation are drawn from each epoch's image in
// the folder of the summary that lists it.
func TestCollectShardsFromFolders(t *testing.T) {
	dir := t.TempDir()
	files := writeEpochs(t, dir, 2)
	seed := uint64(3)
	spec := runspec.Spec{Grid: 32, Weight: 1e-3, Iterations: 20, Starts: 1, Seed: &seed}
	var dirs []string
	for k := 1; k <= 2; k++ {
		epochs := SplitEpochs(files, spec, dataset.NightGap)
		d := filepath.Join(dir, fmt.Sprintf("shard%d", k))
		if err := os.Mkdir(d, 0o755); err != nil {
			t.Fatal(err)
		}
		b := &Batch{Out: d, Budget: 1}
		if _, err := b.RunShard(epochs, batch.Shard{K: k, N: 2}, false, nil); err != nil {
			t.Fatal(err)
		}
		dirs = append(dirs, d)
	}
	out := filepath.Join(dir, "merged")
	sr, err := CollectShards(out, append([]string{out}, dirs...), 0)
	if err != nil {
		t.Fatal(err)
	}
	if len(sr.Summary.Rows) != 2 || sr.Montage != nil {
		t.Fatalf("%d rows, montage: %v", len(sr.Summary.Rows), sr.Montage)
	}
	for _, name := range []string{"summary.json", "summary.csv", "montage.png", "epochs.gif"} {
		if _, err := os.Stat(filepath.Join(out, name)); err != nil {
			t.Error(err)
		}
	}
}
