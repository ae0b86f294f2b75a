package runspec

import (
	"errors"
	"flag"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"reflect"
	"runtime"
	"slices"
	"strings"
	"sync"
	"testing"
	"vcz/dataset"

	"vcz/io/fitsimage"
	"vcz/io/oifits"
	"vcz/recon"
	"vcz/recon/simulate"
	"vcz/regularizers"
)

// demoData is the demo data set of recon/simulate, made once.
var demoData = sync.OnceValues(func() (*dataset.Data, error) {
	f, _, err := simulate.DemoData()
	if err != nil {
		return nil, err
	}
	return dataset.FromFiles([]*oifits.File{f}, dataset.Selection{})
})

func data(t *testing.T) *dataset.Data {
	t.Helper()
	d, err := demoData()
	if err != nil {
		t.Fatal(err)
	}
	return d
}

// flagSpec parses args as a command registering the groups g would.
func flagSpec(t *testing.T, g Group, args ...string) (Spec, error) {
	t.Helper()
	fs := flag.NewFlagSet("test", flag.ContinueOnError)
	fs.SetOutput(io.Discard)
	f := RegisterFlags(fs, g)
	if err := fs.Parse(args); err != nil {
		t.Fatalf("%v: %v", args, err)
	}
	if fs.NArg() > 0 {
		t.Fatalf("%v: arguments left: %v", args, fs.Args())
	}
	return f.Spec()
}

// The zero Spec is `vcz image` without options: grid, weight and start chosen by Solve, tv
// with its default threshold, every data type at weight 1, seed 1, GOMAXPROCS transform
// workers.
func TestZeroSpecProblem(t *testing.T) {
	d := data(t)
	p, s, err := Spec{}.Problem(d)
	if err != nil {
		t.Fatal(err)
	}
	var ones recon.Weights
	for i := range ones {
		ones[i] = 1
	}
	want := recon.Problem{Data: d, Terms: recon.TermOptions{Weights: ones}, Start: recon.Start{Kind: recon.StartAuto}}
	reg := p.Reg
	p.Reg = nil
	if !reflect.DeepEqual(p, want) {
		t.Errorf("problem %+v\nwant %+v", p, want)
	}
	if ws := (recon.Settings{Seed: 1, Workers: runtime.GOMAXPROCS(0)}); !reflect.DeepEqual(s, ws) {
		t.Errorf("settings %+v, want %+v", s, ws)
	}
	g := recon.Grid{N: 32, Pixel: 0.1 * recon.Mas}
	r, err := reg(g)
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(r, &regularizers.TV{NX: 32, NY: 32}) {
		t.Errorf("regularizer %#v, want tv", r)
	}
	if sel := (Spec{}).Selection(); !reflect.DeepEqual(sel, dataset.Selection{}) {
		t.Errorf("selection %+v", sel)
	}
	if l := (Spec{}).RegularizerLabel(); l != "tv" {
		t.Errorf("label %q", l)
	}
	if txt := (Spec{}).String(); txt != "" {
		t.Errorf("text %q, want empty", txt)
	}
}

