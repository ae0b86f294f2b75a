package batch

import (
	"errors"
	"fmt"

	"vcz/dataset"
	"vcz/recon"
)

// JointSteps is the number of temporal weights the automatic choice of a joint
// reconstruction tries (recon.CubeProblem.SpectralSteps).
const JointSteps = 6

// TemporalSetting is the option that sets the temporal weight, named by the warnings of a
// joint reconstruction (recon.CubeProblem.SpectralSetting, JointWarnings).
const TemporalSetting = "-temporal-weight"

// JointTolerance is the rise of an epoch's χ²ᵣ over that of its own image that the
// automatic temporal weight allows, as a fraction (recon.CubeProblem.SpectralTolerance).
const JointTolerance = 0.05

// JointEpoch is one epoch of a joint reconstruction.
type JointEpoch struct {
	Data *dataset.Data
	// Start is the epoch's own image on the common grid, the start of the joint run.
	Start []float64
	// Weight is the epoch's spatial weight μ_t (its own run's).
	Weight float64
	// Label names the epoch; MJDMin and MJDMax bound its observations.
	Label          string
	MJDMin, MJDMax float64
}

// JointProblem returns the joint reconstruction of the epochs as an image cube along time
// (package doc): the planes are the epochs in the order given, each at the middle of its
// observations, started from its own image with its own spatial weight, and the regularizer
// across planes is the quadratic smoothness, here along time. p gives the common grid
// (p.Grid), the data terms, the spatial regularizer and the support; p.Data is not used.
// A positive lambda is the temporal weight; 0 chooses it by the discrepancy path of
// recon.SolveCube over JointSteps weights.
func JointProblem(p recon.Problem, epochs []JointEpoch, lambda float64) (recon.CubeProblem, error) {
	if len(epochs) < 2 {
		return recon.CubeProblem{}, errors.New("joint imaging needs at least two epochs")
	}
	if p.Grid.N <= 0 {
		return recon.CubeProblem{}, errors.New("joint imaging needs the common grid")
	}
	cp := recon.CubeProblem{Problem: p, Spectral: recon.SpectralSmooth, SpectralWeight: lambda, SpectralSetting: TemporalSetting}
	cp.Data, cp.Weight = nil, 0
	if lambda <= 0 {
		cp.SpectralWeight, cp.SpectralSteps, cp.SpectralTolerance = 0, JointSteps, JointTolerance
	}
	for t, e := range epochs {
		if len(e.Start) != p.Grid.N*p.Grid.N {
			return recon.CubeProblem{}, fmt.Errorf("epoch %s: start image of %d pixels, the grid has %d", e.Label, len(e.Start), p.Grid.N*p.Grid.N)
		}
		label := e.Label
		if label == "" {
			label = fmt.Sprintf("epoch %d", t+1)
		}
		cp.Planes = append(cp.Planes, recon.CubePlane{Data: e.Data, Coord: (e.MJDMin + e.MJDMax) / 2, Lo: e.MJDMin, Hi: e.MJDMax, Label: label})
		cp.Starts = append(cp.Starts, e.Start)
		cp.PlaneWeights = append(cp.PlaneWeights, e.Weight)
	}
	return cp, nil
}

// JointWarnings returns the quality verdict of a joint reconstruction r (JointProblem,
// recon.SolveCube): the cube's warnings (r.Warnings), then, when the temporal weight was
// chosen automatically and ended at an edge of its searched range (r.SpectralEdge), a
// warning that says so, as the verdict of a single image does for its spatial weight. At
// the upper edge every weight tried kept each epoch's χ²ᵣ within JointTolerance of its own
// image's, so the rule's weight lies above the range; at the lower edge even the smallest
// weight raised an epoch's χ²ᵣ by more, so no weight of the range met the rule.
func JointWarnings(r *recon.CubeResult) []string {
	w := append([]string(nil), r.Warnings...)
	if len(r.Path) == 0 {
		return w
	}
	first := r.Path[0].Weight
	pct := 100 * JointTolerance
	switch r.SpectralEdge {
	case "upper":
		w = append(w, fmt.Sprintf("the automatic temporal weight %.3g is at the upper edge of the searched range (%d weights from %.3g, a factor 10 apart): every one kept each epoch's χ²ᵣ within %g %% of its own image's, so the rule's weight lies above it; set %s by hand and compare", r.SpectralWeight, len(r.Path), first, pct, TemporalSetting))
	case "lower":
		w = append(w, fmt.Sprintf("the automatic temporal weight %.3g is at the lower edge of the searched range: already this smallest weight raised an epoch's χ²ᵣ by more than %g %% over its own image's, so no weight of the range met the rule; set %s by hand and compare", r.SpectralWeight, pct, TemporalSetting))
	}
	return w
}
