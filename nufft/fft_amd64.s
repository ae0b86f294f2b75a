//go:build !purego

#include "textflag.h"

// func radix4SSE2(dst, src *complex128, tw *float64, mask *[2]uint64, m, s int)
//
// One Stockham radix-4 stage (see radix4 in fft.go) with one complex128
// per SSE2 register. tw holds for each p < m the twiddles w1, w2, w3 as
// (re, re, −im, im), so that x·w = x·(re, re) + swap(x)·(−im, im); mask
// flips the sign of one half of swap(b − d) to give ±i(b − d). The
// operations and their order are those of the Go loop, so the results
// are the same to the bit.
//
// Registers: SI src row p, DI dst row 4p, R8 src quarter (s·m·16 bytes),
// R9 dst stride (s·16 bytes), R10 twiddles, R11 p counter, CX q counter,
// AX q offset; X0…X5 twiddles, X6 mask, X7…X14 scratch.
TEXT ·radix4SSE2(SB), NOSPLIT, $0-48
	MOVQ dst+0(FP), DI
	MOVQ src+8(FP), SI
	MOVQ tw+16(FP), R10
	MOVQ mask+24(FP), AX
	MOVUPD (AX), X6
	MOVQ m+32(FP), R11
	MOVQ s+40(FP), R9
	SHLQ $4, R9
	MOVQ R9, R8
	IMULQ R11, R8
	TESTQ R11, R11
	JLE done
ploop:
	MOVUPD 0(R10), X0
	MOVUPD 16(R10), X1
	MOVUPD 32(R10), X2
	MOVUPD 48(R10), X3
	MOVUPD 64(R10), X4
	MOVUPD 80(R10), X5
	XORQ AX, AX
	MOVQ R9, CX
qloop:
	// a, b, c, d
	LEAQ (SI)(AX*1), DX
	MOVUPD (DX), X7
	ADDQ R8, DX
	MOVUPD (DX), X8
	ADDQ R8, DX
	MOVUPD (DX), X9
	ADDQ R8, DX
	MOVUPD (DX), X10
	// apc = a+c (X11), amc = a−c (X7), bpd = b+d (X12), bmd = b−d (X8)
	MOVAPD X7, X11
	ADDPD X9, X11
	SUBPD X9, X7
	MOVAPD X8, X12
	ADDPD X10, X12
	SUBPD X10, X8
	// jbmd = ±i·bmd
	SHUFPD $1, X8, X8
	XORPD X6, X8
	LEAQ (DI)(AX*1), DX
	// o0 = apc + bpd
	MOVAPD X11, X9
	ADDPD X12, X9
	MOVUPD X9, (DX)
	ADDQ R9, DX
	// o1 = w1·(amc − jbmd)
	MOVAPD X7, X10
	SUBPD X8, X10
	MOVAPD X10, X13
	SHUFPD $1, X13, X13
	MULPD X1, X13
	MULPD X0, X10
	ADDPD X13, X10
	MOVUPD X10, (DX)
	ADDQ R9, DX
	// o2 = w2·(apc − bpd)
	SUBPD X12, X11
	MOVAPD X11, X13
	SHUFPD $1, X13, X13
	MULPD X3, X13
	MULPD X2, X11
	ADDPD X13, X11
	MOVUPD X11, (DX)
	ADDQ R9, DX
	// o3 = w3·(amc + jbmd)
	ADDPD X8, X7
	MOVAPD X7, X13
	SHUFPD $1, X13, X13
	MULPD X5, X13
	MULPD X4, X7
	ADDPD X13, X7
	MOVUPD X7, (DX)
	ADDQ $16, AX
	CMPQ AX, CX
	JLT qloop
	// next p: src row +s, dst rows +4s, twiddles +96 bytes
	ADDQ R9, SI
	LEAQ (DI)(R9*4), DI
	ADDQ $96, R10
	DECQ R11
	JNZ ploop
done:
	RET

// func conjRevSSE2(dst, src *complex128, n int)
//
// dst[j] = conj(src[−j]) for j < n: src points at the last value of the
// reversed run. The sign flip is the negation of Go's conj.
TEXT ·conjRevSSE2(SB), NOSPLIT, $0-24
	MOVQ dst+0(FP), DI
	MOVQ src+8(FP), SI
	MOVQ n+16(FP), CX
	MOVUPD ·jMask+16(SB), X6
	TESTQ CX, CX
	JLE cdone
cloop:
	MOVUPD (SI), X0
	XORPD X6, X0
	MOVUPD X0, (DI)
	ADDQ $16, DI
	SUBQ $16, SI
	DECQ CX
	JNZ cloop
cdone:
	RET