// Every option read from its flag and from a job-file value gives the same Spec, the one
// expected; its canonical text reads back into that Spec.
func TestOptions(t *testing.T) {
	mas, um := recon.Mas, 1e-6 // variables, so that products round as at run time
	seed := uint64(7)
	starIndex := -3.5
	cases := []struct {
		name  string
		flag  []string
		value any // in the job file
		want  Spec
	}{
		{"target", []string{"-target", "Vaeloris"}, "Vaeloris", Spec{Target: "Vaeloris"}},
		{"wave", []string{"-wave", "1.5um:1.8um"}, "1.5um:1.8um", Spec{WaveMin: 1.5 * um, WaveMax: 1.8 * um}},
		{"mjd", []string{"-mjd", "60100.5:"}, "60100.5:", Spec{MJDMin: 60100.5}},
		{"ins", []string{"-ins", "A, B,"}, "A,B", Spec{Instruments: []string{"A", "B"}}},
		{"use", []string{"-use", "vis2,t3"}, "vis2,t3", Spec{Use: dataset.Vis2 | dataset.T3Amp | dataset.T3Phi}},
		{"n", []string{"-n", "64"}, int64(64), Spec{Grid: 64}},
		{"pixel", []string{"-pixel", "0.25mas"}, "0.25MAS", Spec{Pixel: 0.25 * mas}},
		{"fov", []string{"-fov", "12mas"}, "12mas", Spec{FOV: 12 * mas}},
		{"reg", []string{"-reg", "MEM,compact:0.1"}, "mem,compact:0.1", Spec{Regularizers: []regularizers.NamedTerm{{Name: "mem", Rel: 1}, {Name: "compact", Rel: 0.1}}}},
		{"weight", []string{"-weight", "1e4"}, float64(1e4), Spec{Weight: 1e4}},
		{"prior", []string{"-prior", "gauss:2mas"}, "gaussian:2mas", Spec{Prior: Prior{Kind: PriorGaussian, Size: 2 * mas}}},
		{"start", []string{"-start", "ld:2mas:0.3"}, "ld:2mas:0.3", Spec{Start: Start{Kind: StartLimbDarkened, Size: 2 * mas, LimbDarkening: 0.3}}},
		{"from-model", []string{"-from-model", "m.toml"}, "m.toml", Spec{FromModel: "m.toml", Start: Start{Kind: StartModel}}},
		{"support", []string{"-support", "3mas"}, "3mas", Spec{Support: 3 * mas}},
		{"tv-eps", []string{"-tv-eps", "0.05"}, 0.05, Spec{TVEps: 0.05}},
		{"data-weights", []string{"-data-weights", "vis2=2,t3phi=0.5"}, "vis2=2,t3phi=0.5", Spec{DataWeights: recon.Weights{2, 0, 0.5, 0, 0}}},
		{"iter", []string{"-iter", "100"}, int64(100), Spec{Iterations: 100}},
		{"seed", []string{"-seed", "7"}, int64(7), Spec{Seed: &seed}},
		{"starts", []string{"-starts", "3"}, int64(3), Spec{Starts: 3}},
		{"coarse", []string{"-coarse"}, true, Spec{Coarse: true}},
		{"no-amp-first", []string{"-no-amp-first"}, true, Spec{NoAmplitudeFirst: true}},
		{"smearing", []string{"-smearing", "OFF"}, "off", Spec{Smearing: recon.SmearOff}},
		{"workers", []string{"-workers", "2"}, int64(2), Spec{Workers: 2}},
		{"channels", []string{"-channels", "1-4, 5-8"}, "1-4,5-8", Spec{Channels: recon.Channels{List: [][2]int{{1, 4}, {5, 8}}}}},
		{"spectral", []string{"-spectral", "joint:0.5"}, "joint:0.5", Spec{Spectral: recon.SpectralJoint, SpectralFactor: 0.5}},
		{"star", []string{"-star", "0.8mas"}, "0.8mas", Spec{Star: &Star{Diameter: 0.8 * mas}}},
		{"star-index", []string{"-star-index", "-3.5"}, -3.5, Spec{StarIndex: &starIndex}},
	}
	var tested []string
	for _, c := range cases {
		tested = append(tested, c.name)
		got, err := flagSpec(t, All, c.flag...)
		if err != nil || !reflect.DeepEqual(got, c.want) {
			t.Errorf("%s: flags give %+v, %v; want %+v", c.name, got, err, c.want)
		}
		var fromTable Spec
		if err := fromTable.SetTable(map[string]any{c.name: c.value}, All); err != nil || !reflect.DeepEqual(fromTable, c.want) {
			t.Errorf("%s: job file gives %+v, %v; want %+v", c.name, fromTable, err, c.want)
		}
		text := c.want.String()
		if back, err := Parse(text); err != nil || !reflect.DeepEqual(back, c.want) && c.name != "workers" {
			t.Errorf("%s: text %q reads back as %+v, %v", c.name, text, back, err)
		}
		if c.name == "workers" {
			if text != "" {
				t.Errorf("workers in the text: %q", text)
			}
		} else if !strings.HasPrefix(text, c.name+"=") || strings.Count(text, "\n") != len(strings.Fields(text)) {
			t.Errorf("%s: text %q", c.name, text)
		}
	}
	for _, o := range options {
		if !slices.Contains(tested, o.name) {
			t.Errorf("option %s is not tested", o.name)
		}
	}
}

