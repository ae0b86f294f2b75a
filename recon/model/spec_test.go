package model

import (
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

const goodTOML = `# a star with a companion
[[component]]
kind = "ld"
diameter = {value = 3.2, min = 1, max = 6}
u_ld = 0.3

[[component]]
kind = "point"
x = 5
y = -2.5
flux = {value = 0.1, free = true}
`

func TestParseTOML(t *testing.T) {
	m, err := ParseTOML([]byte(goodTOML), "star.toml")
	if err != nil {
		t.Fatal(err)
	}
	if len(m.Components) != 2 || m.Components[0].Kind() != LinearLD || m.Components[1].Kind() != Point {
		t.Fatalf("components %v", m)
	}
	d, _ := m.Param(Ref{0, "diameter"})
	if d.Value != 3.2 || !d.Free || d.Min != 1 || d.Max != 6 {
		t.Errorf("diameter %+v", d)
	}
	f, _ := m.Param(Ref{1, "flux"})
	if f.Value != 0.1 || !f.Free || !math.IsInf(f.Min, -1) {
		t.Errorf("flux %+v", f)
	}
	if x, _ := m.Param(Ref{1, "x"}); x.Value != 5 || x.Free {
		t.Errorf("x %+v", x)
	}
	free := m.Refs(true)
	if len(free) != 2 || free[0].String() != "c1.diameter" || free[1].String() != "c2.flux" {
		t.Errorf("free refs %v", free)
	}
}

// TestSpecErrors: each broken model gets an error naming the offending
// item and, in files, its line.
func TestSpecErrors(t *testing.T) {
	for _, tc := range []struct {
		name, src, want string
	}{
		{"unknown kind", "[[component]]\nkind = \"disk\"\ndiameter = 2\n", "m.toml:2: component 1: unknown component kind \"disk\""},
		{"unknown param", "[[component]]\nkind = \"ud\"\ndiameter = 2\n\n[[component]]\nkind = \"point\"\nflux = 0.1\nsize = 3\n", "m.toml:8: component 2: point: unknown parameter \"size\""},
		{"missing param", "[[component]]\nkind = \"ud\"\nx = 1\n", "m.toml:1: component 1: ud: missing parameter \"diameter\""},
		{"bad domain", "[[component]]\nkind = \"ld\"\ndiameter = 2\nu_ld = 1.5\n", "m.toml:4: component 1: ld: parameter u_ld = 1.5 outside its domain"},
		{"bad table field", "[[component]]\nkind = \"ud\"\ndiameter = {value = 2, fre = true}\n", "m.toml:3: component 1: ud: diameter: unknown field \"fre\""},
		{"unknown top key", "scale = 2\n[[component]]\nkind = \"point\"\n", "m.toml:1: unknown key \"scale\""},
		{"first bad key in file order", "[[component]]\nkind = \"ud\"\nzeta = 1\nalpha = 2\ndiameter = 1\n", "m.toml:3: component 1: ud: unknown parameter \"zeta\""},
		{"syntax", "[[component]]\nkind = \"point\"\nflux = = 1\n", "m.toml:3:"},
		{"no flux", "[[component]]\nkind = \"point\"\nflux = 0\n", "total flux is 0"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := ParseTOML([]byte(tc.src), "m.toml")
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Fatalf("error %v, want it to contain %q", err, tc.want)
			}
			var se *SpecError
			if !errors.As(err, &se) {
				t.Errorf("error is %T, not *SpecError", err)
			}
		})
	}
}

func TestParseCompact(t *testing.T) {
	m, err := ParseCompact("ld:diameter~3.2(1..6),u_ld=0.3; point:x=5,y=-2,flux~0.1(0..)")
	if err != nil {
		t.Fatal(err)
	}
	d, _ := m.Param(Ref{0, "diameter"})
	f, _ := m.Param(Ref{1, "flux"})
	if d.Value != 3.2 || !d.Free || d.Min != 1 || d.Max != 6 || f.Min != 0 || !math.IsInf(f.Max, 1) || !f.Free {
		t.Errorf("diameter %+v flux %+v", d, f)
	}
	// String writes the same form back; parsing it again gives the same model.
	s := m.String()
	m2, err := ParseCompact(s)
	if err != nil {
		t.Fatalf("re-parsing %q: %v", s, err)
	}
	if m2.String() != s {
		t.Errorf("round trip %q -> %q", s, m2.String())
	}
	for _, uv := range [][2]float64{{1e7, 3e7}, {-5e7, 2e7}} {
		if m.Vis(uv[0], uv[1]) != m2.Vis(uv[0], uv[1]) {
			t.Errorf("round-tripped model differs at %v", uv)
		}
	}
	if p, err := ParseCompact("point"); err != nil || p.String() != "point" {
		t.Errorf("bare point: %v %v", p, err)
	}
	for _, tc := range []struct{ spec, want string }{
		{"ud:diameter=2;blob:x=1", "component 2: unknown component kind \"blob\""},
		{"egauss:fwhm=2,ratio=0.5", "component 1: component kind \"egauss\" is now gauss with ratio and pa"},
		{"ud:diameter=2,size=3", "component 1: ud: unknown parameter \"size\""},
		{"ud:diameter=two", "value \"two\" is not a number"},
		{"ud:diameter=2(1..", "lack a closing parenthesis"},
		{"ud:x=1", "missing parameter \"diameter\""},
		{"ud:diameter=1,diameter=2", "given twice"},
		{"", "empty model"},
	} {
		_, err := ParseCompact(tc.spec)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%q: error %v, want %q", tc.spec, err, tc.want)
		}
	}
}

func TestLoad(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "star.toml")
	if err := os.WriteFile(path, []byte(goodTOML), 0o644); err != nil {
		t.Fatal(err)
	}
	if m, err := Load(path); err != nil || len(m.Components) != 2 {
		t.Errorf("Load(file): %v %v", m, err)
	}
	if m, err := Load("gauss:fwhm=2"); err != nil || m.Components[0].Kind() != Gaussian {
		t.Errorf("Load(compact): %v %v", m, err)
	}
	if _, err := Load(filepath.Join(dir, "missing.toml")); err == nil {
		t.Error("missing file accepted")
	}
}

func TestKeyLine(t *testing.T) {
	src := []byte("seed = 3\n[site]\nlatitude = -20\n\n[[station]]\nname = \"A\"\n[[station]]\nname = \"B\"\nnmae = \"x\"\n[noise]\n\"vis2_floor\" = 1\n")
	for _, tc := range []struct {
		key   []string
		index int
		want  int
	}{
		{[]string{"seed"}, -1, 1},
		{[]string{"site"}, -1, 2},
		{[]string{"site", "latitude"}, -1, 3},
		{[]string{"station", "name"}, 1, 8},
		{[]string{"station", "nmae"}, -1, 9},
		{[]string{"station"}, 1, 7},
		{[]string{"noise", "vis2_floor"}, -1, 11},
		{[]string{"noise", "other"}, -1, 0},
	} {
		if got := KeyLine(src, tc.key, tc.index); got != tc.want {
			t.Errorf("KeyLine(%v, %d) = %d, want %d", tc.key, tc.index, got, tc.want)
		}
	}
}
