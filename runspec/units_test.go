package runspec

import (
	"math"
	"testing"
	"vcz/dataset"

	"vcz/recon"
)

// masRad is one milliarcsecond in radians, π/(180·3600·1000) by definition.
const masRad = 3.141592653589793 / (180 * 3600 * 1000)

func TestParseAngle(t *testing.T) {
	for _, c := range []struct {
		in   string
		want float64 // mas
	}{{"0.25mas", 0.25}, {"250uas", 0.25}, {"250\u00b5as", 0.25}, {"250\u03bcas", 0.25}, {"0.25MAS", 0.25}, {"0.001ArcSec", 1},
		{"1.5 mas", 1.5}, {"1e-3as", 1}, {"-2mas", -2}} {
		got, err := ParseAngle(c.in)
		if err != nil {
			t.Errorf("%q: %v", c.in, err)
			continue
		}
		if d := got/masRad - c.want; math.Abs(d) > 1e-12*math.Abs(c.want) {
			t.Errorf("%q = %g mas, want %g", c.in, got/masRad, c.want)
		}
	}
	for _, bad := range []string{"", "mas", "1.2furlong", "x1mas", "NaNmas", "Inf", "2"} {
		if _, err := ParseAngle(bad); err == nil {
			t.Errorf("%q: no error", bad)
		}
	}
	// A bare number is refused with the list of units: "3" might mean mas or arcsec.
	if _, err := ParseAngle("3"); err == nil || err.Error() != `"3" has no unit (use arcsec, as, deg, mas, rad, uas, µas)` {
		t.Errorf("bare number: %v", err)
	}
}

// 1 µm is 1e-6 m by definition of the SI prefix (BIPM 2019, table 7); a bare number is
// refused.
func TestParseWavelength(t *testing.T) {
	if _, err := ParseWavelength("1.5"); err == nil {
		t.Error("a bare number was accepted")
	}
	for in, want := range map[string]float64{"1.5um": 1.5e-6, "1500nm": 1.5e-6, "1.5UM": 1.5e-6, "1.5\u00b5m": 1.5e-6, "1.5\u03bcm": 1.5e-6, "1.5e-6m": 1.5e-6, "2 micron": 2e-6} {
		if got, err := ParseWavelength(in); err != nil || math.Abs(got-want) > 1e-15*want {
			t.Errorf("%q = %g, %v; want %g", in, got, err, want)
		}
	}
}

// formatAngle and formatWavelength write the shortest decimal in mas or µm that reads back
// as exactly the same float64, and fall back to rad or m.
func TestFormatExact(t *testing.T) {
	mas := recon.Mas
	for x, want := range map[float64]string{0.25 * mas: "0.25mas", 12 * mas: "12mas", 1e-3 * mas: "0.001mas", 0: ""} {
		if got := formatAngle(x); got != want {
			t.Errorf("formatAngle(%g) = %q, want %q", x, got, want)
		}
	}
	um := 1e-6
	if got := formatWavelength(1.65 * um); got != "1.65um" {
		t.Errorf("formatWavelength = %q", got)
	}
	for _, x := range []float64{math.Nextafter(0.25*mas, 1), 1e-300, 7.123456789012345e-9, math.MaxFloat64 / 2} {
		s := formatAngle(x)
		if y, err := ParseAngle(s); err != nil || y != x {
			t.Errorf("formatAngle(%g) = %q reads back as %g, %v", x, s, y, err)
		}
	}
}

// The words of -use are the data types of recon in their order, with t3 and vis after
// their parts.
func TestTypeWords(t *testing.T) {
	_, err := ParseTypes("bogus")
	// The list of words is dataset's (its TestTypeTable); runspec passes its message on.
	if _, derr := dataset.ParseDataTypes("bogus"); err == nil || derr == nil || err.Error() != derr.Error() {
		t.Fatalf("error %v, want %v", err, derr)
	}
	var vis dataset.DataType // the types of the OI_VIS table, whose word is "vis"
	for _, d := range dataset.DataTypes() {
		if d.Info().Table == "OI_VIS" {
			vis |= d
		}
	}
	for _, c := range []struct {
		in   string
		want dataset.DataType
	}{{"vis2", dataset.Vis2}, {"T3, vis2", dataset.T3Amp | dataset.T3Phi | dataset.Vis2}, {"vis", vis}} {
		if got, err := ParseTypes(c.in); err != nil || got != c.want {
			t.Errorf("%q = %v, %v", c.in, got, err)
		}
		if back, _ := ParseTypes(formatTypes(c.want)); back != c.want {
			t.Errorf("%v: formatTypes %q reads back as %v", c.want, formatTypes(c.want), back)
		}
	}
}