// Text that means the default gives the zero Spec, so that it changes neither the hash nor
// the provenance.
func TestDefaultTexts(t *testing.T) {
	for _, args := range [][]string{
		{"-reg", "tv"}, {"-reg", " TV:1 "}, {"-weight", "auto"}, {"-weight", ""}, {"-prior", "flat"}, {"-prior", ""},
		{"-start", "auto"}, {"-start", ""}, {"-seed", "1"}, {"-data-weights", "vis2=1,t3=1"}, {"-wave", ""},
		{"-mjd", ":"}, {"-fov", ""}, {"-pixel", ""}, {"-support", ""}, {"-n", "0"}, {"-iter", "0"}, {"-use", ""},
		{"-coarse=false"}, {"-tv-eps", "0"}, {"-from-model", ""}, {"-ins", " , "},
		{"-channels", "1"}, {"-channels", ""}, {"-spectral", "smooth"}, {"-spectral", "smooth:1"}, {"-star", ""}, {"-star-index", "-4"},
	} {
		s, err := flagSpec(t, All, args...)
		if err != nil || !reflect.DeepEqual(s, Spec{}) || s.String() != "" {
			t.Errorf("%v: %+v, %v, text %q; want the zero Spec", args, s, err, s.String())
		}
	}
}

// Bad values give one-line errors naming the option, the text `vcz image` gave before the
// Spec existed; from a job file they name the key without the dash.
func TestBadValues(t *testing.T) {
	// The message of an unknown data type, with the list of words, is dataset's (its
	// TestTypeTable checks it).
	_, derr := dataset.ParseDataTypes("vis3")
	if derr == nil {
		t.Fatal("dataset.ParseDataTypes accepts vis3")
	}
	unknownVis3 := derr.Error()
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"-n", "33"}, "-n 33: the grid size must be an even number from 8 to 2048"},
		{[]string{"-n", "-2"}, "-n -2: the grid size must be an even number from 8 to 2048"},
		{[]string{"-pixel", "x"}, `-pixel "x": want a positive angle such as 0.25mas: unknown unit "x" in "x" (use arcsec, as, deg, mas, rad, uas, µas)`},
		{[]string{"-pixel", "-1mas"}, `-pixel "-1mas": want a positive angle such as 0.25mas`},
		{[]string{"-fov", "0"}, `-fov "0": want a positive angle such as 12mas: "0" has no unit (use arcsec, as, deg, mas, rad, uas, µas)`},
		{[]string{"-fov", "0mas"}, `-fov "0mas": want a positive angle such as 12mas`},
		{[]string{"-reg", "nosuch"}, `-reg: unknown regularizer "nosuch" (use ` + regularizers.NameList() + ")"},
		{[]string{"-reg", ""}, "-reg: no regularizer named"},
		{[]string{"-reg", "mem:2"}, "-reg: regularizer mem: the first term's weight is 1 by definition; set the overall weight with -weight"},
		{[]string{"-prior", "gauss:-1"}, `-prior: prior "gauss:-1": size must be a positive angle such as 3mas`},
		{[]string{"-tv-eps", "-1"}, "-tv-eps -1 must not be negative"},
		{[]string{"-tv-eps", "NaN"}, `-tv-eps "NaN": want a finite number`},
		{[]string{"-tv-eps", "-Inf"}, `-tv-eps "-Inf": want a finite number`},
		{[]string{"-weight", "0"}, `-weight "0": want a positive number or auto`},
		{[]string{"-weight", "x"}, `-weight "x": want a positive number or auto`},
		{[]string{"-start", "gauss:0"}, `-start: "gauss:0": the size must be a positive angle such as 3mas`},
		{[]string{"-start", "ld:1mas:2"}, `-start: "ld:1mas:2": the limb-darkening coefficient must be in [0, 1]`},
		{[]string{"-support", "-3mas"}, `-support "-3mas": want a positive radius such as 3mas`},
		{[]string{"-data-weights", "vis2"}, `-data-weights: "vis2": want TYPE=WEIGHT`},
		{[]string{"-data-weights", "vis3=1"}, "-data-weights: " + unknownVis3},
		{[]string{"-data-weights", "vis2=0"}, `-data-weights: "vis2=0": the weight must be a positive number (leave a data type out with -use)`},
		{[]string{"-use", "vis3"}, `-use "vis3": ` + unknownVis3},
		{[]string{"-use", ","}, `-use ",": no data type given`},
		{[]string{"-iter", "-1"}, "-iter -1 must not be negative"},
		{[]string{"-starts", "-1"}, "-starts -1 must not be negative"},
		{[]string{"-workers", "-1"}, "-workers -1 must not be negative"},
		{[]string{"-wave", "2um:1um"}, `-wave "2um:1um": the upper limit is below the lower one`},
		// 0 is no limit inside: an explicit upper limit of 0 must not widen the range.
		{[]string{"-wave", "1.6um:0um"}, `-wave "1.6um:0um": an upper limit of 0 keeps nothing; leave the side empty for no limit`},
		{[]string{"-mjd", "1:0"}, `-mjd "1:0": an upper limit of 0 keeps nothing; leave the side empty for no limit`},
		{[]string{"-mjd", "-5:-10"}, `-mjd "-5:-10": the upper limit is below the lower one`},
		{[]string{"-wave", "1furlong:"}, `-wave "1furlong:": unknown unit "furlong" in "1furlong" (use m, micron, nm, um, µm)`},
		{[]string{"-mjd", "x:"}, `-mjd "x:": "x" is not a finite number`},
		{[]string{"-mjd", "NaN:"}, `-mjd "NaN:": "NaN" is not a finite number`},
		{[]string{"-n", "2"}, "-n 2: the grid size must be an even number from 8 to 2048"},
		{[]string{"-mjd", "5"}, `-mjd "5": want LOW:HIGH`},
		{[]string{"-channels", "0"}, `-channels "0": want a positive number of groups, have 0`},
		{[]string{"-channels", "4-2"}, `-channels "4-2": "4-2" is not a channel number or range such as 5-8 (want all, a number of groups, or a list such as 1-4,5-8)`},
		{[]string{"-spectral", "wiggly"}, `-spectral: "wiggly" is not a spectral regularizer (want smooth, joint or none, optionally with :FACTOR on the automatic weight)`},
		{[]string{"-spectral", "smooth:-2"}, `-spectral: factor "-2" of smooth is not a positive number`},
		{[]string{"-star", "big"}, `-star "big": want point or a positive diameter such as 0.8mas: unknown unit "big" in "big" (use arcsec, as, deg, mas, rad, uas, µas)`},
		{[]string{"-star-index", "x"}, `-star-index "x": want a number between -20 and 20`},
	} {
		_, err := flagSpec(t, All, c.args...)
		var oe *OptionError
		if err == nil || err.Error() != c.want || !errors.As(err, &oe) || oe.Option != c.args[0] || strings.Contains(err.Error(), "\n") {
			t.Errorf("%v: error %v, want %q", c.args, err, c.want)
		}
	}
	for _, c := range []struct {
		key   string
		value any
		want  string
	}{
		{"pixel", "x", `pixel "x": want a positive angle such as 0.25mas: unknown unit "x" in "x" (use arcsec, as, deg, mas, rad, uas, µas)`},
		{"n", 64.5, `n "64.5": want a whole number`},
		{"iter", int64(-1), "iter -1 must not be negative"},
		{"seed", int64(-3), "seed -3 must not be negative"},
		{"coarse", "maybe", `coarse "maybe": want true or false`},
		{"use", []any{"vis2"}, "use: want a string, number or boolean, not [vis2]"},
		{"colour", "red", "unknown option colour"},
		{"from-model", "m.toml", "unknown option from-model"}, // not in the groups given
	} {
		var s Spec
		err := s.SetTable(map[string]any{c.key: c.value}, Select|Types|Recon)
		var oe *OptionError
		if err == nil || err.Error() != c.want || !errors.As(err, &oe) || oe.Option != c.key {
			t.Errorf("%s = %v: error %v, want %q", c.key, c.value, err, c.want)
		}
		if strings.HasPrefix(c.want, "unknown") != errors.Is(err, ErrUnknownOption) {
			t.Errorf("%s: errors.Is(ErrUnknownOption) is wrong", c.key)
		}
	}
}