// func addConjRevSSE2(dst, src *complex128, n int)
//
// dst[j] += conj(src[−j]) for j < n, as conjRevSSE2.
TEXT ·addConjRevSSE2(SB), NOSPLIT, $0-24
	MOVQ dst+0(FP), DI
	MOVQ src+8(FP), SI
	MOVQ n+16(FP), CX
	MOVUPD ·jMask+16(SB), X6
	TESTQ CX, CX
	JLE adone
aloop:
	MOVUPD (SI), X0
	XORPD X6, X0
	MOVUPD (DI), X1
	ADDPD X0, X1
	MOVUPD X1, (DI)
	ADDQ $16, DI
	SUBQ $16, SI
	DECQ CX
	JNZ aloop
adone:
	RET

// func cpuHasAVX() bool
//
// Reports whether the processor has AVX (CPUID.1:ECX bit 28) and the
// operating system saves the YMM registers (OSXSAVE, bit 27, and XCR0
// bits 1 and 2; Intel SDM vol. 1, sect. 14.3).
TEXT ·cpuHasAVX(SB), NOSPLIT, $0-1
	MOVL $1, AX
	XORL CX, CX
	CPUID
	ANDL $0x18000000, CX
	CMPL CX, $0x18000000
	JNE no
	XORL CX, CX
	XGETBV
	ANDL $6, AX
	CMPL AX, $6
	JNE no
	MOVB $1, ret+0(FP)
	RET
no:
	MOVB $0, ret+0(FP)
	RET

// func radix4AVX(dst, src *complex128, tw *float64, mask *[2]uint64, m, s int)
//
// radix4SSE2 on two values of q at once (s even), in 256-bit registers:
// the same operations on each complex, so the same bits.
TEXT ·radix4AVX(SB), NOSPLIT, $0-48
	MOVQ dst+0(FP), DI
	MOVQ src+8(FP), SI
	MOVQ tw+16(FP), R10
	MOVQ mask+24(FP), AX
	VBROADCASTF128 (AX), Y6
	MOVQ m+32(FP), R11
	MOVQ s+40(FP), R9
	SHLQ $4, R9
	MOVQ R9, R8
	IMULQ R11, R8
	TESTQ R11, R11
	JLE vdone
vploop:
	VBROADCASTF128 0(R10), Y0
	VBROADCASTF128 16(R10), Y1
	VBROADCASTF128 32(R10), Y2
	VBROADCASTF128 48(R10), Y3
	VBROADCASTF128 64(R10), Y4
	VBROADCASTF128 80(R10), Y5
	XORQ AX, AX
vqloop:
	LEAQ (SI)(AX*1), DX
	VMOVUPD (DX), Y7
	ADDQ R8, DX
	VMOVUPD (DX), Y8
	ADDQ R8, DX
	VMOVUPD (DX), Y9
	ADDQ R8, DX
	VMOVUPD (DX), Y10
	VADDPD Y9, Y7, Y11
	VSUBPD Y9, Y7, Y7
	VADDPD Y10, Y8, Y12
	VSUBPD Y10, Y8, Y8
	VPERMILPD $5, Y8, Y8
	VXORPD Y6, Y8, Y8
	LEAQ (DI)(AX*1), DX
	VADDPD Y12, Y11, Y9
	VMOVUPD Y9, (DX)
	ADDQ R9, DX
	VSUBPD Y8, Y7, Y10
	VPERMILPD $5, Y10, Y13
	VMULPD Y1, Y13, Y13
	VMULPD Y0, Y10, Y10
	VADDPD Y13, Y10, Y10
	VMOVUPD Y10, (DX)
	ADDQ R9, DX
	VSUBPD Y12, Y11, Y11
	VPERMILPD $5, Y11, Y13
	VMULPD Y3, Y13, Y13
	VMULPD Y2, Y11, Y11
	VADDPD Y13, Y11, Y11
	VMOVUPD Y11, (DX)
	ADDQ R9, DX
	VADDPD Y8, Y7, Y7
	VPERMILPD $5, Y7, Y13
	VMULPD Y5, Y13, Y13
	VMULPD Y4, Y7, Y7
	VADDPD Y13, Y7, Y7
	VMOVUPD Y7, (DX)
	ADDQ $32, AX
	CMPQ AX, R9
	JLT vqloop
	ADDQ R9, SI
	LEAQ (DI)(R9*4), DI
	ADDQ $96, R10
	DECQ R11
	JNZ vploop
vdone:
	VZEROUPPER
	RET

// func radix2SSE2(dst, src *complex128, s int)
//
// The last Stockham stage, sub-length 2: d0[q] = a0[q] + a1[q],
// d1[q] = a0[q] − a1[q] for q < s, as radix2 in fft.go.
TEXT ·radix2SSE2(SB), NOSPLIT, $0-24
	MOVQ dst+0(FP), DI
	MOVQ src+8(FP), SI
	MOVQ s+16(FP), CX
	MOVQ CX, R8
	SHLQ $4, R8
	TESTQ CX, CX
	JLE r2done
