package validate

import (
	"fmt"
	"path/filepath"
)

// The example observing plans of the suite, relative to the module root.
const (
	SixPlan  = "examples/plan-six-demo.toml"     // six telescopes, 39–326 m, 8 channels, 8 exposures
	FourPlan = "examples/plan-four-compact.toml" // four telescopes, 24–52 m, 5 channels, 5 exposures
)

// Arrays loads the six- and four-telescope arrays ("six" and "four") from the example plans
// under root, the module's root folder.
func Arrays(root string) (six, four *Array, err error) {
	if six, err = LoadArray("six", filepath.Join(root, SixPlan)); err != nil {
		return nil, nil, err
	}
	if four, err = LoadArray("four", filepath.Join(root, FourPlan)); err != nil {
		return nil, nil, err
	}
	return six, four, nil
}

// CalibScenes are the scenes also run with the Calib error model in the full suite: the first
// of each family.
var CalibScenes = []string{"Tessaly", "Varn", "Heliandor", "Kestrin", "Brisca"}

// SuiteCases returns the cases of the full suite: for each array in turn, every scene with
// NullGrow and with Flat, and the CalibScenes with Calib.
func SuiteCases(arrays ...*Array) []Case {
	var cases []Case
	for _, a := range arrays {
		for _, s := range Scenes(a.Resolution) {
			cases = append(cases, Case{Scene: s, Array: a, Model: NullGrow}, Case{Scene: s, Array: a, Model: Flat})
		}
		for _, name := range CalibScenes {
			s, err := SceneByName(a.Resolution, name)
			if err != nil {
				panic(err) // CalibScenes names scenes of Scenes
			}
			cases = append(cases, Case{Scene: s, Array: a, Model: Calib})
		}
	}
	return cases
}

// Night case: the six-telescope array observing for NightExposures exposures in
// NightChannels channels, the spotted limb-darkened disc NightScene, Flat errors.
const (
	NightChannels  = 48
	NightExposures = 20
	NightScene     = "Quillon"
)

// NightCase returns the night case for the six-telescope array six: its plan observed with
// NightPlan(NightChannels, NightExposures), which gives 14 400 V² and 19 200 closure phases.
func NightCase(six *Array) (Case, error) {
	a, err := NewArray(six.Name+"-night", NightPlan(six.Plan, NightChannels, NightExposures))
	if err != nil {
		return Case{}, err
	}
	s, err := SceneByName(a.Resolution, NightScene)
	if err != nil {
		return Case{}, fmt.Errorf("validate: night: %w", err)
	}
	return Case{Scene: s, Array: a, Model: Flat}, nil
}