// A Spec built in Go is checked as the flags are: Problem refuses what the flags refuse,
// naming the flag.
func TestValidate(t *testing.T) {
	for _, c := range []struct {
		s    Spec
		flag string
	}{
		{Spec{Grid: 33}, "-n"},
		{Spec{Pixel: -1e-9}, "-pixel"},
		{Spec{FOV: math.NaN()}, "-fov"},
		{Spec{FOV: 1e-8, Grid: 64, Pixel: 1e-10}, "-fov"},
		{Spec{Regularizers: []regularizers.NamedTerm{{Name: "bogus", Rel: 1}}}, "-reg"},
		{Spec{Regularizers: []regularizers.NamedTerm{{Name: "mem", Rel: 2}}}, "-reg"},
		{Spec{Regularizers: []regularizers.NamedTerm{{Name: "mem", Rel: 1}, {Name: "tv", Rel: -1}}}, "-reg"},
		{Spec{Weight: -1}, "-weight"},
		{Spec{Weight: math.Inf(1)}, "-weight"},
		{Spec{Prior: Prior{Kind: PriorDisc, Size: -1}}, "-prior"},
		{Spec{Prior: Prior{Kind: PriorFile}}, "-prior"},
		{Spec{Start: Start{Kind: StartLimbDarkened, LimbDarkening: 2}}, "-start"},
		{Spec{Start: Start{Kind: StartFile}}, "-start"},
		{Spec{Start: Start{Kind: StartModel}}, "-start"},
		{Spec{Support: -1}, "-support"},
		{Spec{TVEps: -0.1}, "-tv-eps"},
		{Spec{DataWeights: recon.Weights{1, -2}}, "-data-weights"},
		{Spec{Use: 1 << 20}, "-use"},
		{Spec{Iterations: -1}, "-iter"},
		{Spec{WaveMin: 2e-6, WaveMax: 1e-6}, "-wave"},
		{Spec{Star: &Star{}}, "-star"},
		{Spec{Channels: recon.Channels{All: true}, StarIndex: new(float64)}, "-star-index"},
		{Spec{Channels: recon.Channels{Groups: 0, List: [][2]int{{3, 1}}}}, "-channels"},
	} {
		_, _, err := c.s.Problem(data(t))
		var oe *OptionError
		if !errors.As(err, &oe) || oe.Option != c.flag || !strings.Contains(err.Error(), c.flag) {
			t.Errorf("%+v: error %v, want one naming %s", c.s, err, c.flag)
		}
	}
}

