package workflow

import (
	"time"

	"vcz/dataset"
	"vcz/io/oifits"
	"vcz/output"
	"vcz/recon"
	"vcz/runspec"
)

// Cube is a polychromatic reconstruction, `vcz image -channels`, ready to run: the data,
// the options, and the cube problem and settings they give.
type Cube struct {
	Files    []*oifits.File
	Data     *dataset.Data
	Spec     runspec.Spec
	Problem  recon.CubeProblem
	Settings recon.Settings
}

// NewCube checks that d can be reconstructed as spec says and splits its channels into
// the planes of spec.Channels. Its errors are *InputError.
func NewCube(files []*oifits.File, d *dataset.Data, spec runspec.Spec) (*Cube, error) {
	im, err := NewImage(files, d, spec)
	if err != nil {
		return nil, err
	}
	p, s := im.Problem, im.Settings
	if p.Unnormalized {
		return nil, inputErrorf("-channels: a cube of images of known flux is not supported")
	}
	planes, err := recon.SplitChannels(d, spec.Channels)
	if err != nil {
		return nil, inputErrorf("-channels %s: %v", spec.Channels, err)
	}
	if spec.Star != nil && len(planes) < 2 {
		return nil, inputErrorf("-star: the data have one channel group; the star's spectrum needs at least two")
	}
	cp := recon.CubeProblem{Problem: p, Planes: planes, Spectral: spec.Spectral, SpectralFactor: spec.SpectralFactor}
	return &Cube{Files: files, Data: d, Spec: spec, Problem: cp, Settings: s}, nil
}

// Run solves the cube and writes the files outs says to out (output.Outputs.WriteCube).
// progress, when non-nil, is called after every iteration. An error of the solver or of
// writing is not an *InputError.
func (c *Cube) Run(outs output.Outputs, out string, progress func(recon.Progress) bool) (output.CubeRun, output.CubePaths, error) {
	s := c.Settings
	s.Progress = interruptible(progress)
	t0 := time.Now()
	res, err := recon.SolveCube(c.Problem, s)
	if err == nil && Interrupted() {
		err = ErrInterrupted
	}
	if err != nil {
		return output.CubeRun{}, output.CubePaths{}, orInterrupted(err)
	}
	run := output.CubeRun{Files: c.Files, Data: c.Data, Spec: c.Spec, Result: res, Seconds: time.Since(t0).Seconds(), Date: time.Now()}
	paths, err := outs.WriteCube(out, run)
	return run, paths, err
}

// RunStarEnv fits the star of spec.Star with its power-law spectrum plus one image of its
// environment (recon.SolveStarEnv) to the planes and writes the environment image
// (output.Outputs.WriteStarEnv).
func (c *Cube) RunStarEnv(outs output.Outputs, out string, progress func(recon.Progress) bool) (output.StarEnvRun, output.Paths, error) {
	s := c.Settings
	s.Progress = progress
	t0 := time.Now()
	p := recon.StarEnvProblem{Problem: c.Problem.Problem, Planes: c.Problem.Planes, StarDiameter: c.Spec.Star.Diameter,
		StarIndex: c.Spec.StarIndexValue()}
	res, err := recon.SolveStarEnv(p, s)
	if err != nil {
		return output.StarEnvRun{}, output.Paths{}, err
	}
	run := output.StarEnvRun{Files: c.Files, Data: c.Data, Spec: c.Spec, Result: res, Seconds: time.Since(t0).Seconds(), Date: time.Now()}
	paths, err := outs.WriteStarEnv(out, run)
	return run, paths, err
}
