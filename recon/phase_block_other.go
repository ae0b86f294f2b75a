//go:build purego || !amd64

package recon

// hasPhaseAVX reports whether smoothPhaseBlock has an assembly form: never in this build.
const hasPhaseAVX = false

// smoothPhaseAVX is not in this build and never called.
func smoothPhaseAVX(b *phaseBlock, n int, eta2 float64) { panic("recon: no assembly in this build") }

// exactPhaseAVX is not in this build and never called.
func exactPhaseAVX(b *phaseBlock, n int, tw float64) { panic("recon: no assembly in this build") }