// Spec → text → Spec gives the same Spec, with every option set, with values that need
// quoting and with floats that no short decimal in mas or µm holds; and flags → Spec →
// text → flags gives the same Spec.
func TestCanonicalRoundTrip(t *testing.T) {
	full, err := flagSpec(t, All, "-target", "Vaeloris", "-wave", "1.5um:", "-mjd", ":60101.25", "-ins", "ORRIN-6",
		"-use", "vis2,t3phi", "-n", "64", "-pixel", "0.2mas", "-reg", "mem,compact:0.1", "-weight", "300",
		"-prior", "disc:1.5mas", "-start", "disk:2mas", "-from-model", "m.toml", "-support", "4mas", "-tv-eps", "0.02",
		"-data-weights", "t3phi=3", "-iter", "250", "-seed", "0", "-starts", "2", "-coarse", "-no-amp-first", "-smearing", "on", "-workers", "3")
	if err != nil {
		t.Fatal(err)
	}
	const wantText = `target=Vaeloris
wave=1.5um:
mjd=:60101.25
ins=ORRIN-6
use=vis2,t3phi
n=64
pixel=0.2mas
reg=mem,compact:0.1
weight=300
prior=disc:1.5mas
from-model=m.toml
start=disc:2mas
support=4mas
tv-eps=0.02
data-weights=t3phi=3
iter=250
seed=0
starts=2
coarse=true
no-amp-first=true
smearing=on
`
	if got := full.String(); got != wantText {
		t.Errorf("text\n%s\nwant\n%s", got, wantText)
	}
	noWorkers := full
	noWorkers.Workers = 0
	check := func(s Spec) {
		t.Helper()
		text := s.String()
		back, err := Parse(text)
		if err != nil || !reflect.DeepEqual(back, s) {
			t.Errorf("Spec %+v\ntext %q\nreads back as %+v, %v", s, text, back, err)
		}
		var args []string
		for _, line := range strings.Split(strings.TrimSuffix(text, "\n"), "\n") {
			if line == "" {
				continue
			}
			k, v, _ := strings.Cut(line, "=")
			if strings.HasPrefix(v, `"`) {
				v = back.textOf(k)
			}
			args = append(args, "-"+k+"="+v)
		}
		fromFlags, err := flagSpec(t, All, args...)
		if err != nil || !reflect.DeepEqual(fromFlags, s) {
			t.Errorf("flags %q give %+v, %v; want %+v", args, fromFlags, err, s)
		}
	}
	check(noWorkers)
	odd := Spec{Target: " two\nlines ", Instruments: []string{`"quoted"`}, Start: Start{Kind: StartFile, File: "a b.fits"},
		Prior: Prior{Kind: PriorFile, File: " lead.fits"}}
	check(odd)
	rnd := rand.New(rand.NewPCG(5, 6))
	for range 200 {
		x := func(scale float64) float64 { return scale * (0.5 + rnd.Float64()) }
		s := Spec{WaveMin: x(1e-6), WaveMax: x(4e-6), MJDMin: x(6e4), Pixel: x(1e-9), FOV: x(1e-7), Support: x(1e-8),
			Weight: x(100), TVEps: x(0.01), Start: Start{Kind: StartLimbDarkened, Size: x(1e-9), LimbDarkening: rnd.Float64()},
			Prior: Prior{Kind: PriorGaussian, Size: x(1e-9)}, DataWeights: recon.Weights{x(1), x(2)},
			Regularizers: []regularizers.NamedTerm{{Name: "tv", Rel: 1}, {Name: "smooth", Rel: x(1)}}}
		s.WaveMax += s.WaveMin
		check(s)
	}
	if full.String() != noWorkers.String() {
		t.Error("the worker count changes the text")
	}
}

