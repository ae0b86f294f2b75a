package main

import (
	"bytes"
	"io"
	"math/rand/v2"
	"os"
	"path/filepath"
	"reflect"
	"testing"

	"vcz/io/fitsimage"
	"vcz/io/oifits"
	"vcz/recon"
	"vcz/runspec"
)

// TestRunspecMatchesImageFlags checks that runspec gives, for the same command line, the
// problem, settings and selection that imageFlags.problem gives.
func TestRunspecMatchesImageFlags(t *testing.T) {
	f, err := oifits.Decode(bytes.NewReader(demoOIFITS), "demo.oifits")
	if err != nil {
		t.Fatal(err)
	}
	d, err := recon.FromFiles([]*oifits.File{f}, recon.Selection{})
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	img := filepath.Join(dir, "img.fits")
	px := make([]float64, 40*40)
	for i := range px {
		px[i] = 1 + float64(i%7)
	}
	if err := fitsimage.WriteFile(img, &fitsimage.Image{NX: 40, NY: 40, Pixel: 0.1 * recon.Mas, Data: px}); err != nil {
		t.Fatal(err)
	}
	mod := filepath.Join(dir, "m.toml")
	if err := os.WriteFile(mod, []byte("[[component]]\nkind = \"ud\"\ndiameter = 1.5\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, args := range [][]string{
		{},
		{"-n", "64"},
		{"-pixel", "0.2mas"},
		{"-pixel", "250uas", "-n", "40"},
		{"-fov", "12mas"},
		{"-fov", "10mas", "-n", "40"},
		{"-fov", "10mas", "-pixel", "0.25mas"},
		{"-reg", "mem,compact:0.1", "-prior", "gauss:2mas"},
		{"-reg", "mem", "-prior", "disc"},
		{"-reg", "MEM , priordist:2", "-prior", "disk:1.5"},
		{"-reg", "priordist", "-prior", img},
		{"-reg", "tv", "-tv-eps", "0.05"},
		{"-reg", "smooth,tv:3"},
		{"-weight", "1e3"},
		{"-weight", "AUTO"},
		{"-start", "gauss:1mas"},
		{"-start", "disc"},
		{"-start", "ud:2mas"},
		{"-start", "ld:2mas:0.3"},
		{"-start", "ld"},
		{"-start", "flat"},
		{"-start", "random"},
		{"-start", img},
		{"-support", "3mas"},
		{"-data-weights", "vis2=2,t3=0.5"},
		{"-data-weights", "t3phi=1"},
		{"-use", "vis2,t3phi"},
		{"-iter", "100", "-seed", "7", "-starts", "3", "-coarse", "-no-amp-first", "-workers", "2"},
		{"-seed", "0"},
		{"-seed", "1"},
		{"-from-model", mod},
		{"-from-model", mod, "-start", "gauss"},
		{"-from-model", mod, "-start", "auto"},
		{"-from-model", mod, "-n", "48"},
		{"-target", "Vaeloris", "-wave", "1um:3um", "-mjd", "60000:", "-ins", "A, B"},
	} {
		fs := newFlagSet("image", "", "", io.Discard)
		var old imageFlags
		old.register(fs)
		old.registerFromModel(fs)
		if err := parseFlags(fs, args, io.Discard); err != nil {
			t.Fatal(err)
		}
		op, os, oerr := old.problem(d)
		osel, oselErr := old.sel.selection()

		fs2 := newFlagSet("image", "", "", io.Discard)
		fl := runspec.RegisterFlags(fs2, runspec.All)
		if err := parseFlags(fs2, args, io.Discard); err != nil {
			t.Fatal(err)
		}
		spec, err := fl.Spec()
		if err != nil {
			t.Fatalf("%v: %v", args, err)
		}
		np, ns, nerr := spec.Problem(d)
		if oerr != nil || nerr != nil || oselErr != nil {
			t.Fatalf("%v: errors %v, %v, %v", args, oerr, nerr, oselErr)
		}
		if nsel := spec.Selection(); !reflect.DeepEqual(osel, nsel) {
			t.Errorf("%v: selection %+v, want %+v", args, nsel, osel)
		}
		if !reflect.DeepEqual(os, ns) {
			t.Errorf("%v: settings %+v, want %+v", args, ns, os)
		}
		if op.GridOptions != np.GridOptions || op.Grid != np.Grid || op.Terms != np.Terms || op.Weight != np.Weight ||
			op.Support != np.Support || !reflect.DeepEqual(op.Start, np.Start) {
			t.Errorf("%v: problem %+v\nwant %+v", args, np, op)
		}
		ch, err := recon.ChooseGrid(d, op.GridOptions)
		if err != nil {
			t.Fatal(err)
		}
		ro, err1 := op.Reg(ch.Grid)
		rn, err2 := np.Reg(ch.Grid)
		if err1 != nil || err2 != nil {
			t.Fatalf("%v: %v, %v", args, err1, err2)
		}
		if !reflect.DeepEqual(ro, rn) {
			t.Errorf("%v: regularizer %#v, want %#v", args, rn, ro)
		}
		rnd := rand.New(rand.NewPCG(1, 2))
		x := make([]float64, ch.N*ch.N)
		for i := range x {
			x[i] = rnd.Float64()
		}
		g1, g2 := make([]float64, len(x)), make([]float64, len(x))
		if v1, v2 := ro.Eval(g1, x), rn.Eval(g2, x); v1 != v2 || !reflect.DeepEqual(g1, g2) {
			t.Errorf("%v: regularizer value %v, want %v", args, v2, v1)
		}
		if spec.RegularizerLabel() != regLabel(old.usedRegs) {
			t.Errorf("%v: label %q, want %q", args, spec.RegularizerLabel(), regLabel(old.usedRegs))
		}
	}
}

// TestRunspecErrorsMatchImageFlags checks that each bad option gives the same error both ways.
func TestRunspecErrorsMatchImageFlags(t *testing.T) {
	f, err := oifits.Decode(bytes.NewReader(demoOIFITS), "demo.oifits")
	if err != nil {
		t.Fatal(err)
	}
	d, err := recon.FromFiles([]*oifits.File{f}, recon.Selection{})
	if err != nil {
		t.Fatal(err)
	}
	for _, args := range [][]string{
		{"-n", "33"}, {"-n", "-2"}, {"-pixel", "x"}, {"-pixel", "-1mas"}, {"-fov", "0"},
		{"-fov", "3mas", "-n", "40", "-pixel", "0.1mas"}, {"-n", "4000"}, {"-reg", "nosuch"}, {"-reg", ""},
		{"-reg", "mem:2"}, {"-prior", "gauss:-1"}, {"-prior", "nosuch.fits"}, {"-tv-eps", "-1"},
		{"-weight", "0"}, {"-weight", "x"}, {"-start", "gauss:0"}, {"-start", "ld:1mas:2"}, {"-start", "nosuch.fits"},
		{"-support", "-3"}, {"-data-weights", "vis2"}, {"-data-weights", "vis3=1"}, {"-data-weights", "vis2=0"},
		{"-use", "vis3"}, {"-iter", "-1"}, {"-starts", "-1"}, {"-workers", "-1"},
		{"-wave", "2um:1um"}, {"-wave", "1furlong:"}, {"-mjd", "x:"}, {"-mjd", "5"},
		{"-from-model", "nosuch.toml"},
	} {
		fs := newFlagSet("image", "", "", io.Discard)
		var old imageFlags
		old.register(fs)
		old.registerFromModel(fs)
		if err := parseFlags(fs, args, io.Discard); err != nil {
			t.Fatal(err)
		}
		_, oselErr := old.sel.selection()
		oerr := oselErr
		if oerr == nil {
			_, _, oerr = old.problem(d)
		}
		fs2 := newFlagSet("image", "", "", io.Discard)
		fl := runspec.RegisterFlags(fs2, runspec.All)
		if err := parseFlags(fs2, args, io.Discard); err != nil {
			t.Fatal(err)
		}
		spec, nerr := fl.Spec()
		if nerr == nil {
			_, _, nerr = spec.Problem(d)
		}
		if oerr == nil || nerr == nil || oerr.Error() != nerr.Error() {
			t.Errorf("%v:\n  old %v\n  new %v", args, oerr, nerr)
		}
	}
}
