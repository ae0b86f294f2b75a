package recon

import (
	"vcz/dataset"
	"vcz/recon/optim"
)

// unstickPlane gives a plane's exact run r of a cube sweep (SolveCube) a second chance when it
// ended with a line search that found no step, even after the restart without curvature
// memory of engine.run (optim's LineSearchFailure). A run that ends at the relative-change
// test in a later sweep, its plane already fitted, is left alone. Near a model null the exact phase
// terms have gradients of order 1/|z| (term_phase.go), so an image in which one bispectrum or
// visibility of the data sits at a null of the model has a gradient dominated by that datum,
// along which no step of representable size lowers the objective: the plane stays frozen in
// every later sweep and at every weight. (Measured on a star and an environment of opposite
// spectral indices, 8 channels, tv: one plane froze after 35 iterations of its first sweep,
// its gradient ±2.5·10⁸ at the largest pixels, as from a single datum, against at most 100
// from the regularizers, and kept a speckled image whose χ²ᵣ was the lowest of the cube, 0.59
// against an aim of 0.71, through the factor search's weights up to 10⁴ times the first.)
// The phase terms smoothed at DefaultPhaseSmoothing have gradients bounded near nulls; a run
// of them for up to pathIter iterations moves the image off the null, and an exact run of up
// to maxIter iterations follows. The result is kept when its exact objective is lower than
// r's, and r is returned otherwise; it reports whether it changed r. Only planes with phase
// data are retried (without them the terms are smooth).
func unstickPlane(e *engine, r runOut, use dataset.DataType, pathIter, maxIter int, stage string) (runOut, bool, error) {
	if use&(dataset.T3Phi|dataset.VisPhi) == 0 || r.Status != optim.LineSearchFailure {
		return r, false, nil
	}
	reset := func() {
		if e.curv != nil {
			e.curv.Reset()
		}
	}
	reset()
	e.obj.SetPhaseSmoothing(DefaultPhaseSmoothing)
	sm, err := e.run(r.X, 1, use, pathIter, stage+" unstick, smoothed phases")
	e.obj.SetPhaseSmoothing(0)
	if err != nil {
		return r, false, err
	}
	reset()
	ex, err := e.run(sm.X, 1, use, maxIter, stage+" unstick")
	if err != nil {
		return r, false, err
	}
	if !(ex.F < r.F) {
		return r, false, nil
	}
	return ex, true, nil
}
