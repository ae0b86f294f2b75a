//go:build !purego

package recon

// divideAVX sets dst[i] = src[i]/d for the first len(src) &^ 3 elements (divide_amd64.s);
// len(dst) >= len(src).
//
//go:noescape
func divideAVX(dst, src []float64, d float64)

// hasDivideAVX reports whether divide has its assembly form on this processor.
var hasDivideAVX = cpuHasAVX()
