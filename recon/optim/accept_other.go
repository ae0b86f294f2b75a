//go:build purego || !amd64

package optim

// hasAcceptAVX reports whether acceptLower has an assembly form: never in this build.
const hasAcceptAVX = false

// acceptLowerAVX is not in this build and never called.
func acceptLowerAVX(s, y, x, xt, g, gt, lo []float64, masks []uint8, out *[9]float64) {
	panic("optim: no assembly in this build")
}
