//go:build purego || !amd64

package nufft

// hasAsm reports whether the gridding loops have an assembly form on
// this build; see asm_amd64.go.
const hasAsm = false

// useAVX is never set without assembly.
var useAVX = false

// No width has an assembly form.
const minAsm, maxAsm = 1, 0

func (p *plan) interpAsm(lo, hi int) bool { return false }

func (p *plan) spreadAsm(band []complex128, ylo, lo, hi int) bool { return false }

func radix4Fast(dst, src []complex128, st *fftStage, s int, inverse bool) bool { return false }

// conjRev sets dst[j] = conj(src[len(src)−1−j]); the lengths must match.
func conjRev(dst, src []complex128) {
	if len(dst) != len(src) {
		panic("nufft: conjRev length mismatch")
	}
	n := len(src) - 1
	for j := range dst {
		v := src[n-j]
		dst[j] = complex(real(v), -imag(v))
	}
}

// addConjRev adds conj(src[len(src)−1−j]) to dst[j]; the lengths must
// match.
func addConjRev(dst, src []complex128) {
	if len(dst) != len(src) {
		panic("nufft: addConjRev length mismatch")
	}
	n := len(src) - 1
	for j := range dst {
		v := src[n-j]
		dst[j] += complex(real(v), -imag(v))
	}
}

func radix2Fast(dst, src []complex128, s int) bool { return false }

func (p *plan) interpEdge(scr []complex128, i int) { p.interpWrap(i) }

func (p *plan) spreadEdge(scr, band []complex128, ylo, k int) { p.spreadWrap(band, ylo, k) }
