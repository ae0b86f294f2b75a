//go:build purego || !amd64

package nufft

// hasAsm reports whether the gridding loops have an assembly form on
// this build; see asm_amd64.go.
const hasAsm = false

func (p *plan) interpAsm(lo, hi int) bool { return false }

func (p *plan) spreadAsm(band []complex128, ylo, lo, hi int) bool { return false }

func radix4Fast(dst, src []complex128, st *fftStage, s int, inverse bool) bool { return false }
