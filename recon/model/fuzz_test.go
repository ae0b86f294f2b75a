package model

import "testing"

// FuzzParseCompact: any input either parses to a valid model whose String
// form parses back to the same string, or gives an error; never a panic.
func FuzzParseCompact(f *testing.F) {
	for _, s := range []string{"point", "ud:diameter=3", "ld:diameter~3.2(1..6),u_ld=0.3;point:x=5,y=-2,flux~0.1(0..)",
		"ring:diameter=2,inc=40,pa=-10", "gauss:fwhm=1,ratio=0.5(0..1)", "background:flux=0.1;ud:diameter=1", "ud:diameter=1e400", ";;", "ud:(..)"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		m, err := ParseCompact(s)
		if err != nil {
			return
		}
		if err := m.Validate(); err != nil {
			t.Fatalf("%q parsed to an invalid model: %v", s, err)
		}
		back := m.String()
		m2, err := ParseCompact(back)
		if err != nil {
			t.Fatalf("%q -> %q does not parse: %v", s, back, err)
		}
		if m2.String() != back {
			t.Fatalf("%q -> %q -> %q", s, back, m2.String())
		}
		m.Vis(1e7, -3e7)
	})
}

// FuzzParseTOML: model files never make the parser panic.
func FuzzParseTOML(f *testing.F) {
	f.Add([]byte(goodTOML))
	f.Add([]byte("component = [{kind = \"ud\", diameter = 2}]\n"))
	f.Add([]byte("[component]\nkind = \"ud\"\n"))
	f.Add([]byte("[[component]]\nkind = 3\n"))
	f.Fuzz(func(t *testing.T, src []byte) {
		m, err := ParseTOML(src, "f.toml")
		if err == nil {
			if err := m.Validate(); err != nil {
				t.Fatalf("invalid model accepted: %v", err)
			}
		}
	})
}
