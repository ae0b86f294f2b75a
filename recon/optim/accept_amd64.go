//go:build !purego

package optim

// cpuHasAVX reports whether the processor and the operating system support AVX
// (accept_amd64.s).
func cpuHasAVX() bool

// acceptLowerAVX is acceptLower's pass on the first len(x) &^ 3 variables, four at a time
// (accept_amd64.s).
//
//go:noescape
func acceptLowerAVX(s, y, x, xt, g, gt, lo []float64, masks []uint8, out *[9]float64)

// trialLowerAVX sets xt = max(x + alpha·d, lo) on the first len(x) &^ 3 variables and
// returns g.(xt − x) over them (accept_amd64.s).
//
//go:noescape
func trialLowerAVX(xt, x, d, g, lo []float64, alpha float64) float64

// hasAcceptAVX reports whether acceptLower and the trial pass have their assembly forms on this processor.
var hasAcceptAVX = cpuHasAVX()
