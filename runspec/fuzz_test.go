package runspec

import (
	"math"
	"testing"
)

// FuzzOption sets one option from arbitrary text: it never panics, and an accepted value
// survives the canonical text: Parse(String()) gives a Spec with the same text (the round
// trip the batch hash and the FITS provenance rely on).
func FuzzOption(f *testing.F) {
	for _, seed := range [][2]string{
		{"reg", "tv"}, {"reg", "mem:0.5,compact:2"}, {"start", "gauss:3mas"}, {"start", "ld:1.5mas:0.3"},
		{"prior", "disc:2mas"}, {"prior", "gauss"}, {"pixel", "0.25mas"}, {"fov", "12mas"},
		{"wave", "1.5um:2.4um"}, {"mjd", "60100:"}, {"data-weights", "vis2=2,t3phi=0.5"}, {"use", "vis2,t3"},
		{"n", "64"}, {"weight", "auto"}, {"support", "3mas"}, {"tv-eps", "1e-3"},
	} {
		f.Add(seed[0], seed[1])
	}
	f.Fuzz(func(t *testing.T, name, text string) {
		var s Spec
		if err := s.Set(name, text); err != nil {
			return
		}
		back, err := Parse(s.String())
		if err != nil {
			t.Fatalf("-%s %q: canonical text %q does not parse: %v", name, text, s.String(), err)
		}
		if back.String() != s.String() {
			t.Fatalf("-%s %q: text %q reads back as %q", name, text, s.String(), back.String())
		}
	})
}

// FuzzParseAngle reads arbitrary text as an angle: it never panics, and an accepted angle
// is finite, and its formatted form reads back as the same number.
func FuzzParseAngle(f *testing.F) {
	for _, s := range []string{"3mas", "250uas", "250µas", "0.1arcsec", "1e-3deg", "2rad", "12", " 3 mas ", "-1mas", "1e400mas"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		a, err := ParseAngle(s)
		if err != nil {
			return
		}
		if math.IsNaN(a) || math.IsInf(a, 0) {
			t.Fatalf("%q gives %v", s, a)
		}
		if a == 0 {
			return
		}
		b, err := ParseAngle(formatAngle(a))
		if err != nil || b != a {
			t.Fatalf("%q = %v rad formats as %q, read back as %v (%v)", s, a, formatAngle(a), b, err)
		}
	})
}