// textOf is the value of option name in s, as a flag would take it.
func (s Spec) textOf(name string) string { return lookup(name).format(&s) }

func TestParseErrors(t *testing.T) {
	for text, want := range map[string]string{
		"n=64\ncolour=red\n": "line 2: unknown option colour",
		"n=64\nn=32\n":       "line 2: n given twice",
		"n 64\n":             `line 1: want name=value, not "n 64"`,
		`target="x` + "\n":   `line 1: target: bad quoted value "x`,
		"n=33\n":             "n 33: the grid size must be an even number from 8 to 2048",
	} {
		if _, err := Parse(text); err == nil || err.Error() != want {
			t.Errorf("%q: error %v, want %q", text, err, want)
		}
	}
	if s, err := Parse("\nworkers=4\r\n\n"); err != nil || s.Workers != 4 {
		t.Errorf("workers: %+v, %v", s, err)
	}
}

// The options a command registers are the groups it asks for, with the defaults -help
// shows, and an excepted option is left to the command.
func TestRegisterFlags(t *testing.T) {
	count := func(g Group, except ...string) (names []string) {
		fs := flag.NewFlagSet("x", flag.ContinueOnError)
		RegisterFlags(fs, g, except...)
		fs.VisitAll(func(f *flag.Flag) { names = append(names, f.Name) })
		return names
	}
	if got := count(Select); !reflect.DeepEqual(got, []string{"ins", "mjd", "target", "wave"}) {
		t.Errorf("Select: %v", got)
	}
	if got := count(All); len(got) != len(options) {
		t.Errorf("All: %d flags, %d options", len(got), len(options))
	}
	if got := count(Recon, "reg"); slices.Contains(got, "reg") || !slices.Contains(got, "weight") {
		t.Errorf("Recon except reg: %v", got)
	}
	fs := flag.NewFlagSet("x", flag.ContinueOnError)
	RegisterFlags(fs, All)
	for name, def := range map[string]string{"reg": "tv", "weight": "auto", "prior": "flat", "start": "auto", "seed": "1", "n": "0", "coarse": "false"} {
		if f := fs.Lookup(name); f == nil || f.DefValue != def {
			t.Errorf("-%s: default %v, want %q", name, f, def)
		}
	}
}

