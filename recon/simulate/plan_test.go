package simulate

import (
	"errors"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"vcz/recon/model"
)

// TestExamples: the example files parse, the demo files equal the
// constants Demo uses, the arrays have the advertised sizes and
// baselines, and each plan simulates.
func TestExamples(t *testing.T) {
	dir := filepath.Join("..", "..", "examples")
	for _, c := range []struct{ file, want string }{
		{"plan-six-demo.toml", DemoPlanTOML},
		{"vaeloris.toml", DemoModelTOML},
	} {
		b, err := os.ReadFile(filepath.Join(dir, c.file))
		if err != nil {
			t.Fatal(err)
		}
		if string(b) != c.want {
			t.Errorf("examples/%s differs from the constant in demo.go", c.file)
		}
	}
	m, err := model.Load(filepath.Join(dir, "vaeloris.toml"))
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		file             string
		stations         int
		minLong, maxLong float64 // longest baseline bounds (m)
		skipped          int
	}{
		{"plan-six-demo.toml", 6, 300, 340, 0},
		{"plan-four-compact.toml", 4, 40, 60, 0},
		{"plan-six-snapshot.toml", 6, 300, 340, 1},
	} {
		p, err := LoadPlan(filepath.Join(dir, c.file))
		if err != nil {
			t.Errorf("%s: %v", c.file, err)
			continue
		}
		var longest float64
		for i, a := range p.Stations {
			for _, b := range p.Stations[i+1:] {
				longest = max(longest, dot3([3]float64{b.East - a.East, b.North - a.North, b.Up - a.Up}))
			}
		}
		if len(p.Stations) != c.stations || longest < c.minLong || longest > c.maxLong {
			t.Errorf("%s: %d stations, longest baseline %.1f m", c.file, len(p.Stations), longest)
		}
		if _, rep, err := Run(p, ModelSky{m}); err != nil || rep.Skipped != c.skipped {
			t.Errorf("%s: %v, report %+v", c.file, err, rep)
		}
	}
}

func dot3(d [3]float64) float64 {
	return math.Sqrt(dot(d, d))
}

// TestPlanErrors: broken plans give errors naming the key and its line.
func TestPlanErrors(t *testing.T) {
	base, err := os.ReadFile(filepath.Join("..", "..", "examples", "plan-four-compact.toml"))
	if err != nil {
		t.Fatal(err)
	}
	src := string(base)
	for _, tc := range []struct {
		name, old, new, want string
	}{
		{"unknown key", "elevation_limit = 25", "elevation_limt = 25", `:15: site.elevation_limt: unknown key`},
		{"unknown station key", "name = \"K3\"", "name = \"K3\"\nheight = 3", `:31: station.height: unknown key`},
		{"unknown table", "[target]", "[targets]", `:43: targets: unknown key`},
		{"combine", "mjd = 61204", "mjd = 61204\ncombine = [\"K1\", \"K9\"]", `observation.combine: no station named "K9"`},
		{"write", `write = ["vis2", "t3", "vis"]`, `write = ["vis2", "cp"]`, `:8: write: unknown data type "cp"`},
		{"latitude", "latitude = -19.6", "", `site: missing latitude`},
		{"floor", "vis2_floor = 0.002", "vis2_floor = 0", `noise.vis2_floor: 0: must be positive`},
		{"widths", "width = [0.04]", "width = [0.04, 0.05]", `wavelengths.width: needs one value or one per centre`},
		{"hour angles", "hour_angles = [-2.5, -1.0, 0.0, 1.2, 2.6]", "hour_angle_start = 1\nhour_angles = [0]", `give either hour_angles or hour_angle_start`},
		{"duplicate station", "name = \"K4\"", "name = \"K1\"", `station name "K1" used twice`},
		{"syntax", "seed = 7", "seed = = 7", `plan.toml:7:`},
		{"type", "seed = 7", "seed = \"seven\"", `plan.toml`},
	} {
		t.Run(tc.name, func(t *testing.T) {
			s := strings.Replace(src, tc.old, tc.new, 1)
			if s == src {
				t.Fatalf("replacement %q not applied", tc.old)
			}
			_, err := ParsePlan([]byte(s), "plan.toml")
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Fatalf("error %v, want it to contain %q", err, tc.want)
			}
			var pe *PlanError
			if !errors.As(err, &pe) {
				t.Errorf("error is %T, not *PlanError", err)
			}
		})
	}
}

// TestHourAngleRange: start/end/step expands inclusively.
func TestHourAngleRange(t *testing.T) {
	p, _ := Demo()
	want := []float64{-3.5, -2.5, -1.5, -0.5, 0.5, 1.5, 2.5, 3.5}
	if len(p.HourAngles) != len(want) {
		t.Fatalf("hour angles %v", p.HourAngles)
	}
	for i := range want {
		if p.HourAngles[i] != want[i] {
			t.Errorf("hour angles %v, want %v", p.HourAngles, want)
		}
	}
}

// TestRenamedNoiseKeys checks that a plan with a noise key of earlier versions is refused
// with the key's line and its name now.
func TestRenamedNoiseKeys(t *testing.T) {
	src := strings.Replace(DemoPlanTOML, "vis2_relative", "v2_relative", 1)
	_, err := ParsePlan([]byte(src), "old.toml")
	if err == nil || !strings.Contains(err.Error(), "noise.vis2_relative") || !strings.Contains(err.Error(), "old.toml:") {
		t.Errorf("error %v", err)
	}
}

// A missing plan file is named as the user gave it, without the system call's word, like
// the data files' errors, and the cause stays visible to errors.Is.
func TestLoadPlanMissing(t *testing.T) {
	path := filepath.Join(t.TempDir(), "nope.toml")
	_, err := LoadPlan(path)
	if err == nil || !errors.Is(err, fs.ErrNotExist) {
		t.Fatalf("LoadPlan of a missing file: %v", err)
	}
	if want := path + ": "; !strings.HasPrefix(err.Error(), want) {
		t.Errorf("error %q does not begin with %q", err, want)
	}
}
