//go:build purego || !amd64

package nufft

// hasAsm reports whether the gridding loops have an assembly form on
// this build; see asm_amd64.go.
const hasAsm = false

// useAsm, useAVX and usePairs are never set without assembly.
var useAsm, useAVX, usePairs = false, false, false

// No width has an assembly form.
const minAsm, maxAsm = 1, 0

func (p *plan) interpAsm(lo, hi int) bool { return false }

func (p *plan) hasSpreadAsm() bool { return false }

func (p *plan) spreadAsm(band []complex128, ylo, lo, hi int) {}

func (p *plan) spreadGathers() bool { return false }

func radix4Fast(dst, src []complex128, st *fftStage, s int, inverse bool) bool { return false }

func radix4HalfFast(dst, src []complex128, stride int, st *fftStage, s int, inverse bool) bool {
	return false
}

// conjRev sets dst[j] = conj(src[len(src)−1−j]); the lengths must match.
func conjRev(dst, src []complex128) {
	if len(dst) != len(src) {
		panic("nufft: conjRev length mismatch")
	}
	conjRevGo(dst, src)
}

// addConjRev adds conj(src[len(src)−1−j]) to dst[j]; the lengths must
// match.
func addConjRev(dst, src []complex128) {
	if len(dst) != len(src) {
		panic("nufft: addConjRev length mismatch")
	}
	addConjRevGo(dst, src)
}

func radix2Fast(dst, src []complex128, s int) bool { return false }
