//go:build purego || !amd64

package regularizers

// hasTVAVX reports whether rowTerms has an assembly form: never in this build.
const hasTVAVX = false

// rowTermsAVX is not in this build and never called.
func rowTermsAVX(tt *tvTerms, row, below *float64, n int, e2 float64) {
	panic("regularizers: no assembly in this build")
}