r2loop:
	MOVUPD (SI), X0
	MOVUPD (SI)(R8*1), X1
	MOVAPD X0, X2
	ADDPD X1, X0
	SUBPD X1, X2
	MOVUPD X0, (DI)
	MOVUPD X2, (DI)(R8*1)
	ADDQ $16, SI
	ADDQ $16, DI
	DECQ CX
	JNZ r2loop
r2done:
	RET

// func cpuHasAVX2() bool
//
// Reports whether the processor has AVX2 (CPUID.(EAX=7,ECX=0):EBX bit 5;
// Intel SDM vol. 2A, CPUID). The caller checks cpuHasAVX for the
// operating system's support of the YMM registers.
TEXT ·cpuHasAVX2(SB), NOSPLIT, $0-1
	XORL AX, AX
	XORL CX, CX
	CPUID
	CMPL AX, $7
	JLT no2
	MOVL $7, AX
	XORL CX, CX
	CPUID
	ANDL $0x20, BX
	JZ no2
	MOVB $1, ret+0(FP)
	RET
no2:
	MOVB $0, ret+0(FP)
	RET

// func conjRevAVX(dst, src *complex128, n int)
//
// conjRevSSE2 two values at a time: the load of src[−j−1], src[−j] has
// its halves swapped, then the same sign flip, so the same bits.
TEXT ·conjRevAVX(SB), NOSPLIT, $0-24
	MOVQ dst+0(FP), DI
	MOVQ src+8(FP), SI
	MOVQ n+16(FP), CX
	VBROADCASTF128 ·jMask+16(SB), Y6
	SUBQ $16, SI
cvloop:
	CMPQ CX, $2
	JLT cvtail
	VMOVUPD (SI), Y0
	VPERM2F128 $1, Y0, Y0, Y0
	VXORPD Y6, Y0, Y0
	VMOVUPD Y0, (DI)
	ADDQ $32, DI
	SUBQ $32, SI
	SUBQ $2, CX
	JMP cvloop
cvtail:
	TESTQ CX, CX
	JLE cvdone
	VMOVUPD 16(SI), X0
	VXORPD X6, X0, X0
	VMOVUPD X0, (DI)
cvdone:
	VZEROUPPER
	RET

// func addConjRevAVX(dst, src *complex128, n int)
//
// addConjRevSSE2 two values at a time, as conjRevAVX.
TEXT ·addConjRevAVX(SB), NOSPLIT, $0-24
	MOVQ dst+0(FP), DI
	MOVQ src+8(FP), SI
	MOVQ n+16(FP), CX
	VBROADCASTF128 ·jMask+16(SB), Y6
	SUBQ $16, SI
avloop:
	CMPQ CX, $2
	JLT avtail
	VMOVUPD (SI), Y0
	VPERM2F128 $1, Y0, Y0, Y0
	VXORPD Y6, Y0, Y0
	VADDPD (DI), Y0, Y0
	VMOVUPD Y0, (DI)
	ADDQ $32, DI
	SUBQ $32, SI
	SUBQ $2, CX
	JMP avloop
avtail:
	TESTQ CX, CX
	JLE avdone
	VMOVUPD 16(SI), X0
	VXORPD X6, X0, X0
	VADDPD (DI), X0, X0
	VMOVUPD X0, (DI)
avdone:
	VZEROUPPER
	RET

// func radix4HalfSSE2(dst, src *complex128, tw *float64, mask *[2]uint64, m, s, stride int)
//
// radix4Half (fft.go), the first stage of a batch whose middle half is
// zero, with one complex128 per SSE2 register: the operations of the Go
// loop in its order, so the same bits. mask flips the sign of one half
// of swap(d) to give ±i(−d). Registers as in radix4SSE2, except SI the
// fourth quarter's row p, R8 the offset of the first quarter's row p
// from it (m·stride·16 bytes) and R12 the source row stride
// (stride·16 bytes).
TEXT ·radix4HalfSSE2(SB), NOSPLIT, $0-56
	MOVQ dst+0(FP), DI
	MOVQ src+8(FP), SI
	MOVQ tw+16(FP), R10
	MOVQ mask+24(FP), AX
	MOVUPD (AX), X6
	MOVQ m+32(FP), R11
	MOVQ s+40(FP), R9
	SHLQ $4, R9
	MOVQ stride+48(FP), R12
	SHLQ $4, R12
	MOVQ R12, R8
	IMULQ R11, R8
	TESTQ R11, R11
	JLE hdone