// Problem turns options into the recon problem as CONVENTIONS.md and recon's documentation
// define it: -fov with -n sets the pixel to fov/n, with -pixel the even pixel count
// covering it; -use, -data-weights, -support and the settings pass through; a Gaussian
// prior with mem builds maximum entropy on GaussianPrior of that FWHM in pixels.
func TestProblemOptions(t *testing.T) {
	d := data(t)
	mas := recon.Mas
	s := Spec{FOV: 12 * mas, Grid: 40}
	p, _, err := s.Problem(d)
	if err != nil || p.GridOptions.N != 40 || p.GridOptions.Pixel != 12*mas/40 {
		t.Errorf("-fov -n: %+v, %v", p.GridOptions, err)
	}
	s = Spec{FOV: 10 * mas, Pixel: 0.3 * mas}
	if p, _, err = s.Problem(d); err != nil || p.GridOptions.N != 34 || p.GridOptions.Pixel != 0.3*mas {
		t.Errorf("-fov -pixel: %+v, %v (want 34 = ⌈10/0.3⌉ rounded up to even)", p.GridOptions, err)
	}
	if _, _, err = (Spec{Grid: 4096}).Problem(d); err == nil || err.Error() != "-n 4096: the grid size must be an even number from 8 to 2048" {
		t.Errorf("-n 4096: %v", err)
	}
	// Absurd scales are refused before any size is converted to an integer
	// (a pixel of 1e-20 mas used to overflow the pixel count and panic).
	for _, c := range []struct {
		s    Spec
		want string
	}{
		{Spec{Pixel: 1e300 * mas}, "-pixel: a pixel of 1e+300mas is"},
		{Spec{Pixel: 1e-20 * mas}, "-pixel: a pixel of 1e-20mas is"},
		{Spec{FOV: 1e20 * mas}, "-fov 1e+20mas with pixels of"},
		{Spec{FOV: 1e20 * mas, Pixel: 0.1 * mas}, "-fov 1e+20mas with pixels of 0.1mas needs 1e+21 pixels per side; at most 2048"},
		{Spec{FOV: 1e-5 * mas}, "-fov 1e-05mas is smaller than the resolution"},
	} {
		var oe *OptionError
		if _, _, err := c.s.Problem(d); err == nil || !strings.HasPrefix(err.Error(), c.want) || !errors.As(err, &oe) {
			t.Errorf("%+v: error %v, want %q…", c.s, err, c.want)
		}
	}
	seven := uint64(7)
	s = Spec{Use: dataset.Vis2 | dataset.T3Phi, DataWeights: recon.Weights{2}, Support: 3 * mas, Iterations: 99, Seed: &seven,
		Starts: 2, Coarse: true, NoAmplitudeFirst: true, Workers: 3, Weight: 50,
		Regularizers: []regularizers.NamedTerm{{Name: "mem", Rel: 1}, {Name: "compact", Rel: 0.5}}, Prior: Prior{Kind: PriorGaussian, Size: 2 * mas}}
	p, st, err := s.Problem(d)
	if err != nil {
		t.Fatal(err)
	}
	weights := recon.Weights{2} // and 1, the default, for every other type
	for i := 1; i < len(weights); i++ {
		weights[i] = 1
	}
	if p.Terms.Use != dataset.Vis2|dataset.T3Phi || p.Terms.Weights != weights || p.Support != 3*mas || p.Weight != 50 {
		t.Errorf("problem %+v", p)
	}
	if st.MaxIter != 99 || st.Seed != 7 || st.Starts != 2 || !st.CoarseToFine || !st.NoAmplitudeFirst || st.Workers != 3 {
		t.Errorf("settings %+v", st)
	}
	g := recon.Grid{N: 32, Pixel: 0.25 * mas}
	r, err := p.Reg(g)
	if err != nil {
		t.Fatal(err)
	}
	prior, _ := regularizers.GaussianPrior(32, 32, 8, 1, 0)
	want := &regularizers.Sum{Terms: []regularizers.Term{{Weight: 1, R: &regularizers.MaxEnt{NX: 32, NY: 32, Prior: prior}},
		{Weight: 0.5, R: &regularizers.Compact{NX: 32, NY: 32}}}}
	if !reflect.DeepEqual(r, want) {
		t.Errorf("regularizer %v, want %v", r, want)
	}
	if l := s.RegularizerLabel(); l != "mem + 0.5·compact" {
		t.Errorf("label %q", l)
	}
}

