//go:build !purego

#include "textflag.h"

DATA absMask<>+0(SB)/8, $0x7fffffffffffffff
GLOBL absMask<>(SB), RODATA|NOPTR, $8

// func cpuHasAVX() bool
//
// Reports whether the processor has AVX (CPUID.1:ECX bit 28) and the operating system saves
// the YMM registers (OSXSAVE, bit 27, and XCR0 bits 1 and 2; Intel SDM vol. 1, sect. 14.3).
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

// func acceptLowerAVX(s, y, x, xt, g, gt, lo []float64, masks []uint8, out *[9]float64)
//
// acceptLower's pass on the first len(x) &^ 3 variables, four per step: s = xt − x and
// y = gt − g; s.y summed one product after the other in the order of the variables, so the
// bits of the Go loop; per lane, the largest |s_i| and |max(xt_i − gt_i, lo_i) − xt_i| by
// the Go loop's comparisons (MAXPD keeps the running value when the new one is not larger or
// is NaN, as "if a > m { m = a }" does); and per step one byte of masks whose bit j says
// that variable 4k+j is free, !(xt <= lo && gt > 0). out receives s.y, the four lanes of the
// step's norm and the four of the projected gradient's. The caller checks the lengths.
TEXT ·acceptLowerAVX(SB), NOSPLIT, $0-200
	MOVQ s_base+0(FP), DI
	MOVQ y_base+24(FP), R8
	MOVQ x_base+48(FP), SI
	MOVQ x_len+56(FP), CX
	MOVQ xt_base+72(FP), R9
	MOVQ g_base+96(FP), R10
	MOVQ gt_base+120(FP), R11
	MOVQ lo_base+144(FP), R12
	MOVQ masks_base+168(FP), R13
	MOVQ out+192(FP), R14
	VBROADCASTSD absMask<>(SB), Y15
	VXORPD Y14, Y14, Y14         // 0
	VXORPD Y13, Y13, Y13         // step lanes
	VXORPD Y12, Y12, Y12         // pg lanes
	VXORPD X10, X10, X10         // s.y
	SHRQ $2, CX
	JZ adone
aloop:
	VMOVUPD (SI), Y0             // x
	VMOVUPD (R9), Y1             // xt
	VSUBPD Y0, Y1, Y2            // s = xt − x
	VMOVUPD Y2, (DI)
	VMOVUPD (R10), Y3            // g
	VMOVUPD (R11), Y4            // gt
	VSUBPD Y3, Y4, Y5            // y = gt − g
	VMOVUPD Y5, (R8)
	VMULPD Y5, Y2, Y6            // s_i·y_i
	VADDSD X6, X10, X10          // s.y += lane 0, 1, 2, 3 in turn
	VUNPCKHPD X6, X6, X7
	VADDSD X7, X10, X10
	VEXTRACTF128 $1, Y6, X7
	VADDSD X7, X10, X10
	VUNPCKHPD X7, X7, X7
	VADDSD X7, X10, X10
	VANDPD Y15, Y2, Y2           // |s|
	VMAXPD Y13, Y2, Y13          // step = |s| > step ? |s| : step
	VMOVUPD (R12), Y0            // lo
	VSUBPD Y4, Y1, Y3            // v = xt − gt
	VMAXPD Y3, Y0, Y3            // v = lo > v ? lo : v
	VSUBPD Y1, Y3, Y3            // v − xt
	VANDPD Y15, Y3, Y3
	VMAXPD Y12, Y3, Y12          // pg = |v − xt| > pg ? |v − xt| : pg
	VCMPPD $2, Y0, Y1, Y7        // xt <= lo
	VCMPPD $0x0e, Y14, Y4, Y8    // gt > 0
	VANDPD Y8, Y7, Y7
	VMOVMSKPD Y7, AX
	XORL $15, AX                 // free
	MOVB AX, (R13)
	ADDQ $32, DI
	ADDQ $32, R8
	ADDQ $32, SI
	ADDQ $32, R9
	ADDQ $32, R10
	ADDQ $32, R11
	ADDQ $32, R12
	INCQ R13
	DECQ CX
	JNZ aloop
adone:
	MOVSD X10, 0(R14)
	VMOVUPD Y13, 8(R14)
	VMOVUPD Y12, 40(R14)
	VZEROUPPER
	RET

// func trialLowerAVX(xt, x, d, g, lo []float64, alpha float64) float64
//
// The trial pass for lower bounds on the first len(x) &^ 3 variables, four per step:
// xt = max(x + alpha·d, lo) by the Go loop's comparison (MAXPD keeps x + alpha·d when lo is
// not larger, as "if v < l { v = l }" does), the product and the sum rounded apart (no fused
// multiply-add), and g.(xt − x) summed one product after the other in the order of the
// variables, so the bits of the Go loop. The caller checks the lengths.
TEXT ·trialLowerAVX(SB), NOSPLIT, $0-136
	MOVQ xt_base+0(FP), DI
	MOVQ x_base+24(FP), SI
	MOVQ x_len+32(FP), CX
	MOVQ d_base+48(FP), R8
	MOVQ g_base+72(FP), R9
	MOVQ lo_base+96(FP), R10
	VBROADCASTSD alpha+120(FP), Y9
	VXORPD X10, X10, X10         // the sum
	SHRQ $2, CX
	JZ tdone
tloop:
	VMOVUPD (SI), Y0             // x
	VMOVUPD (R8), Y1             // d
	VMULPD Y1, Y9, Y1            // alpha·d
	VADDPD Y1, Y0, Y1            // v = x + alpha·d
	VMOVUPD (R10), Y2            // lo
	VMAXPD Y1, Y2, Y1            // v = lo > v ? lo : v
	VMOVUPD Y1, (DI)
	VSUBPD Y0, Y1, Y1            // v − x
	VMOVUPD (R9), Y3             // g
	VMULPD Y1, Y3, Y6            // g·(v − x)
	VADDSD X6, X10, X10          // sum += lane 0, 1, 2, 3 in turn
	VUNPCKHPD X6, X6, X7
	VADDSD X7, X10, X10
	VEXTRACTF128 $1, Y6, X7
	VADDSD X7, X10, X10
	VUNPCKHPD X7, X7, X7
	VADDSD X7, X10, X10
	ADDQ $32, DI
	ADDQ $32, SI
	ADDQ $32, R8
	ADDQ $32, R9
	ADDQ $32, R10
	DECQ CX
	JNZ tloop
tdone:
	MOVSD X10, ret+128(FP)
	VZEROUPPER
	RET
