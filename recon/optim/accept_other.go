//go:build purego || !amd64

package optim

// hasAcceptAVX reports whether acceptLower and the trial pass have assembly forms: never in this build.
const hasAcceptAVX = false

// acceptLowerAVX is not in this build and never called.
func acceptLowerAVX(s, y, x, xt, g, gt, lo []float64, masks []uint8, out *[9]float64) {
	panic("optim: no assembly in this build")
}

// trialLowerAVX is not in this build and never called.
func trialLowerAVX(xt, x, d, g, lo []float64, alpha float64) float64 {
	panic("optim: no assembly in this build")
}