// Files named by the options are read by Problem, with errors naming the option; a model
// file's image is the start when the flags ask for it.
func TestProblemFiles(t *testing.T) {
	d := data(t)
	dir := t.TempDir()
	mod := filepath.Join(dir, "m.toml")
	if err := os.WriteFile(mod, []byte("[[component]]\nkind = \"ud\"\ndiameter = 1.5\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	s, err := flagSpec(t, All, "-from-model", mod)
	if err != nil {
		t.Fatal(err)
	}
	p, _, err := s.Problem(d)
	if err != nil || p.Start.Kind != recon.StartImage || math.Abs(p.GridOptions.ObjectSize/recon.Mas-1.5) > 1e-12 || p.GridOptions.ObjectSource != "model file m.toml" {
		t.Errorf("-from-model: start %v, grid options %+v, %v", p.Start.Kind, p.GridOptions, err)
	}
	for _, c := range []struct {
		s    Spec
		want string
	}{
		{Spec{Prior: Prior{Kind: PriorFile, File: filepath.Join(dir, "none.fits")}}, "-prior: "},
		{Spec{Start: Start{Kind: StartFile, File: filepath.Join(dir, "none.fits")}}, "-start: "},
		{Spec{FromModel: filepath.Join(dir, "none.toml")}, "-from-model: "},
	} {
		if _, _, err := c.s.Problem(d); err == nil || !strings.HasPrefix(err.Error(), c.want) || !strings.Contains(err.Error(), "none.") {
			t.Errorf("%+v: error %v, want one starting %q and naming the file", c.s, err, c.want)
		}
	}
}

// TestStartFileFlux checks that a start image whose pixels are not finite, or whose flux is
// not positive, is refused naming the file and the option, before any reconstruction.
func TestStartFileFlux(t *testing.T) {
	d := data(t)
	dir := t.TempDir()
	for name, v := range map[string]float64{"nan.fits": math.NaN(), "zero.fits": 0, "negative.fits": -1} {
		p := filepath.Join(dir, name)
		im := &fitsimage.Image{NX: 8, NY: 8, Pixel: 0.2 * recon.Mas, Data: make([]float64, 64)}
		for i := range im.Data {
			im.Data[i] = v
		}
		if err := fitsimage.WriteFile(p, im); err != nil {
			t.Fatal(err)
		}
		_, _, err := Spec{Start: Start{Kind: StartFile, File: p}}.Problem(d)
		if err == nil || !strings.Contains(err.Error(), "-start: "+p+": start image has") {
			t.Errorf("%s: %v", name, err)
		}
	}
}

// A prior image that cannot be one (a cube, a rectangle, pixels that are not finite, no
// positive pixel: the default model of the entropy is positive, Skilling & Bryan 1984,
// MNRAS 211, 111, recalled from memory; the rest common practice, no source) is refused by
// Problem naming the option and the file, as bad input before any reconstruction, not
// when the regularizer is first built on the chosen grid.
func TestPriorFileRefused(t *testing.T) {
	d := data(t)
	dir := t.TempDir()
	flat := func(n int, v float64) []float64 {
		x := make([]float64, n)
		for i := range x {
			x[i] = v
		}
		return x
	}
	for name, c := range map[string]struct {
		im   *fitsimage.Image
		want string
	}{
		"cube.fits":     {&fitsimage.Image{NX: 8, NY: 8, Planes: 2, Pixel: 0.2 * recon.Mas, Data: flat(128, 1), Wave: []float64{1.6e-6, 1.7e-6}}, "a cube of 2 planes"},
		"rect.fits":     {&fitsimage.Image{NX: 8, NY: 6, Pixel: 0.2 * recon.Mas, Data: flat(48, 1)}, "8 × 6 pixels"},
		"nan.fits":      {&fitsimage.Image{NX: 8, NY: 8, Pixel: 0.2 * recon.Mas, Data: append(flat(63, 1), math.NaN())}, "not finite"},
		"negative.fits": {&fitsimage.Image{NX: 8, NY: 8, Pixel: 0.2 * recon.Mas, Data: flat(64, -1)}, "no positive pixel"},
	} {
		p := filepath.Join(dir, name)
		if err := fitsimage.WriteFile(p, c.im); err != nil {
			t.Fatal(err)
		}
		_, _, err := Spec{Prior: Prior{Kind: PriorFile, File: p}}.Problem(d)
		if err == nil || !strings.HasPrefix(err.Error(), "-prior: "+p+": ") || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want one starting %q with %q", name, err, "-prior: "+p+": ", c.want)
		}
	}
}
