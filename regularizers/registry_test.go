package regularizers

import (
	"math"
	"reflect"
	"strings"
	"testing"
)

// TestRegistryKinds checks every row of the registry: a unique lower-case name, a help
// line, and a constructor whose regularizer has a gradient that matches finite differences
// on a non-square grid (the check of TestGradients, applied to what users get by name).
func TestRegistryKinds(t *testing.T) {
	const nx, ny = 9, 6
	prior := randomImage(nx, ny, 0.3, 1.5, 3)
	x := randomImage(nx, ny, 0.2, 1, 4)
	seen := map[string]bool{}
	for _, k := range Kinds() {
		if k.Name == "" || k.Name != strings.ToLower(k.Name) || strings.ContainsAny(k.Name, ",: ") || seen[k.Name] {
			t.Errorf("name %q: empty, not lower case, with list punctuation, or used twice", k.Name)
		}
		seen[k.Name] = true
		if k.About == "" || strings.Contains(k.About, "\n") {
			t.Errorf("%s: help line %q", k.Name, k.About)
		}
		r, err := k.New(nx, ny, Options{Prior: prior, TVEps: 0.05})
		if err != nil {
			t.Fatalf("%s: %v", k.Name, err)
		}
		t.Run(k.Name, func(t *testing.T) { checkGradient(t, r, x, 1e-6) })
		if got, ok := Lookup(k.Name); !ok || got.Name != k.Name {
			t.Errorf("Lookup(%q) = %v, %v", k.Name, got.Name, ok)
		}
	}
	if _, ok := Lookup("MEM"); ok {
		t.Error("Lookup is case-sensitive: names are lower case")
	}
	if got, want := NameList(), "mem, tv, smooth, compact, priordist"; got != want {
		t.Errorf("NameList() = %q, want %q", got, want)
	}
}

// A prior-using regularizer without a prior gets the flat prior of total flux 1, so that
// maximum entropy of a flat image of flux 1 is at its maximum, zero (-S = Σ x ln(x/m) − x + m,
// Skilling & Bryan 1984), and the distance to the prior is zero.
func TestRegistryFlatPrior(t *testing.T) {
	const n = 6
	x := make([]float64, n*n)
	for i := range x {
		x[i] = 1.0 / (n * n)
	}
	for _, name := range []string{"mem", "priordist"} {
		k, _ := Lookup(name)
		if !k.UsesPrior {
			t.Errorf("%s does not say it uses the prior", name)
		}
		r, err := k.New(n, n, Options{})
		if err != nil {
			t.Fatal(err)
		}
		if v := r.Eval(nil, x); math.Abs(v) > 1e-15 {
			t.Errorf("%s of the flat image = %g, want 0", name, v)
		}
	}
}

// TestParseList checks the list syntax, its errors and the round trip through FormatList.
func TestParseList(t *testing.T) {
	for _, c := range []struct {
		in    string
		want  []NamedTerm
		text  string // FormatList of want
		label string
	}{
		{"tv", []NamedTerm{{"tv", 1}}, "tv", "tv"},
		{" MEM , compact:0.1", []NamedTerm{{"mem", 1}, {"compact", 0.1}}, "mem,compact:0.1", "mem + 0.1·compact"},
		{"mem:1,tv:2,smooth:1,", []NamedTerm{{"mem", 1}, {"tv", 2}, {"smooth", 1}}, "mem,tv:2,smooth", "mem + 2·tv + smooth"},
		{"priordist,compact:3e-7", []NamedTerm{{"priordist", 1}, {"compact", 3e-7}}, "priordist,compact:3e-07", "priordist + 3e-07·compact"},
	} {
		got, err := ParseList(c.in)
		if err != nil || !reflect.DeepEqual(got, c.want) {
			t.Errorf("ParseList(%q) = %v, %v; want %v", c.in, got, err, c.want)
			continue
		}
		if s := FormatList(got); s != c.text {
			t.Errorf("FormatList(%v) = %q, want %q", got, s, c.text)
		}
		if back, err := ParseList(FormatList(got)); err != nil || !reflect.DeepEqual(back, got) {
			t.Errorf("round trip of %v: %v, %v", got, back, err)
		}
		if l := Label(got); l != c.label {
			t.Errorf("Label(%v) = %q, want %q", got, l, c.label)
		}
	}
	for in, want := range map[string]string{
		"":             "no regularizer named",
		" , ":          "no regularizer named",
		"bogus":        `unknown regularizer "bogus" (use ` + NameList() + ")",
		"mem:2":        "regularizer mem: the first term's weight is 1 by definition; set the overall weight with -weight",
		"mem,tv:0":     `regularizer tv: relative weight "0" must be a positive number`,
		"mem,tv:x":     `regularizer tv: relative weight "x" must be a positive number`,
		"mem,tv:-1":    `regularizer tv: relative weight "-1" must be a positive number`,
		"mem,tv:NaN":   `regularizer tv: relative weight "NaN" must be a positive number`,
		"tv,mem,other": `unknown regularizer "other" (use ` + NameList() + ")",
	} {
		if _, err := ParseList(in); err == nil || err.Error() != want {
			t.Errorf("ParseList(%q): error %v, want %q", in, err, want)
		}
	}
}

// TestBuild checks that a list of one term is that regularizer and a longer list the Sum of
// its terms with the relative weights, value and gradient (Sum's definition).
func TestBuild(t *testing.T) {
	const nx, ny = 8, 7
	x := randomImage(nx, ny, 0.1, 1, 6)
	one, err := Build([]NamedTerm{{"tv", 1}}, nx, ny, Options{TVEps: 0.02})
	if err != nil {
		t.Fatal(err)
	}
	if tv, ok := one.(*TV); !ok || tv.Eps != 0.02 || tv.NX != nx || tv.NY != ny {
		t.Fatalf("Build(tv) = %#v", one)
	}
	r, err := Build([]NamedTerm{{"smooth", 1}, {"compact", 0.25}}, nx, ny, Options{})
	if err != nil {
		t.Fatal(err)
	}
	g, g1, g2 := make([]float64, nx*ny), make([]float64, nx*ny), make([]float64, nx*ny)
	v := r.Eval(g, x)
	want := (&Smooth{NX: nx, NY: ny}).Eval(g1, x) + 0.25*(&Compact{NX: nx, NY: ny}).Eval(g2, x)
	if math.Abs(v-want) > 1e-13*want {
		t.Errorf("value %g, want %g", v, want)
	}
	for i := range g {
		if w := g1[i] + 0.25*g2[i]; math.Abs(g[i]-w) > 1e-13*max(1, math.Abs(w)) {
			t.Fatalf("gradient[%d] = %g, want %g", i, g[i], w)
		}
	}
	if !UsesPrior([]NamedTerm{{"tv", 1}, {"mem", 2}}) || UsesPrior([]NamedTerm{{"tv", 1}, {"compact", 2}}) {
		t.Error("UsesPrior does not follow the registry")
	}
	for _, bad := range [][]NamedTerm{nil, {{"tv", 1}, {"nosuch", 1}}} {
		if _, err := Build(bad, nx, ny, Options{}); err == nil || !strings.HasPrefix(err.Error(), "regularizers: ") {
			t.Errorf("Build(%v): error %v", bad, err)
		}
	}
}
