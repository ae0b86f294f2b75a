//go:build !purego

package recon

// cpuHasAVX reports whether the processor and the operating system support AVX
// (phase_block_amd64.s).
func cpuHasAVX() bool

// smoothPhaseAVX is smoothPhaseBlockGo four triangles at a time, n a multiple of 4 (the caller
// rounds up).
//
//go:noescape
func smoothPhaseAVX(b *phaseBlock, n int, eta2 float64)

// exactPhaseAVX is exactPhaseBlockGo four triangles at a time, n a multiple of 4 (the caller
// rounds up).
//
//go:noescape
func exactPhaseAVX(b *phaseBlock, n int, tw float64)

// hasPhaseAVX reports whether smoothPhaseBlock has its assembly form on this processor.
var hasPhaseAVX = cpuHasAVX()
