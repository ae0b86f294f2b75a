//go:build purego || !amd64

package recon

// hasDivideAVX reports whether divide has an assembly form: never in this build.
const hasDivideAVX = false

// divideAVX is not in this build and never called.
func divideAVX(dst, src []float64, d float64) { panic("recon: no assembly in this build") }
