//go:build purego || !amd64

package recon

// hasPixelAVX reports whether the pixel loops have an assembly form: never in this build.
const hasPixelAVX = false

// divideAVX is not in this build and never called.
func divideAVX(dst, src []float64, d float64) { panic("recon: no assembly in this build") }

// gradRegAVX is not in this build and never called.
func gradRegAVX(out, adj, r []float64, s0, cm, inv, sc, c, add float64) {
	panic("recon: no assembly in this build")
}
