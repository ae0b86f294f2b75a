//go:build !purego

package regularizers

// cpuHasAVX reports whether the processor and the operating system support AVX (tv_amd64.s).
func cpuHasAVX() bool

// rowTermsAVX is rowTermsGo from pixel 0 to n, n a multiple of 4, four pixels at a time; it
// reads row[0:n+1] and below[0:n].
//
//go:noescape
func rowTermsAVX(tt *tvTerms, row, below *float64, n int, e2 float64)

// hasTVAVX reports whether rowTerms has its assembly form on this processor.
var hasTVAVX = cpuHasAVX()