hploop:
	MOVUPD 0(R10), X0
	MOVUPD 16(R10), X1
	MOVUPD 32(R10), X2
	MOVUPD 48(R10), X3
	MOVUPD 64(R10), X4
	MOVUPD 80(R10), X5
	XORQ AX, AX
hqloop:
	// d (X10), a (X7)
	LEAQ (SI)(AX*1), DX
	MOVUPD (DX), X10
	MOVUPD (DX)(R8*1), X7
	// jbmd = ±i·(−d) (X8)
	MOVAPD X10, X8
	SHUFPD $1, X8, X8
	XORPD X6, X8
	LEAQ (DI)(AX*1), DX
	// o0 = a + d
	MOVAPD X7, X9
	ADDPD X10, X9
	MOVUPD X9, (DX)
	ADDQ R9, DX
	// o1 = w1·(a − jbmd)
	MOVAPD X7, X11
	SUBPD X8, X11
	MOVAPD X11, X13
	SHUFPD $1, X13, X13
	MULPD X1, X13
	MULPD X0, X11
	ADDPD X13, X11
	MOVUPD X11, (DX)
	ADDQ R9, DX
	// o2 = w2·(a − d)
	MOVAPD X7, X11
	SUBPD X10, X11
	MOVAPD X11, X13
	SHUFPD $1, X13, X13
	MULPD X3, X13
	MULPD X2, X11
	ADDPD X13, X11
	MOVUPD X11, (DX)
	ADDQ R9, DX
	// o3 = w3·(a + jbmd)
	ADDPD X8, X7
	MOVAPD X7, X13
	SHUFPD $1, X13, X13
	MULPD X5, X13
	MULPD X4, X7
	ADDPD X13, X7
	MOVUPD X7, (DX)
	ADDQ $16, AX
	CMPQ AX, R9
	JLT hqloop
	// next p: source rows +stride, dst rows +4s, twiddles +96 bytes
	ADDQ R12, SI
	LEAQ (DI)(R9*4), DI
	ADDQ $96, R10
	DECQ R11
	JNZ hploop
hdone:
	RET

// func radix4HalfAVX(dst, src *complex128, tw *float64, mask *[2]uint64, m, s, stride int)
//
// radix4HalfSSE2 on two values of q at once (s even), in 256-bit
// registers: the same operations on each complex, so the same bits.
TEXT ·radix4HalfAVX(SB), NOSPLIT, $0-56
	MOVQ dst+0(FP), DI
	MOVQ src+8(FP), SI
	MOVQ tw+16(FP), R10
	MOVQ mask+24(FP), AX
	VBROADCASTF128 (AX), Y6
	MOVQ m+32(FP), R11
	MOVQ s+40(FP), R9
	SHLQ $4, R9
	MOVQ stride+48(FP), R12
	SHLQ $4, R12
	MOVQ R12, R8
	IMULQ R11, R8
	TESTQ R11, R11
	JLE hvdone
hvploop:
	VBROADCASTF128 0(R10), Y0
	VBROADCASTF128 16(R10), Y1
	VBROADCASTF128 32(R10), Y2
	VBROADCASTF128 48(R10), Y3
	VBROADCASTF128 64(R10), Y4
	VBROADCASTF128 80(R10), Y5
	XORQ AX, AX
hvqloop:
	LEAQ (SI)(AX*1), DX
	VMOVUPD (DX), Y10
	VMOVUPD (DX)(R8*1), Y7
	VPERMILPD $5, Y10, Y8
	VXORPD Y6, Y8, Y8
	LEAQ (DI)(AX*1), DX
	VADDPD Y10, Y7, Y9
	VMOVUPD Y9, (DX)
	ADDQ R9, DX
	VSUBPD Y8, Y7, Y11
	VPERMILPD $5, Y11, Y13
	VMULPD Y1, Y13, Y13
	VMULPD Y0, Y11, Y11
	VADDPD Y13, Y11, Y11
	VMOVUPD Y11, (DX)
	ADDQ R9, DX
	VSUBPD Y10, Y7, Y11
	VPERMILPD $5, Y11, Y13
	VMULPD Y3, Y13, Y13
	VMULPD Y2, Y11, Y11
	VADDPD Y13, Y11, Y11
	VMOVUPD Y11, (DX)
	ADDQ R9, DX
	VADDPD Y8, Y7, Y7
	VPERMILPD $5, Y7, Y13
	VMULPD Y5, Y13, Y13
	VMULPD Y4, Y7, Y7
	VADDPD Y13, Y7, Y7
	VMOVUPD Y7, (DX)
	ADDQ $32, AX
	CMPQ AX, R9
	JLT hvqloop
	ADDQ R12, SI
	LEAQ (DI)(R9*4), DI
	ADDQ $96, R10
	DECQ R11
	JNZ hvploop
hvdone:
	VZEROUPPER
	RET
